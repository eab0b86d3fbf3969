"""The figures of the requirements for many sampled machines at once (vectorized twin of :class:`Case`).

A :class:`SampleCase` holds, for one candidate, arrays (n, 1) of the sampled circuit values (hot
armature, series and shunt winding resistances, supply voltage factor, factor on kphi) and
answers the same questions as :class:`dcchar.studies.selection.case.Case` for every sample in one
numpy pass. With every factor equal to one it reproduces the nominal figures (the tests hold them
equal). Fixed resistors (starter, field rheostat, diverter) are not sampled: they are the ones
chosen for the nominal machine.
"""

from __future__ import annotations

import math

import numpy as np

from .._bracketing import _Evaluator
from ._vector import increasing_prefix, interp_rows, run_up_time, settle
from .case import OPEN_FIELD_RESISTANCE

__all__ = ["SampleCase"]


class SampleCase:
    """Vectorized figures of one candidate for n samples.

    Parameters
    ----------
    case : Case
        The nominal case (machine, load, settings, starter).
    armature_resistance, series_resistance, field_winding_resistance : ndarray (n, 1)
        Hot resistances of the windings per sample. [ohm] (the last two ignored where absent)
    voltage_factor : ndarray (n, 1)
        Supply voltage (and separate field supply) over nominal. [-]
    kphi_factor : ndarray (n, 1)
        Factor on kphi: magnetization band and magnet temperature. [-]
    """

    def __init__(self, case, armature_resistance, series_resistance, field_winding_resistance, voltage_factor,
                 kphi_factor):
        self.case = case
        self.machine = m = case.machine
        self.n = int(np.shape(voltage_factor)[0])
        self.Ra = armature_resistance
        self.Rs = series_resistance
        self.Rfw = field_winding_resistance
        self.vf = voltage_factor
        self.scale = kphi_factor
        self.voltage = case.voltage * voltage_factor
        self.safe_speed = case.safe_speed
        self._memo = {}
        conn = m.connection
        self.names = set(__import__("dcchar.models.symbolic", fromlist=["x"]).CIRCUIT_PARAMETERS[conn])

    def rows(self, index) -> "SampleCase":
        """Some of the samples (``index``: a slice or an array of row numbers) as a SampleCase of their own."""
        return SampleCase(self.case, *(np.asarray(v)[index] for v in (self.Ra, self.Rs, self.Rfw, self.vf,
                                                                       self.scale)))

    # ---- evaluators
    def evaluator(self, *, voltage_fraction=1.0, extra_rx=0.0, field_extra=0.0, field_open=False,
                  diverter=None):
        m = self.machine
        ov = {"R_a": self.Ra, "R_x": m.external_resistance + extra_rx}
        if "R_s" in self.names:
            ov["R_s"] = self.Rs
            rd = m.diverter_resistance if diverter is None else diverter
            ov["d"] = 1.0 if math.isinf(rd) else rd / (self.Rs + rd)
        if "R_f" in self.names:
            rf = self.Rfw + m.field_rheostat + field_extra
            ov["R_f"] = (self.Rfw + OPEN_FIELD_RESISTANCE) if (field_open and "V_f" not in self.names) else rf
        if "V_f" in self.names:
            ov["V_f"] = 0.0 * self.vf if field_open else m.field_voltage * self.vf
        return _Evaluator(m, self.voltage * voltage_fraction, ov, scale=self.scale)

    def _memo_get(self, key, compute):
        if key not in self._memo:
            self._memo[key] = compute()
        return self._memo[key]

    def _settle(self, key, load_torque, breakaway, ev=None, safe=None, tracked=False):
        ws = self.safe_speed if safe is None else safe
        return self._memo_get(key, lambda: settle(ev or self.evaluator(), load_torque, breakaway, ws,
                                                  tracked=tracked))

    # ---- shared results
    def operating(self):
        load = self.case.load
        return self._settle("op", load.torque, float(load.breakaway_torque))

    def no_load_speed(self, key="nl", ev=None):
        """No-load speed as :attr:`Characteristic.no_load` finds it: where no loss holds the speed
        (shaft torque > 0 at a vanishing current) the limit I_a -> 0+, else the first zero of
        the shaft torque met from standstill. [rad/s]"""
        def run():
            e = ev or self.evaluator()
            r = settle(e, _zero, 0.0, math.inf)
            w = np.where(r["reason"] == "runs away", np.inf, r["speed"])
            with np.errstate(all="ignore"):
                i = 1e-9 * self._locked(e)
                w0, t0 = e.speed_torque(i)
                k0 = e.kphi(np.zeros((self.n, 1)))
            w0, t0, k0 = (np.broadcast_to(a, (self.n, 1))[:, 0] for a in (w0, t0, k0))
            return np.where(t0 > 0, np.where(k0 > 0, w0, np.inf), w)
        return self._memo_get(key, run)

    def _weak_kwargs(self, share):
        m = self.machine
        if m.connection == "permanent_magnet":
            return None
        if m.connection == "series":
            rs = m._hot(m.series_resistance)
            return {"diverter": rs * share / (1.0 - share)}
        return {"field_extra": m.field_circuit_resistance * (1.0 / share - 1.0)}

    # ---- figures
    def regulation(self, torque=None):
        t = self.machine.rating.torque if torque is None else float(torque)
        fl = self._settle(("fl", t), lambda w: np.full(np.shape(w), t), max(t, 0.0))
        nl = self.no_load_speed()
        w = fl["speed"]
        with np.errstate(invalid="ignore", divide="ignore"):
            return np.where(np.isinf(nl), np.inf, (nl - w) / w * 100.0)

    def top_speed(self, share):
        kw = self._weak_kwargs(share)
        if kw is None:
            return np.minimum(self.operating()["speed"], self.safe_speed)
        load = self.case.load
        ev = self.evaluator(**kw)
        r = self._settle(("weak", share), load.torque, float(load.breakaway_torque), ev, tracked=True)
        return np.where(np.isfinite(r["speed"]), r["speed"], np.where(r["beyond"], self.safe_speed, np.nan))

    def low_speed(self, fraction):
        load = self.case.load
        how = self.case.low_speed_control(fraction)
        ev = self.evaluator(voltage_fraction=how.get("voltage_fraction", 1.0), extra_rx=how.get("extra_rx", 0.0))
        r = self._settle(("low", fraction), load.torque, float(load.breakaway_torque), ev)
        return np.where(r["stable"], r["speed"], np.nan)

    def _start_state(self):
        def run():
            ev = self.evaluator(extra_rx=self.case.starter_resistance)
            i = self._locked(ev)
            st = ev.full_state(i)
            return {"torque": np.asarray(st["shaft_torque"])[:, 0], "supply": np.asarray(st["supply_current"])[:, 0]}
        return self._memo_get("start", run)

    def _locked(self, ev):
        """Standstill current (E = 0), as :meth:`Machine.locked_rotor_current` gives it. [A]"""
        i0 = np.asarray(ev.standstill_current(), dtype=float).reshape(-1, 1)
        return np.broadcast_to(i0, (self.n, 1))

    def starting_torque(self):
        return self._start_state()["torque"]

    def starting_current(self):
        return self._start_state()["supply"]

    def run_up_time(self, fraction, current_nodes, speed_nodes):
        op = self.operating()
        w_t = fraction * op["speed"]
        grid = np.where(np.isfinite(w_t), w_t, 0.0)[:, None] * speed_nodes[None, :]
        direct = self.evaluator()
        with np.errstate(all="ignore"):
            i0 = self._locked(direct)
            w, t = direct.speed_torque(i0 * current_nodes[None, :])
        torque = _torque_rows(w, t, grid)
        rx = self.case.starter_resistance
        if rx > 0:
            ev = self.evaluator(extra_rx=rx)
            with np.errstate(all="ignore"):
                i_s = self._locked(ev)
                ws_, ts_ = ev.speed_torque(i_s * current_nodes[None, :])
                w_cut = direct.speed_torque(i_s)[0]
                rating = self.machine.rating
                if rating is not None:
                    w_sw = ev.speed_torque(np.full((self.n, 1), rating.current))[0]
                    w_cut = np.where(rating.current < i_s, np.minimum(w_cut, w_sw), w_cut)
            torque = np.where(grid < w_cut, _torque_rows(ws_, ts_, grid), torque)
        t_acc = torque - np.asarray(self.case.load.torque(grid), dtype=float)
        j = self.case.total_inertia
        if not j > 0:
            return np.where(np.isfinite(w_t), 0.0, np.inf)
        out = run_up_time(j, grid, t_acc)
        return np.where(np.isfinite(w_t) & (w_t > 0), out, np.inf)

    def speed_hold(self, step):
        load = self.case.load
        a = self.operating()["speed"]
        b = self._settle(("step", step), lambda w: load.torque(w) + np.where(np.asarray(w) < 0, -step, step),
                         float(load.breakaway_torque) + step)["speed"]
        with np.errstate(invalid="ignore", divide="ignore"):
            return (a - b) / a * 100.0

    def lowering(self, torque):
        r = self._settle(("lower", torque), lambda w: np.full(np.shape(w), -torque), -torque)
        gen = (r["input_power"] < 0) & (r["output_power"] < 0)
        if self.machine.connection == "series":
            gen = np.zeros(self.n, bool)
        return gen.astype(float)

    def efficiency(self, duty=None):
        if duty is None:
            return self.operating()["efficiency"]
        e_in = np.zeros(self.n)
        e_out = np.zeros(self.n)
        for i, (dt, load) in enumerate(duty):
            r = self._settle(("duty", i, id(load)), load.torque, float(load.breakaway_torque))
            e_in = e_in + r["input_power"] * dt
            e_out = e_out + r["output_power"] * dt
        with np.errstate(invalid="ignore", divide="ignore"):
            return np.where(e_in > 0, e_out / e_in, np.nan)

    def constant_power_range(self, share):
        m = self.machine
        if m.rating is None:
            return np.full(self.n, np.nan)
        i = np.full((self.n, 1), m.rating.current)
        with np.errstate(all="ignore"):
            base = self.evaluator().speed_torque(i)[0][:, 0]
            kw = self._weak_kwargs(share)
            if kw is None:
                return np.ones(self.n)
            top = self.evaluator(**kw).speed_torque(i)[0][:, 0]
            return np.minimum(top, self.safe_speed) / base

    def lost_field_speed(self):
        conn = self.machine.connection
        if conn == "series":
            return np.zeros(self.n)
        if conn == "permanent_magnet":
            return self.no_load_speed()
        return np.abs(self.no_load_speed("nl_lost", self.evaluator(field_open=True)))


def _zero(w):
    return np.zeros(np.shape(w))


def _torque_rows(speed, torque, grid):
    """Shaft torque at ``grid`` (n, k) on each row's rising-speed run from standstill."""
    w = np.array(speed, dtype=float)
    w[:, 0] = 0.0  # the first node is standstill (zero EMF)
    ok = increasing_prefix(w)
    return interp_rows(np.where(ok, w, np.nan), np.where(ok, torque, np.nan), grid)
