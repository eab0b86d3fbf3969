"""Operating points: where a motor's characteristic meets its load, and whether it stays there.

The steady state of a motor on a load is a root of

    f(I_a) = T_shaft(I_a) - T_load(w(I_a)),

taken along the characteristic with the armature current I_a as the variable (every connection is
explicit in I_a, see :mod:`dcchar.models.symbolic`). f is evaluated on a dense vectorized grid of
armature currents spanning the generating branch (I_a < 0: the machine above its no-load speed,
returning power), the motoring branch (0 < I_a < I_0, where I_0 is the standstill current, speed
zero) and the branch where an overhauling load drives the rotor backward (I_a > I_0: negative
speed, counter-torque braking). Every sign change of f between two grid points that both lie
within the safe speed is a bracket, refined by a bracketing root finder of scipy (Brent's method
by default) on a scalar function built on :meth:`Machine.scalar_state`. Where the grid shows a
local extremum of f close to zero (two roots may hide between grid points), the grid is refined
there first.

Stability: a point is stable where d(T_motor - T_load)/dw < 0, with dT_motor/dw along the curve
taken as (dT/dI_a)/(dw/dI_a) by a central difference in I_a.

Which point the drive reaches: starting from rest, the motor accelerates while its torque exceeds
the load's, so it settles at the first intersection met along the characteristic from standstill
(``OperatingResult.point``). When the locked-rotor torque does not exceed the load's breakaway
torque the motor cannot start; if the load then drives it backward (a hoist heavier than the
motor can hold) the point met is on the backward branch.
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass, field

import numpy as np

from ..errors import ParameterError, SolverError
from ..models.characteristic import LOSS_FIELDS, no_load_point, standstill_state
from ..models.units import RPM
from ..models.validation import choice, positive, real
from ._bracketing import _extra_nodes, _intervals, _sign_change_cells, motor_grid

__all__ = ["Margins", "OperatingPoint", "OperatingResult", "SpeedRegulation", "StartingPoint", "StartingResult",
           "operating_points", "speed_regulation", "starting", "METHODS"]

#: Bracketing root finders of scipy.optimize accepted by ``method=``.
METHODS = ("brentq", "bisect", "ridder", "toms748")

_ACCEPT = 1e-7  # a refined root whose residual exceeds this x torque scale is a jump, not a root


# ---------------------------------------------------------------------------------------------
# results

@dataclass(frozen=True)
class Margins:
    """How far an operating point is from the limits.

    Attributes
    ----------
    current : float
        Rated armature current minus |I_a|; nan without a rating. [A]
    current_ratio : float
        |I_a| / rated armature current; nan without a rating. [-]
    starting_torque : float
        Locked-rotor shaft torque minus the load's breakaway torque (negative: cannot start). [N*m]
    speed : float
        Safe speed minus |w|; inf where the safe speed is unbounded. [rad/s]
    """

    current: float
    current_ratio: float
    starting_torque: float
    speed: float


@dataclass(frozen=True, eq=False)
class OperatingPoint:
    """One intersection of the motor's characteristic with the load (SI units).

    Attributes
    ----------
    speed : float
        [rad/s]
    torque : float
        Shaft torque, equal to the load torque at this speed. [N*m]
    armature_current, supply_current, field_current, series_field_current : float
        [A]
    kphi : float
        [V*s/rad]
    emf : float
        [V]
    developed_torque : float
        [N*m]
    input_power, output_power : float
        Electrical input (negative: returned to the supply) and shaft output (negative: the load
        drives the shaft). [W]
    efficiency : float
        Output/input motoring, input/output generating, nan when both power flows go in. [-]
    losses : dict
        Each loss term of :data:`dcchar.models.characteristic.LOSS_FIELDS`. [W]
    mode : str
        "motoring", "generating" (power returned to the supply), "braking" (electrical and
        mechanical power both flow in: counter-torque braking) or "no load".
    motor_slope, load_slope : float
        dT_motor/dw along the characteristic and dT_load/dw. [N*m*s/rad]
    stability_slope : float
        motor_slope - load_slope; the point is stable where it is negative. [N*m*s/rad]
    stable : bool
    residual : float
        T_shaft - T_load at the reported point. [N*m]
    margins : Margins
    root : scipy.optimize.RootResults or None
        The root finder's report (None for a point that fell exactly on a grid node).
    """

    speed: float
    torque: float
    armature_current: float
    supply_current: float
    field_current: float
    series_field_current: float
    kphi: float
    emf: float
    developed_torque: float
    input_power: float
    output_power: float
    efficiency: float
    losses: dict
    mode: str
    motor_slope: float
    load_slope: float
    stability_slope: float
    stable: bool
    residual: float
    margins: Margins
    root: object = field(default=None, repr=False)

    @property
    def speed_rpm(self) -> float:
        """Speed. [r/min]"""
        return self.speed / RPM

    @property
    def total_losses(self) -> float:
        """[W]"""
        return float(sum(self.losses.values()))

    def to_row(self) -> dict:
        """The point as a dict, SI, units in the keys."""
        return {"speed [rad/s]": self.speed, "speed [r/min]": self.speed_rpm, "torque [N*m]": self.torque,
                "armature current [A]": self.armature_current, "supply current [A]": self.supply_current,
                "field current [A]": self.field_current, "input power [W]": self.input_power,
                "output power [W]": self.output_power, "losses [W]": self.total_losses,
                "efficiency [-]": self.efficiency, "mode": self.mode, "stable": self.stable,
                "stability slope [N*m*s/rad]": self.stability_slope}


@dataclass(frozen=True, eq=False)
class OperatingResult:
    """Every operating point of a machine on a load at one supply voltage.

    Attributes
    ----------
    machine, load : object
    voltage : float
        [V]
    safe_speed : float
        [rad/s]
    points : tuple of OperatingPoint
        Every intersection within the safe speed, sorted by speed.
    point : OperatingPoint or None
        The point the drive settles at when started from rest (None: cannot start, runs away).
    reason : str or None
        None when ``point`` is a motoring point; otherwise "cannot start", "runs away" or
        "generating" (mechanical power flows into the shaft at ``point``).
    detail : str
        The reason in words, with the figures.
    locked_rotor_torque : float
        Shaft torque at standstill as the rotor begins to turn (friction included). [N*m]
    breakaway_torque : float
        [N*m]
    discontinuities : tuple of float
        Armature currents where f jumps through zero (brush drop, friction at standstill): no
        steady state there. [A]
    """

    machine: object
    load: object
    voltage: float
    safe_speed: float
    points: tuple
    point: OperatingPoint | None
    reason: str | None
    detail: str
    locked_rotor_torque: float
    breakaway_torque: float
    discontinuities: tuple = ()
    _grid: tuple = field(default=(np.empty(0), np.empty(0, bool)), repr=False)

    @functools.cached_property
    def beyond_safe_speed(self) -> tuple:
        """Armature-current intervals (grid resolution) where the speed exceeds the safe speed or
        is undefined: the runaway region, reported and never searched for points. [A]"""
        return _intervals(*self._grid)

    @property
    def starts(self) -> bool:
        """True where the locked-rotor torque exceeds the load's breakaway torque."""
        return self.locked_rotor_torque > self.breakaway_torque

    @property
    def motoring(self) -> tuple:
        """The points with power flowing from the supply to the load."""
        return tuple(p for p in self.points if p.mode == "motoring")

    def to_rows(self) -> list:
        """One dict per point (SI, units in the keys), with the connection and whether it is the settled point."""
        rows = []
        for p in self.points:
            r = {"connection": self.machine.label, "voltage [V]": self.voltage, "settled": p is self.point}
            r.update(p.to_row())
            rows.append(r)
        return rows

    def _repr_html_(self):
        head = (f"<b>{self.machine.label}</b> at {self.voltage:.1f} V" +
                (f": <i>{self.reason}</i> ({self.detail})" if self.reason else ""))
        cols = ("speed [r/min]", "torque [N*m]", "armature current [A]", "efficiency [-]", "mode", "stable")
        body = "".join("<tr>" + "".join(f"<td>{_fmt(r[c])}</td>" for c in cols) + ("<td>&#9664;</td>" if r["settled"]
                       else "<td></td>") + "</tr>" for r in self.to_rows())
        th = "".join(f"<th>{c}</th>" for c in cols)
        return f"<p>{head}</p><table><tr>{th}<th></th></tr>{body}</table>"

    def __repr__(self):
        p = self.point
        where = f"{p.speed_rpm:.1f} r/min, {p.torque:.2f} N*m" if p else "no point"
        return (f"OperatingResult({self.machine.label}, V={self.voltage:g} V, {len(self.points)} point(s), "
                f"settled: {where}, reason={self.reason!r})")


