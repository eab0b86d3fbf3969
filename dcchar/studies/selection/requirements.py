"""What the drive must do: requirements with a number, a unit and a way to judge a candidate.

Each requirement is a small frozen dataclass: the name of the figure it judges (``figure``), its
unit, the comparison (``"at least"``, ``"at most"`` or ``"yes/no"``), the required ``value``, a
``marginal`` band (a figure that meets the limit by less than this share of it is marginal) and
a plain-words ``description``. It knows which study gives its figure: :meth:`Requirement.compute`
takes the figure from the underlying study result (operating points, speed regulation, starting,
the run-up time of :mod:`dcchar.studies.starter_steps`) and :meth:`Requirement.sample` takes the
same figure for many sampled machines at once (see :mod:`dcchar.studies.tolerance`).

Signs and units: SI inside (speeds in rad/s, torques in N*m, currents in A, times in s);
percentages are marked "%" and multiples "-". Texts show speeds in r/min.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import ClassVar

import numpy as np

from ...errors import ParameterError
from ...models.characteristic import no_load_point
from ...models.units import RPM
from ...models.validation import in_range, positive, real

__all__ = ["COMPARISONS", "Figure", "Requirement", "SpeedRegulation", "TopSpeed", "LowSpeed", "StartingTorque",
           "StartingCurrent", "AccelerationTime", "SpeedHold", "Lowering", "Efficiency", "ConstantPowerRange",
           "LostLoad", "LostField", "REQUIREMENT_TYPES", "judge", "format_value"]

#: The three ways a figure is held against its required value.
COMPARISONS = ("at least", "at most", "yes/no")


@dataclass(frozen=True)
class Figure:
    """A computed figure and what the study said about it (``detail``, plain words)."""

    value: float
    detail: str = ""


def format_value(value, unit: str) -> str:
    """A figure in words with its display unit (speeds in r/min)."""
    if isinstance(value, (bool, np.bool_)):
        return "yes" if value else "no"
    v = float(value)
    if math.isnan(v):
        return "none"
    if math.isinf(v):
        return "unbounded" if v > 0 else "-unbounded"
    if unit == "rad/s":
        return f"{v / RPM:.0f} r/min" if abs(v / RPM) < 1e6 else "above 10^6 r/min (no bound in practice)"
    if unit == "-":
        return f"{v:.3g}"
    if unit == "%":
        return f"{v:.3g} %"
    return f"{v:.4g} {unit}"


def judge(comparison: str, value, required, marginal: float):
    """Verdict and margin of figure(s) ``value`` against ``required``.

    Returns
    -------
    (verdict, margin)
        ``verdict``: "pass", "marginal" or "fail" (an array of them for array input);
        ``margin``: (value - required)/|required| for "at least", (required - value)/|required|
        for "at most" (positive: met), +1/-1 for "yes/no". A nan figure fails.
    """
    if isinstance(value, (float, int)) and not isinstance(value, bool):
        return _judge_one(comparison, float(value), required, marginal)
    v = np.asarray(value, dtype=float)
    if comparison == "yes/no":
        ok = v == float(bool(required))
        margin = np.where(ok, 1.0, -1.0)
        verdict = np.where(ok, "pass", "fail")
    else:
        r = float(required)
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            if math.isinf(r):
                margin = np.where(np.isfinite(v), np.inf, -np.inf) if comparison == "at most" else np.full(v.shape, -np.inf)
            else:
                d = (v - r) if comparison == "at least" else (r - v)
                margin = d / abs(r) if r != 0 else d
            margin = np.where(np.isnan(v), np.nan, margin)
            verdict = np.where(~(margin >= 0), "fail", np.where(margin < marginal, "marginal", "pass"))
    if v.ndim == 0:
        return str(verdict), float(margin)
    return verdict, margin


def _judge_one(comparison, v, required, marginal):
    """:func:`judge` for one float, in plain Python (the matrix asks one cell at a time)."""
    if comparison == "yes/no":
        ok = v == float(bool(required))
        return ("pass", 1.0) if ok else ("fail", -1.0)
    r = float(required)
    if math.isinf(r):
        margin = (math.inf if math.isfinite(v) else -math.inf) if comparison == "at most" else -math.inf
    else:
        d = (v - r) if comparison == "at least" else (r - v)
        try:
            margin = d / abs(r) if r != 0 else d
        except OverflowError:  # a subnormal required figure: numpy's answer, an infinite margin
            margin = math.copysign(math.inf, d)
    if math.isnan(v):
        margin = math.nan
    return ("fail" if not margin >= 0 else ("marginal" if margin < marginal else "pass")), margin


@dataclass(frozen=True, kw_only=True)
class Requirement:
    """Base class: ``value`` required, ``marginal`` band [-], ``description`` in plain words."""

    value: float
    marginal: float = 0.05
    description: str = ""

    figure: ClassVar[str] = ""
    title: ClassVar[str] = ""
    unit: ClassVar[str] = ""
    comparison: ClassVar[str] = "at least"

    def __post_init__(self):
        if self.comparison != "yes/no" and self.value is not None:
            object.__setattr__(self, "value", real(f"{self.figure}.value", self.value) if not (
                isinstance(self.value, float) and math.isinf(self.value)) else self.value)
        in_range(f"{self.figure}.marginal", self.marginal, 0.0, 1.0)
        if not isinstance(self.description, str):
            raise ParameterError(f"{self.figure}.description", self.description, "a str")

    def replace(self, **changes) -> "Requirement":
        """A copy with some fields changed (validated again)."""
        return replace(self, **changes)

    def required_for(self, case) -> float:
        """The required value for one candidate (most requirements: ``value`` itself)."""
        return self.value

    def describe(self) -> str:
        """The requirement in plain words."""
        if self.description:
            return self.description
        if self.comparison == "yes/no":
            return f"{self.title}: required"
        return f"{self.title} {self.comparison} {format_value(self.value, self.unit)}"

    def compute(self, case) -> Figure:  # pragma: no cover - abstract
        raise NotImplementedError

    def sample(self, samples) -> np.ndarray:  # pragma: no cover - abstract
        raise NotImplementedError


def _op_detail(res) -> str:
    return f"{res.reason}: {res.detail}" if res.reason else ""


@dataclass(frozen=True, kw_only=True)
class SpeedRegulation(Requirement):
    """Speed change from no load to full load, as a percentage of full-load speed, at most ``value`` [%].

    ``torque``: the full-load shaft torque [N*m]; default the rated torque. The figure is
    :func:`dcchar.studies.operating.speed_regulation` ``.percent``.
    """

    torque: float | None = None
    figure: ClassVar[str] = "speed_regulation"
    title: ClassVar[str] = "speed regulation"
    unit: ClassVar[str] = "%"
    comparison: ClassVar[str] = "at most"

    def compute(self, case):
        try:
            reg = case.regulation(self.torque)
        except ParameterError as exc:
            return Figure(math.nan, f"no full-load point: {exc.allowed}")
        why = "the no-load speed is unbounded" if math.isinf(reg.percent) else ""
        return Figure(reg.percent, why)

    def sample(self, s):
        return s.regulation(self.torque)


@dataclass(frozen=True, kw_only=True)
class TopSpeed(Requirement):
    """Highest steady speed on the load, at least ``value`` [rad/s]: full voltage, field weakened
    to ``min_field_share`` of its own current (rheostat; a diverter on a series field), capped at
    the safe speed (a permanent magnet machine has no field to weaken)."""

    min_field_share: float = 0.25
    figure: ClassVar[str] = "top_speed"
    title: ClassVar[str] = "top speed on the load"
    unit: ClassVar[str] = "rad/s"
    comparison: ClassVar[str] = "at least"

    def __post_init__(self):
        super().__post_init__()
        in_range("top_speed.min_field_share", self.min_field_share, 0.0, 1.0, low_open=True, high_open=True)

    def compute(self, case):
        m = case.weakened(self.min_field_share)
        if m is None:
            p = case.operating.point
            if p is None:
                return Figure(math.nan, _op_detail(case.operating))
            return Figure(min(p.speed, case.safe_speed), "no field to weaken: full voltage only")
        res = case.point_on(case.load, machine=m, tag=("weak", self.min_field_share))
        i0 = m.locked_rotor_current(case.voltage)
        # the point a running drive follows as the field weakens: least armature current
        pts = [p for p in res.points if 0 < p.armature_current < i0 and p.speed > 0]
        if pts:
            p = min(pts, key=lambda q: q.armature_current)
            return Figure(p.speed, f"{p.armature_current:.4g} A with the field at {self.min_field_share:g} of its own")
        if res.beyond_safe_speed:
            return Figure(case.safe_speed, "the weakened field would pass the safe speed: capped there")
        return Figure(math.nan, _op_detail(res) or "no running point with the field weakened")

    def sample(self, s):
        return s.top_speed(self.min_field_share)


@dataclass(frozen=True, kw_only=True)
class LowSpeed(Requirement):
    """Lowest steady speed on the load, at most ``value`` [rad/s]: the stable point with the
    armature supply lowered to ``min_voltage_fraction`` of the running voltage; where the shunt
    field shares that supply (shunt, compound), with an armature resistance that drops
    (1 - ``min_voltage_fraction``) of the supply at rated current instead (see
    :meth:`Case.low_speed_control`)."""

    min_voltage_fraction: float = 0.1
    figure: ClassVar[str] = "low_speed"
    title: ClassVar[str] = "lowest steady speed"
    unit: ClassVar[str] = "rad/s"
    comparison: ClassVar[str] = "at most"

    def __post_init__(self):
        super().__post_init__()
        in_range("low_speed.min_voltage_fraction", self.min_voltage_fraction, 0.0, 1.0, low_open=True)

    def compute(self, case):
        how = case.low_speed_control(self.min_voltage_fraction)
        v = case.voltage * how.get("voltage_fraction", 1.0)
        m = case.machine
        rx = how.get("extra_rx", 0.0)
        where = f"{rx:.3g} ohm in the armature loop" if rx else f"{v:.4g} V"
        if rx:
            m = m.with_(external_resistance=m.external_resistance + rx)
        res = case.point_on(case.load, voltage=v, machine=m, tag=("low", self.min_voltage_fraction))
        p = res.point
        if p is None or not p.stable:
            why = _op_detail(res) if p is None else "the point is unstable"
            return Figure(math.nan, f"with {where}: {why}")
        return Figure(p.speed, f"with {where}")

    def sample(self, s):
        return s.low_speed(self.min_voltage_fraction)


@dataclass(frozen=True, kw_only=True)
class StartingTorque(Requirement):
    """Torque at standstill with the starter in force, as a multiple of the load's breakaway
    torque (``basis="breakaway"``) or of the running torque (``basis="running"``), at least ``value`` [-]."""

    basis: str = "breakaway"
    figure: ClassVar[str] = "starting_torque"
    title: ClassVar[str] = "starting torque"
    unit: ClassVar[str] = "-"
    comparison: ClassVar[str] = "at least"

    def __post_init__(self):
        super().__post_init__()
        if self.basis not in ("breakaway", "running"):
            raise ParameterError("starting_torque.basis", self.basis, "'breakaway' or 'running'")

    def reference(self, case) -> float:
        """The torque the multiple is taken of. [N*m]"""
        if self.basis == "breakaway":
            return float(case.load.breakaway_torque)
        p = case.operating.point
        if p is not None:
            return float(p.torque)
        r = case.machine.rating
        return float(case.load.torque(r.speed if r else 0.0))

    def compute(self, case):
        t = case.starting.with_resistance.torque
        ref = self.reference(case)
        if not ref > 0:
            return Figure(math.inf, f"the load asks no {self.basis} torque")
        return Figure(t / ref, f"{t:.4g} N*m against {ref:.4g} N*m ({self.basis})")

    def sample(self, s):
        ref = s.operating()["torque"] if self.basis == "running" else self.reference(s.case)
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(np.asarray(ref) > 0, s.starting_torque() / ref, np.inf)


@dataclass(frozen=True, kw_only=True)
class StartingCurrent(Requirement):
    """Supply current at standstill with the starter in force, at most ``value`` [A]."""

    figure: ClassVar[str] = "starting_current"
    title: ClassVar[str] = "starting current"
    unit: ClassVar[str] = "A"
    comparison: ClassVar[str] = "at most"

    def __post_init__(self):
        super().__post_init__()
        positive("starting_current.value", self.value)

    def compute(self, case):
        st = case.starting.with_resistance
        return Figure(st.supply_current, f"with {st.external_resistance:.3g} ohm in the armature loop")

    def sample(self, s):
        return s.starting_current()


@dataclass(frozen=True, kw_only=True)
class AccelerationTime(Requirement):
    """Run-up time from rest to ``target_fraction`` of the settled speed, at most ``value`` [s].

    The motor's shaft torque minus the load torque against speed, inertia of motor and load at the
    motor shaft, integrated by :func:`dcchar.studies.starter_steps.acceleration_time_curve`. With a
    starter, the run-up starts with its resistance in the loop, cut out in one step as soon as
    the current has fallen to the rated current or the direct-on current would be no more than
    the starting current, whichever comes first.
    """

    target_fraction: float = 0.95
    figure: ClassVar[str] = "acceleration_time"
    title: ClassVar[str] = "run-up time"
    unit: ClassVar[str] = "s"
    comparison: ClassVar[str] = "at most"

    #: Current nodes (fractions of the standstill current) and speed nodes of the run-up.
    CURRENT_NODES: ClassVar[np.ndarray] = np.linspace(1.0, 1e-3, 400)
    SPEED_NODES: ClassVar[np.ndarray] = np.linspace(0.0, 1.0, 241)

    def __post_init__(self):
        super().__post_init__()
        in_range("acceleration_time.target_fraction", self.target_fraction, 0.0, 1.0, low_open=True, high_open=True)

    def compute(self, case):
        from ..starter_steps import acceleration_time_curve

        p = case.operating.point
        if p is None or not p.speed > 0:
            return Figure(math.inf, "no running point to reach: " + _op_detail(case.operating))
        j = case.total_inertia
        w_t = self.target_fraction * p.speed
        m, v = case.machine, case.voltage
        rx = case.starter_resistance
        direct = m.characteristic(v, m.locked_rotor_current(v) * self.CURRENT_NODES)
        grid = w_t * self.SPEED_NODES
        torque = _torque_at(direct.speed, direct.shaft_torque, grid)
        if rx > 0:
            ms = m.with_(external_resistance=m.external_resistance + rx)
            i_s = ms.locked_rotor_current(v)
            started = ms.characteristic(v, i_s * self.CURRENT_NODES)
            w_cut = float(m.state_arrays(v, np.array([i_s]))["speed"][0])
            if m.rating is not None and m.rating.current < i_s:  # current fallen to rated: cut out
                w_cut = min(w_cut, float(ms.state_arrays(v, np.array([m.rating.current]))["speed"][0]))
            torque = np.where(grid < w_cut, _torque_at(started.speed, started.shaft_torque, grid), torque)
        t_acc = torque - np.asarray(case.load.torque(grid), dtype=float)
        if not j > 0:
            return Figure(0.0, "no inertia given")
        if not np.all(np.isfinite(t_acc)):
            return Figure(math.inf, "the torque curve does not reach the target speed")
        r = acceleration_time_curve(j, grid, t_acc)
        return Figure(r.total_time, r.reason or f"to {w_t / RPM:.0f} r/min with {j:.4g} kg*m^2")

    def sample(self, s):
        return s.run_up_time(self.target_fraction, self.CURRENT_NODES, self.SPEED_NODES)


def _torque_at(speed, torque, grid):
    """Shaft torque at ``grid`` speeds on a characteristic swept from standstill (its rising-speed run)."""
    from ._vector import increasing_prefix

    w = np.array(speed, dtype=float)
    w[0] = 0.0  # the first node is standstill (zero EMF)
    ok = increasing_prefix(w[None, :])[0]
    return np.interp(grid, w[ok], np.asarray(torque, float)[ok], left=np.nan, right=np.nan)


@dataclass(frozen=True, kw_only=True)
class SpeedHold(Requirement):
    """Speed change when the load torque rises by ``step`` [N*m], at most ``value`` [%] of the speed before."""

    step: float
    figure: ClassVar[str] = "speed_hold"
    title: ClassVar[str] = "speed change on a load step"
    unit: ClassVar[str] = "%"
    comparison: ClassVar[str] = "at most"

    def __post_init__(self):
        super().__post_init__()
        positive("speed_hold.step", self.step)

    def stepped(self, load):
        from ...models.loads import ConstantTorque

        return load + ConstantTorque(self.step)

    def compute(self, case):
        a = case.operating
        b = case.point_on(self.stepped(case.load), tag=("step", self.step))
        if a.point is None or b.point is None:
            return Figure(math.nan, _op_detail(a) or _op_detail(b))
        w0, w1 = a.point.speed, b.point.speed
        return Figure((w0 - w1) / w0 * 100.0, f"{w0 / RPM:.0f} to {w1 / RPM:.0f} r/min for {self.step:.4g} N*m more")

    def describe(self):
        return self.description or (f"speed change at most {self.value:g} % when the load torque rises by "
                                    f"{self.step:.4g} N*m")

    def sample(self, s):
        return s.speed_hold(self.step)


@dataclass(frozen=True, kw_only=True)
class Lowering(Requirement):
    """Hold back an overhauling load by regeneration, without reconnecting the field (yes/no).

    The overhauling torque is ``torque`` [N*m], default the load's lowering torque (a hoist) or
    the rated torque. The machine is studied in the direction of motion with the load driving
    it: it holds when it finds a generating point within the safe speed. A series motor cannot:
    reversing its armature current reverses its field too, so it must be reconnected (as a
    separately excited machine) or braked otherwise.
    """

    value: bool = True
    torque: float | None = None
    figure: ClassVar[str] = "lowering"
    title: ClassVar[str] = "regenerative lowering without reconnection"
    unit: ClassVar[str] = "yes/no"
    comparison: ClassVar[str] = "yes/no"

    def overhauling_torque(self, case) -> float:
        if self.torque is not None:
            return positive("lowering.torque", self.torque)
        t = getattr(case.load, "lowering_torque", None)
        if t is None and case.machine.rating is not None:
            t = case.machine.rating.torque
        if t is None:
            raise ParameterError("lowering.torque", None, "an overhauling torque [N*m] (no rating to default to)")
        return float(t)

    def overhauling_load(self, case):
        from ...models.loads import ConstantTorque

        return ConstantTorque(-self.overhauling_torque(case), active=True)

    def compute(self, case):
        t = self.overhauling_torque(case)
        res = case.point_on(self.overhauling_load(case), tag=("lower", t))
        p = res.point
        ok = p is not None and p.mode == "generating"
        if case.machine.connection == "series":
            why = "a series motor cannot regenerate without reconnection: reversing its current reverses its field"
        elif ok:
            why = f"returns {-p.input_power:.4g} W at {p.speed_rpm:.0f} r/min holding {t:.4g} N*m"
        else:
            why = _op_detail(res) or "no generating point"
        return Figure(bool(ok), why)

    def sample(self, s):
        return s.lowering(self.overhauling_torque(s.case))


@dataclass(frozen=True, kw_only=True)
class Efficiency(Requirement):
    """Efficiency at the duty point, at least ``value`` [-] (0.85 means 85 %).

    ``duty``: optional sequence of ``(duration [s], load)`` pairs; the figure is then the energy
    efficiency over the cycle, sum(P_out*t)/sum(P_in*t), of the settled points on each load.
    """

    duty: tuple | None = None
    figure: ClassVar[str] = "efficiency"
    title: ClassVar[str] = "efficiency"
    unit: ClassVar[str] = "-"
    comparison: ClassVar[str] = "at least"

    def __post_init__(self):
        super().__post_init__()
        in_range("efficiency.value", self.value, 0.0, 1.0)
        if self.duty is not None:
            duty = tuple(self.duty)
            for i, part in enumerate(duty):
                if len(part) != 2 or not hasattr(part[1], "torque"):
                    raise ParameterError(f"efficiency.duty[{i}]", part, "a (duration [s], load) pair")
                positive(f"efficiency.duty[{i}][0]", part[0])
            object.__setattr__(self, "duty", duty)

    def compute(self, case):
        if self.duty is None:
            p = case.operating.point
            return Figure(p.efficiency if p is not None else math.nan, _op_detail(case.operating))
        e_in = e_out = 0.0
        for i, (dt, load) in enumerate(self.duty):
            p = case.point_on(load, tag=("duty", i, id(load))).point
            if p is None:
                return Figure(math.nan, f"no running point on duty part {i + 1}")
            e_in += p.input_power * dt
            e_out += p.output_power * dt
        return Figure(e_out / e_in if e_in > 0 else math.nan, f"energy over {len(self.duty)} duty parts")

    def describe(self):
        where = "over the duty cycle" if self.duty else "at the duty point"
        return self.description or f"efficiency {where} at least {100 * self.value:.3g} %"

    def sample(self, s):
        return s.efficiency(self.duty)


@dataclass(frozen=True, kw_only=True)
class ConstantPowerRange(Requirement):
    """Ratio of top to base speed at rated armature current by field weakening, at least ``value`` [-].

    Base: the speed at rated current and the running field; top: the speed at rated current with
    the field weakened to ``min_field_share`` of its own current, capped at the safe speed.
    """

    min_field_share: float = 0.25
    figure: ClassVar[str] = "constant_power_range"
    title: ClassVar[str] = "constant-power speed range"
    unit: ClassVar[str] = "-"
    comparison: ClassVar[str] = "at least"

    def __post_init__(self):
        super().__post_init__()
        in_range("constant_power_range.min_field_share", self.min_field_share, 0.0, 1.0, low_open=True,
                 high_open=True)

    def compute(self, case):
        m = case.machine
        if m.rating is None:
            return Figure(math.nan, "needs a rated current")
        weak = case.weakened(self.min_field_share)
        i = np.array([m.rating.current])
        base = float(m.state_arrays(case.voltage, i)["speed"][0])
        if weak is None:
            return Figure(1.0, "no field to weaken")
        top = float(weak.state_arrays(case.voltage, i)["speed"][0])
        capped = min(top, case.safe_speed)
        why = "capped at the safe speed" if top > case.safe_speed else ""
        return Figure(capped / base, why or f"{base / RPM:.0f} to {top / RPM:.0f} r/min at {i[0]:g} A")

    def sample(self, s):
        return s.constant_power_range(self.min_field_share)


@dataclass(frozen=True, kw_only=True)
class _SpeedLimit(Requirement):
    """A speed at most ``value`` [rad/s]; None: each machine's safe speed."""

    value: float | None = None
    unit: ClassVar[str] = "rad/s"
    comparison: ClassVar[str] = "at most"
    _limited: ClassVar[str] = ""  # what the description says is limited

    def required_for(self, case):
        return case.safe_speed if self.value is None else float(self.value)

    def describe(self):
        lim = "the safe speed" if self.value is None else format_value(self.value, "rad/s")
        return self.description or f"{self._limited} at most {lim}"


