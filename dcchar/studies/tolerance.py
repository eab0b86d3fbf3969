"""Manufacturing and operating spread: bands of curves and how often each verdict still holds.

A machine as built and run is not the nominal machine: winding resistances have a tolerance and
change with temperature, the magnetization curve has a band, magnets lose flux when warm, the
supply voltage moves. This module samples those spreads (vectorized Monte Carlo with a seeded
numpy Generator) and computes, for each candidate of a selection matrix,

(a) the band of its curve: percentiles of speed against shaft torque on a torque grid, and the
    distribution of the operating point on the load;
(b) for each matrix cell the share of samples that pass, are marginal or fail, so that a verdict
    that holds only at nominal values is flagged as fragile.

The samples run down the rows of one array and are evaluated together by the lambdified kernels
of :mod:`dcchar.models.symbolic` (see :mod:`dcchar.studies.selection.sampled`), in blocks of a
few hundred rows that stay in a core's cache; no Python loop runs over samples.

Sampling (per sample, independently): each winding resistance (armature, series, shunt) times
(1 + r*u) with its own u; all windings at one temperature drawn from ``winding_temperature``
(copper, 234.5 constant, relative to the machine's own winding temperature); kphi times (1 + m*u)
(the magnetization band: a scale factor on the EMF) and, for magnets, times the flux factor of a
magnet temperature drawn from ``magnet_temperature``; the supply voltage (and a separate field
supply, taken from the same bus) times (1 + v*u). ``u`` is uniform on [-1, 1], or normal with
standard deviation 1/``sigmas`` (so the stated +/- band holds about 95 % of samples with the
default 2). Fixed resistors (starter, rheostat, diverter) are not sampled.
"""

from __future__ import annotations


from dataclasses import dataclass, field

import numpy as np

from ..errors import ParameterError
from ..models.temperature import COPPER_INFERRED_ZERO, magnet_flux_factor
from ..models.validation import choice, in_range, positive
from .selection.matrix import SelectionMatrix
from .selection.requirements import judge
from .selection.sampled import SampleCase

__all__ = ["Spread", "CurveBand", "CellShare", "ToleranceStudy", "sample_case", "curve_bands", "tolerance_study",
           "percentiles"]

_CHUNK = 5000


@dataclass(frozen=True)
class Spread:
    """The spreads to sample (each a +/- half-width; zero: none).

    Parameters
    ----------
    resistance : float, default 0.05
        Relative tolerance of each winding resistance. [-]
    winding_temperature : (float, float) or None
        Range of the winding temperature [degC]; None keeps each machine's own.
    magnetization : float, default 0.03
        Relative band on the EMF of the magnetization curve (and on a magnet's kphi). [-]
    magnet_temperature : (float, float) or None
        Range of the magnet temperature [degC]; None keeps the machine's own.
    supply_voltage : float, default 0.05
        Relative band on the supply voltage. [-]
    distribution : {"uniform", "normal"}
    sigmas : float, default 2
        For "normal": the half-width is this many standard deviations. [-]
    """

    resistance: float = 0.05
    winding_temperature: tuple | None = None
    magnetization: float = 0.03
    magnet_temperature: tuple | None = None
    supply_voltage: float = 0.05
    distribution: str = "uniform"
    sigmas: float = 2.0

    def __post_init__(self):
        in_range("resistance", self.resistance, 0.0, 0.9)
        in_range("magnetization", self.magnetization, 0.0, 0.9)
        in_range("supply_voltage", self.supply_voltage, 0.0, 0.9)
        choice("distribution", self.distribution, ("uniform", "normal"))
        positive("sigmas", self.sigmas)
        for name in ("winding_temperature", "magnet_temperature"):
            v = getattr(self, name)
            if v is not None:
                if len(v) != 2 or not v[0] <= v[1]:
                    raise ParameterError(name, v, "a (low, high) pair of temperatures [degC] with low <= high")
                object.__setattr__(self, name, (in_range(f"{name}[0]", v[0], -60.0, 250.0),
                                                in_range(f"{name}[1]", v[1], -60.0, 250.0)))

    @classmethod
    def none(cls) -> "Spread":
        """No spread at all: every sample is the nominal machine."""
        return cls(resistance=0.0, magnetization=0.0, supply_voltage=0.0)

    def _u(self, rng, n):
        if self.distribution == "uniform":
            return rng.uniform(-1.0, 1.0, (n, 1))
        return rng.standard_normal((n, 1)) / self.sigmas

    def _range(self, rng, n, bounds):
        lo, hi = bounds
        if self.distribution == "uniform":
            return rng.uniform(lo, hi, (n, 1)) if hi > lo else np.full((n, 1), lo)
        return 0.5 * (lo + hi) + 0.5 * (hi - lo) * rng.standard_normal((n, 1)) / self.sigmas


