"""Starter steps for a series motor, found numerically from its non-linear characteristic.

In a series motor the flux follows the current, so the steps between a maximum current I1 and a
switching current I2 are not in geometric progression. Stud by stud: the current falls from I1
to I2 as the speed rises; the speed at which it reaches I2 comes from the machine's own steady
EMF-current relation (magnetization, armature reaction, brush drop, series field resistance and
diverter included); the next resistance is the one that brings the current back to I1 at that
speed, found with a root finder of scipy. The function serves every connection (for a constant
flux it gives the geometric progression of :func:`dcchar.studies.starter_steps.starter_steps`).

Starting is a place where people get hurt: the design carries plain cautions in ``notes``. It is
no substitute for the protection a real starter needs nor for local codes and licensed practice.
"""

from __future__ import annotations

import math

import numpy as np

from ..errors import ParameterError, SolverError
from ..models.validation import positive
from .starter_steps import StarterDesign, _GENERAL_CAUTION, _limit_notes

__all__ = ["series_starter_steps", "stepped_starter"]


#: Connections whose flux follows the armature current through a series field.
SERIES_FIELD = ("series", "long_shunt_compound", "short_shunt_compound")


def stepped_starter(machine, max_current, *, sections, voltage=None) -> StarterDesign:
    """The stepped starter of ``machine`` with peak ``max_current`` [A] on every stud and
    ``sections`` sections, at supply ``voltage`` [V] (default: the rated voltage).

    Where a series field carries the armature current (series and compound connections) the flux
    rises with the current and the steps come from the characteristic
    (:func:`series_starter_steps`); otherwise the flux is taken as constant and the steps are in
    geometric progression (:func:`dcchar.studies.starter_steps.starter_steps`).
    """
    from .starter_steps import starter_steps

    V = machine.default_voltage() if voltage is None else positive("voltage", voltage)
    rated = machine.rating.current if machine.rating is not None else None
    if machine.connection in SERIES_FIELD:
        return series_starter_steps(machine, max_current, voltage=V, sections=sections, rated_current=rated)
    return starter_steps(V, machine.loop_resistance(), max_current, sections=sections,
                         brush_drop=machine.brush_drop, rated_current=rated)


def _speed_at(machine, voltage, current, total):
    """Steady speed [rad/s] at armature current ``current`` [A] with loop resistance ``total`` [ohm]."""
    rx = total - machine.loop_resistance() + machine.external_resistance
    return machine.with_(external_resistance=rx).scalar_state(voltage, current)[0]


def _resistance_for(machine, voltage, current, speed, r_hi, xtol):
    """Loop resistance [ohm] at which ``current`` flows at ``speed``: root of speed(R) = speed."""
    from scipy.optimize import brentq

    base = machine.loop_resistance()
    f = lambda r: _speed_at(machine, voltage, current, r) - speed  # noqa: E731
    if f(base) <= 0:  # even the bare loop gives less than I1 at this speed: run position
        return base
    return brentq(f, base, r_hi, xtol=xtol, rtol=4 * np.finfo(float).eps, maxiter=200)


def _chain(machine, voltage, i1, i2, n_max, xtol):
    """Stud resistances from R1 = (V - Vb)/I1 down to the loop, and the cut-out speeds."""
    base = machine.loop_resistance()
    r1 = (voltage - machine.brush_drop) / i1
    totals, speeds = [r1], []
    for _ in range(n_max):
        w = _speed_at(machine, voltage, i2, totals[-1])
        if not (math.isfinite(w) and w > 0):
            raise ParameterError("min_current", i2, f"a current at which the motor turns forward on stud "
                                 f"{len(totals)} (speed {w!r} rad/s)")
        speeds.append(w)
        r = _resistance_for(machine, voltage, i1, w, r1, xtol)
        if r <= base * (1 + 1e-12):
            totals.append(base)
            return totals, speeds
        totals.append(r)
    raise ParameterError("min_current", i2, f"a switching current that reaches the run position within {n_max} "
                                            "sections")