def _fmt(v):
    if isinstance(v, float):
        return "nan" if math.isnan(v) else f"{v:.4g}"
    return str(v)


# ---------------------------------------------------------------------------------------------
# the solver

def _check_load(load):
    """The load's breakaway torque [N*m], after checking that ``load`` is a load."""
    if not all(hasattr(load, name) for name in ("torque", "slope", "breakaway_torque")):
        raise ParameterError("load", load, "a load with torque(w), slope(w) and breakaway_torque "
                                           "(see dcchar.models.loads)")
    return float(load.breakaway_torque)


def _root_finder(method):
    import scipy.optimize as so

    return getattr(so, choice("method", method, METHODS))


_EPS4 = 4 * float(np.finfo(float).eps)


def _mode(p_in, p_out):
    if p_out > 0 and p_in > 0:
        return "motoring"
    if p_out < 0 and p_in < 0:
        return "generating"
    if p_out < 0:
        return "braking"
    return "no load"


def _efficiency(p_in, p_out):
    if p_in > 0 and p_out > 0:
        return p_out / p_in
    if p_in < 0 and p_out < 0:
        return p_in / p_out
    return math.nan


def _make_point(machine, load, Ia, i0, t_start, breakaway, safe, root, residual, speed_torque, full):
    st = full(Ia)
    h = 1e-6 * i0
    wp, tp = speed_torque(Ia + h)
    wm, tm = speed_torque(Ia - h)
    w = st["speed"]
    dT, dw = tp - tm, wp - wm
    motor_slope = dT / dw if dw != 0 else math.copysign(math.inf, dT)
    load_slope = float(load.slope(w))
    p_in, p_out = st["input_power"], st["output_power"]
    rating = machine.rating
    margins = Margins(
        current=rating.current - abs(Ia) if rating else math.nan,
        current_ratio=abs(Ia) / rating.current if rating else math.nan,
        starting_torque=t_start - breakaway,
        speed=safe - abs(w))
    s = motor_slope - load_slope
    return OperatingPoint(
        speed=w, torque=st["shaft_torque"], armature_current=float(Ia), supply_current=st["supply_current"],
        field_current=st["field_current"], series_field_current=st["series_field_current"], kphi=st["kphi"],
        emf=st["emf"], developed_torque=st["developed_torque"], input_power=p_in, output_power=p_out,
        efficiency=_efficiency(p_in, p_out), losses={k: st[k] for k in LOSS_FIELDS}, mode=_mode(p_in, p_out),
        motor_slope=motor_slope, load_slope=load_slope, stability_slope=s, stable=bool(s < 0),
        residual=residual, margins=margins, root=root)


