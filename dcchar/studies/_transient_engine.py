"""The engine of :mod:`dcchar.studies.transients`: one circuit (connection, resistances, sources)
per stage, the state equations with their energy integrals, modes for static friction at standstill
and for a current held at zero by the brush drop, the solver runs and events, and the output arrays.

Private to the studies: :func:`balance` (the steady state of a stage) is used by the braking study too.
"""

from __future__ import annotations

import math

import numpy as np

from ..errors import ParameterError, SolverError


_SERIES = {"normal": 1.0, "reversed": -1.0, "bypassed": 0.0}
_TINY_SPEED = 1e-30  # evaluates a load on the branch of the coming motion at standstill [rad/s]
_N_ENERGY = 9  # supply, field supply, armature Cu, series Cu, external, field Cu, brush, rotational, load


def _scalar_kphi(machine):
    """Fast kphi(F, I_a) [V*s/rad] in plain floats, from the machine's magnetization (or magnets)."""
    from ..models.magnetics import Froehlich, LinearMagnetization

    if machine.connection == "permanent_magnet":
        k0, delta = machine.hot_kphi, machine.demagnetization

        def pm(F, i):
            k = k0 * (1.0 - delta * abs(i))
            if not k > 0:
                raise SolverError(f"the magnets are fully demagnetized at I_a = {i:.4g} A (demagnetization "
                                  f"{delta:g} 1/A)")
            return k
        return pm, delta == 0.0
    mag = machine.magnetization
    er, w0 = mag.residual_emf, mag.reference_speed
    if type(mag) is LinearMagnetization:
        s = mag.slope
        return (lambda F, i: (er + s * F) / w0), False
    if type(mag) is Froehlich:
        a, b = mag.a, mag.b
        return (lambda F, i: (er + a * F / (b + abs(F))) / w0), False
    return (lambda F, i: float(mag.kphi(F))), False


