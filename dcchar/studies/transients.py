"""Start-up transients of a DC motor in the time domain: armature current, speed and field current
through the studs of a starter, with inertia, load torque, static friction and saturation.

The states are the armature current (when the loop has inductance), the speed, the shunt or
separate field current (when the field has inductance) and seven running integrals of power, so
that every energy term is integrated by the solver itself. The flux comes from the machine's own
magnetization curve and armature reaction, so saturation is included; EMF = kphi*w and torque =
kphi*I_a. At equilibrium the equations reduce to the steady machine equations of
:mod:`dcchar.models.symbolic` (the tests hold them to each other).

Starting is a place where people get hurt: results carry plain cautions in ``notes``; defer to
local codes and licensed practice.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ..errors import ParameterError, SolverError
from ..models.validation import nonnegative, positive, real
from ._transient_engine import _SERIES, _Circuit, _run, balance

__all__ = ["Transient", "EnergyTerms", "VoltageRamp", "simulate", "simulate_start"]


@dataclass(frozen=True)
class VoltageRamp:
    """A supply voltage that ramps linearly from ``start`` to ``end`` over ``duration``, then holds.

    Parameters
    ----------
    start, end : float
        Voltage at t = ``delay`` and after the ramp. [V]
    duration : float
        Length of the ramp, > 0. [s]
    delay : float, default 0
        Time before the ramp begins (``start`` held). [s]
    """

    start: float
    end: float
    duration: float
    delay: float = 0.0

    def __post_init__(self):
        object.__setattr__(self, "start", real("start", self.start))
        object.__setattr__(self, "end", real("end", self.end))
        object.__setattr__(self, "duration", positive("duration", self.duration))
        object.__setattr__(self, "delay", nonnegative("delay", self.delay))

    def __call__(self, t: float) -> float:
        """Voltage at time ``t`` [s]. [V]"""
        x = (t - self.delay) / self.duration
        if x <= 0.0:
            return self.start
        if x >= 1.0:
            return self.end
        return self.start + (self.end - self.start) * x


@dataclass(frozen=True)
class EnergyTerms:
    """Energy over a transient, each term integrated by the solver as an extra state. [J]

    ``supply + field_supply = kinetic_change + magnetic_change + armature_copper +
    series_field_copper + external_resistor + field_copper + brush + rotational + load_work``.
    ``supply`` is negative where energy flows back to the supply (regeneration); ``load_work`` is
    negative where the load drives the motor (a hoist lowering).
    """

    supply: float
    field_supply: float
    kinetic_change: float
    magnetic_change: float
    armature_copper: float
    series_field_copper: float
    external_resistor: float
    field_copper: float
    brush: float
    rotational: float
    load_work: float

    @property
    def losses(self) -> float:
        """Every dissipated term: copper, resistor, brush, rotational. [J]"""
        return (self.armature_copper + self.series_field_copper + self.external_resistor + self.field_copper
                + self.brush + self.rotational)

    @property
    def machine_losses(self) -> float:
        """The losses inside the machine: copper of its windings, brush and rotational (no
        external resistor). [J]"""
        return self.armature_copper + self.series_field_copper + self.field_copper + self.brush + self.rotational

    @property
    def residual(self) -> float:
        """Input minus every use of energy; zero to the solver's tolerance. [J]"""
        return (self.supply + self.field_supply - self.kinetic_change - self.magnetic_change - self.losses
                - self.load_work)

    @property
    def relative_residual(self) -> float:
        """|residual| over the largest term. [-]"""
        terms = [self.supply, self.field_supply, self.kinetic_change, self.magnetic_change, self.losses,
                 self.load_work]
        scale = max(abs(x) for x in terms)
        return abs(self.residual) / scale if scale > 0 else 0.0


