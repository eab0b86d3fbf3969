"""First-order thermal model of a motor winding: temperature rise through a sequence of loss
segments, the periodic steady state of a repeating cycle, short-time and intermittent rating
factors, and insulation class limits.

The model is the one of the drives textbooks: one body with a heat capacity and a heat
dissipation, so the rise above the coolant obeys tau*dtheta/dt = R_th*P - theta with a heating
time constant while the machine runs and a (usually longer) cooling time constant at standstill.
It estimates the mean winding rise; it says nothing of hot spots. Hot windings age and fail:
treat the figures as a first check and defer to the maker's data, local codes and licensed
practice.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import ParameterError
from ..models.validation import choice, nonnegative, positive, real

__all__ = [
    "FirstOrderThermal", "ThermalTrace", "PeriodicThermal", "InsulationClass", "INSULATION_CLASSES",
    "simulate", "simulate_cycle", "periodic_steady_state", "periodic_cycle", "cycle_losses",
    "short_time_rating_factor", "intermittent_rating_factor", "insulation_class",
]

_SPAN = 600.0  # largest summed dt/tau in one cumulative-sum run (exp(600) ~ 4e260 < float max)


@dataclass(frozen=True)
class FirstOrderThermal:
    """One-body thermal model.

    Parameters
    ----------
    thermal_resistance : float
        Steady rise per watt of loss, 1/(heat dissipation). [K/W]
    heating_time_constant : float
        Time constant while running (ventilated). [s]
    cooling_time_constant : float, optional
        Time constant at standstill; None means the same as heating. [s]
    """

    thermal_resistance: float
    heating_time_constant: float
    cooling_time_constant: float | None = None

    def __post_init__(self):
        object.__setattr__(self, "thermal_resistance", positive("thermal_resistance", self.thermal_resistance))
        object.__setattr__(self, "heating_time_constant",
                           positive("heating_time_constant", self.heating_time_constant))
        c = self.cooling_time_constant
        object.__setattr__(self, "cooling_time_constant",
                           self.heating_time_constant if c is None else positive("cooling_time_constant", c))

    @classmethod
    def from_rating(cls, rated_losses, rated_rise, heating_time_constant, cooling_time_constant=None):
        """Model whose steady rise at ``rated_losses`` [W] is ``rated_rise`` [K]; time constants [s]."""
        r = positive("rated_rise", rated_rise) / positive("rated_losses", rated_losses)
        return cls(r, heating_time_constant, cooling_time_constant)

    def steady_rise(self, losses):
        """Final rise for constant ``losses`` [W], theta_ss = R_th*P. [K]"""
        return self.thermal_resistance * np.asarray(losses, dtype=float)


@dataclass(frozen=True)
class ThermalTrace:
    """Temperature rise through a sequence of segments.

    Attributes
    ----------
    times : numpy.ndarray
        Segment boundaries, from 0 to the total duration (n + 1 values). [s]
    rise : numpy.ndarray
        Rise at each boundary (n + 1 values). [K]
    steady_start, steady_end : numpy.ndarray
        Steady rise R_th*P at the start and end of each segment (losses linear in between). [K]
    time_constant : numpy.ndarray
        Time constant used in each segment. [s]
    peak_rise : float
        Highest rise anywhere in the sequence, inside segments included. [K]
    """

    times: np.ndarray
    rise: np.ndarray
    steady_start: np.ndarray
    steady_end: np.ndarray
    time_constant: np.ndarray
    peak_rise: float

    @property
    def final_rise(self) -> float:
        """Rise at the end of the sequence. [K]"""
        return float(self.rise[-1])

    def at(self, t):
        """Rise at times ``t`` within [0, total duration], exact inside each segment. [K]"""
        t = np.asarray(t, dtype=float)
        if np.any(t < 0) or np.any(t > self.times[-1]) or not np.all(np.isfinite(t)):
            raise ParameterError("t", "values outside the sequence",
                                 f"times in [0, {self.times[-1]!r}] s")
        k = np.clip(np.searchsorted(self.times, t, side="right") - 1, 0, self.times.size - 2)
        return _inside(t - self.times[k], self.rise[k], self.steady_start[k], self.steady_end[k],
                       self.times[k + 1] - self.times[k], self.time_constant[k])


def _inside(s, theta0, s0, s1, dt, tau):
    """theta(s) = S(s) - tau*slope + (theta0 - S0 + tau*slope)*exp(-s/tau), S linear from s0 to s1."""
    slope = (s1 - s0) / dt
    return s0 + slope * s - tau * slope + (theta0 - s0 + tau * slope) * np.exp(-s / tau)


def _affine(dt, tau, s0, s1):
    """Coefficients of theta_end = a*theta_start + b for each segment (exact exponentials)."""
    x = dt / tau
    a = np.exp(-x)
    g = -np.expm1(-x) / x  # (1 - a)/x, accurate for small x
    b = s1 - (s1 - s0) * g - s0 * a
    return x, a, b


def _scan(x, b, theta0):
    """theta_k for theta_(k+1) = exp(-x_k)*theta_k + b_k, vectorized with cumulative sums.

    Within a run of segments whose summed dt/tau stays below ``_SPAN`` the recursion is
    theta_k = exp(-L_k)*(theta_0 + sum_(j<k) exp(L_(j+1))*b_j), L_k = sum_(i<k) x_i, evaluated with
    one cumsum; a new run starts before exp(L) could overflow, and a segment longer than ``_SPAN``
    time constants on its own is stepped directly.
    """
    n = x.size
    out = np.empty(n + 1)
    out[0] = theta0
    cum = np.concatenate(([0.0], np.cumsum(x)))
    start = 0
    while start < n:
        base = cum[start]
        end = int(np.searchsorted(cum, base + _SPAN, side="right")) - 1
        if end <= start:  # one very long segment
            out[start + 1] = math.exp(-x[start]) * out[start] + b[start]
            start += 1
            continue
        rel = cum[start + 1:end + 1] - base
        out[start + 1:end + 1] = np.exp(-rel) * (out[start] + np.cumsum(np.exp(rel) * b[start:end]))
        start = end
    return out


def _peak(times, rise, s0, s1, tau):
    """Largest rise, including a maximum inside a segment with ramping losses."""
    best = float(rise.max())
    dt = np.diff(times)
    slope = (s1 - s0) / dt
    c = rise[:-1] - s0 + tau * slope
    # theta'(s) = slope - (c/tau) exp(-s/tau) = 0  ->  s* = -tau*ln(slope*tau/c)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = slope * tau / c
        s_star = np.where(ratio > 0, -tau * np.log(np.where(ratio > 0, ratio, 1.0)), -1.0)
    inside = (s_star > 0) & (s_star < dt)
    if inside.any():
        v = _inside(s_star[inside], rise[:-1][inside], s0[inside], s1[inside], dt[inside], tau[inside])
        best = max(best, float(v.max()))
    return best


def _prepare(model, durations, losses, loss_end, standstill):
    if not isinstance(model, FirstOrderThermal):
        raise ParameterError("model", model, "a FirstOrderThermal")
    try:
        dt = np.atleast_1d(np.asarray(durations, dtype=float))
        p0 = np.atleast_1d(np.asarray(losses, dtype=float))
        p1 = p0 if loss_end is None else np.atleast_1d(np.asarray(loss_end, dtype=float))
    except (TypeError, ValueError):
        raise ParameterError("durations", durations, "1-D sequences of numbers") from None
    if dt.ndim != 1 or dt.size == 0 or not np.all(np.isfinite(dt)) or np.any(dt <= 0):
        raise ParameterError("durations", durations, "a non-empty 1-D sequence of finite durations > 0 [s]")
    for name, p in (("losses", p0), ("loss_end", p1)):
        if p.shape != dt.shape or not np.all(np.isfinite(p)) or np.any(p < 0):
            raise ParameterError(name, "array of shape " + str(p.shape),
                                 f"finite losses >= 0 [W], one per segment ({dt.size})")
    if standstill is None:
        still = np.zeros(dt.size, dtype=bool)
    else:
        still = np.atleast_1d(np.asarray(standstill, dtype=bool))
        if still.shape != dt.shape:
            raise ParameterError("standstill", standstill, f"one flag per segment ({dt.size})")
    tau = np.where(still, model.cooling_time_constant, model.heating_time_constant)
    return dt, model.thermal_resistance * p0, model.thermal_resistance * p1, tau


def simulate(model: FirstOrderThermal, durations, losses, *, loss_end=None, standstill=None,
             initial_rise: float = 0.0) -> ThermalTrace:
    """Temperature rise through a sequence of loss segments, closed form per segment.

    Parameters
    ----------
    model : FirstOrderThermal
    durations : array_like
        Segment durations, > 0. [s]
    losses : array_like
        Losses at the start of each segment (held constant unless ``loss_end`` is given). [W]
    loss_end : array_like, optional
        Losses at the end of each segment (linear ramp in between). [W]
    standstill : array_like of bool, optional
        True where the machine stands still (the cooling time constant applies).
    initial_rise : float, optional
        Rise at the start. [K]

    Returns
    -------
    ThermalTrace

    Notes
    -----
    tau*dtheta/dt = R_th*P(t) - theta. For P constant in a segment,
    theta_end = theta_ss + (theta_start - theta_ss)*exp(-dt/tau) [1]_; for P linear the exact
    solution adds the lag term -tau*dtheta_ss/dt. The segments are chained as an affine recursion
    evaluated with cumulative sums of dt/tau (no step-by-step loop, no overflow).

    References
    ----------
    .. [1] G. K. Dubey, Fundamentals of Electrical Drives, 2nd ed. New Delhi, India: Narosa, 2001,
       ch. 4 (heating and cooling), Ex. 4.1, p. 47.

    Examples
    --------
    >>> m = FirstOrderThermal(0.1, 3600.0)
    >>> round(simulate(m, [3600.0], [1000.0]).final_rise, 3)
    63.212
    """
    dt, s0, s1, tau = _prepare(model, durations, losses, loss_end, standstill)
    th0 = nonnegative("initial_rise", initial_rise)
    x, a, b = _affine(dt, tau, s0, s1)
    rise = _scan(x, b, th0)
    times = np.concatenate(([0.0], np.cumsum(dt)))
    return ThermalTrace(times, rise, s0, s1, tau, _peak(times, rise, s0, s1, tau))


@dataclass(frozen=True)
class PeriodicThermal:
    """The repeating temperature cycle reached after many repetitions.

    Attributes
    ----------
    start_rise : float
        Rise at the start (= end) of each cycle. [K]
    max_rise : float
        Highest rise in the cycle. [K]
    min_rise : float
        Lowest rise in the cycle. [K]
    trace : ThermalTrace
        One cycle starting from ``start_rise``.
    """

    start_rise: float
    max_rise: float
    min_rise: float
    trace: ThermalTrace


def periodic_steady_state(model: FirstOrderThermal, durations, losses, *, loss_end=None,
                          standstill=None) -> PeriodicThermal:
    """Periodic steady state of a repeating loss cycle, by the closed-form fixed point.

    Parameters
    ----------
    model, durations, losses, loss_end, standstill
        As in :func:`simulate`.

    Returns
    -------
    PeriodicThermal

    Notes
    -----
    One cycle maps theta_start to A*theta_start + B with A = exp(-sum dt_k/tau_k) and B the end
    rise of a cycle started cold; the fixed point is theta* = B/(1 - A) [1]_.

    References
    ----------
    .. [1] G. K. Dubey, Fundamentals of Electrical Drives, 2nd ed. New Delhi, India: Narosa, 2001,
       ch. 4, Ex. 4.1, p. 47.
    """
    dt, s0, s1, tau = _prepare(model, durations, losses, loss_end, standstill)
    x, a, b = _affine(dt, tau, s0, s1)
    cold = _scan(x, b, 0.0)
    total = float(x.sum())
    theta = float(cold[-1] / -math.expm1(-total))
    rise = _scan(x, b, theta)
    times = np.concatenate(([0.0], np.cumsum(dt)))
    trace = ThermalTrace(times, rise, s0, s1, tau, _peak(times, rise, s0, s1, tau))
    return PeriodicThermal(theta, trace.peak_rise, float(rise.min()), trace)


def cycle_losses(cycle):
    """Durations [s], start and end losses [W] and standstill flags of a duty cycle's segments.

    Every segment other than rest must give ``losses`` (rest counts as 0 W); a machine-aware layer
    fills them from operating points.
    """
    from .duty import DutyCycle

    if not isinstance(cycle, DutyCycle):
        raise ParameterError("cycle", cycle, "a DutyCycle")
    p0, p1 = cycle.profile("losses")
    still = np.array([s.standstill for s in cycle.segments])
    return cycle.durations, p0, p1, still


def simulate_cycle(model: FirstOrderThermal, cycle, *, initial_rise: float = 0.0) -> ThermalTrace:
    """:func:`simulate` over the segments of a :class:`~dcchar.studies.duty.DutyCycle`."""
    dt, p0, p1, still = cycle_losses(cycle)
    return simulate(model, dt, p0, loss_end=p1, standstill=still, initial_rise=initial_rise)


def periodic_cycle(model: FirstOrderThermal, cycle) -> PeriodicThermal:
    """:func:`periodic_steady_state` over the segments of a periodic duty cycle."""
    if not cycle.periodic:
        raise ParameterError("cycle.periodic", False, "a periodic cycle")
    dt, p0, p1, still = cycle_losses(cycle)
    return periodic_steady_state(model, dt, p0, loss_end=p1, standstill=still)


def short_time_rating_factor(duration, heating_time_constant, constant_loss_ratio=0.0) -> float:
    """Overload factor K for short-time duty: load K*rated for ``duration`` reaches the rated rise.

    Parameters
    ----------
    duration : float
        Time on load, starting cold. [s]
    heating_time_constant : float
        [s]
    constant_loss_ratio : float, optional
        alpha = constant losses / variable (copper) losses at rated load, >= 0. [-]

    Returns
    -------
    float
        K = sqrt((1 + alpha)/(1 - exp(-t/tau)) - alpha). [-]

    Notes
    -----
    Losses at load K are alpha + K^2 (per unit of rated copper loss); the rise after t from cold
    equals the rated steady rise (1 + alpha) [1]_.

    References
    ----------
    .. [1] G. K. Dubey, Fundamentals of Electrical Drives, 2nd ed. New Delhi, India: Narosa, 2001,
       ch. 4 (short-time duty), Ex. 4.4, p. 55.

    Examples
    --------
    >>> round(short_time_rating_factor(600.0, 3600.0), 4)
    2.5522
    """
    t = positive("duration", duration)
    tau = positive("heating_time_constant", heating_time_constant)
    alpha = nonnegative("constant_loss_ratio", constant_loss_ratio)
    return math.sqrt((1.0 + alpha) / -math.expm1(-t / tau) - alpha)


def intermittent_rating_factor(on_time, off_time, heating_time_constant, cooling_time_constant=None,
                               constant_loss_ratio=0.0) -> float:
    """Overload factor K for intermittent periodic duty (load, then de-energized rest).

    Parameters
    ----------
    on_time, off_time : float
        Load and rest time in each cycle. [s]
    heating_time_constant : float
        [s]
    cooling_time_constant : float, optional
        Time constant at rest; None means the heating one. [s]
    constant_loss_ratio : float, optional
        alpha = constant / variable losses at rated load. [-]

    Returns
    -------
    float
        K = sqrt((1 + alpha)*(1 - exp(-(t_on/tau_h + t_off/tau_c)))/(1 - exp(-t_on/tau_h)) - alpha). [-]

    Notes
    -----
    The periodic maximum rise with losses (alpha + K^2) on and none at rest equals the rated
    steady rise [1]_.

    References
    ----------
    .. [1] G. K. Dubey, Fundamentals of Electrical Drives, 2nd ed. New Delhi, India: Narosa, 2001,
       ch. 4 (intermittent periodic duty), Ex. 4.4, p. 55.
    """
    t_on = positive("on_time", on_time)
    t_off = nonnegative("off_time", off_time)
    tau_h = positive("heating_time_constant", heating_time_constant)
    tau_c = tau_h if cooling_time_constant is None else positive("cooling_time_constant", cooling_time_constant)
    alpha = nonnegative("constant_loss_ratio", constant_loss_ratio)
    x_on = t_on / tau_h
    return math.sqrt((1.0 + alpha) * -math.expm1(-(x_on + t_off / tau_c)) / -math.expm1(-x_on) - alpha)


@dataclass(frozen=True)
class InsulationClass:
    """Thermal class of an insulation system and the rise IEC 60034-1 permits with it.

    Attributes
    ----------
    name : str
        Letter of the class.
    class_temperature : float
        Thermal class, IEC 60085. [degC]
    permissible_rise : float
        Winding rise by the resistance method for a 40 degC coolant, IEC 60034-1. [K]
    rise_source : str
        Where the permissible rise comes from.
    """

    name: str
    class_temperature: float
    permissible_rise: float
    rise_source: str

    def winding_limit(self, coolant_temperature=40.0) -> float:
        """Highest mean winding temperature, coolant + permissible rise. [degC]

        Only the 40 degC coolant is covered by the table; other coolant temperatures need the
        corrections of IEC 60034-1 (not implemented), so they are refused.
        """
        c = real("coolant_temperature", coolant_temperature)
        if c != 40.0:
            raise ParameterError("coolant_temperature", coolant_temperature,
                                 "40 degC (other coolants need the IEC 60034-1 corrections)")
        return c + self.permissible_rise

    def margin(self, rise) -> float:
        """Permissible rise minus ``rise`` [K]; negative means the class is exceeded."""
        return self.permissible_rise - real("rise", rise)


_SOURCED = "IEC 60034-1 as tabulated in a maker's O&M manual (Vascat ID series, Table 10)"
_MEMORY = "IEC 60034-1, from memory, unverified"

#: Insulation classes: thermal class (IEC 60085 [degC]) and permissible rise (IEC 60034-1 [K]).
INSULATION_CLASSES = {
    "A": InsulationClass("A", 105.0, 60.0, _MEMORY),
    "E": InsulationClass("E", 120.0, 75.0, _MEMORY),
    "B": InsulationClass("B", 130.0, 80.0, _SOURCED),
    "F": InsulationClass("F", 155.0, 105.0, _SOURCED),
    "H": InsulationClass("H", 180.0, 125.0, _SOURCED),
}


def insulation_class(name: str) -> InsulationClass:
    """The :class:`InsulationClass` of letter ``name`` ("A", "E", "B", "F" or "H").

    References
    ----------
    .. [1] IEC 60085, Electrical insulation - Thermal evaluation and designation (class
       temperatures as quoted by a test-laboratory summary and a maker's manual).
    .. [2] IEC 60034-1, Rotating electrical machines - Part 1: Rating and performance, table of
       temperature rise limits (B, F, H from a maker's manual; A and E from memory, unverified).
    """
    if isinstance(name, str):
        name = name.strip().upper()
    return INSULATION_CLASSES[choice("insulation_class", name, tuple(INSULATION_CLASSES))]