def sample_case(case, spread: Spread, n: int, rng) -> SampleCase:
    """Draw ``n`` samples of one candidate (a :class:`~dcchar.studies.selection.case.Case`)."""
    m = case.machine
    ones = np.ones((n, 1))
    temp = ones
    if spread.winding_temperature is not None:
        t = spread._range(rng, n, spread.winding_temperature)
        temp = (t + COPPER_INFERRED_ZERO) / (m.winding_temperature + COPPER_INFERRED_ZERO)

    def tol():
        return ones + spread.resistance * spread._u(rng, n) if spread.resistance else ones

    ra = m.hot_armature_resistance * temp * tol()
    rs = (m._hot(m.series_resistance) * temp * tol()) if hasattr(m, "series_resistance") else ones
    rf = (m._hot(m.field_resistance) * temp * tol()) if hasattr(m, "field_resistance") else ones
    vf = ones + spread.supply_voltage * spread._u(rng, n) if spread.supply_voltage else ones
    k = ones + spread.magnetization * spread._u(rng, n) if spread.magnetization else ones
    if m.connection == "permanent_magnet" and spread.magnet_temperature is not None:
        t = spread._range(rng, n, spread.magnet_temperature)
        alpha = (magnet_flux_factor(m.magnet_material, 21.0, 20.0) - 1.0)  # per kelvin
        k = k * (1.0 + alpha * (t - m.magnet_reference_temperature)) / m._flux_factor
    if np.any(k <= 0) or np.any(ra <= 0) or np.any(vf <= 0):
        raise ParameterError("spread", spread, "spreads small enough to keep kphi, resistances and voltage > 0")
    return SampleCase(case, ra, rs, rf, vf, k)


def percentiles(values, q):
    """Percentiles ``q`` [%] of ``values`` along axis 0, ignoring nan (no warning on empty columns).

    Linear interpolation between order statistics (numpy's default method). Returns an array of
    shape (len(q), ...) with nan where a column has no finite value.
    """
    a = np.sort(np.asarray(values, dtype=float), axis=0)  # nan sorts last
    count = np.isfinite(a).sum(axis=0)
    out = []
    for p in np.atleast_1d(q):
        pos = (p / 100.0) * np.maximum(count - 1, 0)
        lo = np.floor(pos).astype(int)
        hi = np.minimum(lo + 1, np.maximum(count - 1, 0))
        a_lo = np.take_along_axis(a, lo[None, ...], axis=0)[0]
        a_hi = np.take_along_axis(a, hi[None, ...], axis=0)[0]
        with np.errstate(invalid="ignore"):
            v = a_lo + (pos - lo) * (a_hi - a_lo)
        out.append(np.where(count > 0, v, np.nan))
    return np.array(out)