class _Circuit:
    """Equations of one connection of the machine (one stage of a transient)."""

    def __init__(self, machine, inertia, *, armature_voltage, external_resistance, field_voltage=None,
                 series_connection="normal", switch_current=None, end_time=None, run_time=None, label="",
                 holding_brake=False):
        m = self.machine = machine
        conn = m.connection
        self.inertia, self.label = inertia, label
        self.switch_current, self.end_time, self.run_time = switch_current, end_time, run_time
        self.holding_brake = holding_brake
        self.steady_current = None  # set on the last stage of a start: the settling test uses it
        self.Va = armature_voltage
        self.Ra, self.Rx, self.Vb, self.La = m.hot_armature_resistance, external_resistance, m.brush_drop, \
            m.armature_inductance
        ss = _SERIES[series_connection]
        self.Rse = self.Lse = self.Ns = 0.0
        if conn in ("series", "long_shunt_compound", "short_shunt_compound") and ss != 0.0:
            d = m.diverter_share
            sigma = -1.0 if getattr(m, "kind", "cumulative") == "differential" else 1.0
            # lumped series branch (field || diverter): resistance Rs*d, inductance Ls*d^2, turns share d
            self.Rse, self.Lse, self.Ns = m._hot(m.series_resistance) * d, m.series_inductance * d * d, \
                ss * sigma * m.series_turns * d
        self.has_field = conn in ("separately_excited", "shunt", "long_shunt_compound", "short_shunt_compound")
        self.Rf = m.field_circuit_resistance if self.has_field else 1.0
        self.Nf = m.field_turns if self.has_field else 0.0
        self.Lf = m.field_inductance if self.has_field else 0.0
        self.separate = conn == "separately_excited"
        if self.separate:
            self.vf = m.field_voltage if field_voltage is None else field_voltage
        else:
            self.vf = self.Va if field_voltage is None else field_voltage
        self.short = conn == "short_shunt_compound" and field_voltage is None
        self.field_state = self.has_field and self.Lf > 0
        self.current_state = self.La + self.Lse > 0
        if self.short and self.Lse > 0 and self.Lf == 0:
            raise ParameterError("field_inductance", 0.0, "> 0 [H] for a short-shunt compound whose series field "
                                 "has inductance (the field current is then a state of the transient)")
        self.kphi, const = _scalar_kphi(m)
        from ..models.magnetics import NoArmatureReaction

        ar = m.armature_reaction
        self.ar = None if isinstance(ar, NoArmatureReaction) else (lambda i: float(ar.excitation(i)))
        self.explicit = (self.Ns == 0.0 and self.ar is None and not self.short and
                         (conn != "permanent_magnet" or const))
        rl = m.rotational_loss
        self.losses = rl.kernel_parameters() + (m.stray_load,)
        self.iw = 1 if self.current_state else 0
        self.iff = self.iw + 1 if self.field_state else None
        self.n = self.iw + 1 + (1 if self.field_state else 0)

    # -- sources
    def va(self, t):
        return self.Va(t) if callable(self.Va) else self.Va

    def vfield(self, t):
        return self.vf(t) if callable(self.vf) else self.vf

    @property
    def R(self):
        """Armature loop resistance without the short-shunt series branch. [ohm]"""
        return self.Ra + self.Rx + (0.0 if self.short else self.Rse)

    # -- algebra
    def field_current(self, t, ia, y_if):
        if not self.has_field:
            return 0.0
        if self.field_state:
            return y_if
        vf = self.vfield(t)
        return (vf - self.Rse * ia) / (self.Rf + self.Rse) if self.short else vf / self.Rf

    def excitation(self, ia, If):
        F = self.Nf * If + self.Ns * ((ia + If) if self.short else ia)
        return F - self.ar(ia) if self.ar is not None else F

    def drive(self, t, ia, w, If):
        """Armature-loop voltage left for L dI/dt, without the brush drop, and kphi. [V], [V*s/rad]"""
        k = self.kphi(self.excitation(ia, If), ia)
        v = self.va(t) - k * w - ia * self.R
        if self.short:
            v -= self.Rse * (ia + If)
        return v, k

    def algebraic_current(self, t, w, y_if, dir_i):
        """I_a where the loop has no inductance: root of the loop equation."""
        Vb = self.Vb
        if self.explicit:
            If = self.field_current(t, 0.0, y_if)
            v, _ = self.drive(t, 0.0, w, If)
            R = self.R
            return (v - Vb) / R if v > Vb else (v + Vb) / R if v < -Vb else 0.0

        def g(i):
            v, _ = self.drive(t, i, w, self.field_current(t, i, y_if))
            return v - Vb * (1.0 if i > 0 else -1.0 if i < 0 else dir_i)

        gp = self.drive(t, 0.0, w, self.field_current(t, 0.0, y_if))[0]
        if abs(gp) <= Vb:
            return 0.0
        sgn = 1.0 if gp > Vb else -1.0
        step = (abs(self.va(t)) + Vb + 1.0) / self.R
        lo, hi = 0.0, sgn * step
        for _ in range(200):
            if g(hi) * sgn < 0:
                break
            lo, hi = hi, 2.0 * hi
        else:  # pragma: no cover - the loop drop grows without bound
            raise SolverError(f"no armature current balances the loop at w = {w:.4g} rad/s")
        from scipy.optimize import brentq

        a, b = (lo, hi) if lo < hi else (hi, lo)
        return brentq(g, a, b, xtol=1e-15 * max(abs(b), 1.0), rtol=4 * np.finfo(float).eps)

    def loss_torque(self, w, k, ia, dir_w):
        Tf, B, Kw, kh, ke, P0, ws, cs = self.losses
        sg = dir_w  # the direction of the mode: a run ends at every zero crossing of the speed
        return (Tf * sg + B * w + Kw * w * abs(w) + P0 * w / (w * w + ws * ws) + k * k * (kh * sg + ke * w)
                + cs * ia * ia * sg)

    def static_band(self, t, ia, If, load, brake):
        """Resisting torques at standstill toward + and - rotation (the limits of static friction)."""
        k = self.kphi(self.excitation(ia, If), ia)
        tl_p = float(load.torque(_TINY_SPEED)) if load is not None else 0.0
        tl_m = float(load.torque(-_TINY_SPEED)) if load is not None else 0.0
        up = self.loss_torque(0.0, k, ia, 1.0) + tl_p
        down = -math.inf if brake else self.loss_torque(0.0, k, ia, -1.0) + tl_m
        return k * ia, up, down

    def derivatives(self, t, y, mode, load):
        """dy/dt with the power integrals, and the quantities behind them (a tuple)."""
        stuck, dir_w, blocked, dir_i = mode
        w = y[self.iw]
        y_if = y[self.iff] if self.field_state else 0.0
        if self.current_state:
            ia = y[0]
        else:
            ia = self.algebraic_current(t, w, y_if, dir_i)
        If = self.field_current(t, ia, y_if)
        v, k = self.drive(t, ia, w, If)
        # within one run the signs are those of the mode (the runs end where speed or current cross
        # zero), so the equations stay smooth even where an implicit solver probes across zero
        sg_i = dir_i if self.current_state else (1.0 if ia > 0 else -1.0 if ia < 0 else dir_i)
        Vb = self.Vb
        r1 = v - Vb * sg_i
        dia = dif = 0.0
        if self.short:
            IL = ia + If
            if self.field_state:
                r2 = self.va(t) - self.Rse * IL - self.Rf * If
                La, Lf, Ls = self.La, self.Lf, self.Lse
                if blocked or not self.current_state:
                    dif = r2 / (Lf + Ls)
                else:
                    det = La * Lf + La * Ls + Lf * Ls
                    dia = ((Lf + Ls) * r1 - Ls * r2) / det
                    dif = ((La + Ls) * r2 - Ls * r1) / det
            elif self.current_state and not blocked:
                dia = r1 / self.La
            i_src = IL
        else:
            if self.current_state and not blocked:
                dia = r1 / (self.La + self.Lse)
            if self.field_state:
                dif = (self.vfield(t) - self.Rf * If) / self.Lf
            i_src = ia
        va = self.va(t)
        T = k * ia
        if stuck:
            dw = 0.0
            tl = t_loss = 0.0
        else:
            wl = w if w * dir_w > 0 else dir_w * _TINY_SPEED
            tl = float(load.torque(wl)) if load is not None else 0.0
            t_loss = self.loss_torque(w, k, ia, dir_w)
            dw = (T - t_loss - tl) / self.inertia
        p_field = self.vfield(t) * If if self.has_field and not self.short else 0.0
        p_sup = va * i_src + (0.0 if self.separate else p_field)
        p_fsup = p_field if self.separate else 0.0
        i_ser = (ia + If) if self.short else ia
        powers = (p_sup, p_fsup, ia * ia * self.Ra, self.Rse * i_ser * i_ser, ia * ia * self.Rx,
                  self.Rf * If * If if self.has_field else 0.0, Vb * abs(ia), t_loss * w, tl * w)
        states = [dia, dw] if self.current_state else [dw]
        if self.field_state:
            states.append(dif)
        return states + list(powers), (ia, w, If, k, T, t_loss, tl, i_src, v)

    def magnetic_energy(self, ia, If):
        if self.short:
            return 0.5 * self.La * ia * ia + 0.5 * self.Lse * (ia + If) ** 2 + 0.5 * self.Lf * If * If
        return 0.5 * (self.La + self.Lse) * ia * ia + 0.5 * self.Lf * If * If

    def initial_state(self, *, speed=0.0, current=None, field_current=None, field_preexcited=True):
        """State vector (without the power integrals) at t = 0."""
        y = []
        if self.current_state:
            y.append(0.0 if current is None else current)
        y.append(speed)
        if self.field_state:
            if field_current is not None:
                y.append(field_current)
            elif field_preexcited:
                v0 = self.vfield(0.0)
                i0 = 0.0 if current is None else current
                y.append((v0 - self.Rse * i0) / (self.Rf + self.Rse) if self.short else v0 / self.Rf)
            else:
                y.append(0.0)
        return y

    def scales(self, w_ref):
        """Typical magnitudes of the states, for absolute tolerances."""
        i_s = (abs(self.va(0.0)) + 1.0) / (self.R + (self.Rse if self.short else 0.0))
        s = [i_s] if self.current_state else []
        s.append(max(abs(w_ref), 1.0))
        if self.field_state:
            s.append((abs(self.vfield(0.0)) + 1.0) / self.Rf)
        e = 0.5 * self.inertia * max(abs(w_ref), 1.0) ** 2
        return s, e