def operating_points(machine, load, voltage=None, *, grid: int = 112, method: str = "brentq",
                     solver_kwargs=None, safe_speed=None) -> OperatingResult:
    """Every operating point of ``machine`` on ``load`` at supply ``voltage``, and the one it settles at.

    Parameters
    ----------
    machine : dcchar.models.connections.Machine
    load : load object
        ``torque(w)`` [N*m] at the motor shaft (positive opposing positive rotation),
        ``slope(w)`` [N*m*s/rad] and ``breakaway_torque`` [N*m] (see :mod:`dcchar.models.loads`).
    voltage : float, optional
        Supply voltage. [V] Default: the rated voltage.
    grid : int, default 112
        Number of nodes of the bracketing grid over I_a/I_0 in [-1, 2] (I_0: standstill current).
    method : {"brentq", "bisect", "ridder", "toms748"}
        Bracketing root finder of scipy.optimize.
    solver_kwargs : dict, optional
        Passed to the root finder (e.g. ``xtol``, ``rtol``, ``maxiter``).
    safe_speed : float, optional
        Overrides the machine's safe speed. [rad/s]

    Returns
    -------
    OperatingResult

    Raises
    ------
    ParameterError
        Bad method, grid, voltage or load.
    SolverError
        The root finder did not converge on a bracket (carries its RootResults).
    """
    breakaway = _check_load(load)
    V = machine.default_voltage() if voltage is None else real("voltage", voltage)
    ws = machine.safe_speed if safe_speed is None else positive("safe_speed", safe_speed, allow_inf=True)
    if isinstance(grid, bool) or not isinstance(grid, (int, np.integer)) or grid < 16:
        raise ParameterError("grid", grid, "an integer >= 16 (number of bracketing nodes)")
    finder = _root_finder(method)
    mg = motor_grid(machine, V, int(grid))
    i0 = mg.i0
    if not i0 > 0:
        return OperatingResult(machine, load, V, ws, (), None, "cannot start",
                               f"the supply voltage {V:g} V does not exceed the brush drop", 0.0, breakaway)
    speed_torque, full = machine.scalar_functions(V)
    load_torque = load.torque

    memo, ends = {}, {}

    def fs(i):
        v = ends.get(i)
        if v is not None:  # a bracket end: its value is known from the grid
            return v
        w, t = speed_torque(i)
        tl = float(load_torque(w))
        memo[i] = (w, t, tl)
        return t - tl

    x, jumps, w = mg.x, mg.jumps, mg.w
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        f = mg.t - np.asarray(load_torque(w), dtype=float)
        finite = mg.finite_w & np.isfinite(f)
        inside = mg.finite_w & (np.abs(w) <= ws)
        valid = inside & finite
        hx, hf, hv = _extra_nodes(mg, load, f, valid, ws)
    # the nodes either side of standstill (x = 1 -/+ tiny): torque as the rotor begins to turn
    up, t_start = mg.up, mg.t_start
    f_start, f_back = float(f[mg.fwd]), float(f[mg.bwd])
    if hx.size:
        order = np.argsort(np.concatenate([x, hx]), kind="stable")
        xs = np.concatenate([x, hx])[order]
        fs_ = np.concatenate([f, hf])[order]
        vs = np.concatenate([valid, hv])[order]
        fin = np.concatenate([finite, np.isfinite(hf)])[order]
        rank = np.argsort(order)
        jumps_s = tuple(int(rank[j]) for j in jumps)
    else:
        xs, fs_, vs, fin, jumps_s = x, f, valid, finite, jumps
    cells = np.flatnonzero(_sign_change_cells(fs_, fin, vs, jumps_s))
    kw = {"xtol": 1e-13 * i0, "rtol": _EPS4, "maxiter": 200}
    kw.update(solver_kwargs or {})
    kw.update(full_output=True, disp=False)
    roots, disc = [], []
    for c in cells:
        a, b = xs[c] * i0, xs[c + 1] * i0
        ends.clear()
        ends[a], ends[b] = float(fs_[c]), float(fs_[c + 1])
        r, rr = finder(fs, a, b, **kw)
        if not rr.converged:
            raise SolverError(f"{method} did not converge on [{a:g}, {b:g}] A for the {machine.label} machine: "
                              f"{rr.flag}", rr)
        wr, tr, tl = memo[r] if r in memo else (*speed_torque(r), None)
        tl = float(load_torque(wr)) if tl is None else tl
        res = tr - tl
        memo.clear()
        if not abs(wr) <= ws:
            continue  # at the edge of the runaway region, on its far side
        scale = max(abs(t_start), abs(tr), abs(tl), 1e-12)
        (roots if abs(res) <= _ACCEPT * scale else disc).append((r, rr, res))
    if not fs_.all():  # a node exactly on a root (rare)
        roots.extend((xs[j] * i0, None, 0.0) for j in np.flatnonzero((fs_ == 0) & vs))
    pts = {}
    for r, rr, res in sorted(roots, key=lambda z: z[0]):
        pts[r] = _make_point(machine, load, r, i0, t_start, breakaway, ws, rr, res, speed_torque, full)
    # the runaway region on the grid (reported, never searched), and the settling path from standstill
    point, reason, detail = _settle(xs, vs, i0, pts, t_start, breakaway, f_start, f_back, ws, up)
    if point is not None and reason is None and point.output_power < 0:
        reason = "generating"
        detail = (f"mechanical power {-point.output_power:.4g} W flows into the shaft at "
                  f"{point.speed_rpm:.1f} r/min ({point.mode})")
    ordered = tuple(sorted(pts.values(), key=lambda p: p.speed))
    return OperatingResult(machine, load, V, ws, ordered, point, reason, detail, t_start, breakaway,
                           tuple(float(d[0]) for d in disc), (mg.Ia, ~inside))