@dataclass(frozen=True, eq=False)
class CurveBand:
    """The band of one candidate's speed-torque curve and of its operating point.

    Attributes
    ----------
    key : str
    machine : Machine
    torque : ndarray (k,)
        Shaft-torque grid. [N*m]
    percentiles : tuple of float
        [%], e.g. (5, 50, 95).
    speed : ndarray (len(percentiles), k)
        Speed percentiles at each torque, over the samples that reach that torque within the safe
        speed on the running branch of their curve (from light load while the shaft torque rises
        with the current; see :func:`curve_bands`). [rad/s]
    coverage : ndarray (k,)
        Share of samples with a point at each torque. [-]
    nominal_speed : ndarray (k,)
        The nominal machine's speed at each torque, from its characteristic. [rad/s]
    point_speed, point_torque, point_current, point_efficiency : ndarray (n,)
        The settled operating point of every sample on the load (nan where none). SI.
    samples : int
    """

    key: str
    machine: object
    torque: np.ndarray
    percentiles: tuple
    speed: np.ndarray
    coverage: np.ndarray
    nominal_speed: np.ndarray
    point_speed: np.ndarray
    point_torque: np.ndarray
    point_current: np.ndarray
    point_efficiency: np.ndarray
    samples: int

    def point_percentiles(self, quantity: str = "speed") -> np.ndarray:
        """Percentiles of the operating point's ``quantity`` ("speed", "torque", "current",
        "efficiency") over the samples that have a point."""
        choice("quantity", quantity, ("speed", "torque", "current", "efficiency"))
        return percentiles(getattr(self, f"point_{quantity}"), self.percentiles)

    def to_rows(self) -> list:
        """One dict per torque node: torque [N*m], the speed percentiles [rad/s], nominal, coverage."""
        rows = []
        for j, t in enumerate(self.torque):
            r = {"candidate": self.key, "torque [N*m]": float(t)}
            for p, s in zip(self.percentiles, self.speed):
                r[f"speed p{p:g} [rad/s]"] = float(s[j])
            r["nominal speed [rad/s]"] = float(self.nominal_speed[j])
            r["coverage [-]"] = float(self.coverage[j])
            rows.append(r)
        return rows


def _torque_grid(matrix, torque_grid, points):
    if torque_grid is not None:
        g = np.asarray(torque_grid, dtype=float).reshape(-1)
        if g.size < 2 or not np.all(np.isfinite(g)):
            raise ParameterError("torque_grid", torque_grid, "at least two finite torques [N*m]")
        return g
    tops = [2.0 * c.machine.rating.torque for c in matrix.cases.values() if c.machine.rating is not None]
    top = max(tops) if tops else max(abs(float(matrix.load.torque(0.0))), 1.0) * 3.0
    return np.linspace(0.0, top, int(points))


#: Armature currents of the band sweep, as fractions of the locked-rotor current: geometric towards
#: no load, then steps of about 0.0035 where the running torques lie (a locked-rotor current is
#: commonly 10 to 20 x rated), sparse towards standstill.
_CURRENT_NODES = np.unique(np.concatenate([np.geomspace(1e-6, 0.02, 16), np.linspace(0.0035, 0.3, 86),
                                           np.linspace(0.3, 1.0, 15)]))

#: Samples evaluated together: arrays of this many rows by one grid stay in a core's cache (the
#: draws are still made ``_CHUNK`` at a time, so the samples do not depend on it).
_BLOCK = 500

#: The band sweep first evaluates the nodes up to where the nominal curve passes this many times
#: the top of the torque grid; only samples that have not passed the top by then get the rest.
_REACH = 1.3

#: Nodes around the current where the nominal curve comes within the safe speed (a series machine
#: at light load), as factors on that current: each sample's curve enters the band near there.
_EDGE = np.geomspace(1.0 / 1.2, 1.2, 13)