@dataclass(frozen=True, eq=False)
class Transient:
    """A simulated transient: arrays at the solver's output points and key figures.

    Attributes
    ----------
    time : numpy.ndarray
        [s]
    armature_current, field_current, series_field_current, supply_current : numpy.ndarray
        [A] (field current 0 where the connection has none)
    speed : numpy.ndarray
        [rad/s]
    torque : numpy.ndarray
        Developed (electromagnetic) torque kphi*I_a. [N*m]
    shaft_torque : numpy.ndarray
        Developed torque less friction, windage, core and stray torques. [N*m]
    load_torque : numpy.ndarray
        Load torque at the motor shaft (held by static friction at standstill). [N*m]
    emf : numpy.ndarray
        Back EMF kphi*w. [V]
    external_resistance : numpy.ndarray
        Resistance in the armature loop beyond the machine's own (starter or braking resistor). [ohm]
    supply_power : numpy.ndarray
        Power drawn from the supply (negative: returned), separate field supply excluded. [W]
    peak_current : float
        Largest |I_a|. [A]
    peak_torque : float
        Largest |developed torque|. [N*m]
    final_speed : float
        Speed at the end. [rad/s]
    steady_speed : float
        Steady speed with the load at the final connection (nan where there is none). [rad/s]
    time_to_95 : float
        First time the speed reaches 95 % of ``steady_speed`` (nan where not reached). [s]
    switch_times : tuple of float
        Times at which starter sections were cut out (or the connection changed). [s]
    stud_peak_currents : tuple of float
        Largest |I_a| on each stud (stage). [A]
    energy : EnergyTerms
    inertia : float
        Motor plus referred load inertia. [kg*m^2]
    stopped_time : float
        Time at which the speed reached zero and the run was ended there (nan otherwise). [s]
    completed : bool
        False when a stage did not finish (the current never fell to the switching value, the
        speed passed the safe speed, or the time limit was reached); ``reason`` says why.
    reason : str
    notes : tuple of str
        Cautions and assumptions, in plain words.
    """

    time: np.ndarray
    armature_current: np.ndarray
    speed: np.ndarray
    torque: np.ndarray
    shaft_torque: np.ndarray
    load_torque: np.ndarray
    field_current: np.ndarray
    series_field_current: np.ndarray
    supply_current: np.ndarray
    emf: np.ndarray
    external_resistance: np.ndarray
    supply_power: np.ndarray
    peak_current: float
    peak_torque: float
    final_speed: float
    steady_speed: float
    time_to_95: float
    switch_times: tuple
    stud_peak_currents: tuple
    energy: EnergyTerms
    inertia: float
    stopped_time: float = math.nan
    completed: bool = True
    reason: str = ""
    notes: tuple = field(default=())

    @property
    def duration(self) -> float:
        """Length of the simulated interval. [s]"""
        return float(self.time[-1] - self.time[0])

    @property
    def speed_rpm(self) -> np.ndarray:
        """Speed. [r/min]"""
        from ..models.units import RPM

        return self.speed / RPM

    @property
    def energy_exchanged(self) -> tuple:
        """(drawn from the supplies, returned to the supply) over the run [J], both >= 0: the
        solver's exact integrals where the armature supply power keeps one sign, else split at its
        sign changes by the trapezoidal rule on the output points (the field supply only draws)."""
        e, p = self.energy, self.supply_power
        if np.all(p >= 0):
            return e.supply + e.field_supply, 0.0
        if np.all(p <= 0):
            return e.field_supply, -e.supply
        returned = float(np.trapezoid(np.where(p < 0, -p, 0.0), self.time))
        return float(np.trapezoid(np.where(p > 0, p, 0.0), self.time)) + e.field_supply, returned

    def rms(self, name: str = "armature_current") -> float:
        """Root-mean-square of an array over time (trapezoidal rule on the output points). [unit]"""
        y = np.asarray(getattr(self, name), dtype=float)
        d = self.duration
        if d <= 0:
            return float(abs(y[0]))
        return float(math.sqrt(np.trapezoid(y * y, self.time) / d))

    def mean(self, name: str) -> float:
        """Time average of an array (trapezoidal rule). [unit]"""
        y = np.asarray(getattr(self, name), dtype=float)
        d = self.duration
        return float(y[0]) if d <= 0 else float(np.trapezoid(y, self.time) / d)

    def to_frame(self):
        """A pandas DataFrame of the arrays, columns named with units (needs pandas)."""
        import pandas as pd

        cols = {"time [s]": self.time, "armature_current [A]": self.armature_current, "speed [rad/s]": self.speed,
                "torque [N*m]": self.torque, "shaft_torque [N*m]": self.shaft_torque,
                "load_torque [N*m]": self.load_torque, "field_current [A]": self.field_current,
                "series_field_current [A]": self.series_field_current, "supply_current [A]": self.supply_current,
                "emf [V]": self.emf, "external_resistance [ohm]": self.external_resistance}
        return pd.DataFrame(cols)

    def __repr__(self):
        return (f"Transient({self.duration:.4g} s, peak {self.peak_current:.4g} A, "
                f"final {self.final_speed:.4g} rad/s, {len(self.switch_times)} switchings)")


_DEFER = "Defer to local codes and licensed practice."


def _inertia(machine, load):
    j = machine.inertia + (0.0 if load is None else float(load.inertia))
    if not j > 0:
        raise ParameterError("inertia", j, "motor inertia plus referred load inertia > 0 [kg*m^2] "
                                           "(set machine.inertia or the load's inertia)")
    return j