def _first_root(xs, valid, i0, pts, up):
    """The first root met from standstill moving along the grid upward (or downward) in I_a,
    stopping at the first node beyond the safe speed or undefined."""
    roots = sorted(pts)
    k = int(np.searchsorted(xs, 1.0))  # xs is sorted and has no node at standstill itself
    if up:
        seg = valid[k:]
        j = int(seg.argmin()) if seg.size else 0
        limit = xs[k + j] * i0 if seg.size and not seg[j] else math.inf
        cand = [r for r in roots if i0 < r < limit]
        return pts[cand[0]] if cand else None
    seg = valid[k - 1::-1] if k else valid[:0]  # walking down from standstill
    j = int(seg.argmin()) if seg.size else 0
    limit = xs[k - 1 - j] * i0 if seg.size and not seg[j] else -math.inf
    cand = [r for r in roots if limit < r < i0]
    return pts[cand[-1]] if cand else None


def _settle(xs, valid, i0, pts, t_start, breakaway, f_start, f_back, ws, up):
    """The point met from rest, or None, with the reason (``xs``: grid of I_a/I_0)."""
    if t_start > breakaway and f_start > 0:
        p = _first_root(xs, valid, i0, pts, up)
        if p is not None:
            return p, None, ""
        lim = f"the safe speed ({ws / RPM:.0f} r/min)" if math.isfinite(ws) else "any bound"
        return None, "runs away", f"the motor torque exceeds the load torque up to {lim}"
    if f_back < 0:
        # the rotor is driven backward: by the load, or by the motor's own reversed torque
        p = _first_root(xs, valid, i0, pts, not up)
        if t_start < 0:
            lead = (f"the locked-rotor torque is negative ({t_start:.4g} N*m: the field reverses at "
                    "standstill) and the motor starts backward")
        else:
            lead = (f"the load torque exceeds the locked-rotor torque {t_start:.4g} N*m and drives the "
                    "motor backward")
        if p is not None:
            return p, "generating" if p.output_power < 0 else "cannot start", \
                f"{lead}; it settles at {p.speed_rpm:.1f} r/min ({p.mode})"
        return None, "runs away", f"{lead}, with no point within the safe speed or the model's range"
    return None, "cannot start", (f"the load's breakaway torque {breakaway:.4g} N*m is not below the "
                                  f"locked-rotor torque {t_start:.4g} N*m")