def balance(machine, load, voltage, rx):
    """(speed [rad/s], armature current [A]) of the first stable balance met from rest, or None."""
    m = machine if rx == machine.external_resistance else machine.with_(external_resistance=rx)
    i_lr = m.locked_rotor_current(voltage)
    if not i_lr > 0:
        return None
    grid = i_lr * np.concatenate(([0.0], np.geomspace(1e-7, 1.0, 400)))
    s = m.state_arrays(voltage, grid)
    w, tm = s["speed"], s["shaft_torque"]
    ok = np.isfinite(w) & np.isfinite(tm) & (w >= 0)
    if ok.sum() < 2:
        return None
    tl = np.zeros_like(w) if load is None else np.where(ok, load.torque(np.where(ok, w, 0.0)), np.nan)
    f = tm - tl
    idx = np.nonzero(ok)[0]
    order = idx[np.argsort(w[idx])]
    ff = f[order]
    if not ff[0] > 0:  # cannot start
        return None
    cross = np.nonzero((ff[:-1] > 0) & (ff[1:] <= 0))[0]
    if cross.size == 0:
        return None
    a, b = grid[order[cross[0]]], grid[order[cross[0] + 1]]
    from scipy.optimize import brentq

    def g(i):
        sp, ts = m.scalar_state(voltage, i)
        return ts - (float(load.torque(sp)) if load is not None else 0.0)

    lo, hi = min(a, b), max(a, b)
    if g(lo) * g(hi) > 0:
        i0 = 0.5 * (lo + hi)
    else:
        i0 = brentq(g, lo, hi, xtol=1e-14 * i_lr, rtol=1e-14)
    return m.scalar_state(voltage, i0)[0], i0