def _tolerances(rtol, atol):
    rt = positive("rtol", rtol)
    if rt >= 1e-2:
        raise ParameterError("rtol", rtol, "a relative tolerance below 1e-2")
    at = None if atol is None else positive("atol", atol)
    return rt, at


def _starting_notes(machine, peak, extra=()):
    notes = list(extra)
    rating = getattr(machine, "rating", None)
    if rating is not None and peak > 2.0 * rating.current:
        notes.append(f"Peak armature current {peak:.4g} A is {peak / rating.current:.2g} x rated "
                     f"{rating.current:.4g} A: check commutation, the supply and its protection. " + _DEFER)
    if machine.connection == "series":
        notes.append("A series motor must never be started or run without its load coupled: unloaded, its "
                     "speed rises without bound. " + _DEFER)
    if machine.connection in ("shunt", "separately_excited", "long_shunt_compound", "short_shunt_compound"):
        notes.append("Never start or run with the shunt field open; a starter needs no-volt and overload "
                     "release. " + _DEFER)
    return tuple(notes)


def _build(machine, load, stages, *, steady, t_cap, rtol, atol, method, initial, notes,
           stop_speed, settle):
    """Run the stages and pack a Transient."""
    out = _run(stages, load, initial, rtol=rtol, atol=atol, method=method, t_cap=t_cap, steady=steady,
              stop_speed=stop_speed, settle=settle)
    peak = float(np.max(np.abs(out["armature_current"])))
    w_ss = steady if steady is not None and math.isfinite(steady) else math.nan
    t95 = math.nan
    if math.isfinite(w_ss) and w_ss != 0:
        w = out["speed"]
        target = 0.95 * w_ss
        hit = np.nonzero((w - target) * math.copysign(1.0, w_ss) >= 0)[0]
        if hit.size:
            t95 = out["t95"] if math.isfinite(out["t95"]) else float(out["time"][hit[0]])
    energy = EnergyTerms(**{k: float(v) for k, v in out["energy"].items()})
    limit = min(1e4 * rtol, 1e-2)
    if energy.relative_residual > limit:
        raise SolverError(f"the energy balance of the {machine.label} transient does not close "
                          f"(relative residual {energy.relative_residual:.2g} > {limit:.2g}): the solver "
                          f"{method!r} lost accuracy, often at a static-friction discontinuity; use "
                          "method='LSODA' or 'RK45', or tighten rtol", energy)
    return Transient(
        time=out["time"], armature_current=out["armature_current"], speed=out["speed"], torque=out["torque"],
        shaft_torque=out["shaft_torque"], load_torque=out["load_torque"], field_current=out["field_current"],
        series_field_current=out["series_field_current"], supply_current=out["supply_current"],
        emf=out["emf"], external_resistance=out["external_resistance"], supply_power=out["supply_power"],
        peak_current=peak,
        peak_torque=float(np.max(np.abs(out["torque"]))), final_speed=float(out["speed"][-1]),
        steady_speed=w_ss, time_to_95=t95, switch_times=tuple(out["switch_times"]),
        stud_peak_currents=tuple(out["stage_peaks"]), energy=energy, inertia=stages[0].inertia,
        stopped_time=out["stopped_time"], completed=out["completed"], reason=out["reason"],
        notes=tuple(notes) + tuple(out["notes"]))


