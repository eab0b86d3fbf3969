"""Vectorized evaluation and the bracketing grid shared by the operating-point and control studies.

Private to :mod:`dcchar.studies.operating` and :mod:`dcchar.studies.control`: the speed and
shaft torque of a machine on arrays of armature current (with some circuit values replaced by
arrays of settings), the grid of I_a/I_0 with its
two discontinuities, and the search for roots that hide between grid nodes.
"""

from __future__ import annotations

import functools

import numpy as np

from ..models import symbolic
from ..models.characteristic import per_machine

_TINY = 1e-9  # offset of grid nodes from the two discontinuities (I_a = 0 and standstill), x I_0
_NONE = (np.empty(0), np.empty(0), np.empty(0, bool))  # no extra nodes
for _a in _NONE:
    _a.flags.writeable = False


class _Evaluator:
    """Speed and shaft torque of one machine on arrays, with the supply voltage and any circuit
    values (by name, e.g. R_x, R_f, d, V_f; see :data:`dcchar.models.symbolic.CIRCUIT_PARAMETERS`) given as
    arrays that broadcast against the armature current (settings down, currents across), and
    kphi multiplied by ``scale`` (a number or an (n, 1) array: a flux tolerance)."""

    def __init__(self, machine, voltage, overrides=None, circuit=None, *, scale=1.0):
        self.machine = machine
        self.connection = conn = machine.connection
        names = symbolic.CIRCUIT_PARAMETERS[conn]
        circuit = list(machine.circuit_parameters() if circuit is None else circuit)
        for name, value in (overrides or {}).items():
            circuit[names.index(name)] = value
        self.names = names
        self.circuit = tuple(circuit)
        self.voltage = voltage
        self.loss = (*machine.rotational_loss.kernel_parameters(), machine.stray_load)
        self.scale = scale

    def _param(self, name):
        return self.voltage if name == "V" else self.circuit[self.names.index(name)]

    def take(self, rows):
        """The same evaluator with every array parameter reduced to rows ``rows`` (1-D)."""
        def pick(v):
            nd = np.ndim(v)
            return np.asarray(v)[rows, 0] if nd == 2 else (np.asarray(v)[rows] if nd == 1 else v)
        ev = object.__new__(_Evaluator)
        ev.__dict__.update(self.__dict__)
        ev.voltage = pick(self.voltage)
        ev.circuit = tuple(pick(v) for v in self.circuit)
        ev.scale = pick(self.scale)
        return ev

    def rows(self) -> int:
        """Number of rows of settings (1 when every parameter is a number)."""
        n = 1
        for v in (self.voltage, self.scale, *self.circuit):
            if np.ndim(v):
                n = max(n, np.shape(v)[0])
        return n

    def kphi(self, Ia, F=None):
        """kphi at armature currents ``Ia`` (``F``: their net excitation, when known)."""
        k = self.machine._kphi(self.excitation(Ia)[0] if F is None else F, Ia)
        return k if (np.ndim(self.scale) == 0 and self.scale == 1.0) else k * self.scale

    def excitation(self, Ia):
        if self.connection == "permanent_magnet":
            z = np.zeros_like(Ia)
            return z, z, z, Ia
        far = self.machine.armature_reaction.excitation(Ia)
        return symbolic.excitation_kernel(self.connection)(Ia, self.voltage, *self.circuit, far)

    def speed_torque(self, Ia):
        """(speed, shaft torque) arrays; call inside ``np.errstate`` (kphi = 0 gives inf/nan)."""
        return symbolic.speed_torque_kernel(self.connection)(Ia, self.kphi(Ia), self.voltage, *self.circuit,
                                                             *self.loss)

    def full_state(self, Ia):
        """Every kernel output at ``Ia`` (arrays): the outputs of the symbolic kernels plus kphi."""
        F, If, Is, IL = self.excitation(Ia)
        kphi = self.kphi(Ia, F)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            out = symbolic.output_kernel(self.connection)(Ia, kphi, self.voltage, *self.circuit, *self.loss)
        shape = np.shape(Ia)
        d = {k: np.broadcast_to(v, shape) for k, v in zip(symbolic.OUTPUTS, out)}
        d.update(excitation=np.broadcast_to(F, shape), field_current=np.broadcast_to(If, shape),
                 series_field_current=np.broadcast_to(Is, shape), supply_current=np.broadcast_to(IL, shape),
                 kphi=np.broadcast_to(kphi, shape))
        return d

    def standstill_current(self):
        """Armature current at zero speed (E = 0), array-valued where the parameters are. [A]"""
        V = self.voltage
        Ra, Rx, Vb = (self._param(n) for n in ("R_a", "R_x", "V_b"))
        conn = self.connection
        if conn in ("series", "long_shunt_compound"):
            return np.maximum(V - Vb, 0.0) / (Ra + Rx + self._param("R_s") * self._param("d"))
        if conn == "short_shunt_compound":
            rse = self._param("R_s") * self._param("d")
            rf = self._param("R_f")
            num = V - Vb - rse * V / (rf + rse)
            return np.maximum(num, 0.0) / (Ra + Rx + rse - rse * rse / (rf + rse))
        return np.maximum(V - Vb, 0.0) / (Ra + Rx)


