"""Vectorized evaluation of many machines at once: the engine behind the tolerance study.

Private to :mod:`dcchar.studies.selection` and :mod:`dcchar.studies.tolerance`. Samples run
down the rows and armature currents across the columns of one array: every circuit value of
:data:`dcchar.models.symbolic.CIRCUIT_PARAMETERS`, the supply voltage and a factor on kphi may be
an array of shape (n, 1), and the lambdified kernels of :mod:`dcchar.models.symbolic` broadcast
them against currents of shape (n, m) or (1, m). The operating points are found the way
:func:`dcchar.studies.control.control_sweep` finds them: brackets on the grid of
:func:`dcchar.studies.operating.operating_points`, the first one met from standstill, refined by
the vectorized Anderson-Bjorck regula falsi of that module.
"""

from __future__ import annotations

import numpy as np

from .._bracketing import settling_cells
from ..control import _anderson_bjorck, _state_at_roots

__all__ = []


def settle(ev, load_torque, breakaway, safe_speed, grid: int = 112, tracked: bool = False):
    """The operating point met from rest, for every row of ``ev``.

    With ``tracked=True``: instead the point a running drive follows as a setting changes, the
    motoring point of least armature current (the first bracket walking up from zero current).

    Parameters
    ----------
    ev : dcchar.studies._bracketing._Evaluator
    load_torque : callable
        Load torque [N*m] at motor speeds [rad/s] (vectorized).
    breakaway : float
        [N*m]
    safe_speed : float
        [rad/s]; inf searches the whole grid (a no-load speed beyond any limit).

    Returns
    -------
    dict of ndarray (n,)
        ``speed``, ``torque``, ``armature_current``, ``supply_current``, ``input_power``,
        ``output_power``, ``efficiency``, ``stable``, ``beyond`` (some grid node is beyond the
        safe speed) and ``reason`` ("" motoring or generating
        point, "cannot start", "runs away"). nan where there is no point.
    """
    n = ev.rows()
    g = settling_cells(ev, load_torque, n, grid, safe_speed, breakaway)
    i0, jumps, im, Ia, w, f, valid, sc = (g[k] for k in ("i0", "jumps", "im", "Ia", "w", "f", "valid", "sc"))
    t_start, live, starts, back, cell, found = (g[k] for k in ("t_start", "live", "starts", "back", "cell", "found"))
    if tracked:
        lo = jumps[0] + 1
        fwd = valid & (w > 0)
        mot = sc[:, lo:im] & fwd[:, lo:im] & fwd[:, lo + 1:im + 1]
        found = mot.any(axis=1) & live
        cell = lo + np.argmax(mot, axis=1)
        starts = live.copy()
        back = np.zeros(n, bool)
    sel = np.flatnonzero(found)
    reason = np.full(n, "", dtype=object)
    reason[(starts | back) & ~found] = "runs away"
    reason[~starts & ~back] = "cannot start"
    reason[back & found] = "cannot start"
    keys = ("speed", "torque", "armature_current", "supply_current", "input_power", "output_power", "efficiency",
            "stability_slope")
    out = {k: np.full(n, np.nan) for k in keys}
    if sel.size:
        c = cell[sel]
        a, b = Ia[sel, c], Ia[sel, c + 1]
        fa, fb = f[sel, c], f[sel, c + 1]
        sub = ev.take(sel)

        def fun(i):
            with np.errstate(all="ignore"):
                ww, tt = sub.speed_torque(i)
                return tt - np.asarray(load_torque(ww), dtype=float)

        scale = np.maximum(np.abs(t_start[sel]), 1e-12)
        r, _, _ = _anderson_bjorck(fun, a, b, fa, fb, 1e-13 * i0[sel, 0], 1e-13 * scale)
        st, slope = _state_at_roots(sub, r, i0[sel, 0])
        with np.errstate(all="ignore"):
            lslope = (np.asarray(load_torque(st["speed"] + 1e-6), float)
                      - np.asarray(load_torque(st["speed"] - 1e-6), float)) / 2e-6
        p_in, p_out = st["input_power"], st["output_power"]
        out["speed"][sel] = st["speed"]
        out["torque"][sel] = st["shaft_torque"]
        out["armature_current"][sel] = r
        out["supply_current"][sel] = st["supply_current"]
        out["input_power"][sel] = p_in
        out["output_power"][sel] = p_out
        with np.errstate(all="ignore"):
            out["efficiency"][sel] = np.where((p_in > 0) & (p_out > 0), p_out / p_in,
                                              np.where((p_in < 0) & (p_out < 0), p_in / p_out, np.nan))
        out["stability_slope"][sel] = slope - lslope
        far = np.zeros(n, bool)
        # beyond the safe speed, or a jump through zero (kphi changing sign) rather than a root
        res = np.abs(np.asarray(st["shaft_torque"], float) - np.asarray(load_torque(st["speed"]), float))
        far[sel] = ~(np.abs(st["speed"]) <= safe_speed) | ~(res <= 1e-7 * np.maximum(scale, np.abs(st["shaft_torque"])))
        for k in keys:
            out[k][far] = np.nan
        reason[far] = "runs away"
    out["beyond"] = (~(np.isfinite(w) & (np.abs(w) <= safe_speed))).any(axis=1)
    out["stable"] = np.where(np.isnan(out["stability_slope"]), False, out["stability_slope"] < 0)
    out["reason"] = reason.astype(str)
    return out


