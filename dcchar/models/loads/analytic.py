"""Loads with a closed form: constant torque, conveyor, hoist, fan and pump, line, constant
power, breakaway friction; and the fan/pump affinity laws.

Sign and unit conventions are those of :mod:`dcchar.models.loads`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import ClassVar

import numpy as np

from ...errors import ParameterError
from ..units import RPM
from ..validation import in_range, nonnegative, positive, real
from .base import STANDARD_GRAVITY, Gearing, Load, _check_gear, _odd, _speed_array

__all__ = [
    "ConstantTorque", "Conveyor", "Hoist", "LoweringHoist", "Quadratic", "Fan", "Pump", "Linear", "ConstantPower",
    "Breakaway", "affinity_flow", "affinity_head", "affinity_power",
]


@dataclass(frozen=True)
class ConstantTorque(Load):
    """A torque independent of speed.

    Parameters
    ----------
    load_torque : float
        Torque at the driven shaft. [N*m]
    gearing : Gearing or None
        Between motor and driven shaft; ``None`` for direct coupling.
    load_inertia : float
        Inertia of the driven machine at its own shaft. [kg*m^2]
    active : bool
        ``False`` (passive, friction-like): the torque opposes the motion, ``+T`` for w >= 0 and
        ``-T`` for w < 0. ``True`` (active, gravity-like): ``+T`` at every speed.

    Notes
    -----
    Active and passive load torques as classified in ch. 2 of G. K. Dubey, Fundamentals of
    Electrical Drives, 2nd ed.
    """

    load_torque: float
    gearing: Gearing | None = None
    load_inertia: float = 0.0
    active: bool = False
    kind: ClassVar[str] = "constant"

    def __post_init__(self):
        object.__setattr__(self, "load_torque", real("load_torque", self.load_torque))
        _check_gear(self)

    def _load_side(self, w_l):
        sign = 1.0 if self.active else _odd(w_l)
        return self.load_torque * sign * np.ones_like(w_l), np.zeros_like(w_l)

    def _scalar_side(self, w_l):
        return self.load_torque * (1.0 if self.active or w_l >= 0 else -1.0), 0.0

    def describe(self):
        how = "active (same sign both ways)" if self.active else "passive (opposes motion)"
        return self._geared(f"constant torque {self.load_torque:.4g} N*m, {how}")


@dataclass(frozen=True)
class Conveyor(Load):
    """A belt conveyor driven by a head pulley.

    Parameters
    ----------
    friction_pull : float
        Belt pull that overcomes friction of idlers, belt and material, >= 0; passive. [N]
    pulley_diameter : float
        Diameter of the drive pulley. [m]
    lift_pull : float
        Belt pull that lifts the material on an incline (negative on a decline); active. [N]
    moving_mass : float
        Belt plus material moving at belt speed, for the inertia. [kg]
    gearing : Gearing or None
        Between motor and pulley.
    load_inertia : float
        Pulleys and idlers referred to the pulley shaft. [kg*m^2]

    Notes
    -----
    Pulley torque ``T = r*(F_f*sign(w) + F_lift)`` with ``r = D/2``; inertia at the pulley
    ``J + m*r**2``. Starting friction above the running value can be added with
    :class:`Breakaway`. Use :meth:`from_mass` to build from mass and friction coefficient.
    """

    friction_pull: float
    pulley_diameter: float
    lift_pull: float = 0.0
    moving_mass: float = 0.0
    gearing: Gearing | None = None
    load_inertia: float = 0.0
    kind: ClassVar[str] = "conveyor"

    def __post_init__(self):
        object.__setattr__(self, "friction_pull", nonnegative("friction_pull", self.friction_pull))
        object.__setattr__(self, "pulley_diameter", positive("pulley_diameter", self.pulley_diameter))
        object.__setattr__(self, "lift_pull", real("lift_pull", self.lift_pull))
        object.__setattr__(self, "moving_mass", nonnegative("moving_mass", self.moving_mass))
        _check_gear(self)

    @classmethod
    def from_mass(cls, mass, friction_coefficient, pulley_diameter, incline=0.0, gearing=None,
                  load_inertia=0.0, g=STANDARD_GRAVITY):
        """Conveyor from moving mass [kg], friction coefficient [-], pulley diameter [m] and
        incline [rad] (positive: material is raised): ``F_f = mu*m*g*cos(a)``, ``F_lift =
        m*g*sin(a)``; ``g`` [m/s^2]."""
        m = nonnegative("mass", mass)
        mu = nonnegative("friction_coefficient", friction_coefficient)
        a = in_range("incline", incline, -math.pi / 2, math.pi / 2)
        g = positive("g", g)
        return cls(friction_pull=mu * m * g * math.cos(a), pulley_diameter=pulley_diameter,
                   lift_pull=m * g * math.sin(a), moving_mass=m, gearing=gearing,
                   load_inertia=load_inertia)

    def belt_speed(self, speed):
        """Belt speed [m/s] at motor speed [rad/s]."""
        return self._gear.load_speed(speed) * self.pulley_diameter / 2

    def _load_side(self, w_l):
        r = self.pulley_diameter / 2
        return r * (self.friction_pull * _odd(w_l) + self.lift_pull), np.zeros_like(w_l)

    def _scalar_side(self, w_l):
        r = self.pulley_diameter / 2
        return r * (self.friction_pull * (1.0 if w_l >= 0 else -1.0) + self.lift_pull), 0.0

    def _extra_inertia(self):
        return self._gear.refer_inertia(self.moving_mass * (self.pulley_diameter / 2) ** 2)

    def describe(self):
        return self._geared(f"conveyor: friction pull {self.friction_pull:g} N, lift pull "
                            f"{self.lift_pull:g} N on a {self.pulley_diameter:g} m pulley")


@dataclass(frozen=True)
class Hoist(Load):
    """A rope hoist: drum, reeving and gearing; raising is positive speed.

    Parameters
    ----------
    load_mass, hook_mass, rope_mass : float
        Payload, hook block, and hanging rope (taken fully paid out, the worst case). [kg]
    drum_diameter : float
        Drum diameter at the rope's centre line. [m]
    reeving : float
        Parts of line carrying the hook block, >= 1. [-]
    gearing : Gearing or None
        Between motor and drum.
    drum_inertia : float
        Drum inertia at the drum shaft. [kg*m^2]
    g : float
        Acceleration of gravity. [m/s^2]

    Notes
    -----
    Gravity always pulls toward lowering, so the drum torque ``T_d = m*g*r/reeving`` (``m`` the
    sum of the masses, ``r = D/2``) is positive at every speed (an active load). At the motor:
    raising (w > 0) ``T_d/(ratio*eff)``, lowering (w < 0, the load drives the motor)
    ``T_d*eff/ratio``, and at w == 0 the holding value ``T_d/ratio`` (no motion, no gear loss).
    Sheave losses in the reeving are neglected. Inertia at the motor:
    ``drum_inertia/ratio**2 + m*(r/(reeving*ratio))**2``, as in Ex. 2.1 (p. 16) of G. K. Dubey,
    Fundamentals of Electrical Drives, 2nd ed.

    Caution: a motor is not a holding device. Lowering overhauls the drive, which must brake
    (regeneratively or dynamically), and a mechanical brake must hold the load at rest and on
    loss of supply. Hoist drives are governed by local codes and standards and need the review
    of a licensed engineer; these curves are a design aid, not an approval.
    """

    load_mass: float
    hook_mass: float = 0.0
    rope_mass: float = 0.0
    drum_diameter: float = 1.0
    reeving: float = 1.0
    gearing: Gearing | None = None
    drum_inertia: float = 0.0
    g: float = STANDARD_GRAVITY
    kind: ClassVar[str] = "hoist"

    def __post_init__(self):
        for name in ("load_mass", "hook_mass", "rope_mass", "drum_inertia"):
            object.__setattr__(self, name, nonnegative(name, getattr(self, name)))
        object.__setattr__(self, "drum_diameter", positive("drum_diameter", self.drum_diameter))
        object.__setattr__(self, "reeving", real("reeving", self.reeving))
        if self.reeving < 1:
            raise ParameterError("reeving", self.reeving, "parts of line >= 1")
        object.__setattr__(self, "g", positive("g", self.g))
        if self.gearing is not None and not isinstance(self.gearing, Gearing):
            raise ParameterError("gearing", self.gearing, "a Gearing or None")

    @property
    def total_mass(self) -> float:
        """Payload + hook + hanging rope [kg]."""
        return self.load_mass + self.hook_mass + self.rope_mass

    @property
    def drum_torque(self) -> float:
        """Torque at the drum shaft from gravity [N*m]."""
        return self.total_mass * self.g * self.drum_diameter / 2 / self.reeving

    @property
    def holding_torque(self) -> float:
        """Torque at the motor shaft that balances the load at rest [N*m]."""
        return self.drum_torque / self._gear.ratio

    @property
    def lowering_torque(self) -> float:
        """Torque the motor must hold back while lowering (gear loss helps) [N*m]."""
        g = self._gear
        return self.drum_torque * g.efficiency / g.ratio

    def rope_speed(self, speed):
        """Rope speed at the drum [m/s] at motor speed [rad/s]; positive when raising."""
        return self._gear.load_speed(speed) * self.drum_diameter / 2

    def hook_speed(self, speed):
        """Hook speed [m/s] at motor speed [rad/s]: rope speed / reeving; positive up."""
        return self.rope_speed(speed) / self.reeving

    def motor_speed(self, hook_speed):
        """Motor speed [rad/s] that moves the hook at ``hook_speed`` [m/s] (positive up)."""
        drum = np.asarray(hook_speed, dtype=float) * self.reeving / (self.drum_diameter / 2)
        return drum * self._gear.ratio

    def direction(self, speed):
        """``"raising"``, ``"lowering"`` or ``"holding"`` for each motor speed [rad/s]."""
        w = _speed_array(speed)
        return np.where(w > 0, "raising", np.where(w < 0, "lowering", "holding"))

    def _load_side(self, w_l):
        return np.full_like(w_l, self.drum_torque), np.zeros_like(w_l)

    def _scalar_side(self, w_l):
        return self.drum_torque, 0.0

    @property
    def load_inertia(self) -> float:
        return self.drum_inertia

    def _extra_inertia(self):
        r = self.drum_diameter / 2
        return self.total_mass * (r / (self.reeving * self._gear.ratio)) ** 2

    def describe(self):
        return self._geared(f"hoist: {self.total_mass:g} kg on {self.reeving:g} parts of line, "
                            f"{self.drum_diameter:g} m drum (raising positive)")


@dataclass(frozen=True)
class LoweringHoist(ConstantTorque):
    """A hoist lowering with its motor's armature reversed, in the motor's own frame.

    With the armature reversed the motor turns its own positive way while the hook goes down,
    and gravity aids the motion: the load is the hoist's gravity torque with its sign changed,
    referred through the same gearing (``T_d*eff/ratio`` while the load drives, ``T_d/ratio``
    at rest), exactly :class:`ConstantTorque` with ``active=True`` and ``load_torque = -T_d``.
    ``kind`` stays ``"hoist"`` so that the hoist cautions (holding brake, overhauling) apply.
    """

    hoist: Hoist | None = None
    kind: ClassVar[str] = "hoist"

    @classmethod
    def of(cls, hoist: Hoist) -> "LoweringHoist":
        return cls(load_torque=-hoist.drum_torque, gearing=hoist.gearing, active=True, hoist=hoist)

    @property
    def inertia(self) -> float:
        return self.hoist.inertia

    def describe(self):
        return "lowering, armature reversed: " + self.hoist.describe()


@dataclass(frozen=True)
class Quadratic(Load):
    """Torque rising with the square of speed: fans and centrifugal pumps.

    Parameters
    ----------
    rated_speed : float
        Duty-point speed of the driven machine, > 0. [rad/s]
    rated_torque : float
        Torque at ``rated_speed``, > 0. [N*m]
    static_torque : float
        Part present at standstill, in [0, rated_torque]. [N*m]
    gearing : Gearing or None
    load_inertia : float
        [kg*m^2] at the driven shaft.

    Notes
    -----
    ``T = T_s + (T_r - T_s)*(w/w_r)**2`` for w >= 0 and ``T(-w) = -T(w)`` for w < 0 (the load
    opposes the motion in either direction; a fan run backwards is not as efficient, so treat
    the reverse branch as indicative). Slope ``2*(T_r - T_s)*|w|/w_r**2``. Square-law torque
    follows from the fan and pump affinity laws (common practice, no source).
    """

    rated_speed: float
    rated_torque: float
    static_torque: float = 0.0
    gearing: Gearing | None = None
    load_inertia: float = 0.0
    kind: ClassVar[str] = "quadratic"

    def __post_init__(self):
        object.__setattr__(self, "rated_speed", positive("rated_speed", self.rated_speed))
        object.__setattr__(self, "rated_torque", positive("rated_torque", self.rated_torque))
        object.__setattr__(self, "static_torque",
                           in_range("static_torque", self.static_torque, 0.0, self.rated_torque))
        _check_gear(self)

    @classmethod
    def from_duty(cls, speed, torque=None, power=None, static_torque=0.0, gearing=None, load_inertia=0.0):
        """Build from a duty point: speed [rad/s] and either torque [N*m] or shaft power [W]."""
        w = positive("speed", speed)
        if (torque is None) == (power is None):
            raise ParameterError("torque/power", (torque, power), "exactly one of torque [N*m] or power [W]")
        t = positive("torque", torque) if torque is not None else positive("power", power) / w
        return cls(rated_speed=w, rated_torque=t, static_torque=static_torque, gearing=gearing,
                   load_inertia=load_inertia)

    def _load_side(self, w_l):
        c = self.rated_torque - self.static_torque
        x = w_l / self.rated_speed
        t = _odd(w_l) * (self.static_torque + c * x * x)
        return t, 2.0 * c * np.abs(w_l) / self.rated_speed**2

    def _scalar_side(self, w_l):
        c = self.rated_torque - self.static_torque
        x = w_l / self.rated_speed
        t = (self.static_torque + c * x * x) * (1.0 if w_l >= 0 else -1.0)
        return t, 2.0 * c * abs(w_l) / self.rated_speed**2

    def describe(self):
        return self._geared(f"{self.kind}: {self.rated_torque:.4g} N*m at {self.rated_speed / RPM:.4g} r/min, "
                            f"square law, {self.static_torque:.3g} N*m static")


@dataclass(frozen=True)
class Fan(Quadratic):
    """A fan: :class:`Quadratic` with ``static_torque`` for bearing friction."""

    kind: ClassVar[str] = "fan"


@dataclass(frozen=True)
class Pump(Quadratic):
    """A centrifugal pump: :class:`Quadratic` whose ``static_torque`` stands for the static
    head (and friction).

    Notes
    -----
    A pump lifting against a static head needs a share of its duty torque at any speed that
    delivers flow; taking that share as constant is a first approximation (common practice, no
    source). :meth:`from_static_head` sets ``static_torque = fraction * rated_torque``.
    """

    kind: ClassVar[str] = "pump"

    @classmethod
    def from_static_head(cls, speed, torque=None, power=None, static_head_fraction=0.0, gearing=None,
                         load_inertia=0.0):
        """Duty point (speed [rad/s], torque [N*m] or power [W]) and the static head as a
        fraction [0, 1) of the duty head [-]."""
        frac = in_range("static_head_fraction", static_head_fraction, 0.0, 1.0, high_open=True)
        duty = cls.from_duty(speed, torque=torque, power=power, gearing=gearing, load_inertia=load_inertia)
        return cls(duty.rated_speed, duty.rated_torque, frac * duty.rated_torque, gearing, load_inertia)


def affinity_flow(flow, speed_from, speed_to):
    """Flow at a new speed by the affinity law Q2 = Q1*(n2/n1) [flow unit]. Speeds in any one
    unit (> 0). Common practice, no source."""
    return flow * (speed_to / positive("speed_from", speed_from))


def affinity_head(head, speed_from, speed_to):
    """Head (or pressure) at a new speed, H2 = H1*(n2/n1)**2. Common practice, no source."""
    return head * (speed_to / positive("speed_from", speed_from)) ** 2


def affinity_power(power, speed_from, speed_to):
    """Shaft power at a new speed, P2 = P1*(n2/n1)**3. Common practice, no source."""
    return power * (speed_to / positive("speed_from", speed_from)) ** 3


@dataclass(frozen=True)
class Linear(Load):
    """Torque on a straight line: ``T = offset + coefficient*w`` at the driven shaft.

    Parameters
    ----------
    coefficient : float
        Viscous coefficient dT/dw, >= 0. [N*m*s/rad]
    offset : float
        Torque at standstill. [N*m]
    gearing : Gearing or None
    load_inertia : float
        [kg*m^2]

    Notes
    -----
    The line is used as is for negative speeds (not mirrored): viscous friction with
    ``offset = 0``, or a generator feeding a fixed resistance, is odd by itself.
    """

    coefficient: float
    offset: float = 0.0
    gearing: Gearing | None = None
    load_inertia: float = 0.0
    kind: ClassVar[str] = "linear"

    def __post_init__(self):
        object.__setattr__(self, "coefficient", nonnegative("coefficient", self.coefficient))
        object.__setattr__(self, "offset", real("offset", self.offset))
        _check_gear(self)

    def _load_side(self, w_l):
        return self.offset + self.coefficient * w_l, np.full_like(w_l, self.coefficient)

    def _scalar_side(self, w_l):
        return self.offset + self.coefficient * w_l, self.coefficient

    def describe(self):
        return self._geared(f"linear: {self.offset:g} N*m + {self.coefficient:g} N*m*s/rad x speed")


@dataclass(frozen=True)
class ConstantPower(Load):
    """Constant power above a minimum speed: winders, traction, machine-tool spindles.

    Parameters
    ----------
    power : float
        Shaft power absorbed, > 0. [W]
    min_speed : float
        Speed below which the torque stays at ``power/min_speed``, > 0. [rad/s]
    gearing : Gearing or None
    load_inertia : float
        [kg*m^2]

    Notes
    -----
    ``T = P/|w|`` for ``|w| >= min_speed``, ``P/min_speed`` below, odd in w (w = 0 takes the
    positive branch). Slope ``-P*sign(w)/w**2`` above ``min_speed`` (so negative for w > 0), 0
    below. A winder's torque falls as the roll grows at constant line speed (common practice,
    no source).
    """

    power: float
    min_speed: float
    gearing: Gearing | None = None
    load_inertia: float = 0.0
    kind: ClassVar[str] = "winder"

    def __post_init__(self):
        object.__setattr__(self, "power", positive("power", self.power))
        object.__setattr__(self, "min_speed", positive("min_speed", self.min_speed))
        _check_gear(self)

    def _load_side(self, w_l):
        a = np.maximum(np.abs(w_l), self.min_speed)
        s = _odd(w_l)
        t = s * self.power / a
        d = np.where(np.abs(w_l) > self.min_speed, -self.power / (a * a), 0.0)
        return t, d

    def describe(self):
        return self._geared(f"constant power {self.power:.4g} W above {self.min_speed / RPM:.4g} r/min")


@dataclass(frozen=True)
class Breakaway(Load):
    """Static friction: more torque to start than to keep running, given at the motor shaft.

    Parameters
    ----------
    running_torque : float
        Torque once moving faster than ``release_speed``, >= 0. [N*m]
    breakaway_torque : float
        Torque at standstill, >= running_torque. [N*m]
    release_speed : float
        Speed by which the extra starting torque has faded out, > 0. [rad/s]
    load_inertia : float
        [kg*m^2]

    Notes
    -----
    All values are at the motor shaft (this class takes no gearing, so that its
    ``breakaway_torque`` is the motor-shaft value the :class:`Load` contract promises; refer a
    driven-shaft friction with :meth:`Gearing.refer_torque` first).

    ``T = T_run + (T_b - T_run)*(1 - 3x**2 + 2x**3)`` with ``x = |w|/w_rel`` for x < 1 and
    ``T_run`` beyond, odd in w (w = 0 takes the positive branch, ``T_b``). The smooth-step fade
    is continuous in torque and slope at both ends; in between the slope is negative, the
    region where stick-slip can occur. The shape is our choice (common practice knows the
    drop, not one law for it).
    """

    running_torque: float
    breakaway_torque: float = field()
    release_speed: float = field()
    load_inertia: float = 0.0
    gearing: ClassVar[None] = None
    kind: ClassVar[str] = "breakaway"

    def __post_init__(self):
        object.__setattr__(self, "running_torque", nonnegative("running_torque", self.running_torque))
        object.__setattr__(self, "breakaway_torque", real("breakaway_torque", self.breakaway_torque))
        if self.breakaway_torque < self.running_torque:
            raise ParameterError("breakaway_torque", self.breakaway_torque,
                                 f"a torque >= running_torque={self.running_torque!r} [N*m]")
        object.__setattr__(self, "release_speed", positive("release_speed", self.release_speed))
        object.__setattr__(self, "load_inertia", nonnegative("load_inertia", self.load_inertia))

    def _load_side(self, w_l):
        x = np.minimum(np.abs(w_l) / self.release_speed, 1.0)
        extra = self.breakaway_torque - self.running_torque
        t = _odd(w_l) * (self.running_torque + extra * (1.0 - 3.0 * x**2 + 2.0 * x**3))
        d = extra * (-6.0 * x + 6.0 * x**2) / self.release_speed
        return t, d

    def describe(self):
        return self._geared(f"breakaway friction {self.breakaway_torque:g} N*m to start, "
                            f"{self.running_torque:g} N*m above {self.release_speed:g} rad/s")
