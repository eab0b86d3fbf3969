"""Starting a DC motor: resistance steps of a starter and the time taken to run up.

Machine-independent: the functions here take the armature loop resistance, the supply voltage and
(optionally) a machine constant k*phi, not a machine model, so they serve shunt, separately excited
and compound motors alike (series motors need the current-dependent flux of a model).

Starting is a place where people get hurt: the results carry plain cautions in ``notes``. They
are no substitute for the protection a real starter needs (no-volt and overload release, field
failure protection) nor for local codes and licensed practice.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ..errors import ParameterError
from ..models.validation import increasing_array, nonnegative, positive, real

__all__ = [
    "StarterDesign",
    "StartingResistor",
    "AccelerationResult",
    "starter_steps",
    "single_starting_resistor",
    "acceleration_time",
    "acceleration_time_curve",
]

_GENERAL_CAUTION = ("A starter resistor only limits the current while it is in circuit: the starter also "
                    "needs no-volt and overload release, and a shunt or separately excited motor must never "
                    "be started or run with its field open. Defer to local codes and licensed practice.")


def _limit_notes(max_current: float, rated_current: float | None) -> list[str]:
    notes = []
    if rated_current is not None and max_current > 2.0 * rated_current:
        notes.append(f"The starting current limit {max_current:.4g} A is more than twice the rated current "
                     f"{rated_current:.4g} A: check commutation, the supply and its protection; defer to local "
                     "codes and licensed practice.")
    return notes


@dataclass(frozen=True)
class StarterDesign:
    """Resistance steps of a multi-stud starter in geometric progression.

    The studs are numbered 1 (start) to ``studs`` (run). On stud ``j`` the armature loop holds the
    total resistance ``total_resistance[j-1]``; the last value is the loop resistance itself (all
    starter sections cut out). Section ``j`` (between studs ``j`` and ``j+1``) is cut out when the
    current has fallen to ``min_current``.

    Attributes
    ----------
    needed : bool
        False when the loop resistance alone already holds the direct-on current to ``max_current``.
    reason : str
        Why no starter is needed ("" when one is).
    voltage : float
        Supply voltage. [V]
    brush_drop : float
        Total brush drop counted in the loop. [V]
    loop_resistance : float
        Armature circuit resistance including any series field in the loop. [ohm]
    sections : int
        Number of starter sections (``studs - 1``). [-]
    studs : int
        Number of studs, counting the run position. [-]
    max_current : float
        Peak current I1 on each stud. [A]
    min_current : float
        Switching current I2 actually reached, recomputed for the integer number of sections. [A]
    min_current_requested : float or None
        The switching current asked for, when the number of sections was derived from it. [A]
    ratio : float
        k = I1/I2 = R_j/R_(j+1). [-]
    total_resistance : numpy.ndarray
        Total loop resistance on studs 1..studs (last = ``loop_resistance``). [ohm]
    section_resistance : numpy.ndarray
        Resistance of each section, R_j - R_(j+1). [ohm]
    peak_current : numpy.ndarray
        Current on reaching each stud, recomputed from the resistances and the back EMF. [A]
    cutout_emf : numpy.ndarray
        Back EMF at which each section is cut out, E_j = V - Vb - I2*R_j. [V]
    cutout_speed : numpy.ndarray or None
        Speed at which each section is cut out, E_j/k*phi, when a machine constant was given. [rad/s]
    machine_constant : float or None
        k*phi used for the speeds. [V*s/rad]
    notes : tuple of str
        Cautions and assumptions, in plain words.
    """

    needed: bool
    reason: str
    voltage: float
    brush_drop: float
    loop_resistance: float
    sections: int
    studs: int
    max_current: float
    min_current: float
    min_current_requested: float | None
    ratio: float
    total_resistance: np.ndarray
    section_resistance: np.ndarray
    peak_current: np.ndarray
    cutout_emf: np.ndarray
    cutout_speed: np.ndarray | None
    machine_constant: float | None
    notes: tuple = field(default=())

    @property
    def external_resistance(self) -> float:
        """Starter resistance in circuit on the first stud, R_1 - loop resistance. [ohm]"""
        return float(self.total_resistance[0] - self.loop_resistance)

    def to_rows(self) -> list[dict]:
        """One dict per stud: stud number, total resistance [ohm], section to the next stud [ohm],
        peak current [A], cut-out back EMF [V] and cut-out speed [rad/s] (None where not defined)."""
        rows = []
        for j in range(self.studs):
            last = j == self.studs - 1
            rows.append({
                "stud": j + 1,
                "total_resistance": float(self.total_resistance[j]),
                "section_resistance": None if last else float(self.section_resistance[j]),
                "peak_current": float(self.peak_current[j]),
                "cutout_emf": None if last else float(self.cutout_emf[j]),
                "cutout_speed": (None if last or self.cutout_speed is None else float(self.cutout_speed[j])),
            })
        return rows


def starter_steps(voltage, armature_resistance, max_current, *, min_current=None, sections=None,
                  series_field_resistance=0.0, brush_drop=0.0, machine_constant=None,
                  rated_current=None) -> StarterDesign:
    """Design the resistance steps of a starter in geometric progression.

    Give either the number of ``sections`` (the switching current then follows) or the switching
    current ``min_current`` (the number of sections then follows, rounded up, and the switching
    current actually reached is recomputed for that integer and reported).

    Parameters
    ----------
    voltage : float
        Supply voltage. [V]
    armature_resistance : float
        Armature circuit resistance Ra, interpoles included. [ohm]
    max_current : float
        Maximum (peak) armature current I1 allowed on every stud. [A]
    min_current : float, optional
        Minimum (switching) current I2 at which a section is cut out; 0 < I2 < I1. [A]
    sections : int, optional
        Number of starter sections (studs - 1), >= 1. [-]
    series_field_resistance : float, optional
        Resistance of a series field in the armature loop (compound motor). [ohm]
    brush_drop : float, optional
        Total brush drop, taken as constant while the motor starts. [V]
    machine_constant : float, optional
        k*phi, taken as constant. When given, the cut-out speeds are reported. [V*s/rad]
    rated_current : float, optional
        Rated armature current; when given, a limit above twice this draws a caution. [A]

    Returns
    -------
    StarterDesign
        The steps; ``needed`` is False (with a reason) when no starter is required.

    Raises
    ------
    ParameterError
        Non-positive voltage, resistance or currents, ``min_current >= max_current``, brush drop not
        below the voltage, both or neither of ``sections`` and ``min_current`` given.

    Notes
    -----
    On stud j the current rises to I1 = (V - Vb - E)/R_j and falls with the speed to I2; at the
    moment of switching the EMF cannot change, so I2*R_j = I1*R_(j+1), giving the geometric
    progression R_(j+1) = R_j/k with k = I1/I2, R_1 = (V - Vb)/I1 and R_(n+1) = R_loop for n
    sections. Hence k = (R_1/R_loop)^(1/n) and n = ceil(ln(R_1/R_loop)/ln(I1/I2)) [1]_.
    The shunt field current is not counted in I1 (the limit is on the armature), and k*phi is taken
    as constant (exact for shunt and separately excited motors with a steady field; in a compound
    motor the series field makes k*phi change with the current).

    References
    ----------
    .. [1] B. L. Theraja and A. K. Theraja, A Textbook of Electrical Technology, vol. II. New Delhi,
       India: S. Chand, Ex. 30.50 and 30.53 (starter step calculation).

    Examples
    --------
    >>> d = starter_steps(220.0, 0.5, 40.0, sections=6)
    >>> [round(float(r), 3) for r in d.section_resistance]
    [1.812, 1.215, 0.815, 0.546, 0.366, 0.246]
    """
    v = positive("voltage", voltage)
    ra = positive("armature_resistance", armature_resistance)
    i1 = positive("max_current", max_current)
    rse = nonnegative("series_field_resistance", series_field_resistance)
    vb = nonnegative("brush_drop", brush_drop)
    if vb >= v:
        raise ParameterError("brush_drop", brush_drop, f"a drop below the supply voltage {v!r} V")
    kphi = None if machine_constant is None else positive("machine_constant", machine_constant)
    irated = None if rated_current is None else positive("rated_current", rated_current)
    if (sections is None) == (min_current is None):
        raise ParameterError("sections", sections,
                             "either sections or min_current, not both and not neither")
    i2_req = None
    if min_current is not None:
        i2_req = positive("min_current", min_current)
        if i2_req >= i1:
            raise ParameterError("min_current", min_current, f"a current below max_current={i1!r} A")
    else:
        if isinstance(sections, bool) or not isinstance(sections, (int, np.integer)) or sections < 1:
            raise ParameterError("sections", sections, "an integer >= 1")
        sections = int(sections)

    r_loop = ra + rse
    v_net = v - vb
    r1 = v_net / i1
    notes = _limit_notes(i1, irated)
    if rse > 0 and kphi is not None:
        notes.append("k*phi is taken as constant; the series field of a compound motor changes it with the "
                     "current, so the cut-out speeds are estimates.")

    if r1 <= r_loop:
        i_direct = v_net / r_loop
        empty = np.empty(0)
        return StarterDesign(
            needed=False,
            reason=(f"direct-on current {i_direct:.4g} A does not exceed the limit {i1:.4g} A: the loop "
                    f"resistance {r_loop:.4g} ohm already limits it"),
            voltage=v, brush_drop=vb, loop_resistance=r_loop, sections=0, studs=1, max_current=i1,
            min_current=i_direct, min_current_requested=i2_req, ratio=1.0,
            total_resistance=np.array([r_loop]), section_resistance=empty,
            peak_current=np.array([i_direct]), cutout_emf=empty,
            cutout_speed=None if kphi is None else empty, machine_constant=kphi,
            notes=tuple(notes + [_GENERAL_CAUTION]))

    log_total = math.log(r1 / r_loop)
    if sections is None:
        exact = log_total / math.log(i1 / i2_req)
        n = max(1, math.ceil(exact - 1e-9))  # tolerance: an exact integer must not round up
    else:
        n = sections
    k = math.exp(log_total / n)
    i2 = i1 / k

    j = np.arange(n + 1)
    r_total = r1 * np.exp(-j * log_total / n)
    r_total[-1] = r_loop  # exact end value, free of rounding
    r_section = r_total[:-1] - r_total[1:]
    emf_cut = v_net - i2 * r_total[:-1]
    emf_before = np.concatenate(([0.0], emf_cut))
    peak = (v_net - emf_before) / r_total
    speed_cut = None if kphi is None else emf_cut / kphi
    notes.append("The last stud leaves the armature on the supply through its own resistance; the current "
                 "then falls from the peak to the load current.")
    notes.append(_GENERAL_CAUTION)
    return StarterDesign(
        needed=True, reason="", voltage=v, brush_drop=vb, loop_resistance=r_loop, sections=n,
        studs=n + 1, max_current=i1, min_current=i2, min_current_requested=i2_req, ratio=k,
        total_resistance=r_total, section_resistance=r_section, peak_current=peak,
        cutout_emf=emf_cut, cutout_speed=speed_cut, machine_constant=kphi, notes=tuple(notes))


@dataclass(frozen=True)
class StartingResistor:
    """A single starting resistor and the current it allows at standstill.

    Attributes
    ----------
    needed : bool
        False when the loop alone holds the direct-on current to the limit.
    external_resistance : float
        Resistance to add in series with the armature loop. [ohm]
    starting_current : float
        Current at standstill (zero back EMF) with that resistance in circuit. [A]
    direct_current : float
        Current at standstill with no external resistance. [A]
    notes : tuple of str
        Cautions, in plain words.
    """

    needed: bool
    external_resistance: float
    starting_current: float
    direct_current: float
    notes: tuple = ()


def single_starting_resistor(voltage, loop_resistance, current_limit, brush_drop=0.0, *,
                             rated_current=None) -> StartingResistor:
    """External resistance that limits the standstill current to ``current_limit``.

    Parameters
    ----------
    voltage : float
        Supply voltage. [V]
    loop_resistance : float
        Armature loop resistance (armature, interpoles, series field). [ohm]
    current_limit : float
        Largest current allowed at standstill. [A]
    brush_drop : float, optional
        Total brush drop. [V]
    rated_current : float, optional
        Rated current; a limit above twice this draws a caution. [A]

    Returns
    -------
    StartingResistor

    Notes
    -----
    At standstill E = 0, so I = (V - Vb)/(R_loop + R_x) and R_x = (V - Vb)/I_limit - R_loop when
    that is positive [1]_.

    References
    ----------
    .. [1] B. L. Theraja and A. K. Theraja, A Textbook of Electrical Technology, vol. II. New Delhi,
       India: S. Chand, ch. 30 (starting of DC motors).

    Examples
    --------
    >>> single_starting_resistor(220.0, 0.5, 40.0).external_resistance
    5.0
    """
    v = positive("voltage", voltage)
    r = positive("loop_resistance", loop_resistance)
    i = positive("current_limit", current_limit)
    vb = nonnegative("brush_drop", brush_drop)
    if vb >= v:
        raise ParameterError("brush_drop", brush_drop, f"a drop below the supply voltage {v!r} V")
    irated = None if rated_current is None else positive("rated_current", rated_current)
    direct = (v - vb) / r
    notes = _limit_notes(i, irated) + [_GENERAL_CAUTION]
    if direct <= i:
        return StartingResistor(False, 0.0, direct, direct, tuple(notes))
    rx = (v - vb) / i - r
    return StartingResistor(True, rx, (v - vb) / (r + rx), direct, tuple(notes))


def acceleration_time(inertia, speed_change, accelerating_torque) -> float:
    """Time to change speed under a constant accelerating torque, t = J*dw/T.

    Parameters
    ----------
    inertia : float
        Total moment of inertia referred to the motor shaft. [kg*m^2]
    speed_change : float
        Change of shaft speed, non-zero. [rad/s]
    accelerating_torque : float
        Motor torque minus load torque, same sign as ``speed_change``. [N*m]

    Returns
    -------
    float
        Time taken. [s]

    Raises
    ------
    ParameterError
        Non-positive inertia, zero speed change, or a torque that does not drive the speed the
        asked way (the speed would never be reached).

    Notes
    -----
    Newton's law for rotation, J*dw/dt = T_acc. In US units this is the familiar
    t = Wk^2*dn/(308*T) with Wk^2 in lb*ft^2, dn in r/min and T in lb*ft [1]_.

    References
    ----------
    .. [1] T. Fruge, "Practical motor starting," PDH course E161, Eq. 2.

    Examples
    --------
    >>> acceleration_time(2.0, 100.0, 50.0)
    4.0
    """
    j = positive("inertia", inertia)
    dw = real("speed_change", speed_change)
    if dw == 0:
        raise ParameterError("speed_change", speed_change, "a non-zero speed change")
    t = real("accelerating_torque", accelerating_torque)
    if t == 0 or (t > 0) != (dw > 0):
        raise ParameterError("accelerating_torque", accelerating_torque,
                             "a non-zero torque of the same sign as speed_change (else the speed is never reached)")
    return j * dw / t


@dataclass(frozen=True)
class AccelerationResult:
    """Run-up along a speed grid under a speed-dependent accelerating torque.

    Attributes
    ----------
    reaches : bool
        True when the accelerating torque stays positive over the whole grid.
    reason : str
        Why the last speed is not reached ("" when it is).
    speed : numpy.ndarray
        The speed grid. [rad/s]
    time : numpy.ndarray
        Time to reach each grid speed from the first; nan beyond a stall. [s]
    total_time : float
        Time to the last speed; inf when it is not reached. [s]
    stall_speed : float or None
        First speed at which the accelerating torque is <= 0. [rad/s]
    """

    reaches: bool
    reason: str
    speed: np.ndarray
    time: np.ndarray
    total_time: float
    stall_speed: float | None


def acceleration_time_curve(inertia, speed_grid, accelerating_torque_array) -> AccelerationResult:
    """Run-up time for an accelerating torque given on a speed grid, t = integral of J dw / T_acc.

    Parameters
    ----------
    inertia : float
        Total moment of inertia referred to the motor shaft. [kg*m^2]
    speed_grid : array_like
        Strictly increasing shaft speeds, at least two. [rad/s]
    accelerating_torque_array : array_like
        Motor minus load torque at each grid speed. [N*m]

    Returns
    -------
    AccelerationResult
        With ``reaches=False`` and the stall speed when T_acc <= 0 somewhere on the grid: the
        drive then settles where T_acc = 0 and never reaches the speeds above.

    Notes
    -----
    Between grid points T_acc is taken as linear in speed and 1/T_acc is integrated exactly:
    dt = J*dw*ln(T1/T0)/(T1 - T0) (J*dw/T0 when T1 = T0), so a linear torque-speed line gives the
    exact logarithmic run-up and a constant torque gives J*dw/T.

    Examples
    --------
    >>> r = acceleration_time_curve(2.0, [0.0, 50.0, 100.0], [50.0, 50.0, 50.0])
    >>> float(r.total_time)
    4.0
    """
    j = positive("inertia", inertia)
    w = increasing_array("speed_grid", speed_grid)
    try:
        t_acc = np.asarray(accelerating_torque_array, dtype=float)
    except (TypeError, ValueError):
        raise ParameterError("accelerating_torque_array", accelerating_torque_array,
                             "a 1-D sequence of numbers") from None
    if t_acc.shape != w.shape:
        raise ParameterError("accelerating_torque_array", f"shape {t_acc.shape}",
                             f"the shape of speed_grid {w.shape}")
    if not np.all(np.isfinite(t_acc)):
        raise ParameterError("accelerating_torque_array", accelerating_torque_array, "finite numbers only")
    bad = t_acc <= 0
    n_ok = int(np.argmax(bad)) if bad.any() else w.size  # grid points before the first stall
    time = np.full(w.size, np.nan)
    if n_ok == 0:
        return AccelerationResult(False, f"accelerating torque {t_acc[0]:.4g} N*m <= 0 at the first speed "
                                  f"{w[0]:.4g} rad/s: the drive does not start", w, time, math.inf, float(w[0]))
    t0, t1 = t_acc[:n_ok - 1], t_acc[1:n_ok]
    dw = np.diff(w[:n_ok])
    diff = t1 - t0
    same = np.abs(diff) <= 1e-12 * np.maximum(t0, t1)
    with np.errstate(divide="ignore", invalid="ignore"):
        dt = np.where(same, dw / t0, dw * np.log(t1 / t0) / np.where(same, 1.0, diff))
    time[:n_ok] = np.concatenate(([0.0], np.cumsum(j * dt)))
    if n_ok == w.size:
        return AccelerationResult(True, "", w, time, float(time[-1]), None)
    # The torque crosses zero between w[n_ok-1] and w[n_ok]: linear interpolation gives the stall speed.
    ta, tb = t_acc[n_ok - 1], t_acc[n_ok]
    w_stall = float(w[n_ok - 1] + (w[n_ok] - w[n_ok - 1]) * ta / (ta - tb))
    return AccelerationResult(False, f"accelerating torque falls to zero at {w_stall:.4g} rad/s: the drive "
                              f"settles there and never reaches {w[-1]:.4g} rad/s", w, time, math.inf, w_stall)