def _run(stages, load, initial, *, rtol, atol, method, t_cap, steady, stop_speed, settle):
    """Integrate the stages in turn, switching modes at events; return arrays and figures."""
    from scipy.integrate import solve_ivp

    c0 = stages[0]
    w_ref = steady if steady is not None and math.isfinite(steady) else max(abs(initial[c0.iw]), 1.0)
    y = list(initial) + [0.0] * _N_ENERGY
    t = 0.0
    # modes: stuck at standstill, direction of motion, current held at zero, direction of current
    y0w = y[c0.iw]
    dir_w = 1.0 if y0w >= 0 else -1.0
    mode = [y0w == 0.0, dir_w, False, 1.0]
    brake = c0.holding_brake
    pieces, switch_times, stage_ranges, notes = [], [], [], []
    t95 = math.nan
    stopped, completed, reason = math.nan, True, ""
    safe = c0.machine.safe_speed
    restarts = 0
    prev_c = c0
    for k, c in enumerate(stages):
        if k > 0:  # carry the state across the switching (current, speed, field current continuous)
            ia_prev = y[0] if prev_c.current_state else None
            base = c.initial_state(speed=y[prev_c.iw], current=ia_prev,
                                   field_current=y[prev_c.iff] if prev_c.field_state else None)
            y = base + y[prev_c.n:]
            switch_times.append(t)
        stage_start = len(pieces)
        i_ss_scale = (abs(c.va(0.0)) + 1.0) / c.R
        if c.end_time is not None:
            t_end = c.end_time
        elif c.run_time is not None:
            t_end = t + c.run_time
        else:
            t_end = t + t_cap
        s_scales, e_scale = c.scales(w_ref)
        at = atol if atol is not None else np.array([rtol * 1e-2 * v for v in s_scales] +
                                                     [rtol * 1e-3 * e_scale] * _N_ENERGY)
        done = False
        kind = "start"
        while not done:
            restarts += 1
            if restarts > 20000:
                raise SolverError("too many mode changes (stick-slip or current chatter): loosen the model "
                                  "or shorten the run")
            _settle_modes(c, t, y, mode, load, brake, kind)
            events, kinds = _events(c, mode, load, brake, steady if (settle and k == len(stages) - 1) else None,
                                    i_ss_scale, safe, w_ref if not math.isfinite(t95) else None, steady,
                                    stop_speed)
            md = tuple(mode)

            def rhs(tt, yy, md=md, c=c):
                return c.derivatives(tt, yy, md, load)[0]

            if t_end <= t:
                break
            try:
                sol = solve_ivp(rhs, (t, t_end), y, method=method, rtol=rtol, atol=at, events=events)
            except ValueError as exc:  # an event could not be located (a degenerate, very stiff model)
                tau_e = (c.La + c.Lse) / c.R
                raise SolverError(f"the {method} run of {c.label} failed at t = {t:.6g} s: {exc}; an electrical "
                                  f"time constant of {tau_e:.3g} s this small is better set to 0 (current "
                                  "without inductance)", exc) from exc
            if sol.status == -1:
                completed, reason = False, f"solver failed: {sol.message}"
                pieces.append((c, md, sol.t, sol.y))
                break
            pieces.append((c, md, sol.t, sol.y))
            for ev, kd in zip(sol.t_events, kinds):
                if kd == "t95" and len(ev) and not math.isfinite(t95):
                    t95 = float(ev[0])
            t = float(sol.t[-1])
            y = list(sol.y[:, -1])
            if sol.status == 0:
                done = True
                if c.switch_current is not None and c.end_time is None:
                    completed = False
                    reason = (f"on {c.label} the current did not fall to {c.switch_current:.4g} A within "
                              f"{t_cap:.4g} s: the drive settles there and the starter cannot advance")
                break
            # the terminal event that ended the run: the one whose time is the end time
            fired = [(abs(float(ev[-1]) - t), kd, j) for j, (ev, kd) in enumerate(zip(sol.t_events, kinds))
                     if len(ev) and kd != "t95"]
            _, kind, j = min(fired, key=lambda f: f[0])
            y = list(sol.y_events[j][-1])
            if kind == "w0":
                y[c.iw] = 0.0
                if stop_speed == 0.0:
                    stopped = t
                    pieces.append((c, md, np.array([t]), np.array(y)[:, None]))
                    done = True
                    break
                mode[0] = True
            elif kind in ("release+", "release-"):
                mode[0], mode[1] = False, (1.0 if kind == "release+" else -1.0)
                brake = False
            elif kind == "i0":
                y[0] = 0.0
                mode[2] = True
            elif kind in ("unblock+", "unblock-"):
                mode[2], mode[3] = False, (1.0 if kind == "unblock+" else -1.0)
            elif kind in ("switch", "settle"):
                done = True
            elif kind == "stop":
                stopped = t
                done = True
            elif kind == "safe":
                completed = False
                reason = (f"the speed reached the safe speed {safe:.4g} rad/s at t = {t:.4g} s: runaway")
                done = True
        stage_ranges.append((stage_start, len(pieces)))
        prev_c = c
        if not completed or not math.isnan(stopped):
            break
    out = _outputs(pieces, load)
    sizes = np.cumsum([0] + [p[2].size for p in pieces])
    stage_peaks = [float(np.max(np.abs(out["armature_current"][sizes[i]:sizes[j]]))) if sizes[j] > sizes[i]
                   else 0.0 for i, j in stage_ranges]
    e = y[-_N_ENERGY:]
    first_c, _, _, first_y = pieces[0]
    last_c, _, _, last_y = pieces[-1]
    w_a, w_b = first_y[first_c.iw, 0], last_y[last_c.iw, -1]
    out["energy"] = dict(supply=e[0], field_supply=e[1], armature_copper=e[2], series_field_copper=e[3],
                         external_resistor=e[4], field_copper=e[5], brush=e[6], rotational=e[7], load_work=e[8],
                         kinetic_change=0.5 * c0.inertia * (w_b * w_b - w_a * w_a),
                         magnetic_change=_mag_at(last_c, last_y[:, -1], out, -1) - _mag_at(first_c, first_y[:, 0],
                                                                                            out, 0))
    out.update(switch_times=switch_times, stage_peaks=stage_peaks, notes=notes, t95=t95, stopped_time=stopped,
               completed=completed, reason=reason)
    return out


