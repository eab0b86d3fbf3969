"""The result of a characteristic sweep: one immutable object of arrays, with key figures."""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass, field

import numpy as np

from ..errors import SolverError
from .units import RPM

__all__ = ["Characteristic", "NoLoadPoint", "RunawayInfo", "ARRAY_FIELDS", "LOSS_FIELDS", "no_load_point",
           "standstill_state"]

#: The loss terms of a sweep, each an array [W].
LOSS_FIELDS = ("armature_copper", "external_resistor", "series_field_copper", "shunt_field_copper", "brush",
               "friction_windage", "core", "stray")

#: The array fields of a sweep with their units, in table order.
ARRAY_FIELDS = {
    "armature_current": "A", "field_current": "A", "series_field_current": "A", "supply_current": "A",
    "excitation": "A-turns", "kphi": "V*s/rad", "emf": "V", "speed": "rad/s", "developed_torque": "N*m",
    "shaft_torque": "N*m", "input_power": "W", "output_power": "W",
    **{k: "W" for k in LOSS_FIELDS}, "efficiency": "-",
}


@dataclass(frozen=True)
class NoLoadPoint:
    """Where the shaft torque is zero on the motoring branch.

    ``speed`` is inf (and ``current`` 0) when the flux tends to zero at no load with no loss to
    hold the speed: a series machine without residual magnetism.
    """

    current: float  # [A]
    speed: float  # [rad/s]
    supply_current: float  # [A]


@dataclass(frozen=True)
class RunawayInfo:
    """The machine would pass its safe speed: where and why."""

    current: float  # armature current at which the speed reaches the safe speed [A]
    safe_speed: float  # [rad/s]
    no_load_speed: float  # [rad/s], may be inf
    reason: str


