"""Base of the load models: gearing, the :class:`Load` contract and the sum of loads.

Sign and unit conventions are those of :mod:`dcchar.models.loads`.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from ...errors import ParameterError
from ..validation import in_range, nonnegative, positive

__all__ = ["Gearing", "Load", "SumLoad", "STANDARD_GRAVITY"]

#: Standard acceleration of gravity [m/s^2] (CGPM 1901, exact).
STANDARD_GRAVITY = 9.80665


def _speed_array(speed):
    try:
        w = np.asarray(speed, dtype=float)
    except (TypeError, ValueError):
        raise ParameterError("speed", speed, "real numbers [rad/s]") from None
    return w


def _odd(w):
    """+1 for w >= 0, -1 for w < 0 (the w = 0 point belongs to the positive branch)."""
    return np.where(w < 0, -1.0, 1.0)


@dataclass(frozen=True)
class Gearing:
    """A speed reducer (or coupling) between motor and driven machine.

    Parameters
    ----------
    ratio : float
        Motor speed / load speed, > 0 (a reduction has ratio > 1). [-]
    efficiency : float
        Transmission efficiency in (0, 1]. [-]

    Notes
    -----
    A torque ``T_l`` at the load shaft is referred to the motor shaft as ``T_l / (ratio*eff)``
    when power flows from motor to load (``T_l * w > 0``), as ``T_l * eff / ratio`` when the load
    drives the motor (``T_l * w < 0``, overhauling, e.g. a hoist lowering), and as ``T_l / ratio``
    at standstill (no motion, no gear loss). An inertia ``J_l`` is referred as ``J_l / ratio**2``;
    gear losses are not put into the inertia. As in ch. 2 and Ex. 2.1 of [1]_.

    References
    ----------
    .. [1] G. K. Dubey, Fundamentals of Electrical Drives, 2nd ed., ch. 2, Ex. 2.1, p. 16.
    """

    ratio: float = 1.0
    efficiency: float = 1.0

    def __post_init__(self):
        object.__setattr__(self, "ratio", positive("ratio", self.ratio))
        eff = in_range("efficiency", self.efficiency, 0.0, 1.0, low_open=True)
        object.__setattr__(self, "efficiency", eff)

    def load_speed(self, speed):
        """Load-shaft speed [rad/s] at motor speed ``speed`` [rad/s]."""
        return _speed_array(speed) / self.ratio

    def factor(self, load_torque, speed):
        """Multiplier from load-shaft torque to motor-shaft torque [1/ratio units, -]."""
        power = np.asarray(load_torque, dtype=float) * _speed_array(speed)
        drive = 1.0 / (self.ratio * self.efficiency)
        overhaul = self.efficiency / self.ratio
        return np.where(power > 0, drive, np.where(power < 0, overhaul, 1.0 / self.ratio))

    def refer_torque(self, load_torque, speed):
        """Load-shaft torque [N*m] seen at the motor shaft [N*m] at motor speed [rad/s]."""
        t = np.asarray(load_torque, dtype=float)
        if self.efficiency == 1.0 and t.shape == np.shape(speed):  # no gear loss: one factor both ways
            return t * (1.0 / self.ratio)
        return t * self.factor(load_torque, speed)

    def refer_inertia(self, load_inertia):
        """Load-shaft inertia [kg*m^2] seen at the motor shaft [kg*m^2]."""
        return load_inertia / self.ratio**2

    def describe(self):
        """One line in words."""
        return f"gearing {self.ratio:g}:1 at {100 * self.efficiency:g} % efficiency"


_DIRECT = Gearing()


class _Breakaway:
    """``Load.breakaway_torque``: torque [N*m] at the motor shaft needed to start from rest in
    the positive direction (the driven-shaft value at standstill, positive-speed branch,
    referred as motoring). A non-data descriptor, so that :class:`Breakaway` can hold it as a
    field."""

    def __get__(self, obj, objtype=None):
        if obj is None:
            return self
        cached = obj.__dict__.get("_breakaway_cache") if hasattr(obj, "__dict__") else None
        if cached is None:
            cached = obj._breakaway()
            params = getattr(type(obj), "__dataclass_params__", None)
            if params is not None and params.frozen:  # immutable: compute once
                object.__setattr__(obj, "_breakaway_cache", cached)
        return cached


class Load:
    """Common behaviour of all loads. Subclasses define ``_load_side(w_l) -> (T_l, dT_l/dw_l)``
    at the driven shaft; this class refers them through the gearing."""

    kind: ClassVar[str] = "load"

    # -- to be provided -------------------------------------------------------------------
    def _load_side(self, w_l):  # pragma: no cover - abstract
        raise NotImplementedError

    def _extra_inertia(self):
        """Inertia at the motor shaft beyond the referred ``load_inertia`` [kg*m^2]."""
        return 0.0

    # -- public ---------------------------------------------------------------------------
    @property
    def _gear(self) -> Gearing:
        return getattr(self, "gearing", None) or _DIRECT

    def _scalar_side(self, w_l):
        """``_load_side`` for one float, in plain Python (None where a subclass has no fast path)."""
        return None

    def _scalar(self, w):
        # fast path for root finders: one float in, one (torque, slope) float pair out
        g = self._gear
        side = self._scalar_side(w / g.ratio)
        if side is None:
            return None
        t_l, d_l = side
        p = t_l * w
        f = 1.0 / (g.ratio * g.efficiency) if p > 0 else (g.efficiency / g.ratio if p < 0 else 1.0 / g.ratio)
        return t_l * f, f * d_l / g.ratio

    def torque(self, speed):
        """Load torque at the motor shaft [N*m] at motor speed ``speed`` [rad/s] (vectorized).

        A Python float gives a float (a fast path for root finders); anything else an array.
        """
        if isinstance(speed, float):
            fast = self._scalar(speed)
            if fast is not None:
                return fast[0]
        w = _speed_array(speed)
        g = self._gear
        t_l, _ = self._load_side(w / g.ratio)
        return g.refer_torque(t_l, w)

    def slope(self, speed):
        """dT/dw of :meth:`torque` [N*m*s/rad] at motor speed ``speed`` [rad/s].

        Notes
        -----
        Analytic, within each region of one power-flow direction; where the gear loss switches
        side (at standstill for an active load) the step in torque is not part of the slope.
        """
        if isinstance(speed, float):
            fast = self._scalar(speed)
            if fast is not None:
                return fast[1]
        w = _speed_array(speed)
        g = self._gear
        t_l, d_l = self._load_side(w / g.ratio)
        return g.factor(t_l, w) * d_l / g.ratio

    breakaway_torque = _Breakaway()

    def _breakaway(self) -> float:
        g = self._gear
        t0 = float(self._static_torque())
        return t0 / (g.ratio * g.efficiency) if t0 > 0 else t0 * g.efficiency / g.ratio

    def _static_torque(self):
        return self._load_side(np.zeros(1))[0][0]

    @property
    def inertia(self) -> float:
        """Moment of inertia of the load referred to the motor shaft [kg*m^2]."""
        return self._gear.refer_inertia(getattr(self, "load_inertia", 0.0)) + self._extra_inertia()

    def _geared(self, text):
        g = getattr(self, "gearing", None)
        j = getattr(self, "load_inertia", 0.0)
        parts = [text]
        if g is not None:
            parts.append(g.describe())
        if j:
            parts.append(f"load inertia {j:g} kg*m^2")
        return "; ".join(parts)

    def describe(self) -> str:
        """One line in plain words, with units."""
        return self.kind

    def __add__(self, other):
        if isinstance(other, (int, float)) and not isinstance(other, bool) and other == 0:
            return self
        if not isinstance(other, Load):
            return NotImplemented
        mine = self.loads if isinstance(self, SumLoad) else (self,)
        theirs = other.loads if isinstance(other, SumLoad) else (other,)
        return SumLoad(mine + theirs)

    def __radd__(self, other):  # so that sum([a, b, c]) works
        return self.__add__(other)


def _check_gear(obj):
    if obj.gearing is not None and not isinstance(obj.gearing, Gearing):
        raise ParameterError("gearing", obj.gearing, "a Gearing or None")
    object.__setattr__(obj, "load_inertia", nonnegative("load_inertia", obj.load_inertia))



@dataclass(frozen=True)
class SumLoad(Load):
    """Several loads on one motor shaft; torques, slopes, breakaway torques and inertias add.

    Parameters
    ----------
    loads : tuple of Load
        The parts, each with its own gearing. ``a + b`` builds one (flattening nested sums).
    """

    loads: tuple
    kind: ClassVar[str] = "sum"

    def __post_init__(self):
        parts = tuple(self.loads)
        if not parts:
            raise ParameterError("loads", self.loads, "at least one Load")
        for i, part in enumerate(parts):
            if not isinstance(part, Load):
                raise ParameterError(f"loads[{i}]", part, "a Load")
        object.__setattr__(self, "loads", parts)

    def torque(self, speed):
        w = _speed_array(speed)
        return sum((part.torque(w) for part in self.loads), np.zeros_like(w))

    def slope(self, speed):
        w = _speed_array(speed)
        return sum((part.slope(w) for part in self.loads), np.zeros_like(w))

    @property
    def breakaway_torque(self) -> float:
        return float(sum(part.breakaway_torque for part in self.loads))

    @property
    def inertia(self) -> float:
        return float(sum(part.inertia for part in self.loads))

    def describe(self):
        return "sum of: " + " | ".join(part.describe() for part in self.loads)