class MotorGrid:
    """The load-independent half of an operating-point search: the machine's speed and shaft
    torque on the bracketing grid at one supply voltage (arrays read-only, shared between calls).

    Attributes: ``ev`` (:class:`_Evaluator`), ``i0`` standstill current [A], ``x`` grid of
    I_a/I_0, ``jumps`` its two discontinuity cells, ``Ia`` = x*i0 [A], ``w`` [rad/s], ``t``
    [N*m], ``finite_w`` (speed defined), ``up`` (the forward side of standstill lies above I_0),
    ``fwd``/``bwd`` the nodes either side of standstill, ``t_start`` shaft torque as the rotor
    begins to turn [N*m].
    """

    __slots__ = ("ev", "i0", "x", "jumps", "Ia", "w", "t", "finite_w", "up", "fwd", "bwd", "t_start", "pole_cells")

    def __init__(self, machine, voltage, grid):
        self.ev = ev = _Evaluator(machine, voltage)
        self.i0 = i0 = float(ev.standstill_current())
        self.x, self.jumps = x, jumps = _unit_grid(grid)
        if not i0 > 0:
            return
        self.Ia = Ia = x * i0
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            w, t = ev.speed_torque(Ia)
        # the kernel gives fresh arrays; a constant comes back as a scalar
        w = w if np.shape(w) == x.shape else np.full(x.shape, w, dtype=float)
        t = t if np.shape(t) == x.shape else np.full(x.shape, t, dtype=float)
        self.finite_w = np.isfinite(w)
        for a in (Ia, w, t, self.finite_w):
            a.flags.writeable = False
        self.w, self.t = w, t
        im = jumps[1]
        # Normally the speed is positive below I_0; where the flux has reversed at standstill (a
        # differential compound) the positive-speed side is above it.
        self.up = up = not w[im] > 0
        self.fwd, self.bwd = (im + 1, im) if up else (im, im + 1)
        self.t_start = float(t[self.fwd])
        # where :func:`_edge_nodes` may look: cells across which the speed changes sign (other than
        # at standstill); None where the speed is undefined at some node (it looks everywhere)
        fin = self.finite_w
        flips = (np.signbit(w[:-1]) != np.signbit(w[1:])) & fin[:-1] & fin[1:]
        for j in jumps:
            flips[j] = False
        self.pole_cells = np.flatnonzero(flips).tolist() if fin.all() else None


def motor_grid(machine, voltage: float, grid: int) -> MotorGrid:
    """:class:`MotorGrid` of ``machine`` at ``voltage`` [V] on ``grid`` nodes, cached per machine
    (a machine is immutable; a new load on the same machine and supply reuses it)."""
    return per_machine(machine, ("motor grid", voltage, grid), lambda: MotorGrid(machine, voltage, grid))


@functools.lru_cache(maxsize=64)
def _unit_grid(n: int):
    """Grid of I_a/I_0 from -1 to 2, dense on the light-load motoring branch.

    Returns the grid and the indices ``i`` of the two cells (i, i+1) that straddle a
    discontinuity (I_a = 0: brush drop changes sign; I_a = I_0: speed changes sign, friction
    jumps); no bracket is taken across them.
    """
    n_m = max(8, round(n * 4 / 7))
    n_g = max(4, round(n * 2 / 7))
    n_b = max(4, n - n_m - n_g)
    t = np.linspace(0.0, 1.0, n_m)
    x_m = _TINY + (1.0 - 2 * _TINY) * t * t
    t = np.linspace(0.0, 1.0, n_g)
    x_g = -(_TINY + (1.0 - _TINY) * t * t)[::-1]
    t = np.linspace(0.0, 1.0, n_b)
    x_b = 1.0 + _TINY + (1.0 - _TINY) * t
    x = np.concatenate([x_g, x_m, x_b])
    x.flags.writeable = False
    return x, (n_g - 1, n_g + n_m - 1)