def _mag_at(c, yy, out, idx):
    ia = float(out["armature_current"][idx])
    If = float(out["field_current"][idx])
    return c.magnetic_energy(ia, If)


def _settle_modes(c, t, y, mode, load, brake, last):
    """Decide at a (re)start whether the rotor sticks at standstill and the current at zero.

    Just after a release (``last``) the mode the event chose is kept: at the event the torque (or
    voltage) equals its threshold to rounding, and a second test could undo the release."""
    w = y[c.iw]
    y_if = y[c.iff] if c.field_state else 0.0
    ia = y[0] if c.current_state else c.algebraic_current(t, w, y_if, mode[3])
    If = c.field_current(t, ia, y_if)
    if last.startswith("release"):
        pass
    elif w == 0.0:
        T, up, down = c.static_band(t, ia, If, load, brake)
        if down < T < up or (brake and T <= up):
            mode[0] = True
        else:
            mode[0], mode[1] = False, (1.0 if T >= up else -1.0)
    else:
        mode[0], mode[1] = False, (1.0 if w > 0 else -1.0)
    if last.startswith("unblock"):
        pass
    elif c.current_state and c.Vb > 0 and ia == 0.0:
        v, _ = c.drive(t, 0.0, w, If)
        if abs(v) <= c.Vb:
            mode[2] = True
        else:
            mode[2], mode[3] = False, (1.0 if v > 0 else -1.0)
    elif ia != 0.0:
        mode[2], mode[3] = False, (1.0 if ia > 0 else -1.0)


