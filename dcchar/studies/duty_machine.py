"""The duty cycle of a given machine: operating point, current, losses and energy of every
segment, then the rms current and torque, the peaks, the energy drawn and returned, the
equivalent continuous rating against the machine's rating and the IEC 60034-1 duty type.

Each running segment names a load (and a direction); its operating point comes from
:func:`dcchar.studies.operating.operating_points`. Starting and braking segments take a simulated
:class:`~dcchar.studies.transients.Transient` (or :class:`~dcchar.studies.braking.BrakingResult`)
- their rms current and torque, mean power and losses then enter the cycle exactly - or an
explicit current. The machine-independent arithmetic is :mod:`dcchar.studies.duty` and
:mod:`dcchar.studies.thermal`.

Hot windings age and fail: the figures are a first check; defer to the maker's data, local codes
and licensed practice.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ..errors import ParameterError
from ..models.validation import choice, positive, real
from .duty import (KINDS, DutyClassification, DutyCycle, DutySegment, EquivalentRating, classify_duty,
                   equivalent_continuous_rating, rms)

__all__ = ["MachineSegment", "MachineDuty", "duty_summary", "compare_duty"]

_DEFER = "Defer to the maker's data, local codes and licensed practice."


@dataclass(frozen=True)
class MachineSegment:
    """One segment of a machine's duty cycle.

    Parameters
    ----------
    duration : float or None
        [s]; None takes the duration of ``transient``.
    load : Load, optional
        For "run" segments: the load the motor drives (operating point); for "hold": the load
        held at standstill (its torque at rest).
    kind : str
        One of :data:`dcchar.studies.duty.KINDS`.
    direction : {1, -1}
        Forward (+1) or with the armature reversed (-1: the motor runs backward, e.g. power
        lowering of a hoist).
    voltage : float, optional
        Supply voltage of this segment [V]; default: the summary's voltage.
    transient : Transient or BrakingResult, optional
        A simulated start or stop of this machine for "start" and "brake" segments.
    current : float, optional
        Armature current [A] of a "start", "brake" or "hold" segment given directly (e.g. the
        mean of a starter's current limits).
    label : str
    """

    duration: float | None = None
    load: object = None
    kind: str = "run"
    direction: int = 1
    voltage: float | None = None
    transient: object = None
    current: float | None = None
    label: str = ""

    def __post_init__(self):
        choice("kind", self.kind, KINDS)
        if self.direction not in (1, -1) or isinstance(self.direction, bool):
            raise ParameterError("direction", self.direction, "1 (forward) or -1 (reverse)")
        if self.duration is None and self.transient is None:
            raise ParameterError("duration", None, "a duration > 0 [s] (or a transient to take it from)")
        if self.duration is not None:
            object.__setattr__(self, "duration", positive("duration", self.duration))
        if self.voltage is not None:
            object.__setattr__(self, "voltage", positive("voltage", self.voltage))
        if self.current is not None:
            object.__setattr__(self, "current", real("current", self.current))
        if self.kind == "run" and self.load is None:
            raise ParameterError("load", None, "a load for a run segment")
        if self.kind in ("start", "brake") and self.transient is None and self.current is None:
            raise ParameterError("transient", None, f"a transient or a current [A] for a {self.kind} segment")
        if self.kind == "hold" and self.load is None and self.current is None:
            raise ParameterError("load", None, "a load or a current [A] for a hold segment")


@dataclass(frozen=True, eq=False)
class MachineDuty:
    """A machine on a duty cycle.

    Attributes
    ----------
    machine : object
    cycle : DutyCycle
        The segments filled with torque [N*m], current [A], power [W] (electrical input,
        negative returned), speed [rad/s] and motor losses [W] (external resistors excluded).
    feasible : bool
        False when some running segment has no operating point (the motor cannot start, runs
        away or cannot hold); ``reasons`` names them, and the figures then cover the others.
    reasons : tuple of str
    rms_current, rms_torque : float
        [A], [N*m]
    peak_current, peak_torque : float
        Largest |I_a| and |torque|, transients' peaks included. [A], [N*m]
    energy_drawn, energy_returned : float
        Over one cycle. [J]
    energy_losses : float
        Heat in the motor over one cycle. [J]
    current_rating : EquivalentRating
        Equivalent continuous rating by current (rms method).
    rated_current_ratio, rated_torque_ratio : float
        rms current / rated current and rms torque / rated torque (nan without a rating). [-]
    duty : DutyClassification
        IEC 60034-1 duty type, designation and CDF.
    thermal : PeriodicThermal or None
        Periodic temperature cycle when a thermal model was given.
    notes : tuple of str
    """

    machine: object
    cycle: DutyCycle
    feasible: bool
    reasons: tuple
    rms_current: float
    rms_torque: float
    peak_current: float
    peak_torque: float
    energy_drawn: float
    energy_returned: float
    energy_losses: float
    current_rating: EquivalentRating
    rated_current_ratio: float
    rated_torque_ratio: float
    duty: DutyClassification
    thermal: object = None
    notes: tuple = field(default=())

    @property
    def within_rating(self) -> bool:
        """rms current within the rated current (False without a rating)."""
        return bool(self.rated_current_ratio <= 1.0)

    def to_row(self) -> dict:
        """The summary as a dict, SI, units in the keys."""
        return {"connection": self.machine.label, "feasible": self.feasible, "rms current [A]": self.rms_current,
                "rms torque [N*m]": self.rms_torque, "peak current [A]": self.peak_current,
                "energy drawn [J]": self.energy_drawn, "energy returned [J]": self.energy_returned,
                "rms/rated current [-]": self.rated_current_ratio, "duty type": self.duty.designation,
                "CDF [-]": self.duty.cdf,
                "max rise [K]": self.thermal.max_rise if self.thermal is not None else math.nan}


def _mirror(load):
    """The load seen by a motor whose armature is reversed, in the motor's own (mirrored) frame."""
    from ..models.loads.base import Load

    class _Reversed(Load):
        kind = "reversed"

        def torque(self, speed):
            return -np.asarray(load.torque(-np.asarray(speed, dtype=float)), dtype=float)

        def slope(self, speed):
            return np.asarray(load.slope(-np.asarray(speed, dtype=float)), dtype=float)

        @property
        def breakaway_torque(self):
            return -float(load.torque(-1e-30))

        @property
        def inertia(self):
            return load.inertia

        def describe(self):
            return "reversed: " + load.describe()

    return _Reversed()


_PROBE = np.array([0.0, 1e-3, 0.3, 1.0, 3.0, 10.0, 30.0, 100.0, 300.0, 1000.0])


def _odd(load, cache):
    """True when T(-w) = -T(w) at probe speeds (and at standstill's two branches): a passive load."""
    key = ("odd", id(load))
    if key not in cache:
        w = np.concatenate((_PROBE[1:], [1e-30]))
        cache[key] = bool(np.array_equal(np.asarray(load.torque(-w)), -np.asarray(load.torque(w))))
    return cache[key]


def _motor_losses(machine, losses: dict, field_current: float) -> float:
    """Losses that heat the motor: every term but the external resistor, plus a separate field's copper."""
    total = sum(v for k, v in losses.items() if k != "external_resistor")
    if machine.connection == "separately_excited" and not machine.count_field_input:
        total += machine.field_voltage * field_current
    return float(total)


def _run_values(machine, seg, V, cache):
    from .operating import operating_points

    direction = seg.direction
    if direction == -1 and _odd(seg.load, cache):
        direction = 1  # a passive load is odd in speed: the reversed point is the forward one mirrored
    key = (id(seg.load), V, direction)
    if key not in cache:
        load = seg.load if direction == 1 else _mirror(seg.load)
        cache[key] = operating_points(machine, load, V)
    res = cache[key]
    p = res.point
    if p is None:
        return None, f"{seg.label or 'run segment'}: {res.reason} ({res.detail})"
    s = seg.direction
    loss = _motor_losses(machine, p.losses, p.field_current)
    return dict(torque=s * p.torque, current=s * p.armature_current, power=p.input_power, speed=s * p.speed,
                losses=loss, peak_i=abs(p.armature_current), peak_t=abs(p.torque)), ""


def _current_for_torque(machine, V, torque):
    """Armature current [A] whose developed torque kphi*I equals ``torque`` [N*m] (at standstill)."""
    from scipy.optimize import brentq

    i_max = machine.locked_rotor_current(V)
    grid = i_max * np.linspace(0.0, 1.0, 65)
    t = machine.state_arrays(V, grid)["developed_torque"]
    above = np.nonzero(t >= torque)[0]
    if above.size == 0:
        return None
    j = int(above[0])
    if j == 0:
        return 0.0
    f = lambda i: float(machine.state_arrays(V, np.array([i]))["developed_torque"][0]) - torque  # noqa: E731
    return brentq(f, grid[j - 1], grid[j], xtol=1e-10 * i_max)


def _current_values(machine, seg, V, speeds, cache):
    """A start, brake or hold segment with a given armature current (signs follow the direction)."""
    s = seg.direction
    if seg.current is not None:
        i = abs(seg.current)
    else:  # hold: the current that holds the load's standstill torque
        t_hold = abs(float(seg.load.torque(s * 1e-30)))
        i = _current_for_torque(machine, V, t_hold)
        if i is None:
            return None, f"{seg.label or 'hold segment'}: the motor cannot develop the holding torque {t_hold:.4g} N*m"
    key = ("state", i, V)
    if key not in cache:
        cache[key] = machine.state_arrays(V, np.array([i]))
    st = cache[key]
    copper = (st["armature_copper"][0] + st["series_field_copper"][0] + st["shunt_field_copper"][0]
              + st["brush"][0])
    loss = _motor_losses(machine, {"copper": copper}, float(st["field_current"][0]))
    torque = s * float(st["developed_torque"][0])
    w_a, w_b = speeds
    if seg.kind == "hold":
        power, spd = copper + st["external_resistor"][0], 0.0
    elif seg.kind == "start":
        power, spd = V * float(st["supply_current"][0]), (0.0, w_b)
    else:  # dynamic braking: the armature feeds a resistor, the supply gives only the field
        power, spd = float(st["shunt_field_copper"][0]), (w_a, 0.0)
        torque = -torque
    return dict(torque=torque, current=s * i if seg.kind != "brake" else -s * i, power=power, speed=spd,
                losses=loss, peak_i=i, peak_t=abs(torque)), ""


def _transient_values(machine, seg):
    tr = seg.transient
    tr = getattr(tr, "transient", tr)  # a BrakingResult carries its Transient
    if tr is None:
        return None, f"{seg.label or seg.kind + ' segment'}: the braking result has no run ({seg.transient.reason})"
    e = tr.energy
    d = tr.duration
    i_rms, t_rms = tr.rms("armature_current"), tr.rms("torque")
    loss = e.machine_losses / d
    sign_i = 1.0 if tr.mean("armature_current") >= 0 else -1.0
    sign_t = 1.0 if tr.mean("torque") >= 0 else -1.0
    drawn, returned = tr.energy_exchanged
    return dict(torque=sign_t * t_rms, current=sign_i * i_rms, power=(e.supply + e.field_supply) / d,
                speed=(float(tr.speed[0]), float(tr.speed[-1])), losses=loss, peak_i=tr.peak_current,
                peak_t=tr.peak_torque, drawn=drawn, returned=returned, duration=d), ""


def duty_summary(machine, segments, *, voltage=None, periodic=True, thermal=None, rest_weight=1.0,
                 transient_weight=1.0) -> MachineDuty:
    """Operating points, rms values, energy and duty type of ``machine`` on a cycle of segments.

    Parameters
    ----------
    machine : dcchar machine
    segments : sequence of MachineSegment
    voltage : float, optional
        Supply voltage [V]; default: the rated voltage.
    periodic : bool, default True
        The cycle repeats (duty types S3 to S8).
    thermal : FirstOrderThermal, optional
        When given, the periodic temperature cycle of the motor losses is computed.
    rest_weight, transient_weight : float, optional
        Cooling weights of rest and of start/brake periods in the rms, as in
        :func:`dcchar.studies.duty.rms`.

    Returns
    -------
    MachineDuty

    Notes
    -----
    The equivalent continuous rating is the rms current (and torque) over the cycle: the
    continuous load that heats the machine as the cycle does where the losses vary as the
    square of the current [1]_; the peak is checked against twice the rms value (Dubey's check)
    and against twice the rated current (common practice, no source).

    References
    ----------
    .. [1] G. K. Dubey, Fundamentals of Electrical Drives, 2nd ed. New Delhi, India: Narosa, 2001,
       ch. 4, Ex. 4.3, p. 53.
    """
    V = machine.default_voltage() if voltage is None else positive("voltage", voltage)
    segs = tuple(segments)
    if not segs:
        raise ParameterError("segments", segments, "at least one MachineSegment")
    for i, s in enumerate(segs):
        if not isinstance(s, MachineSegment):
            raise ParameterError(f"segments[{i}]", s, "a MachineSegment")
    cache = {}
    values, reasons = [None] * len(segs), []
    for i, s in enumerate(segs):  # running points first: start and brake ramps need their speeds
        if s.kind == "run":
            values[i], why = _run_values(machine, s, s.voltage or V, cache)
            if why:
                reasons.append(why)
    n = len(segs)
    for i, s in enumerate(segs):
        if s.kind == "rest" or s.kind == "run":
            continue
        if s.transient is not None:
            values[i], why = _transient_values(machine, s)
        else:
            nxt = next((values[(i + k) % n] for k in range(1, n) if segs[(i + k) % n].kind == "run"
                        and values[(i + k) % n] is not None), None)
            prv = next((values[(i - k) % n] for k in range(1, n) if segs[(i - k) % n].kind == "run"
                        and values[(i - k) % n] is not None), None)
            speeds = (abs(prv["speed"]) * s.direction if prv else 0.0, abs(nxt["speed"]) * s.direction if nxt else 0.0)
            values[i], why = _current_values(machine, s, s.voltage or V, speeds, cache)
        if why:
            reasons.append(why)
    duty_segs, peaks_i, peaks_t, drawn, returned = [], [0.0], [0.0], 0.0, 0.0
    for s, v in zip(segs, values):
        dt = s.duration if s.duration is not None else v["duration"] if v else s.transient.transient.duration
        if s.kind == "rest" or v is None:
            duty_segs.append(DutySegment(dt, kind="rest" if s.kind == "rest" else s.kind, torque=0.0, current=0.0,
                                         power=0.0, speed=0.0, losses=0.0, label=s.label))
            continue
        duty_segs.append(DutySegment(dt, torque=v["torque"], current=v["current"], power=v["power"],
                                     speed=v["speed"], losses=v["losses"], kind=s.kind, label=s.label))
        peaks_i.append(v["peak_i"])
        peaks_t.append(v["peak_t"])
        if "drawn" in v:
            drawn += v["drawn"]
            returned += v["returned"]
        else:
            p = v["power"]
            drawn += max(p, 0.0) * dt
            returned += max(-p, 0.0) * dt
    cycle = DutyCycle(duty_segs, periodic)
    i_rating = equivalent_continuous_rating(cycle, "current", rest_weight=rest_weight,
                                            transient_weight=transient_weight)
    t_rms = rms(cycle, "torque", rest_weight=rest_weight, transient_weight=transient_weight)
    peak_i, peak_t = max(max(peaks_i), i_rating.peak), max(peaks_t)
    jm = machine.inertia
    jx = max((float(s.load.inertia) for s in segs if s.load is not None), default=0.0)
    klass = classify_duty(cycle, load_quantity="current", motor_inertia=jm, load_inertia=jx)
    rating = machine.rating
    ri = i_rating.rms / rating.current if rating else math.nan
    rt = t_rms / rating.torque if rating else math.nan
    notes = list(i_rating.notes)
    if rating is not None:
        if ri > 1.0:
            notes.append(f"The rms current is {ri:.3g} x rated: the motor runs hotter than its rating on this duty "
                         "(first-order estimate). " + _DEFER)
        if peak_i > 2.0 * rating.current:
            notes.append(f"The peak current {peak_i:.4g} A is above twice the rated current (commutation limit, "
                         "common practice, no source). " + _DEFER)
    if any(getattr(s.load, "kind", "") == "hoist" for s in segs):
        notes.append("A hoist lowering its load needs electric braking and a mechanical holding brake; the motor "
                     "is not a holding device. " + _DEFER)
    therm = None
    if thermal is not None:
        from .thermal import periodic_cycle, simulate_cycle

        therm = periodic_cycle(thermal, cycle) if periodic else simulate_cycle(thermal, cycle)
    e_loss = float(np.dot(cycle.durations, 0.5 * np.add(*cycle.profile("losses"))))
    return MachineDuty(machine=machine, cycle=cycle, feasible=not reasons, reasons=tuple(reasons),
                       rms_current=i_rating.rms, rms_torque=t_rms, peak_current=peak_i, peak_torque=peak_t,
                       energy_drawn=drawn, energy_returned=returned, energy_losses=e_loss, current_rating=i_rating,
                       rated_current_ratio=ri, rated_torque_ratio=rt, duty=klass, thermal=therm,
                       notes=tuple(dict.fromkeys(notes)))


def compare_duty(machines, segments, **kwargs) -> dict:
    """:func:`duty_summary` of one cycle for several machines (e.g. the six connections of a family).

    Parameters
    ----------
    machines : dict or sequence
        key -> machine (a sequence is keyed by each machine's connection).
    segments : sequence of MachineSegment
        Start and brake segments should give a current (a transient belongs to one machine).
    **kwargs
        Passed to :func:`duty_summary`.

    Returns
    -------
    dict
        key -> MachineDuty.
    """
    items = machines.items() if isinstance(machines, dict) else ((m.connection, m) for m in machines)
    return {k: duty_summary(m, segments, **kwargs) for k, m in items}