def _sign_change_cells(f, finite, valid, jumps):
    """Cells (i, i+1) where f changes sign strictly, both ends finite and at least one within the
    safe speed (a root at the edge of the runaway region is kept if its own speed is safe), not
    across a discontinuity."""
    ok = (finite[..., :-1] & finite[..., 1:] & (valid[..., :-1] | valid[..., 1:])
          & (np.sign(f[..., :-1]) * np.sign(f[..., 1:]) < 0))
    for j in jumps:
        ok[..., j] = False
    return ok



def _extra_nodes(mg, load, f, valid, ws):
    """Nodes, f values and validity to add to the grid of ``mg`` (:class:`MotorGrid`) where a root
    may hide between nodes: :func:`_hidden_pairs` and :func:`_edge_nodes`."""
    args = (mg.ev, load, mg.x)
    hx, hf, hv = _hidden_pairs(*args, f, valid, mg.jumps, mg.i0, ws)
    cells = mg.pole_cells
    if cells is not None and not any(valid[c] or valid[c + 1] for c in cells):
        return hx, hf, hv  # no cell for _edge_nodes to refine
    ex, ef, ev = _edge_nodes(*args, mg.w, valid, mg.jumps, mg.i0, ws)
    if not ex.size:
        return hx, hf, hv
    return np.concatenate([hx, ex]), np.concatenate([hf, ef]), np.concatenate([hv, ev])


def _hidden_pairs(ev, load, x, f, valid, jumps, i0, ws, depth=3, n_local=33):
    """Extra nodes where f has a local extremum near zero between grid nodes (two roots may hide)."""
    d = f[1:] - f[:-1]
    sd = np.signbit(d)
    ext = (np.flatnonzero(sd[:-1] != sd[1:]) + 1).tolist()  # nodes where f turns
    skip = {k for j in jumps for k in (j, j + 1)}  # nodes next to a jump cell show a false extremum
    cand = []
    for c in ext:
        if c in skip or not (valid[c - 1] and valid[c] and valid[c + 1]):
            continue
        fc, dl, dr = f[c], d[c - 1], d[c]
        if ((dl < 0 < dr and fc > 0) or (dl > 0 > dr and fc < 0)) and abs(fc) < 2.0 * max(abs(dl), abs(dr)):
            cand.append(c)
    if not cand:
        return _NONE
    return _refine(ev, load, [(x[c - 1], x[c + 1]) for c in cand], i0, ws, n_local, depth,
                   lambda xs, w, f, v: _hidden_pairs(ev, load, xs, f, v, (), i0, ws, depth - 1, n_local))


def _refine(ev, load, spans, i0, ws, n_local, depth, deeper):
    """Nodes, f values and validity on ``n_local`` points inside each (a, b) of ``spans`` (ends
    left out), plus what ``deeper(xs, w, f, valid)`` adds while ``depth`` > 1."""
    out_x, out_f, out_v = [], [], []
    for a, b in spans:
        xs = np.linspace(a, b, n_local)[1:-1]
        w, t = ev.speed_torque(xs * i0)
        fl = t - np.asarray(load.torque(w), dtype=float)
        vl = np.isfinite(fl) & np.isfinite(w) & (np.abs(w) <= ws)
        out_x.append(xs), out_f.append(fl), out_v.append(vl)
        if depth > 1:
            ex, ef, evv = deeper(xs, w, fl, vl)
            out_x.append(ex), out_f.append(ef), out_v.append(evv)
    if not out_x:
        return _NONE
    return np.concatenate(out_x), np.concatenate(out_f), np.concatenate(out_v)