def _event(fun, terminal, direction):
    fun.terminal, fun.direction = terminal, direction
    return fun


def _events(c, mode, load, brake, steady, i_scale, safe, t95_ref, w_ss, stop_speed):
    stuck, dir_w, blocked, dir_i = mode
    iw, iff = c.iw, c.iff
    ev, kinds = [], []

    def parts(t, y):
        y_if = y[iff] if c.field_state else 0.0
        ia = y[0] if c.current_state else c.algebraic_current(t, y[iw], y_if, dir_i)
        return ia, y[iw], c.field_current(t, ia, y_if)

    if stuck:
        def up(t, y):
            ia, w, If = parts(t, y)
            T, u, _ = c.static_band(t, ia, If, load, brake)
            return T - u

        ev.append(_event(up, True, 1.0))
        kinds.append("release+")
        if not brake:
            def down(t, y):
                ia, w, If = parts(t, y)
                T, _, d = c.static_band(t, ia, If, load, brake)
                return T - d

            ev.append(_event(down, True, -1.0))
            kinds.append("release-")
    else:
        ev.append(_event(lambda t, y: y[iw], True, -dir_w))
        kinds.append("w0")
    if c.current_state and c.Vb > 0:
        if blocked:
            def unb_p(t, y):
                ia, w, If = parts(t, y)
                return c.drive(t, 0.0, w, If)[0] - c.Vb

            def unb_m(t, y):
                ia, w, If = parts(t, y)
                return c.drive(t, 0.0, w, If)[0] + c.Vb

            ev += [_event(unb_p, True, 1.0), _event(unb_m, True, -1.0)]
            kinds += ["unblock+", "unblock-"]
        else:
            ev.append(_event(lambda t, y: y[0], True, -dir_i))
            kinds.append("i0")
    if c.switch_current is not None:
        i2 = c.switch_current
        if c.current_state:
            tau = (c.La + c.Lse) / c.R

            def switch(t, y):  # the current falls to I2, or peaks below it (then it is already there)
                rise = tau * c.derivatives(t, y, mode, load)[0][0]
                return max(y[0] - i2, rise)
        else:
            def switch(t, y):
                return parts(t, y)[0] - i2
        ev.append(_event(switch, True, -1.0))
        kinds.append("switch")
    if steady is not None and math.isfinite(steady) and steady != 0:
        tol = 1e-4

        i_ss = c.steady_current

        def settle(t, y):  # speed and (where it is a state) current both near the steady point
            ia, w, If = parts(t, y)
            off = abs(ia - i_ss) / i_scale if (c.current_state and i_ss is not None) else 0.0
            return abs(w - steady) / abs(steady) + off - tol

        ev.append(_event(settle, True, -1.0))
        kinds.append("settle")
    if stop_speed is not None and stop_speed > 0 and not stuck:
        ev.append(_event(lambda t, y: abs(y[iw]) - stop_speed, True, -1.0))
        kinds.append("stop")
    if math.isfinite(safe):
        ev.append(_event(lambda t, y: abs(y[iw]) - safe, True, 1.0))
        kinds.append("safe")
    if t95_ref is not None and w_ss is not None and math.isfinite(w_ss) and w_ss != 0:
        target = 0.95 * w_ss
        ev.append(_event(lambda t, y: (y[iw] - target), False, math.copysign(1.0, w_ss)))
        kinds.append("t95")
    return ev, kinds