def simulate_start(machine, load=None, voltage=None, *, starter=None, switch_current=None, switch_times=None,
                   run_time=None, field_preexcited=True, holding_brake=False, rtol=1e-8, atol=None,
                   method="LSODA", max_time=None) -> Transient:
    """Simulate a start from rest through the studs of a starter (or direct on line).

    Parameters
    ----------
    machine : dcchar machine
        Any connection; ``armature_inductance`` (and ``series_inductance``, ``field_inductance``)
        set the electrical time constants; zero inductance makes the current follow the speed
        instantly (the starter-design assumption).
    load : Load, optional
        Load torque against speed and its referred inertia; None for an uncoupled rotor.
    voltage : float or callable, optional
        Supply voltage [V] (default: the rated voltage), or a function of time [s] -> [V] such as
        :class:`VoltageRamp`.
    starter : StarterDesign or sequence of float, optional
        Total armature-loop resistance on each stud [ohm], the last being the run position (for a
        :class:`~dcchar.studies.starter_steps.StarterDesign` its ``total_resistance``). None:
        direct on line.
    switch_current : float, optional
        Cut each section out when the armature current falls to this value [A] (an event of the
        solver); where the inductance keeps the peak on a stud below it, at that peak. Default: the design's ``min_current`` when ``starter`` is a StarterDesign and no
        ``switch_times`` are given.
    switch_times : sequence of float, optional
        Times at which each section is cut out, increasing, one per section. [s]
    run_time : float, optional
        Time simulated after the last section is cut out [s]. Default: until the speed settles
        within 1e-4 of the steady speed (capped by ``max_time``).
    field_preexcited : bool, default True
        The shunt or separate field is energized (at its steady current) before the armature is
        switched on, as a starter does; False switches both together.
    holding_brake : bool, default False
        A mechanical brake holds the rotor until the motor's torque exceeds the load's breakaway
        torque (a hoist must have one: without it the load turns the rotor backward at first).
    rtol, atol : float, optional
        Solver tolerances (``atol`` default: ``rtol`` times a scale of each state).
    method : str, default "LSODA"
        A ``scipy.integrate.solve_ivp`` method.
    max_time : float, optional
        Longest time any one stud may last [s]; default from the mechanical time constant.

    Returns
    -------
    Transient
        ``switch_times`` are the cut-out times; ``stud_peak_currents`` the peak on each stud.

    Notes
    -----
    Armature loop: (L_a + L_se) dI_a/dt = V - kphi*w - I_a (R_a + R_x + R_se) - V_b sgn(I_a);
    field: L_f dI_f/dt = V_f - R_f I_f; mechanics: J dw/dt = kphi I_a - T_loss(w) - T_load(w), with
    kphi from the magnetization at the net excitation (armature reaction included). At standstill
    the rotor stays at rest while the developed torque lies between the static resisting torques
    of the two directions (motor friction plus the load's breakaway torque), so a friction load
    never drives the rotor backwards; an active load (a hoist) does turn it backwards when the
    motor torque falls below the load's holding torque.
    """
    from .starter_steps import StarterDesign

    V = machine.default_voltage() if voltage is None else voltage
    if not callable(V):
        V = positive("voltage", V)
    rtol, atol = _tolerances(rtol, atol)
    J = _inertia(machine, load)
    base_loop = machine.loop_resistance()
    if starter is None:
        totals = [base_loop]
    else:
        if isinstance(starter, StarterDesign):
            if not starter.needed:
                totals = [base_loop]
            else:
                totals = [float(r) for r in starter.total_resistance]
            if switch_current is None and switch_times is None and len(totals) > 1:
                switch_current = starter.min_current
        else:
            try:
                totals = [float(r) for r in starter]
            except (TypeError, ValueError):
                raise ParameterError("starter", starter, "a StarterDesign or a sequence of loop resistances [ohm]") \
                    from None
        for i, r in enumerate(totals):
            if not (math.isfinite(r) and r >= base_loop * (1 - 1e-9)):
                raise ParameterError(f"starter[{i}]", r, f"a total loop resistance >= the machine's own "
                                                         f"{base_loop:.6g} ohm")
    n_sec = len(totals) - 1
    if n_sec and (switch_current is None) == (switch_times is None):
        raise ParameterError("switch_current", switch_current,
                             "either switch_current or switch_times (one of them) for a starter with sections")
    times = None
    if switch_times is not None:
        times = np.asarray(switch_times, dtype=float)
        if times.shape != (n_sec,) or not np.all(np.isfinite(times)) or np.any(times <= 0) or \
                np.any(np.diff(times) <= 0):
            raise ParameterError("switch_times", switch_times, f"{n_sec} increasing times > 0 [s]")
    i2 = None if switch_current is None else positive("switch_current", switch_current)
    run_t = None if run_time is None else positive("run_time", run_time)
    extra_base = machine.external_resistance - base_loop  # external = total + this
    stages = []
    for j, total in enumerate(totals):
        last = j == n_sec
        rx = max(total + extra_base, 0.0) if j < n_sec else machine.external_resistance
        end = None
        if not last and times is not None:
            end = float(times[j])
        stages.append(_Circuit(machine, J, armature_voltage=V, external_resistance=rx,
                              switch_current=None if (last or i2 is None) else i2, end_time=end,
                              run_time=run_t if last else None, label=f"stud {j + 1}",
                              holding_brake=bool(holding_brake) and j == 0))
    v_end = V(1e30) if callable(V) else V
    st = balance(machine, load, v_end, machine.external_resistance)
    w_ss, i_ss = (math.nan, None) if st is None else st
    initial = stages[0].initial_state(field_preexcited=field_preexcited)
    t_cap = _time_cap(stages, machine, V) if max_time is None else positive("max_time", max_time)
    if i2 is not None and i_ss is not None and i2 <= i_ss:
        raise ParameterError("switch_current", switch_current,
                             f"a current above the steady load current {i_ss:.4g} A (else the current never "
                             "falls to it and the starter never advances)")
    stages[-1].steady_current = i_ss
    tr = _build(machine, load, stages, steady=w_ss, t_cap=t_cap, rtol=rtol, atol=atol,
                method=method, initial=initial, notes=(), stop_speed=None, settle=run_t is None)
    notes = _starting_notes(machine, tr.peak_current)
    if not math.isfinite(w_ss):
        notes += ("No steady speed with this load: the motor runs away or cannot start; see reason.",)
    return _replace_notes(tr, notes + tr.notes)