def interp_rows(xp, fp, x):
    """Linear interpolation row by row, without a Python loop over rows.

    ``xp`` (n, m) must increase along each row where it is finite (nan elsewhere, only at the
    ends of a row's increasing run); ``x`` is (n, k), or (k,) / (1, k) for one set of points
    shared by every row. Outside a row's range, and in rows with fewer than two finite nodes: nan.
    """
    xp = np.asarray(xp, dtype=float)
    fp = np.asarray(fp, dtype=float)
    n, m = xp.shape
    x = np.asarray(x, dtype=float)
    if x.ndim == 1 or x.shape[0] == 1:
        y = _interp_shared(xp, fp, x.reshape(-1))
        if y is not None:
            return y
    x = np.broadcast_to(x, (n, x.shape[-1]))
    if m < 2:
        return np.full(x.shape, np.nan)
    ok = np.isfinite(xp) & np.isfinite(fp)
    count = ok.sum(axis=1, keepdims=True)
    lo = np.where(ok, xp, np.inf).min(axis=1, keepdims=True)
    hi = np.where(ok, xp, -np.inf).max(axis=1, keepdims=True)
    span = np.where(hi > lo, hi - lo, 1.0)
    with np.errstate(invalid="ignore"):
        key = np.where(ok, (xp - lo) / span, 2.0)  # bad nodes sort to the end of their row
        key = np.minimum(key, 2.0) * 0.25 + np.arange(n)[:, None]
        q = np.clip((x - lo) / span, 0.0, 1.0) * 0.25 + np.arange(n)[:, None]
    if np.all(key[:, 1:] >= key[:, :-1]):  # already in order: no sort
        order = np.broadcast_to(np.arange(m), (n, m)) + (np.arange(n) * m)[:, None]
    else:
        order = np.argsort(key, axis=1, kind="stable") + (np.arange(n) * m)[:, None]  # sorted within rows
    order = order.ravel()
    flat_sorted = key.ravel()[order]  # rows occupy [row, row + 0.5]: globally sorted
    pos = np.searchsorted(flat_sorted, q.ravel(), side="right").reshape(q.shape)
    row0 = (np.arange(n) * m)[:, None]
    pos = np.clip(pos, row0 + 1, row0 + np.maximum(count - 1, 1))  # x at a row's last good node: its value
    j1 = order[pos]
    j0 = order[pos - 1]
    x0, x1 = xp.ravel()[j0], xp.ravel()[j1]
    f0, f1 = fp.ravel()[j0], fp.ravel()[j1]
    with np.errstate(invalid="ignore", divide="ignore"):
        t = np.where(x1 > x0, (x - x0) / (x1 - x0), 0.0)
        y = f0 + t * (f1 - f0)
    inside = (x >= lo) & (x <= hi) & np.isfinite(x0) & np.isfinite(x1)
    return np.where(inside, y, np.nan)