def _edge_nodes(ev, load, x, w, valid, jumps, i0, ws, depth=2, n_local=33):
    """Extra nodes in cells where the grid crosses the edge of the safe region or a pole of the speed
    (the flux passing through zero, e.g. a differential compound at heavy load): a root can lie
    there between two nodes that a coarse grid sees only as "one valid, one not"."""
    fin = np.isfinite(w)
    # through a pole, from or to a node within the safe speed (across a pole the speed grows
    # towards it on both sides, so two nodes beyond the safe speed enclose no safe region)
    flips = (np.signbit(w[:-1]) != np.signbit(w[1:])) & fin[:-1] & fin[1:] & (valid[:-1] | valid[1:])
    # a valid node next to one with no finite speed: the bracket test cannot look across it
    blind = (valid[:-1] & ~fin[1:]) | (~fin[:-1] & valid[1:])
    cells = np.flatnonzero(flips | blind)
    skip = set(jumps)
    return _refine(ev, load, [(x[c], x[c + 1]) for c in cells if c not in skip], i0, ws, n_local, depth,
                   lambda xs, w, f, v: _edge_nodes(ev, load, xs, w, v, (), i0, ws, depth - 1, n_local))


def _intervals(currents, mask):
    idx = np.flatnonzero(mask)
    if idx.size == 0:
        return ()
    cut = np.flatnonzero(np.diff(idx) > 1)
    first = np.concatenate([idx[:1], idx[cut + 1]])
    last = np.concatenate([idx[cut], idx[-1:]])
    return tuple((float(currents[a]), float(currents[b])) for a, b in zip(first, last))


def settling_cells(ev, load_torque, n, grid, safe_speed, breakaway):
    """Bracketing grid over ``n`` rows of settings, and for each row the cell of the point the
    drive settles at when started from rest (vectorized over the rows).

    Returns a dict with the grid (``i0`` (n, 1), ``x``, ``jumps``, ``im``, ``Ia``), the values on it
    (``w``, ``t``, ``f``, ``finite``, ``valid``, ``sc`` sign-change cells), the start figures
    (``t_start``, ``f_start``, ``f_back``, ``live``, ``starts``, ``back``) and ``cell``/``found``.
    """
    i0 = np.broadcast_to(np.asarray(ev.standstill_current(), dtype=float).reshape(-1, 1), (n, 1))
    x, jumps = _unit_grid(int(grid))
    im = jumps[1]  # node just below standstill (x = 1 - tiny)
    Ia = i0 * x
    with np.errstate(all="ignore"):
        w, t = ev.speed_torque(Ia)
        w, t = np.broadcast_to(w, Ia.shape), np.broadcast_to(t, Ia.shape)
        f = t - np.asarray(load_torque(w), dtype=float)
        finite = np.isfinite(w) & np.isfinite(f)
        valid = finite & (np.abs(w) <= safe_speed)
    sc = _sign_change_cells(f, finite, valid, jumps)
    rows = np.arange(n)
    # either side of standstill; the positive-speed side is above I_0 where the flux has reversed
    up = ~(w[:, im] > 0)
    fwd_node, bwd_node = np.where(up, im + 1, im), np.where(up, im, im + 1)
    t_start, f_start, f_back = t[rows, fwd_node], f[rows, fwd_node], f[rows, bwd_node]
    live = i0[:, 0] > 0
    starts = (t_start > breakaway) & (f_start > 0) & live
    back = ~starts & (f_back < 0) & live
    # the first event met walking down from standstill (a bracket, or a node beyond the safe speed)
    ev_d = sc[:, :im] | ~valid[:, :im]
    has_d = ev_d.any(axis=1)
    cd = im - 1 - np.argmax(ev_d[:, ::-1], axis=1)
    # ... and walking up
    ev_u = sc[:, im + 1:] | ~valid[:, im + 2:]
    has_u = ev_u.any(axis=1)
    cu = im + 1 + np.argmax(ev_u, axis=1)
    down = (starts & ~up) | (back & up)
    ok_d = down & has_d & sc[rows, cd]
    ok_u = ~down & (starts | back) & has_u & sc[rows, np.minimum(cu, sc.shape[1] - 1)]
    return dict(i0=i0, x=x, jumps=jumps, im=im, Ia=Ia, w=w, t=t, f=f, finite=finite, valid=valid, sc=sc,
                t_start=t_start, f_start=f_start, f_back=f_back, live=live, starts=starts, back=back,
                cell=np.where(down, cd, cu), found=ok_d | ok_u)