def _followed(w, t, ws, top):
    """Nodes (n, m) of each curve that the band follows, and whether each curve got past ``top``.

    A curve is followed from its first node within the safe speed while the speed stays within it
    and the shaft torque keeps rising (where the torque turns back, as in a differential compound
    whose flux collapses, the curve folds back over torques it has passed), up to the first node
    whose torque passes ``top``.
    """
    m = t.shape[1]
    cols = np.arange(m)
    with np.errstate(invalid="ignore"):
        ok = np.isfinite(w) & np.isfinite(t) & (np.abs(w) <= ws)
        rising = np.concatenate([np.ones((t.shape[0], 1), bool), t[:, 1:] >= t[:, :-1]], axis=1)
        start = np.argmax(ok, axis=1)[:, None]
        stop = ~(ok & rising) & (cols > start)
        end = np.where(stop.any(axis=1), np.argmax(stop, axis=1), m)[:, None]  # first node not followed
        past = ok & (t > top) & (cols < end)
    done = past.any(axis=1)
    end = np.where(done[:, None], np.argmax(past, axis=1)[:, None] + 1, end)
    return (cols >= start) & (cols < end) & ok, done


def _speed_on_grid(w, t, ws, grid, keep=None):
    """Speed (n, k) at the torques ``grid`` (k,) along each curve (n, m); ``keep``: from :func:`_followed`."""
    from .selection._vector import interp_rows

    if keep is None:
        keep = _followed(w, t, ws, grid.max())[0]
    return interp_rows(np.where(keep, t, np.nan), np.where(keep, w, np.nan), grid)


def _band_nodes(machine, voltage, ws, grid):
    """Current nodes of one candidate's band, as fractions of its locked-rotor current, in two
    parts: those evaluated for every sample, and the rest, evaluated only for the samples that
    have not passed the top of the grid by then; and the nominal speed on the grid (from the
    machine's characteristic on the same nodes). [-], [-], [rad/s]"""
    i0 = machine.locked_rotor_current(voltage)
    x = _CURRENT_NODES
    c = machine.characteristic(voltage, i0 * x)
    with np.errstate(invalid="ignore"):
        ok = np.isfinite(c.speed) & (np.abs(c.speed) <= ws)
    j = int(np.argmax(ok))
    if j > 0 and np.isfinite(c.speed[j - 1]):  # enters the safe speed between nodes j - 1 and j
        w0, w1 = abs(c.speed[j - 1]), abs(c.speed[j])
        edge = (x[j - 1] + (x[j] - x[j - 1]) * (w0 - ws) / (w0 - w1)) * _EDGE
        edge = edge[edge <= 1.0]
        x = np.sort(np.concatenate([x[(x < edge[0]) | (x > edge[-1])], edge]))
        c = machine.characteristic(voltage, i0 * x)
    w, t = c.speed[None, :], c.shaft_torque[None, :]
    keep, done = _followed(w, t, ws, _REACH * grid.max())
    cut = int(np.flatnonzero(keep[0])[-1]) + 1 if done[0] else x.size
    return x[:cut], x[cut:], _speed_on_grid(w, t, ws, grid)[0]


def _curves(s: SampleCase, nodes):
    """Speed and shaft torque (n, len(nodes)) of every sample at ``nodes`` x its locked-rotor current."""
    ev = s.evaluator()
    with np.errstate(all="ignore"):
        i0 = s._locked(ev)  # the nodes of Machine.characteristic: fractions of the locked-rotor current
        w, t = ev.speed_torque(i0 * nodes[None, :])
    return np.broadcast_to(w, t.shape), t


def _band_chunk(s: SampleCase, grid, first, rest):
    w, t = _curves(s, first)
    keep, done = _followed(w, t, s.safe_speed, grid.max())
    short = np.flatnonzero(~done) if rest.size else ()
    if len(short):  # these curves have not passed the top of the grid: the rest of the nodes
        w2, t2 = _curves(s.rows(short), rest)
        w, t = (np.concatenate([a, np.full((s.n, rest.size), np.nan)], axis=1) for a in (w, t))
        w[short, first.size:], t[short, first.size:] = w2, t2
        keep, _ = _followed(w, t, s.safe_speed, grid.max())
    return _speed_on_grid(w, t, s.safe_speed, grid, keep), s.operating()