@dataclass(frozen=True, eq=False)
class Characteristic:
    """Steady-state characteristic of one machine at one supply voltage.

    Every array has the shape of ``armature_current``; SI units (see :data:`ARRAY_FIELDS`).
    Points where the speed is beyond ``safe_speed`` (or undefined, kphi = 0) are kept in the
    arrays but marked False in ``within_safe_speed``; charts draw only the points marked True.
    Efficiency is output/input when motoring, input/output when generating, and nan where the
    power flows are mixed (plugging) or zero.
    """

    machine: object
    voltage: float
    safe_speed: float
    armature_current: np.ndarray
    field_current: np.ndarray
    series_field_current: np.ndarray
    supply_current: np.ndarray
    excitation: np.ndarray
    kphi: np.ndarray
    emf: np.ndarray
    speed: np.ndarray
    developed_torque: np.ndarray
    shaft_torque: np.ndarray
    input_power: np.ndarray
    output_power: np.ndarray
    armature_copper: np.ndarray
    external_resistor: np.ndarray
    series_field_copper: np.ndarray
    shunt_field_copper: np.ndarray
    brush: np.ndarray
    friction_windage: np.ndarray
    core: np.ndarray
    stray: np.ndarray
    efficiency: np.ndarray
    within_safe_speed: np.ndarray = field(repr=False)

    @classmethod
    def from_state(cls, machine, voltage, current, safe_speed, state) -> "Characteristic":
        p_in = state["input_power"]
        p_out = state["output_power"]
        with np.errstate(all="ignore"):
            eff = np.where((p_in > 0) & (p_out > 0), p_out / p_in,
                           np.where((p_in < 0) & (p_out < 0), p_in / p_out, np.nan))
            w = state["speed"]
            ok = np.isfinite(w) & (np.abs(w) <= safe_speed)
        return cls(machine=machine, voltage=float(voltage), safe_speed=float(safe_speed),
                   armature_current=current, efficiency=eff, within_safe_speed=ok,
                   **{k: state[k] for k in ARRAY_FIELDS if k not in ("armature_current", "efficiency")})

    # ---- views
    @property
    def connection(self) -> str:
        return self.machine.connection

    @property
    def speed_rpm(self) -> np.ndarray:
        """Speed. [r/min]"""
        return self.speed / RPM

    @property
    def total_losses(self) -> np.ndarray:
        """Sum of every loss term. [W]"""
        return sum(getattr(self, k) for k in LOSS_FIELDS)

    def power_balance_residual(self) -> np.ndarray:
        """P_in - P_out - sum(losses), which is zero to rounding. [W]"""
        return self.input_power - self.output_power - self.total_losses

    def to_dict(self) -> dict:
        """Arrays by name, SI units (see :data:`ARRAY_FIELDS`)."""
        return {k: np.asarray(getattr(self, k)) for k in ARRAY_FIELDS}

    def to_frame(self):
        """A pandas DataFrame of the arrays, columns named with units (needs pandas)."""
        import pandas as pd

        return pd.DataFrame({f"{k} [{u}]": np.asarray(getattr(self, k)) for k, u in ARRAY_FIELDS.items()})

    # ---- key figures (computed on first use)
    @functools.cached_property
    def no_load(self) -> NoLoadPoint:
        """The no-load point on the motoring branch (see :class:`NoLoadPoint`)."""
        return no_load_point(self.machine, self.voltage)

    @property
    def no_load_speed(self) -> float:
        """[rad/s], inf where the machine has no bounded no-load speed."""
        return self.no_load.speed

    @functools.cached_property
    def locked_rotor_current(self) -> float:
        """Armature current at standstill without further resistance. [A]"""
        return self.machine.locked_rotor_current(self.voltage)

    @property
    def locked_rotor_torque(self) -> float:
        """Shaft torque at standstill. [N*m]"""
        return standstill_state(self.machine, self.voltage)["shaft_torque"]

    @property
    def locked_rotor_supply_current(self) -> float:
        """Supply current at standstill (field current included). [A]"""
        return standstill_state(self.machine, self.voltage)["supply_current"]

    @functools.cached_property
    def runaway(self) -> RunawayInfo | None:
        """Where the machine passes its safe speed on light load, or None if it never does."""
        return per_machine(self.machine, ("runaway", self.voltage, self.safe_speed),
                            lambda: _runaway(self.machine, self.voltage, self.safe_speed, self.no_load))

    @property
    def runs_away(self) -> bool:
        """True where the no-load speed is above the safe speed."""
        return self.runaway is not None

    @functools.cached_property
    def cautions(self) -> tuple:
        """The usual cautions that apply to this machine and sweep (tuple of :class:`Caution`)."""
        from .cautions import characteristic_cautions

        return tuple(characteristic_cautions(self))

    def _repr_html_(self):
        nl = self.no_load
        rows = [("connection", self.machine.label), ("supply voltage", f"{self.voltage:.1f} V"),
                ("no-load speed", "unbounded" if math.isinf(nl.speed) else f"{nl.speed / RPM:.0f} r/min"),
                ("locked-rotor current", f"{self.locked_rotor_current:.1f} A"),
                ("locked-rotor torque", f"{self.locked_rotor_torque:.1f} N·m"),
                ("points", str(self.armature_current.size))]
        body = "".join(f"<tr><th style='text-align:left'>{a}</th><td>{b}</td></tr>" for a, b in rows)
        warn = "".join(f"<li>{c.text}</li>" for c in self.cautions)
        return f"<table>{body}</table>" + (f"<ul>{warn}</ul>" if warn else "")

    def __repr__(self):
        return (f"Characteristic({self.machine.label}, V={self.voltage:g} V, "
                f"{self.armature_current.size} points)")


def no_load_point(machine, voltage: float) -> "NoLoadPoint":
    """The no-load point of ``machine`` at supply ``voltage`` [V] on the motoring branch, computed
    once per machine and voltage (the same object :attr:`Characteristic.no_load` gives, without a
    sweep)."""
    voltage = float(voltage)
    return per_machine(machine, ("no_load", voltage), lambda: _no_load(machine, voltage))


def standstill_state(machine, voltage: float) -> dict:
    """Every quantity of :meth:`Machine.state_arrays` (as floats) at the standstill current of
    ``machine`` at supply ``voltage`` [V], computed once per machine and voltage."""
    voltage = float(voltage)

    def compute():
        st = machine.state_arrays(voltage, np.array([machine.locked_rotor_current(voltage)]))
        return {k: float(v[0]) for k, v in st.items()}
    return per_machine(machine, ("standstill", voltage), compute)