def series_starter_steps(machine, max_current, *, voltage=None, min_current=None, sections=None,
                         rated_current=None, max_sections: int = 60) -> StarterDesign:
    """Starter steps of a (series) motor between ``max_current`` and a switching current.

    Give either the switching current ``min_current`` (the number of sections follows, rounded
    up, and the switching current is then raised so that the last section ends exactly on the
    run position) or the number of ``sections`` (the switching current follows).

    Parameters
    ----------
    machine : dcchar machine
        Usually a :class:`~dcchar.models.connections.Series`; any connection works. Its own
        ``external_resistance`` stays in the loop on every stud.
    max_current : float
        Peak armature current I1 on reaching each stud. [A]
    voltage : float, optional
        Supply voltage. [V] Default: the rated voltage.
    min_current : float, optional
        Switching current I2 < I1. [A]
    sections : int, optional
        Number of starter sections (studs - 1), >= 1. [-]
    rated_current : float, optional
        Rated armature current for the caution on the limit (default: the machine's rating). [A]
    max_sections : int, default 60
        Guard on the number of sections. [-]

    Returns
    -------
    StarterDesign
        ``total_resistance`` holds the whole loop on each stud (last = the machine's loop),
        ``cutout_speed`` and ``cutout_emf`` the speed and back EMF at which each section is cut
        out, ``peak_current`` the current on reaching each stud (I1, and on the run position the
        value solved from the characteristic), ``ratio`` = I1/I2; ``machine_constant`` is None
        (kphi changes with the current).

    Raises
    ------
    ParameterError
        Bad currents, both or neither of ``min_current`` and ``sections``, a switching current
        at which the motor would not turn forward.
    SolverError
        The switching current for the asked number of sections could not be bracketed.

    Notes
    -----
    With the inductance neglected the current changes at a switching while the speed cannot,
    and on stud j with loop resistance R_j the steady relation holds:
    V - V_b = I R_j + kphi(I) w. Entering the stud at speed w_(j-1) with current I1 fixes
    R_j = (V - V_b - kphi(I1) w_(j-1))/I1 (solved here with Brent's method on the machine's own
    speed-current relation), and the current falls to I2 at
    w_j = (V - V_b - I2 R_j)/kphi(I2). The back EMF at cut-out is E_j = kphi(I2) w_j =
    V - V_b - I2 R_j.

    Closed form, unsaturated series motor (kphi = K I, no brush drop, no armature reaction):
    the two relations read V/I1 = R_j + K w_(j-1) and V/I2 = R_j + K w_j; the first for stud
    j + 1 reads V/I1 = R_(j+1) + K w_j; subtracting gives R_j - R_(j+1) = V (1/I2 - 1/I1). Every
    section has the same resistance (an arithmetic progression), R_j = V/I1 - (j - 1) V (1/I2 -
    1/I1), the cut-out speeds are w_j = (V/I2 - R_j)/K, and the number of sections is
    (V/I1 - R_loop)/(V (1/I2 - 1/I1)).

    Constant flux (shunt, separately excited, permanent magnet): kphi(I1) = kphi(I2) makes
    I2 R_j = I1 R_(j+1), the geometric progression of Theraja Ex. 30.50 [1]_.

    References
    ----------
    .. [1] B. L. Theraja and A. K. Theraja, A Textbook of Electrical Technology, vol. II. New Delhi,
       India: S. Chand, Ex. 30.50 and 30.53 (starter step calculation).
    """
    V = machine.default_voltage() if voltage is None else positive("voltage", voltage)
    i1 = positive("max_current", max_current)
    if machine.brush_drop >= V:
        raise ParameterError("voltage", V, f"a voltage above the brush drop {machine.brush_drop:g} V")
    if (sections is None) == (min_current is None):
        raise ParameterError("sections", sections, "either sections or min_current, not both and not neither")
    if rated_current is None and machine.rating is not None:
        rated_current = machine.rating.current
    irated = None if rated_current is None else positive("rated_current", rated_current)
    n_max = int(max_sections)
    base = machine.loop_resistance()
    r1 = (V - machine.brush_drop) / i1
    xtol = 1e-13 * r1
    notes = _limit_notes(i1, irated)
    if machine.connection == "series":
        notes.append("A series motor must never be started or run without its load coupled: unloaded, its speed "
                     "rises without bound.")
    if r1 <= base:
        i_direct = (V - machine.brush_drop) / base
        empty = np.empty(0)
        return StarterDesign(
            needed=False, reason=(f"direct-on current {i_direct:.4g} A does not exceed the limit {i1:.4g} A: the "
                                  f"loop resistance {base:.4g} ohm already limits it"),
            voltage=V, brush_drop=machine.brush_drop, loop_resistance=base, sections=0, studs=1, max_current=i1,
            min_current=i_direct, min_current_requested=min_current, ratio=1.0, total_resistance=np.array([base]),
            section_resistance=empty, peak_current=np.array([i_direct]), cutout_emf=empty, cutout_speed=empty,
            machine_constant=None, notes=tuple(notes + [_GENERAL_CAUTION]))

    def last_gap(i2):
        """R_n - R_loop after n - 1 full sections: zero when the chain ends exactly on the loop."""
        totals, _ = _chain_fixed(machine, V, i1, i2, n, xtol)
        return totals[-1] - base

    i2_req = None
    if min_current is not None:
        i2_req = positive("min_current", min_current)
        if i2_req >= i1:
            raise ParameterError("min_current", min_current, f"a current below max_current={i1!r} A")
        totals, _ = _chain(machine, V, i1, i2_req, n_max, xtol)
        n = len(totals) - 1
    else:
        if isinstance(sections, bool) or not isinstance(sections, (int, np.integer)) or sections < 1:
            raise ParameterError("sections", sections, "an integer >= 1")
        n = int(sections)
    # the switching current that makes section n end exactly on the run position
    from scipy.optimize import brentq

    hi = i1 * (1 - 1e-9)
    lo = _lowest_switching(machine, V, i1)
    try:
        i2 = brentq(last_gap, lo, hi, xtol=1e-14 * i1, rtol=4 * np.finfo(float).eps, maxiter=200)
    except ValueError as exc:
        raise SolverError(f"no switching current gives {n} sections between {lo:.4g} and {i1:.4g} A: {exc}") from exc
    totals, speeds = _chain_fixed(machine, V, i1, i2, n, xtol)
    totals[-1] = base
    r = np.array(totals)
    w = np.array(speeds)
    emf_cut = V - machine.brush_drop - i2 * r[:-1]
    peak = np.full(n + 1, i1)
    notes.append("The last stud leaves the armature on the supply through its own loop; the current then falls "
                 "from the peak to the load current.")
    notes.append("Inductance is neglected at each switching (the current is taken to jump at once); a "
                 "simulation with inductance (dcchar.studies.transients) shows lower, delayed peaks.")
    notes.append(_GENERAL_CAUTION)
    return StarterDesign(
        needed=True, reason="", voltage=V, brush_drop=machine.brush_drop, loop_resistance=base, sections=n,
        studs=n + 1, max_current=i1, min_current=float(i2), min_current_requested=i2_req, ratio=i1 / i2,
        total_resistance=r, section_resistance=r[:-1] - r[1:], peak_current=peak, cutout_emf=emf_cut,
        cutout_speed=w, machine_constant=None, notes=tuple(notes))