def _draws(matrix, spread, samples, seed, progress, work):
    """Run ``work(key, SampleCase) -> result`` on blocks of :data:`_BLOCK` samples of every
    candidate (drawn ``_CHUNK`` at a time); progress in [0, 1] after each chunk."""
    if isinstance(samples, bool) or not isinstance(samples, (int, np.integer)) or samples < 1:
        raise ParameterError("samples", samples, "an integer >= 1")
    if not isinstance(spread, Spread):
        raise ParameterError("spread", spread, "a Spread")
    rng = seed if isinstance(seed, np.random.Generator) else np.random.default_rng(seed)
    keys = list(matrix.cases)
    total = len(keys) * samples
    done = 0
    out = {}
    for key in keys:
        parts = []
        for start in range(0, samples, _CHUNK):
            n = min(_CHUNK, samples - start)
            s = sample_case(matrix.cases[key], spread, n, rng)
            parts.extend(work(key, s if n <= _BLOCK else s.rows(slice(a, a + _BLOCK))) for a in range(0, n, _BLOCK))
            done += n
            if progress is not None:
                progress(done / total)
        out[key] = parts
    return out


def curve_bands(matrix: SelectionMatrix, spread: Spread, *, samples: int = 10_000, seed=0, torque_grid=None,
                points: int = 60, q=(5.0, 50.0, 95.0), progress=None) -> dict:
    """Percentile bands of speed against shaft torque, and the operating point, per candidate.

    Parameters
    ----------
    matrix : SelectionMatrix
        Its candidates (as run, with their settings) and load.
    spread : Spread
    samples : int, default 10000
        Samples per candidate.
    seed : int or numpy.random.Generator, default 0
    torque_grid : array_like, optional
        [N*m] Default: ``points`` torques from 0 to twice the largest rated torque.
    q : sequence of float
        Percentiles [%].
    progress : callable, optional
        Called with the fraction done (0 to 1] after each chunk of samples.

    Returns
    -------
    dict
        key -> :class:`CurveBand`.

    Notes
    -----
    Each sample's curve is swept over armature currents that are fixed fractions of its own
    locked-rotor current (geometric towards no load, then steps of about 0.35 % of it where the
    running torques lie, and closer nodes where the nominal curve comes within the safe speed) and
    read off at the grid torques, straight between nodes. A curve is
    followed from its first node within the safe speed while the speed stays within it and the
    shaft torque rises, up to the first node past the top of the grid; where the torque turns
    back (a differential compound as its flux collapses) the band ends. The nodes beyond the top
    are evaluated only for samples that need them.

    Against a sweep of 6,400 nodes on the same samples of the demo machines
    (:func:`dcchar.studies.demo.demo_family`, fan load, default :class:`Spread`) the percentiles
    agree within 1e-5 (relative) for the shunt, separately excited and magnet machines, 3e-4 for
    the cumulative compounds and 1e-2 for the differential compounds (near their torque peak) and
    the series machine (at its light-load end near the safe speed, where its coverage is within
    0.1); regression, not published.
    """
    grid = _torque_grid(matrix, torque_grid, points)
    q = tuple(float(in_range("q", p, 0.0, 100.0)) for p in q)
    nodes = {key: _band_nodes(c.machine, c.voltage, c.safe_speed, grid) for key, c in matrix.cases.items()}
    raw = _draws(matrix, spread, samples, seed, progress, lambda k, s: _band_chunk(s, grid, *nodes[k][:2]))
    bands = {}
    for key, parts in raw.items():
        speeds = np.concatenate([p[0] for p in parts])
        op = {k: np.concatenate([p[1][k] for p in parts]) for k in ("speed", "torque", "armature_current",
                                                                    "efficiency")}
        m = matrix.cases[key].machine
        bands[key] = CurveBand(key, m, grid, q, percentiles(speeds, q), np.isfinite(speeds).mean(axis=0), nodes[key][2],
                               op["speed"], op["torque"], op["armature_current"], op["efficiency"], samples)
    return bands