def _interp_shared(xp, fp, x):
    """:func:`interp_rows` for one sorted ``x`` (k,) shared by all rows whose finite nodes form a
    single strictly increasing run (the usual case); None where that does not hold.

    Instead of searching each of the n*k points among the nodes, it places each node among the k
    points (a search in a short sorted array) and counts, row by row, the nodes at or below each
    point: that count is the point's cell.
    """
    n, m = xp.shape
    k = x.size
    if m < 2 or not np.all(x[1:] >= x[:-1]):  # (also False for nan)
        return None
    ok = np.isfinite(xp) & np.isfinite(fp)
    count = ok.sum(axis=1)
    first = np.argmax(ok, axis=1)
    cols = np.arange(m)
    if not np.array_equal(ok, (cols >= first[:, None]) & (cols < (first + count)[:, None])):
        return None  # a gap inside a row
    with np.errstate(invalid="ignore"):
        if not np.all((xp[:, 1:] > xp[:, :-1]) | ~(ok[:, 1:] & ok[:, :-1])):
            return None  # not increasing
        cell = np.searchsorted(x, xp, side="left")  # points below each node
    cell[~ok] = k  # counted nowhere
    cell += np.arange(n)[:, None] * (k + 1)
    below = np.bincount(cell.ravel(), minlength=n * (k + 1)).reshape(n, k + 1)[:, :k].cumsum(axis=1)  # nodes <= point
    rows = np.arange(n)
    lo = np.where(count >= 2, xp[rows, first], np.inf)[:, None]
    hi = xp[rows, np.maximum(first + count - 1, 0)][:, None]
    j0 = np.clip(below, 1, np.maximum(count - 1, 1)[:, None])  # a point on the last node: the last cell
    j0 += (first - 1)[:, None]
    np.minimum(j0, m - 2, out=j0)  # (rows of one node)
    j0 += (rows * m)[:, None]
    j1 = j0 + 1
    flat_x, flat_f = xp.ravel(), fp.ravel()
    x0, f0 = flat_x.take(j0), flat_f.take(j0)
    with np.errstate(invalid="ignore", divide="ignore"):
        y = f0 + (x - x0) / (flat_x.take(j1) - x0) * (flat_f.take(j1) - f0)
    y[~((x >= lo) & (x <= hi))] = np.nan
    return y


def increasing_prefix(values):
    """Mask of the leading run of each row where ``values`` strictly increase and are finite."""
    v = np.asarray(values, dtype=float)
    with np.errstate(invalid="ignore"):
        step = np.concatenate([np.ones((v.shape[0], 1), bool), np.diff(v, axis=1) > 0], axis=1) & np.isfinite(v)
    return np.cumprod(step, axis=1).astype(bool)


def run_up_time(inertia, speed, accelerating_torque):
    """Time along speed grids (n, m), T_acc linear between nodes, 1/T_acc integrated exactly.

    The formula of :func:`dcchar.studies.starter_steps.acceleration_time_curve`, row by row:
    dt = J*dw*ln(T1/T0)/(T1 - T0). Rows where T_acc <= 0 somewhere give inf. [s]
    """
    w = np.asarray(speed, dtype=float)
    ta = np.asarray(accelerating_torque, dtype=float)
    t0, t1 = ta[:, :-1], ta[:, 1:]
    dw = np.diff(w, axis=1)
    diff = t1 - t0
    same = np.abs(diff) <= 1e-12 * np.maximum(t0, t1)
    with np.errstate(divide="ignore", invalid="ignore"):
        dt = np.where(same, dw / t0, dw * np.log(t1 / t0) / np.where(same, 1.0, diff))
    total = np.asarray(inertia) * dt.sum(axis=1)
    bad = ~(np.all(ta > 0, axis=1) & np.all(np.isfinite(ta), axis=1))
    return np.where(bad, np.inf, total)