def _chain_fixed(machine, V, i1, i2, n, xtol):
    """Stud resistances for ``n`` sections (the last value is whatever R_(n+1) comes out).

    Below the loop resistance R_(j+1) is the loop relation R = (V - V_b - E)/I1 with E the EMF
    at I1, and the chain stops there: the gap R_(n+1) - R_loop is then negative, as the outer
    root finder needs (the switching current is too low).
    """
    r1 = (V - machine.brush_drop) / i1
    totals, speeds = [r1], []
    base = machine.loop_resistance()
    for _ in range(n):
        w = _speed_at(machine, V, i2, totals[-1])
        if not (math.isfinite(w) and w > 0):
            # a switching current too low to turn forward on this stud: report a large positive gap
            return totals + [r1] * (n + 1 - len(totals)), speeds
        speeds.append(w)
        e1 = w * _kphi_at(machine, V, i1)
        r_next = (V - machine.brush_drop - e1) / i1
        if r_next > base:
            r_next = _resistance_for(machine, V, i1, w, r1, xtol)
        totals.append(r_next)
        if r_next <= base:  # the run position is reached early: the switching current is too low
            return totals, speeds
    return totals, speeds


def _kphi_at(machine, V, current):
    return float(machine.state_arrays(V, np.array([current]))["kphi"][0])


def _lowest_switching(machine, V, i1):
    """A switching current just above the one at which the motor stops turning on the first stud. [A]"""
    r1 = (V - machine.brush_drop) / i1
    lo, hi = 1e-9 * i1, i1
    for _ in range(200):
        mid = 0.5 * (lo + hi)
        w = _speed_at(machine, V, mid, r1)
        if math.isfinite(w) and w > 0:
            hi = mid
        else:
            lo = mid
        if hi - lo < 1e-12 * i1:
            break
    return hi * (1 + 1e-9)