# ---------------------------------------------------------------------------------------------
# speed regulation and starting

class _ShaftTorque:
    """A constant torque at the shaft, for speed regulation (not a user load model)."""

    kind = "constant"
    inertia = 0.0

    def __init__(self, torque):
        self.value = real("full_load_torque", torque)
        self.breakaway_torque = max(self.value, 0.0)

    def torque(self, w):
        return np.full(np.shape(w), self.value) if np.ndim(w) else self.value

    def slope(self, w):
        return np.zeros(np.shape(w)) if np.ndim(w) else 0.0


@dataclass(frozen=True)
class SpeedRegulation:
    """Speed regulation per the usual definition, SR = (n_NL - n_FL)/n_FL x 100 %.

    Attributes
    ----------
    no_load_speed : float
        Speed at zero shaft torque (inf where unbounded). [rad/s]
    full_load_speed : float
        [rad/s]
    full_load_torque : float
        [N*m]
    percent : float
        [%] (inf where the no-load speed is unbounded)
    full_load : OperatingPoint
    """

    no_load_speed: float
    full_load_speed: float
    full_load_torque: float
    percent: float
    full_load: OperatingPoint = field(repr=False)


def speed_regulation(machine, load=None, voltage=None, **solver) -> SpeedRegulation:
    """Speed regulation from no load (zero shaft torque) to full load.

    Parameters
    ----------
    machine : Machine
    load : load object or float, optional
        The full load: a load object, or a full-load shaft torque [N*m]. Default: the rated
        torque (needs a rating).
    voltage : float, optional
        [V] Default: the rated voltage.
    **solver
        Passed to :func:`operating_points` (``method``, ``solver_kwargs``, ``grid``).

    Returns
    -------
    SpeedRegulation

    Notes
    -----
    The change in speed from no load to full load as a percentage of full-load speed: the
    definition as stated by electrical4u, circuitglobe and others, applied in Kosow,
    *Electric Machinery and Transformers*, 2nd ed., Ex. 4-19.
    """
    if load is None:
        if machine.rating is None:
            raise ParameterError("load", None, "a load or a full-load torque [N*m] (the machine has no rating)")
        load = _ShaftTorque(machine.rating.torque)
    elif isinstance(load, (int, float, np.floating)) and not isinstance(load, bool):
        load = _ShaftTorque(load)
    res = operating_points(machine, load, voltage, **solver)
    if res.point is None:
        raise ParameterError("load", load, f"a full load the motor can carry ({res.reason}: {res.detail})")
    w_nl = no_load_point(machine, res.voltage).speed
    w_fl = res.point.speed
    pct = math.inf if math.isinf(w_nl) else (w_nl - w_fl) / w_fl * 100.0
    return SpeedRegulation(w_nl, w_fl, res.point.torque, pct, res.point)