def _outputs(pieces, load):
    """Arrays at every output point, evaluated with the stage's own equations (load torque vectorized)."""
    names = ("time", "armature_current", "speed", "torque", "shaft_torque", "load_torque", "field_current",
             "series_field_current", "supply_current", "emf", "external_resistance", "supply_power")
    cols = {k: [] for k in names}
    for c, md, tt, yy in pieces:
        rows = [c.derivatives(tt[j], yy[:, j], md, None) for j in range(tt.size)]
        q = np.array([r[1] for r in rows]).reshape(-1, 9)
        p_sup = np.array([r[0][c.n] for r in rows])
        ia, w, If, k, T, t_loss = q[:, 0], q[:, 1], q[:, 2], q[:, 3], q[:, 4], q[:, 5]
        if md[0]:  # at rest: static friction and the load hold the developed torque
            tl, t_loss = T, np.zeros_like(T)
        elif load is None:
            tl = np.zeros_like(T)
        else:
            tl = np.asarray(load.torque(np.where(w * md[1] > 0, w, md[1] * _TINY_SPEED)), dtype=float)
        i_ser = (ia + If) if c.short else ia
        share = c.Ns / c.machine.series_turns if c.Ns else 0.0
        i_sup = q[:, 7] + (If if c.has_field and not c.short and not c.separate else 0.0)
        for key, v in zip(names, (tt, ia, w, T, T - t_loss, tl, If, share * i_ser, i_sup, k * w,
                                  np.full(tt.size, c.Rx), p_sup)):
            cols[key].append(np.asarray(v, dtype=float))
    return {k: np.concatenate(v) for k, v in cols.items()}