@dataclass(frozen=True, kw_only=True)
class LostLoad(_SpeedLimit):
    """Speed if the load falls away (the no-load speed), at most ``value`` [rad/s]; None: each
    machine's safe speed."""

    figure: ClassVar[str] = "lost_load"
    title: ClassVar[str] = "speed on loss of load"
    _limited: ClassVar[str] = "no runaway on loss of load: no-load speed"

    def compute(self, case):
        w = case.no_load_speed
        return Figure(w, "the flux falls with the load and the speed has no bound" if math.isinf(w) else "")

    def sample(self, s):
        return s.no_load_speed()


@dataclass(frozen=True, kw_only=True)
class LostField(_SpeedLimit):
    """No-load speed with the shunt (or separate) field circuit open, at most ``value`` [rad/s];
    None: each machine's safe speed. The figure is the magnitude of the speed (with the field
    gone, armature reaction can reverse the flux and the rotor run backward). Shunt and separately excited: residual flux only; compound:
    the series field only. A series field is in the armature loop (opening it stops the motor)
    and magnets cannot be switched off, so those keep their no-load speed."""

    figure: ClassVar[str] = "lost_field"
    title: ClassVar[str] = "speed on loss of field"
    _limited: ClassVar[str] = "no runaway on loss of field: speed"

    def compute(self, case):
        m = case.field_lost()
        if m is None:
            if case.machine.connection == "series":
                return Figure(0.0, "opening the series field opens the armature loop: the motor stops")
            return Figure(case.no_load_speed, "no field circuit to lose: magnets keep their flux")
        w = abs(case.memo("lost_field", lambda: no_load_point(m, case.voltage).speed))
        conn = case.machine.connection
        left = "the series field only" if conn.endswith("compound") else "the residual flux only"
        return Figure(w, f"with {left}")

    def sample(self, s):
        return s.lost_field_speed()


#: Requirement classes by figure name.
REQUIREMENT_TYPES = {cls.figure: cls for cls in (
    SpeedRegulation, TopSpeed, LowSpeed, StartingTorque, StartingCurrent, AccelerationTime, SpeedHold, Lowering,
    Efficiency, ConstantPowerRange, LostLoad, LostField)}