@dataclass(frozen=True)
class CellShare:
    """How one matrix cell fares over the samples.

    Attributes
    ----------
    key, figure : str
    passed, marginal, failed : float
        Shares of the samples. [-]
    nominal : str
        The matrix verdict at nominal values.
    fragile : bool
        The nominal verdict is "pass" but fewer than ``robust_share`` of the samples pass.
    note : str
        In plain words.
    """

    key: str
    figure: str
    passed: float
    marginal: float
    failed: float
    nominal: str
    fragile: bool
    note: str


@dataclass(frozen=True, eq=False)
class ToleranceStudy:
    """Pass shares of every matrix cell (and the sampled figures behind them).

    Attributes
    ----------
    matrix : SelectionMatrix
    spread : Spread
    samples : int
    shares : dict
        (key, figure) -> :class:`CellShare`.
    figures : dict
        (key, figure) -> ndarray (samples,) of the sampled figure (SI, the requirement's unit).
    robust_share : float
    """

    matrix: SelectionMatrix
    spread: Spread
    samples: int
    shares: dict
    figures: dict = field(repr=False)
    robust_share: float = 0.9

    def share(self, key: str, figure: str) -> CellShare:
        return self.shares[(key, figure)]

    @property
    def fragile(self) -> tuple:
        """The cells whose nominal pass does not hold across the spread."""
        return tuple(s for s in self.shares.values() if s.fragile)

    def to_rows(self) -> list:
        return [{"candidate": s.key, "requirement": s.figure, "nominal verdict": s.nominal, "pass share [-]": s.passed,
                 "marginal share [-]": s.marginal, "fail share [-]": s.failed, "fragile": s.fragile, "note": s.note}
                for s in self.shares.values()]


def _note(nominal, passed, robust):
    if nominal == "pass" and passed < robust:
        return f"fragile: passes at nominal values but only {100 * passed:.0f} % of samples pass"
    if nominal != "pass" and passed > 0:
        return f"{nominal} at nominal values, yet {100 * passed:.0f} % of samples pass"
    return f"{100 * passed:.0f} % of samples pass"


def tolerance_study(matrix: SelectionMatrix, spread: Spread, *, samples: int = 10_000, seed=0,
                    robust_share: float = 0.9, progress=None) -> ToleranceStudy:
    """Share of samples that pass each cell of ``matrix`` under ``spread``.

    Parameters
    ----------
    matrix : SelectionMatrix
    spread : Spread
    samples : int, default 10000
        Samples per candidate.
    seed : int or numpy.random.Generator
    robust_share : float, default 0.9
        A nominal pass with a smaller pass share is flagged fragile. [-]
    progress : callable, optional
        Called with the fraction done after each chunk.

    Returns
    -------
    ToleranceStudy
    """
    robust = in_range("robust_share", robust_share, 0.0, 1.0)
    reqs = list(matrix.requirements)

    def work(key, s):
        return {r.figure: np.asarray(r.sample(s), dtype=float).reshape(-1) for r in reqs}

    raw = _draws(matrix, spread, samples, seed, progress, work)
    shares, figures = {}, {}
    for key, parts in raw.items():
        case = matrix.cases[key]
        for r in reqs:
            vals = np.concatenate([p[r.figure] for p in parts])
            verdict, _ = judge(r.comparison, vals, r.required_for(case), r.marginal)
            pv, mv, fv = ((verdict == v).mean() for v in ("pass", "marginal", "fail"))
            nominal = matrix.cells[(key, r.figure)].verdict
            fragile = nominal == "pass" and pv < robust
            shares[(key, r.figure)] = CellShare(key, r.figure, float(pv), float(mv), float(fv), nominal, bool(fragile),
                                                _note(nominal, float(pv), robust))
            figures[(key, r.figure)] = vals
    return ToleranceStudy(matrix, spread, samples, shares, figures, robust)