def _time_cap(stages, machine, V):
    """Longest time one stage may last: 50 mechanical plus 50 electrical time constants. [s]"""
    v = abs(V(0.0) if callable(V) else V) or 1.0
    r_max = max(c.R + (c.Rse if c.short else 0.0) for c in stages)
    r_min = min(c.R + (c.Rse if c.short else 0.0) for c in stages)
    i_ref = machine.rating.current if machine.rating is not None else 0.25 * v / r_min
    k = float(machine.state_arrays(v, np.array([i_ref]))["kphi"][0])
    k = k if math.isfinite(k) and k > 0 else 1e-3
    c = stages[-1]
    return 50.0 * c.inertia * r_max / (k * k) + 50.0 * (c.La + c.Lse + c.Lf) / r_min + 1e-3


def _replace_notes(tr, notes):
    from dataclasses import replace

    return replace(tr, notes=tuple(dict.fromkeys(notes)))


def simulate(machine, load=None, *, armature_voltage, duration, field_voltage=None, series_connection="normal",
             external_resistance=None, initial_speed=0.0, initial_current=None, initial_field_current=None,
             stop_speed=None, rtol=1e-8, atol=None, method="LSODA") -> Transient:
    """Simulate one fixed connection for ``duration`` from a given state (the engine behind braking).

    Parameters
    ----------
    machine : dcchar machine
    load : Load, optional
    armature_voltage : float or callable
        Source in the armature loop [V] (the supply; ``-V`` with the armature reversed; 0 with
        the armature on a resistor), or a function of time [s] -> [V].
    duration : float
        [s]
    field_voltage : float, optional
        Voltage across a shunt field circuit [V] (default: the armature source; the separate
        field's own ``field_voltage`` for a separately excited machine). Dynamic braking keeps
        the shunt field on the supply this way.
    series_connection : {"normal", "reversed", "bypassed"}
        The series field as connected in motoring, reversed with respect to the armature, or
        shorted out.
    external_resistance : float, optional
        Resistance in the armature loop beyond the machine's own [ohm] (default: the machine's).
    initial_speed : float, default 0
        [rad/s]
    initial_current : float, optional
        Armature current at t = 0 [A] (where the loop has inductance); default 0. The braking
        studies pass the steady motoring current.
    initial_field_current : float, optional
        [A]; default: its steady value.
    stop_speed : float, optional
        End the run when |w| falls to this speed [rad/s]; 0 ends it at standstill (the supply of
        a plugged motor is opened there). None: run for ``duration``.
    rtol, atol, method
        As in :func:`simulate_start`.

    Returns
    -------
    Transient
    """
    if series_connection not in _SERIES:
        raise ParameterError("series_connection", series_connection, f"one of {tuple(_SERIES)}")
    rtol, atol = _tolerances(rtol, atol)
    J = _inertia(machine, load)
    Va = armature_voltage if callable(armature_voltage) else real("armature_voltage", armature_voltage)
    T = positive("duration", duration)
    rx = machine.external_resistance if external_resistance is None else nonnegative("external_resistance",
                                                                                       external_resistance)
    vf = None if field_voltage is None else real("field_voltage", field_voltage)
    c = _Circuit(machine, J, armature_voltage=Va, external_resistance=rx, field_voltage=vf,
                 series_connection=series_connection, run_time=T, label="connection")
    w0 = real("initial_speed", initial_speed)
    i0 = None if initial_current is None else real("initial_current", initial_current)
    if0 = None if initial_field_current is None else real("initial_field_current", initial_field_current)
    initial = c.initial_state(speed=w0, current=i0, field_current=if0)
    tr = _build(machine, load, [c], steady=None, t_cap=T * 1.000001, rtol=rtol, atol=atol,
                method=method, initial=initial, notes=(), stop_speed=None if stop_speed is None else
                nonnegative("stop_speed", stop_speed), settle=False)
    if tr.reason.startswith("solver"):
        raise SolverError(tr.reason)
    return tr