def per_machine(machine, key, compute):
    """``compute()``, kept per machine object and ``key`` (machines are frozen, so the answer
    cannot change; many studies of one machine ask the same question). The one cache of a machine's
    figures, kernels and grids, at most 256 entries (a slider moving the voltage adds a few per
    step), then emptied."""
    cache = machine.__dict__.setdefault("_figure_cache", {})
    try:
        return cache[key]
    except KeyError:
        if len(cache) >= 256:
            cache.clear()
        value = cache[key] = compute()
        return value


_LIGHT = np.geomspace(1e-9, 1.0, 240)  # light-load search grid, a fraction of the standstill current
_LIGHT.flags.writeable = False


def _light_load(machine, voltage):
    """(I_a grid, speed, shaft torque) from 1e-9 to 1 of the standstill current, shared by the
    no-load and runaway searches of one machine and voltage."""
    def compute():
        grid = machine.locked_rotor_current(voltage) * _LIGHT
        return (grid, *machine.speed_torque_arrays(voltage, grid))
    return per_machine(machine, ("light load", voltage), compute)


def _no_load(machine, voltage) -> NoLoadPoint:
    i_lr = machine.locked_rotor_current(voltage)
    if i_lr <= 0:
        return NoLoadPoint(0.0, 0.0, 0.0)
    grid, w, t = _light_load(machine, voltage)
    good = np.isfinite(t)
    if good.any() and t[good][0] > 0:
        # no loss holds the speed: the limit I_a -> 0+
        st = machine.state_arrays(voltage, np.array([0.0, grid[0]]))
        k0 = st["kphi"][0]  # flux at exactly zero current
        speed = math.inf if not k0 > 0 else float(w[0])
        return NoLoadPoint(0.0, speed, float(st["supply_current"][1] - grid[0]))
    idx = np.nonzero(good[:-1] & good[1:] & (t[:-1] <= 0) & (t[1:] > 0))[0]
    if idx.size == 0:
        return NoLoadPoint(math.nan, math.nan, math.nan)
    from scipy.optimize import brentq

    a, b = grid[idx[0]], grid[idx[0] + 1]
    try:
        i0 = brentq(lambda i: machine.scalar_state(voltage, i)[1], a, b, xtol=1e-12 * i_lr, rtol=1e-12)
    except (ValueError, RuntimeError) as exc:  # pragma: no cover - bracket is checked above
        raise SolverError(f"no-load point of the {machine.label} machine did not converge: {exc}") from exc
    s = machine.scalar_functions(voltage)[1](float(i0))
    return NoLoadPoint(float(i0), float(s["speed"]), float(s["supply_current"]))


def _runaway(machine, voltage, safe_speed, no_load: NoLoadPoint) -> RunawayInfo | None:
    if not (no_load.speed > safe_speed):
        return None
    i_lr = machine.locked_rotor_current(voltage)
    grid, w, _ = _light_load(machine, voltage)
    fast = ~(np.isfinite(w) & (np.abs(w) <= safe_speed))
    # the largest current at which the speed is still beyond the safe speed
    j = int(np.nonzero(fast)[0].max())
    current = float(grid[j])
    if j + 1 < grid.size and np.isfinite(w[j]):
        from scipy.optimize import brentq

        current = float(brentq(lambda i: machine.scalar_state(voltage, i)[0] - safe_speed, grid[j], grid[j + 1],
                               xtol=1e-12 * i_lr))
    if math.isinf(no_load.speed):
        reason = "the flux falls to zero as the load falls away, so the speed has no bound"
    else:
        reason = (f"no-load speed {no_load.speed / RPM:.0f} r/min is above the safe speed "
                  f"{safe_speed / RPM:.0f} r/min")
    return RunawayInfo(current=current, safe_speed=float(safe_speed), no_load_speed=no_load.speed, reason=reason)