@dataclass(frozen=True)
class StartingPoint:
    """Locked-rotor figures with a given external armature resistance.

    Attributes
    ----------
    external_resistance : float
        [ohm]
    armature_current, supply_current : float
        [A]
    torque : float
        Shaft torque at standstill. [N*m]
    current_multiple : float
        Armature current / rated current (nan without a rating). [-]
    """

    external_resistance: float
    armature_current: float
    supply_current: float
    torque: float
    current_multiple: float


@dataclass(frozen=True)
class StartingResult:
    """Starting across the line and with an external armature resistance."""

    voltage: float
    direct: StartingPoint
    with_resistance: StartingPoint

    def to_rows(self) -> list:
        return [{"case": c, "external resistance [ohm]": p.external_resistance,
                 "armature current [A]": p.armature_current, "supply current [A]": p.supply_current,
                 "torque [N*m]": p.torque, "current multiple [-]": p.current_multiple}
                for c, p in (("direct", self.direct), ("with resistance", self.with_resistance))]

    def _repr_html_(self):
        rows = self.to_rows()
        th = "".join(f"<th>{k}</th>" for k in rows[0])
        body = "".join("<tr>" + "".join(f"<td>{_fmt(v)}</td>" for v in r.values()) + "</tr>" for r in rows)
        return f"<table><tr>{th}</tr>{body}</table>"


def starting(machine, voltage=None, external_resistance=None) -> StartingResult:
    """Starting (locked-rotor) current and torque, direct and with external armature resistance.

    Parameters
    ----------
    machine : Machine
    voltage : float, optional
        [V] Default: the rated voltage.
    external_resistance : float, optional
        Total external armature resistance of the second case. [ohm] Default: the machine's own.

    Returns
    -------
    StartingResult
        ``direct`` with no external resistance, ``with_resistance`` with it.
    """
    V = machine.default_voltage() if voltage is None else real("voltage", voltage)
    rx = machine.external_resistance if external_resistance is None else external_resistance
    from ..models.validation import nonnegative

    rx = nonnegative("external_resistance", rx)

    def one(r):
        m = machine if r == machine.external_resistance else machine.with_(external_resistance=r)
        i = m.locked_rotor_current(V)
        st = standstill_state(m, V)
        mult = i / machine.rating.current if machine.rating else math.nan
        return StartingPoint(r, i, st["supply_current"], st["shaft_torque"], mult)

    return StartingResult(V, one(0.0), one(rx))
