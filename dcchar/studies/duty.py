"""Duty cycles: segments, rms and peak values, energy, equivalent continuous rating and the IEC
60034-1 duty type a cycle fits.

Machine-independent: a segment carries the torque, current, power, speed and losses that are
known; a machine-aware layer can fill the missing ones from operating points with
:meth:`DutyCycle.map` (or :meth:`DutySegment.replace`) and hand the result back here and to
:mod:`dcchar.studies.thermal`.

A value may be given as a number (held through the segment) or as a pair ``(start, end)`` (a
linear ramp). With ``ramp=True`` a plain number ramps from the value the previous segment ended
on (the last segment for the first one when the cycle is periodic, else zero).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from typing import Callable

import numpy as np

from ..errors import ParameterError
from ..models.validation import choice, in_range, nonnegative, positive

__all__ = [
    "KINDS", "QUANTITIES", "DutySegment", "DutyCycle", "EquivalentRating", "EnergySummary",
    "DutyClassification", "rms", "mean_absolute", "peak", "energy", "equivalent_continuous_rating",
    "cyclic_duration_factor", "classify_duty",
]

#: Segment kinds: loaded running, starting, electric braking, de-energized rest, energized standstill.
KINDS = ("run", "start", "brake", "rest", "hold")
#: Quantities a segment may carry, with their units.
QUANTITIES = {"torque": "N*m", "current": "A", "power": "W", "speed": "rad/s", "losses": "W"}


def _value(name, v):
    if v is None:
        return None
    if isinstance(v, (tuple, list)):
        if len(v) != 2:
            raise ParameterError(name, v, "a number or a (start, end) pair")
        a = in_range(f"{name}[0]", v[0], -math.inf, math.inf)
        b = in_range(f"{name}[1]", v[1], -math.inf, math.inf)
        return (a, b)
    return in_range(name, v, -math.inf, math.inf)


@dataclass(frozen=True)
class DutySegment:
    """One segment of a duty cycle.

    Parameters
    ----------
    duration : float
        Length of the segment, > 0. [s]
    torque, current, power, speed, losses : float or (float, float) or None
        Shaft torque [N*m], armature current [A], power (motoring > 0, returned < 0) [W], shaft
        speed [rad/s] and total losses [W]: a number held through the segment, a (start, end)
        pair for a linear ramp, or None when not known (a ``rest`` segment counts as 0).
    kind : str
        One of ``KINDS``: "run", "start", "brake" (electric braking), "rest" (de-energized at
        standstill), "hold" (energized at standstill, e.g. a hoist holding its load).
    ramp : bool
        Plain numbers ramp linearly from the previous segment's end value.
    label : str
        Free text for tables.
    """

    duration: float
    torque: float | tuple | None = None
    current: float | tuple | None = None
    power: float | tuple | None = None
    speed: float | tuple | None = None
    losses: float | tuple | None = None
    kind: str = "run"
    ramp: bool = False
    label: str = ""

    def __post_init__(self):
        object.__setattr__(self, "duration", positive("duration", self.duration))
        choice("kind", self.kind, KINDS)
        for q in QUANTITIES:
            object.__setattr__(self, q, _value(q, getattr(self, q)))
        if not isinstance(self.ramp, bool):
            raise ParameterError("ramp", self.ramp, "True or False")

    def replace(self, **changes) -> "DutySegment":
        """A copy with some fields changed (e.g. ``current=`` from an operating point)."""
        return replace(self, **changes)

    @property
    def standstill(self) -> bool:
        """True for ``rest`` and ``hold`` segments and for a speed given as zero throughout."""
        if self.kind in ("rest", "hold"):
            return True
        s = self.speed
        if s is None:
            return False
        return (s == 0.0) if not isinstance(s, tuple) else (s[0] == 0.0 and s[1] == 0.0)


@dataclass(frozen=True)
class DutyCycle:
    """A sequence of segments; ``periodic`` (default) when it repeats.

    Parameters
    ----------
    segments : sequence of DutySegment
        At least one.
    periodic : bool
        True when the sequence repeats without end (duty types S3 to S8).
    """

    segments: tuple
    periodic: bool = True

    def __post_init__(self):
        segs = tuple(self.segments)
        if not segs:
            raise ParameterError("segments", self.segments, "at least one DutySegment")
        for i, s in enumerate(segs):
            if not isinstance(s, DutySegment):
                raise ParameterError(f"segments[{i}]", s, "a DutySegment")
        object.__setattr__(self, "segments", segs)
        object.__setattr__(self, "_cache", {})

    @property
    def durations(self) -> np.ndarray:
        """Segment durations (read-only array). [s]"""
        d = self._cache.get("_durations")
        if d is None:
            d = np.array([s.duration for s in self.segments])
            d.flags.writeable = False
            self._cache["_durations"] = d
        return d

    @property
    def cycle_time(self) -> float:
        """Total duration. [s]"""
        return float(self.durations.sum())

    @property
    def kinds(self) -> tuple:
        return tuple(s.kind for s in self.segments)

    def map(self, function: Callable[[DutySegment], DutySegment]) -> "DutyCycle":
        """A new cycle with ``function`` applied to every segment (a machine-aware layer fills
        current and losses this way)."""
        return DutyCycle(tuple(function(s) for s in self.segments), self.periodic)

    def has(self, quantity: str) -> bool:
        """True when every non-rest segment gives ``quantity``."""
        choice("quantity", quantity, tuple(QUANTITIES))
        return all(getattr(s, quantity) is not None or s.kind == "rest" for s in self.segments)

    def profile(self, quantity: str) -> tuple[np.ndarray, np.ndarray]:
        """Start and end values of ``quantity`` in each segment (linear in between), as read-only
        arrays computed once per cycle. [unit of quantity]

        Raises ParameterError naming the first segment that does not give it (rest counts as 0).
        """
        cached = self._cache.get(quantity)
        if cached is not None:
            return cached
        choice("quantity", quantity, tuple(QUANTITIES))
        n = len(self.segments)
        start, end = np.zeros(n), np.zeros(n)
        raw = []
        for i, s in enumerate(self.segments):
            v = getattr(s, quantity)
            if v is None and s.kind != "rest":
                raise ParameterError(f"segments[{i}].{quantity}", None,
                                     f"a value in [{QUANTITIES[quantity]}] (only rest segments may leave it out)")
            raw.append(0.0 if v is None else v)
        for i, v in enumerate(raw):
            if isinstance(v, tuple):
                start[i], end[i] = v
            else:
                end[i] = v
        for i, (s, v) in enumerate(zip(self.segments, raw)):
            if isinstance(v, tuple):
                continue
            if s.ramp:
                if i > 0:
                    start[i] = end[i - 1]
                elif self.periodic:
                    start[i] = end[-1]
                else:
                    start[i] = 0.0
            else:
                start[i] = v
        start.flags.writeable = False
        end.flags.writeable = False
        self._cache[quantity] = (start, end)
        return start, end


def _mean_square(a, b):
    """Mean of x^2 over a linear ramp from a to b: (a^2 + ab + b^2)/3."""
    return (a * a + a * b + b * b) / 3.0


def _mean_abs(a, b):
    """Mean of |x| over a linear ramp from a to b, exact also when it crosses zero."""
    same_sign = a * b >= 0
    with np.errstate(divide="ignore", invalid="ignore"):
        crossing = (a * a + b * b) / (2.0 * np.abs(b - a))
    return np.where(same_sign, np.abs(a + b) / 2.0, crossing)


def _weights(cycle: DutyCycle, rest_weight: float, transient_weight: float) -> np.ndarray:
    w = np.ones(len(cycle.segments))
    for i, s in enumerate(cycle.segments):
        if s.kind == "rest":
            w[i] = rest_weight
        elif s.kind in ("start", "brake"):
            w[i] = transient_weight
    return w


def rms(cycle: DutyCycle, quantity: str = "torque", *, rest_weight: float = 1.0,
        transient_weight: float = 1.0) -> float:
    """Root-mean-square value of a quantity over the cycle.

    Parameters
    ----------
    cycle : DutyCycle
    quantity : str
        "torque" [N*m], "current" [A] or "power" [W] (any of ``QUANTITIES``).
    rest_weight : float, optional
        Share of a rest period's time counted in the denominator, in (0, 1]. 1 (default) counts
        rest fully, as for a machine whose cooling does not depend on speed.
    transient_weight : float, optional
        The same for start and brake segments, in (0, 1].

    Returns
    -------
    float
        sqrt( sum(mean_square_k * dt_k) / sum(weight_k * dt_k) ). [unit of quantity]

    Notes
    -----
    A linear ramp from a to b has the mean square (a^2 + ab + b^2)/3, integrated exactly [1]_.
    A self-ventilated machine cools worse at standstill; a common practice (no source) counts a
    rest period with a weight beta of about 1/4 to 1/2 and starting and braking with
    (1 + beta)/2. Choose the weights for the machine's ventilation; 1 keeps them out.

    References
    ----------
    .. [1] G. K. Dubey, Fundamentals of Electrical Drives, 2nd ed. New Delhi, India: Narosa, 2001,
       ch. 4, Ex. 4.3, p. 53.

    Examples
    --------
    >>> c = DutyCycle([DutySegment(60.0, torque=10.0), DutySegment(60.0, kind="rest")])
    >>> round(rms(c), 6)
    7.071068
    """
    beta = in_range("rest_weight", rest_weight, 0.0, 1.0, low_open=True)
    gamma = in_range("transient_weight", transient_weight, 0.0, 1.0, low_open=True)
    a, b = cycle.profile(quantity)
    dt = cycle.durations
    w = _weights(cycle, beta, gamma)
    scale = max(np.abs(a).max(), np.abs(b).max())  # scaled so that squares neither underflow nor overflow
    if scale == 0:
        return 0.0
    a, b = a / scale, b / scale
    return float(scale * math.sqrt(np.dot(_mean_square(a, b), dt) / np.dot(w, dt)))


def mean_absolute(cycle: DutyCycle, quantity: str = "torque") -> float:
    """Time average of the absolute value of a quantity over the cycle. [unit of quantity]"""
    a, b = cycle.profile(quantity)
    dt = cycle.durations
    return float(np.dot(_mean_abs(a, b), dt) / dt.sum())


def peak(cycle: DutyCycle, quantity: str = "torque") -> float:
    """Largest absolute value of a quantity in the cycle (ramps peak at an end). [unit of quantity]"""
    a, b = cycle.profile(quantity)
    return float(max(np.abs(a).max(), np.abs(b).max()))


@dataclass(frozen=True)
class EnergySummary:
    """Energy over one pass of the cycle.

    Attributes
    ----------
    drawn : float
        Integral of the positive power. [J]
    returned : float
        Integral of the negative power, as a positive number. [J]
    net : float
        drawn - returned. [J]
    source : str
        "power" when the segments' power was used, "torque*speed" when computed from those.
    """

    drawn: float
    returned: float
    net: float
    source: str


def _split_positive_negative(c0, c1, c2, dt):
    """Integrals over [0, dt] of the positive and negative parts of c0 + c1*s + c2*s^2, s in [0, 1]."""
    if not np.any(c2):  # linear: closed form, split at the zero crossing
        a, b = c0, c0 + c1
        with np.errstate(divide="ignore", invalid="ignore"):
            cross = np.maximum(a, b) ** 2 / (2.0 * np.abs(b - a))
            cross_neg = np.minimum(a, b) ** 2 / (2.0 * np.abs(b - a))
        pos = np.where((a >= 0) & (b >= 0), (a + b) / 2, np.where((a <= 0) & (b <= 0), 0.0, cross))
        neg = np.where((a <= 0) & (b <= 0), -(a + b) / 2, np.where((a >= 0) & (b >= 0), 0.0, cross_neg))
        return float(np.dot(pos, dt)), float(np.dot(neg, dt))
    n = c0.size
    pts = np.tile(np.array([0.0, 1.0, 1.0, 1.0]), (n, 1))
    with np.errstate(divide="ignore", invalid="ignore"):
        quad = np.abs(c2) > 1e-300
        disc = c1 * c1 - 4 * c2 * c0
        sq = np.sqrt(np.where(disc > 0, disc, 0.0))
        r1 = np.where(quad, (-c1 - sq) / (2 * c2), np.where(c1 != 0, -c0 / c1, np.nan))
        r2 = np.where(quad, (-c1 + sq) / (2 * c2), np.nan)
        r1 = np.where(quad & (disc <= 0), np.nan, r1)
        r2 = np.where(quad & (disc <= 0), np.nan, r2)
    for col, r in ((1, r1), (2, r2)):
        inside = np.isfinite(r) & (r > 0) & (r < 1)
        pts[:, col] = np.where(inside, r, 1.0)
    pts.sort(axis=1)
    lo, hi = pts[:, :-1], pts[:, 1:]

    def prim(s):
        return c0[:, None] * s + c1[:, None] * s ** 2 / 2 + c2[:, None] * s ** 3 / 3

    part = prim(hi) - prim(lo)
    mid = (lo + hi) / 2
    sign = c0[:, None] + c1[:, None] * mid + c2[:, None] * mid ** 2
    pos = np.where(sign > 0, part, 0.0).sum(axis=1) * dt
    neg = np.where(sign < 0, -part, 0.0).sum(axis=1) * dt
    return float(pos.sum()), float(neg.sum())


def energy(cycle: DutyCycle) -> EnergySummary:
    """Energy drawn and returned over one pass of the cycle.

    Uses the segments' ``power`` when every non-rest segment gives it, else torque*speed (both
    must then be given). Ramps are integrated exactly, split where the power changes sign.

    Returns
    -------
    EnergySummary
        [J]
    """
    dt = cycle.durations
    if cycle.has("power"):
        a, b = cycle.profile("power")
        c0, c1, c2 = a, b - a, np.zeros_like(a)
        source = "power"
    else:
        ta, tb = cycle.profile("torque")
        wa, wb = cycle.profile("speed")
        c0, c1, c2 = ta * wa, ta * (wb - wa) + wa * (tb - ta), (tb - ta) * (wb - wa)
        source = "torque*speed"
    pos, neg = _split_positive_negative(c0, c1, c2, dt)
    return EnergySummary(pos, neg, pos - neg, source)


@dataclass(frozen=True)
class EquivalentRating:
    """Equivalent continuous rating of a cycle by the rms method.

    Attributes
    ----------
    quantity : str
    rms : float
        The continuous value that heats the machine as the cycle does. [unit of quantity]
    peak : float
        Largest absolute value in the cycle. [unit of quantity]
    mean_absolute : float
        Time average of the absolute value. [unit of quantity]
    peak_to_rms : float
        peak / rms. [-]
    notes : tuple of str
    """

    quantity: str
    rms: float
    peak: float
    mean_absolute: float
    peak_to_rms: float
    notes: tuple = ()


def equivalent_continuous_rating(cycle: DutyCycle, quantity: str = "power", *, rest_weight: float = 1.0,
                                 transient_weight: float = 1.0, overload_limit: float = 2.0) -> EquivalentRating:
    """Equivalent continuous rating (rms) with a check of the peak against the overload capacity.

    Parameters
    ----------
    cycle : DutyCycle
    quantity : str
        "power" [W], "torque" [N*m] or "current" [A].
    rest_weight, transient_weight : float, optional
        As in :func:`rms`.
    overload_limit : float, optional
        Largest peak/rms ratio accepted without a caution; Dubey [1]_ checks the peak against
        twice the rms value. [-]

    Returns
    -------
    EquivalentRating

    Notes
    -----
    The rms method holds where losses vary as the square of the quantity (constant flux, constant
    losses small); the motor chosen must also carry the peak [1]_.

    References
    ----------
    .. [1] G. K. Dubey, Fundamentals of Electrical Drives, 2nd ed. New Delhi, India: Narosa, 2001,
       ch. 4, Ex. 4.3, p. 53.
    """
    limit = positive("overload_limit", overload_limit)
    r = rms(cycle, quantity, rest_weight=rest_weight, transient_weight=transient_weight)
    p = peak(cycle, quantity)
    m = mean_absolute(cycle, quantity)
    ratio = p / r if r > 0 else math.inf
    notes = []
    if ratio > limit:
        notes.append(f"The peak is {ratio:.3g} times the rms value, above {limit:g}: choose the motor for the "
                     "peak (commutation and the supply set the limit), not for the rms value alone.")
    if quantity == "power":
        notes.append("The rms of power stands for the rms of torque only at near-constant speed; at varying "
                     "speed use torque or current.")
    return EquivalentRating(quantity, r, p, m, ratio, tuple(notes))


def cyclic_duration_factor(cycle: DutyCycle) -> float:
    """Cyclic duration factor CDF = time energized / cycle time, rest excluded. [-]

    Notes
    -----
    IEC 60034-1 defines the CDF as the ratio of the loaded time (with starting and electric
    braking in S4/S5) to the cycle duration; designations such as "S3 25 %" use it [1]_.

    References
    ----------
    .. [1] IEC 60034-1, Rotating electrical machines - Part 1: Rating and performance, clause on duty
       types (S1 to S10) (clause text from memory, unverified; designation forms as quoted in
       vendors' summaries).
    """
    on = sum(s.duration for s in cycle.segments if s.kind != "rest")
    return on / cycle.cycle_time


@dataclass(frozen=True)
class DutyClassification:
    """The IEC 60034-1 duty type a cycle fits.

    Attributes
    ----------
    duty_type : str
        "S1" ... "S10".
    designation : str
        E.g. "S3 25 %", "S2 30 min".
    cdf : float
        Cyclic duration factor (0 to 1). [-]
    reasons : tuple of str
        Why this type was chosen.
    notes : tuple of str
        Cautions and what the designation leaves out.
    """

    duty_type: str
    designation: str
    cdf: float
    reasons: tuple
    notes: tuple = field(default=())


def _pct(x: float) -> str:
    return f"{100.0 * x:.3g} %"


def classify_duty(cycle: DutyCycle, *, load_quantity: str | None = None, no_load_fraction: float = 0.02,
                  heating_time_constant: float | None = None, equilibrium_fraction: float = 0.02,
                  motor_inertia: float | None = None, load_inertia: float | None = None) -> DutyClassification:
    """Classify a cycle to the IEC 60034-1 duty type it fits.

    Parameters
    ----------
    cycle : DutyCycle
    load_quantity : str, optional
        Quantity that measures load: "torque", "power" or "current"; by default the first of these
        that every non-rest segment gives.
    no_load_fraction : float, optional
        A running segment whose load stays within this fraction of the peak counts as no-load. [-]
    heating_time_constant : float, optional
        When given, used to check thermal equilibrium (S10, and whether an S2 load is short). [s]
    equilibrium_fraction : float, optional
        A segment reaches thermal equilibrium when exp(-t/tau) <= this (our choice: 2 %). [-]
    motor_inertia, load_inertia : float, optional
        J_M and J_ext for the S4/S5/S7/S8 designations. [kg*m^2]

    Returns
    -------
    DutyClassification

    Notes
    -----
    Rules (from memory, unverified, beyond the names and designation forms of [1]_; our reading):

    - periodic, rest present: S5 if any electric braking, else S4 if any starting, else S3;
      CDF = energized time / cycle time.
    - periodic, no rest: S7 if braking; else S8 if running speed changes between segments; else
      S6 if some running segments are at no-load (CDF = loaded time / cycle time); else S1 when the
      load is one constant value.
    - not periodic: S1 for one constant load; S2 for loaded time ending in rest (designation in
      minutes of load); S10 when every load is held to thermal equilibrium; else S9.
    - a periodic cycle with varying load at one speed and no rest or no-load fits none of S3-S8
      exactly: S9 is returned as the nearest (non-periodic variation covers it) with a reason;
      rate it by its rms value.

    IEC 60034-1 also asks that for S2 the rest lasts until the machine is within 2 K of the
    coolant, and recommends CDFs of 15, 25, 40 and 60 % and a 10 min cycle for S3-S6 unless stated
    (from memory, unverified); these are reported as notes, not enforced.

    References
    ----------
    .. [1] IEC 60034-1, Rotating electrical machines - Part 1: Rating and performance, duty types
       S1 to S10 (names and designation forms as quoted in vendors' summaries; rest from memory,
       unverified).
    """
    frac = in_range("no_load_fraction", no_load_fraction, 0.0, 1.0)
    eq_frac = in_range("equilibrium_fraction", equilibrium_fraction, 0.0, 1.0, low_open=True, high_open=True)
    tau = None if heating_time_constant is None else positive("heating_time_constant", heating_time_constant)
    jm = None if motor_inertia is None else nonnegative("motor_inertia", motor_inertia)
    jx = None if load_inertia is None else nonnegative("load_inertia", load_inertia)
    if load_quantity is None:
        for q in ("torque", "power", "current"):
            if cycle.has(q):
                load_quantity = q
                break
        else:
            raise ParameterError("load_quantity", None,
                                 "segments that all give torque, power or current (rest may leave it out)")
    choice("load_quantity", load_quantity, ("torque", "power", "current"))

    segs = cycle.segments
    kinds = set(cycle.kinds)
    a, b = cycle.profile(load_quantity)
    top = max(np.abs(a).max(), np.abs(b).max())
    cdf = cyclic_duration_factor(cycle)
    reasons, notes = [], []
    inertia = ""
    if jm is not None or jx is not None:
        parts = []
        if jm is not None:
            parts.append(f"J_M = {jm:.3g} kg*m^2")
        if jx is not None:
            parts.append(f"J_ext = {jx:.3g} kg*m^2")
        inertia = " " + " ".join(parts)

    running = [i for i, s in enumerate(segs) if s.kind in ("run", "start", "brake")]
    no_load = [i for i in running if segs[i].kind == "run"
               and max(abs(a[i]), abs(b[i])) <= frac * top]
    loaded_run = [i for i in running if segs[i].kind == "run" and i not in no_load]
    constant = all(a[i] == b[i] for i in range(len(segs)) if segs[i].kind != "rest")
    levels = {round(float(b[i]), 12) for i in range(len(segs)) if segs[i].kind != "rest"}
    speeds = set()
    if cycle.has("speed"):
        wa, wb = cycle.profile("speed")
        speeds = {round(float(wb[i]), 9) for i in loaded_run} | {round(float(wa[i]), 9) for i in loaded_run}

    def result(t, designation):
        return DutyClassification(t, designation, cdf, tuple(reasons), tuple(notes))

    if cycle.periodic:
        if "rest" in kinds:
            reasons.append("the cycle repeats and has de-energized rest periods")
            if "brake" in kinds:
                reasons.append("it has electric braking: intermittent periodic duty with electric braking")
                t = "S5"
            elif "start" in kinds:
                reasons.append("it has starting periods: intermittent periodic duty with starting")
                t = "S4"
            else:
                reasons.append("no starting or braking segments: starting does not affect the heating")
                t = "S3"
            reasons.append(f"CDF = energized time / cycle time = {_pct(cdf)}")
            if t in ("S4", "S5") and not inertia:
                notes.append(f"The {t} designation also states J_M and J_ext: give motor_inertia and load_inertia.")
            notes.append("IEC 60034-1 recommends CDFs of 15, 25, 40 or 60 % and a 10 min cycle unless stated "
                         "(from memory, unverified).")
            return result(t, f"{t} {_pct(cdf)}" + inertia)
        reasons.append("the cycle repeats with no rest period")
        if "brake" in kinds:
            reasons.append("it has electric braking: continuous-operation periodic duty with electric braking")
            if not inertia:
                notes.append("The S7 designation also states J_M and J_ext.")
            return DutyClassification("S7", "S7" + inertia, 1.0, tuple(reasons), tuple(notes))
        if len(speeds) > 1:
            reasons.append(f"the loaded running speed takes {len(speeds)} values: periodic duty with related "
                           "load/speed changes")
            parts = []
            for i in loaded_run:
                share = segs[i].duration / cycle.cycle_time
                parts.append(f"{b[i]:.4g} {QUANTITIES[load_quantity]} at {wb[i]:.4g} rad/s {_pct(share)}")
            return DutyClassification("S8", "S8" + inertia + " " + ", ".join(parts), 1.0,
                                      tuple(reasons), tuple(notes))
        if no_load and loaded_run:
            on = sum(segs[i].duration for i in range(len(segs)) if i not in no_load)
            cdf6 = on / cycle.cycle_time
            reasons.append(f"{len(no_load)} running segment(s) at no-load (within {_pct(frac)} of the peak): "
                           "continuous-operation periodic duty")
            reasons.append(f"CDF = loaded time / cycle time = {_pct(cdf6)}")
            return DutyClassification("S6", f"S6 {_pct(cdf6)}", cdf6, tuple(reasons), tuple(notes))
        if constant and len(levels) == 1:
            reasons.append("one constant load throughout")
            return result("S1", "S1")
        reasons.append("the load varies at one speed with no rest or no-load period: none of S3-S8 fits; "
                       "S9 (load variation) is the nearest")
        notes.append("Rate such a cycle by its rms value (equivalent continuous rating).")
        return result("S9", "S9")

    # not periodic
    reasons.append("the sequence does not repeat")
    on_idx = [i for i, s in enumerate(segs) if s.kind != "rest"]
    if constant and len(levels) == 1 and "rest" not in kinds:
        reasons.append("one constant load held throughout")
        return result("S1", "S1")
    if segs[-1].kind == "rest" and on_idx and on_idx[-1] < len(segs) - 1 and \
            on_idx == list(range(on_idx[-1] + 1)) and constant and len(levels) == 1:
        t_on = sum(segs[i].duration for i in on_idx)
        reasons.append(f"one constant load for {t_on / 60.0:.3g} min, then rest: short-time duty")
        notes.append("S2 assumes the rest lasts until the machine is within 2 K of the coolant.")
        if tau is not None and math.exp(-t_on / tau) <= eq_frac:
            notes.append("The load period is long enough to reach thermal equilibrium: S1 rating applies.")
        return result("S2", f"S2 {t_on / 60.0:.3g} min")
    if tau is not None:
        long_enough = all(math.exp(-segs[i].duration / tau) <= eq_frac for i in range(len(segs)))
        if constant and long_enough:
            reasons.append(f"{len(levels)} discrete constant loads, each held to thermal equilibrium "
                           f"(exp(-t/tau) <= {eq_frac:g})")
            return result("S10", "S10")
    reasons.append("load varies without a repeating pattern"
                   + ("" if tau is not None else " (give heating_time_constant to test for S10)"))
    return result("S9", "S9")
