"""Electric braking of a DC motor: dynamic (resistor) braking, plugging and regenerative braking,
simulated with the transient engine of :mod:`dcchar.studies.transients`.

- Dynamic braking: the armature leaves the supply and is connected across a resistor while the
  field stays excited (a shunt field stays on the supply; a series field must be reversed with
  respect to the armature so that the braking current keeps magnetizing it - it self-excites
  from residual magnetism, and only below a critical resistance).
- Plugging: the armature connection is reversed on the supply through a current-limiting
  resistor; the supply must be opened at standstill (a zero-speed switch), else the motor runs up
  the other way. Kinetic energy and supply energy both end up as heat.
- Regenerative braking: the armature EMF is held above the supply voltage (here the armature
  supply is ramped down by a controlled converter) so that the current reverses and energy goes
  back to the supply. A series motor cannot do this without reconnection.

Braking is a place where people get hurt: results carry plain cautions in ``notes``. A hoist
lowering its load needs electric braking and a mechanical holding brake; defer to local codes
and licensed practice.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ..errors import ParameterError
from ..models.validation import in_range, nonnegative, positive, real
from ._transient_engine import balance
from .transients import Transient, VoltageRamp, simulate

__all__ = ["BrakingResult", "dynamic_braking", "plugging", "regenerative_braking", "can_regenerate"]

_DEFER = "Defer to local codes and licensed practice."
_HOIST = ("A hoist lowering its load needs electric braking and a mechanical holding brake that holds the load "
          "at rest and on loss of supply: the motor is not a holding device. " + _DEFER)


@dataclass(frozen=True, eq=False)
class BrakingResult:
    """A braking run, or the reason it cannot be done with this connection.

    Attributes
    ----------
    method : str
        "dynamic", "plugging" or "regenerative".
    possible : bool
        False where the connection cannot brake this way; ``reason`` says why and
        ``transient`` is None.
    reason : str
    transient : Transient or None
        The simulated run from the initial state to the stop (or the end of ``duration``).
    initial_speed, initial_current : float
        State at the moment of switching. [rad/s], [A]
    stopping_time : float
        Time until |w| fell to the stop speed; inf where it did not within the run. [s]
    stop_speed : float
        [rad/s]
    peak_current : float
        Largest |I_a| during braking. [A]
    resistor_energy : float
        Heat in the braking (external) resistor. [J]
    machine_losses : float
        Copper, brush and rotational losses in the machine. [J]
    energy_drawn : float
        Energy taken from the supply (armature and shunt field). [J]
    energy_returned : float
        Energy sent back to the supply. [J] (Where the power flow changes direction during the
        run, drawn and returned are split by the trapezoidal rule on the output points; else
        they are the solver's exact integral.)
    kinetic_energy : float
        Kinetic energy removed from the rotating parts, 1/2 J (w0^2 - w_end^2). [J]
    load_work : float
        Work done on the load (negative: the load drove the motor). [J]
    notes : tuple of str
    """

    method: str
    possible: bool
    reason: str
    transient: Transient | None
    initial_speed: float
    initial_current: float
    stopping_time: float = math.nan
    stop_speed: float = math.nan
    peak_current: float = math.nan
    resistor_energy: float = math.nan
    machine_losses: float = math.nan
    energy_drawn: float = math.nan
    energy_returned: float = math.nan
    kinetic_energy: float = math.nan
    load_work: float = math.nan
    notes: tuple = field(default=())

    def __repr__(self):
        if not self.possible:
            return f"BrakingResult({self.method}: not possible - {self.reason})"
        return (f"BrakingResult({self.method}: stop {self.stopping_time:.4g} s, peak {self.peak_current:.4g} A, "
                f"resistor {self.resistor_energy:.4g} J, returned {self.energy_returned:.4g} J)")


def can_regenerate(machine) -> tuple[bool, str]:
    """Whether ``machine`` can regenerate on its own connection, and why (or why not).

    Returns
    -------
    (bool, str)
    """
    conn = machine.connection
    if conn == "series":
        return False, ("a series motor does not regenerate without reconnection: when its armature current "
                       "reverses, the current in its field reverses with it, the flux collapses and the EMF "
                       "cannot be held above the supply; reconnect the field to a separate source (as a "
                       "separately excited machine) to regenerate")
    if conn.endswith("compound"):
        return True, ("a compound motor regenerates with its series field bypassed: the reversed current would "
                      "make a cumulative series field oppose the shunt field (common practice, no source)")
    return True, "the field does not depend on the armature current, so the EMF can exceed the supply"


def _initial(machine, load, voltage, initial_speed, initial_current):
    """Speed and current at the moment of switching: the steady motoring point by default."""
    if initial_speed is None:
        st = balance(machine, load, voltage, machine.external_resistance)
        if st is None:
            raise ParameterError("initial_speed", None, "a speed [rad/s]: the machine has no steady point with "
                                                        "this load to start braking from")
        w0, i0 = st
    else:
        w0 = real("initial_speed", initial_speed)
        i0 = None
    if initial_current is not None:
        i0 = real("initial_current", initial_current)
    elif i0 is None:
        i0 = _current_at_speed(machine, voltage, w0)
    if not w0 > 0:
        raise ParameterError("initial_speed", w0, "a forward speed > 0 [rad/s] to brake from")
    return float(w0), float(i0)


def _current_at_speed(machine, voltage, speed):
    """Steady motoring armature current at ``speed`` [rad/s] on ``voltage`` [V]. [A]"""
    from scipy.optimize import brentq

    i_lr = machine.locked_rotor_current(voltage)
    f = lambda i: machine.scalar_state(voltage, i)[0] - speed  # noqa: E731
    lo, hi = 1e-9 * i_lr, i_lr
    if not (f(lo) > 0 > f(hi)):
        raise ParameterError("initial_speed", speed, "a speed between standstill and the no-load speed (give "
                                                     "initial_current as well otherwise)")
    return brentq(f, lo, hi, xtol=1e-12 * i_lr)


def _duration(machine, load, voltage, i0, resistance, duration):
    """Longest run: 30 mechanical time constants J*R/kphi^2 at the initial flux, at least 1 s. [s]"""
    if duration is not None:
        return positive("duration", duration)
    J = machine.inertia + (0.0 if load is None else float(load.inertia))
    k = float(machine.state_arrays(voltage, np.array([i0]))["kphi"][0])
    r = machine.loop_resistance() + resistance
    return max(30.0 * J * r / max(k * k, 1e-6), 1.0)


def _pack(method, machine, load, tr, w0, i0, stop_speed, notes, resistor=True):
    e = tr.energy
    drawn, returned = tr.energy_exchanged
    stop = tr.stopped_time if math.isfinite(tr.stopped_time) else math.inf
    machine_losses = e.machine_losses
    extra = []
    if load is not None and getattr(load, "kind", "") == "hoist":
        extra.append(_HOIST)
    if not math.isfinite(stop):
        extra.append(f"The speed did not fall to {stop_speed:.4g} rad/s within {tr.duration:.4g} s.")
    if machine.rating is not None and tr.peak_current > 2.0 * machine.rating.current:
        extra.append(f"Peak braking current {tr.peak_current:.4g} A is {tr.peak_current / machine.rating.current:.2g}"
                     f" x rated: size the resistor to limit it (commutation, shaft and coupling stress). " + _DEFER)
    return BrakingResult(method=method, possible=True, reason="", transient=tr, initial_speed=w0, initial_current=i0,
                         stopping_time=stop, stop_speed=stop_speed, peak_current=tr.peak_current,
                         resistor_energy=e.external_resistor, machine_losses=machine_losses, energy_drawn=drawn,
                         energy_returned=returned, kinetic_energy=-e.kinetic_change, load_work=e.load_work,
                         notes=tuple(dict.fromkeys(tuple(notes) + tuple(extra) + tr.notes)))


def dynamic_braking(machine, load=None, *, resistance, voltage=None, initial_speed=None, initial_current=None,
                    series_connection=None, stop_fraction=0.01, duration=None, rtol=1e-8,
                    method="LSODA") -> BrakingResult:
    """Dynamic (rheostatic) braking: the armature on a resistor, the field kept excited.

    Parameters
    ----------
    machine : dcchar machine
    load : Load, optional
    resistance : float
        Braking resistor across the armature (in place of the supply), >= 0. [ohm]
    voltage : float, optional
        Supply voltage before braking; the shunt field stays on it. [V] Default: rated.
    initial_speed, initial_current : float, optional
        State when braking begins [rad/s], [A]; default: the steady motoring point with ``load``.
    series_connection : {"normal", "reversed", "bypassed"}, optional
        Series field connection with respect to the armature. Default: "reversed" for a series
        machine (the only way it self-excites), "bypassed" for a compound machine.
    stop_fraction : float, default 0.01
        The run ends when |w| falls to this fraction of the initial speed (with a constant flux
        the speed decays exponentially and never quite reaches zero). [-]
    duration : float, optional
        Longest run [s]; default from the mechanical time constant.
    rtol, method
        Solver settings, as in :func:`dcchar.studies.transients.simulate_start`.

    Returns
    -------
    BrakingResult
    """
    V = machine.default_voltage() if voltage is None else positive("voltage", voltage)
    R = nonnegative("resistance", resistance)
    frac = in_range("stop_fraction", stop_fraction, 0.0, 1.0, low_open=True, high_open=True)
    conn = machine.connection
    if series_connection is None:
        series_connection = "reversed" if conn == "series" else "bypassed" if conn.endswith("compound") else "normal"
    w0, i0 = _initial(machine, load, V, initial_speed, initial_current)
    notes = []
    if conn == "series":
        if series_connection != "reversed":
            notes.append("With the series field connected as for motoring, the braking current demagnetizes it and "
                         "the machine does not self-excite: reverse the field with respect to the armature.")
        else:
            notes.append("The series field is reversed with respect to the armature so that the braking current "
                         "keeps magnetizing it; it self-excites from residual magnetism (or the current still in "
                         "the inductance) only below the critical resistance.")
    elif conn in ("shunt", "long_shunt_compound", "short_shunt_compound"):
        notes.append("The shunt field stays on the supply while the armature is on the braking resistor.")
    if conn.endswith("compound"):
        notes.append(f"Series field {series_connection} during braking (common practice, no source: bypassed, "
                     "so that the reversed current does not weaken the field).")
    T = _duration(machine, load, V, i0, R, duration)
    tr = simulate(machine, load, armature_voltage=0.0, duration=T,
                  field_voltage=None if conn == "separately_excited" else V, series_connection=series_connection,
                  external_resistance=machine.external_resistance + R, initial_speed=w0, initial_current=i0,
                  stop_speed=frac * w0, rtol=rtol, method=method)
    out = _pack("dynamic", machine, load, tr, w0, i0, frac * w0, notes)
    if conn == "series" and tr.peak_current < 0.05 * abs(i0) and series_connection == "reversed":
        out = _with_note(out, "The machine did not self-excite (no residual magnetism and no current left in the "
                              "inductance, or the resistance is above critical): no braking torque.")
    return out


def _with_note(result, note):
    from dataclasses import replace

    return replace(result, notes=result.notes + (note,))


def plugging(machine, load=None, *, resistance, voltage=None, initial_speed=None, initial_current=None,
             duration=None, rtol=1e-8, method="LSODA") -> BrakingResult:
    """Plugging (counter-current braking): the armature reversed on the supply through a resistor.

    The run ends at standstill, where a zero-speed switch must open the supply.

    Parameters
    ----------
    machine : dcchar machine
    load : Load, optional
    resistance : float
        Current-limiting resistor added to the armature loop, >= 0. [ohm]
    voltage : float, optional
        Supply voltage. [V] Default: rated.
    initial_speed, initial_current : float, optional
        As in :func:`dynamic_braking`.
    duration : float, optional
        Longest run [s].
    rtol, method
        Solver settings.

    Returns
    -------
    BrakingResult
        ``energy_drawn`` is the supply energy that, with the kinetic energy, ends up as heat.

    Notes
    -----
    The series field of a series or compound machine stays in the supply line, so with the
    armature reversed its current flows the other way with respect to the armature: modelled as
    the "reversed" series connection. A shunt or separate field is unchanged.
    """
    V = machine.default_voltage() if voltage is None else positive("voltage", voltage)
    R = nonnegative("resistance", resistance)
    w0, i0 = _initial(machine, load, V, initial_speed, initial_current)
    conn = machine.connection
    series = "reversed" if conn in ("series", "long_shunt_compound", "short_shunt_compound") else "normal"
    notes = ["Plugging draws nearly twice the supply voltage across the loop at the first instant (EMF and supply "
             "add): the resistor must limit the current, and shaft, coupling and commutator take a heavy "
             "stress. " + _DEFER,
             "Open the supply at standstill (a zero-speed or plugging switch), else the motor runs up in reverse."]
    T = _duration(machine, load, V, i0, R, duration)
    tr = simulate(machine, load, armature_voltage=-V, duration=T,
                  field_voltage=None if conn == "separately_excited" else V, series_connection=series,
                  external_resistance=machine.external_resistance + R, initial_speed=w0, initial_current=i0,
                  stop_speed=0.0, rtol=rtol, method=method)
    return _pack("plugging", machine, load, tr, w0, i0, 0.0, notes)


def regenerative_braking(machine, load=None, *, ramp_time, voltage=None, final_voltage=0.0, resistance=0.0,
                         initial_speed=None, initial_current=None, stop_fraction=0.01, duration=None, rtol=1e-8,
                         method="LSODA") -> BrakingResult:
    """Regenerative braking by ramping the armature supply down (a controlled converter).

    Parameters
    ----------
    machine : dcchar machine
    load : Load, optional
    ramp_time : float
        Time over which the armature voltage falls from ``voltage`` to ``final_voltage``. [s]
    voltage : float, optional
        Supply voltage before braking. [V] Default: rated.
    final_voltage : float, default 0
        Armature voltage at the end of the ramp, >= 0 and below ``voltage``. [V]
    resistance : float, default 0
        Extra armature-loop resistance. [ohm]
    initial_speed, initial_current, stop_fraction, duration, rtol, method
        As in :func:`dynamic_braking`; ``duration`` defaults to the ramp plus a settling time.

    Returns
    -------
    BrakingResult
        ``possible`` is False, with the reason, for a series motor (see :func:`can_regenerate`).

    Notes
    -----
    A shunt field is fed at full ``voltage`` from its own supply while the armature voltage is
    lowered (else the flux would fall with it); a compound's series field is bypassed. While the
    EMF exceeds the armature voltage the current reverses and ``energy_returned`` goes back to
    the supply (the converter must be able to take it).
    """
    V = machine.default_voltage() if voltage is None else positive("voltage", voltage)
    ok, why = can_regenerate(machine)
    if not ok:
        return BrakingResult(method="regenerative", possible=False, reason=why, transient=None,
                             initial_speed=math.nan, initial_current=math.nan,
                             notes=("Use dynamic braking or plugging, or reconnect the field to a separate "
                                    "source. " + _DEFER,))
    tr_ = positive("ramp_time", ramp_time)
    vend = nonnegative("final_voltage", final_voltage)
    if vend >= V:
        raise ParameterError("final_voltage", final_voltage, f"a voltage below the supply voltage {V:g} V")
    R = nonnegative("resistance", resistance)
    frac = in_range("stop_fraction", stop_fraction, 0.0, 1.0, low_open=True, high_open=True)
    w0, i0 = _initial(machine, load, V, initial_speed, initial_current)
    conn = machine.connection
    T = tr_ + _duration(machine, load, V, i0, R, None) if duration is None else positive("duration", duration)
    notes = [why]
    if conn in ("shunt", "long_shunt_compound", "short_shunt_compound"):
        notes.append("The shunt field is held at full voltage from its own supply while the armature voltage "
                     "is lowered.")
    if vend > 0:
        notes.append(f"The armature voltage ends at {vend:g} V: the speed settles near the matching no-load "
                     "speed, not at standstill.")
    tr = simulate(machine, load, armature_voltage=VoltageRamp(V, vend, tr_), duration=T,
                  field_voltage=None if conn == "separately_excited" else V,
                  series_connection="bypassed" if conn.endswith("compound") else "normal",
                  external_resistance=machine.external_resistance + R, initial_speed=w0, initial_current=i0,
                  stop_speed=frac * w0 if vend == 0 else None, rtol=rtol, method=method)
    out = _pack("regenerative", machine, load, tr, w0, i0, frac * w0 if vend == 0 else math.nan, notes)
    if out.energy_returned <= 0:
        out = _with_note(out, "No energy was returned: the ramp is slower than the load alone stops the drive; "
                              "shorten ramp_time to brake regeneratively.")
    return out
