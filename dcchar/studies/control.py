"""Speed control: the operating point against a control setting, for many settings at once.

Four families of control, each a circuit value swept over an array of settings:

- ``"voltage"``: the supply voltage (armature voltage control; on a shunt or compound machine
  the shunt field sees the same supply, so its field changes with it);
- ``"field_rheostat"``: resistance in the shunt (or separate) field circuit, field weakening;
- ``"external_resistance"``: resistance in series with the armature;
- ``"diverter_resistance"``: resistor in parallel with the series field (series, compound);
- ``"field_voltage"``: the separate field supply (separately excited).

The settings run down the rows and the armature currents across the columns of one array: the
lambdified kernels of :mod:`dcchar.models.symbolic` broadcast, so the whole family is evaluated in
one numpy call. The bracketing grid is that of :func:`dcchar.studies.operating.operating_points`
(the same settling rule from rest), and the brackets of all settings are refined together by a
vectorized bracketing root finder (Anderson-Bjorck regula falsi; or, with ``method="chandrupatla"``,
scipy's elementwise Chandrupatla solver).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ..errors import ParameterError, SolverError
from ..models.units import RPM
from ..models.validation import choice, positive, real
from ._bracketing import _Evaluator, settling_cells
from .operating import _check_load, operating_points

__all__ = ["CONTROL_PARAMETERS", "ControlSweep", "control_sweep"]

#: Control parameters: description and the connections that have them.
CONTROL_PARAMETERS = {
    "voltage": ("supply voltage [V]", None),
    "external_resistance": ("external armature resistance [ohm]", None),
    "field_rheostat": ("shunt or separate field rheostat [ohm]",
                       ("separately_excited", "shunt", "long_shunt_compound", "short_shunt_compound")),
    "diverter_resistance": ("series-field diverter [ohm]", ("series", "long_shunt_compound", "short_shunt_compound")),
    "field_voltage": ("separate field supply voltage [V]", ("separately_excited",)),
}


@dataclass(frozen=True, eq=False)
class ControlSweep:
    """The settled operating point of a machine on a load at each control setting.

    Every array has one value per setting, SI units; nan where there is no point.

    Attributes
    ----------
    machine, load : object
    parameter : str
        One of :data:`CONTROL_PARAMETERS`.
    setting : ndarray
        The settings, in the unit of the parameter ([V] or [ohm]).
    voltage : ndarray
        Supply voltage at each setting. [V]
    speed : ndarray
        [rad/s]
    torque : ndarray
        Shaft torque (= load torque). [N*m]
    armature_current, supply_current, field_current : ndarray
        [A]
    input_power, output_power : ndarray
        [W]
    efficiency : ndarray
        [-]
    stability_slope : ndarray
        d(T_motor - T_load)/dw. [N*m*s/rad]
    stable : ndarray of bool
    reason : ndarray of str
        "" for a motoring point, else "cannot start", "runs away" or "generating".
    residual : ndarray
        T_shaft - T_load at each point. [N*m]
    """

    machine: object
    load: object
    parameter: str
    setting: np.ndarray
    voltage: np.ndarray
    speed: np.ndarray
    torque: np.ndarray
    armature_current: np.ndarray
    supply_current: np.ndarray
    field_current: np.ndarray
    input_power: np.ndarray
    output_power: np.ndarray
    efficiency: np.ndarray
    stability_slope: np.ndarray
    stable: np.ndarray
    reason: np.ndarray
    residual: np.ndarray = field(repr=False)

    @property
    def speed_rpm(self) -> np.ndarray:
        """[r/min]"""
        return self.speed / RPM

    def machine_at(self, i: int):
        """The machine with setting ``i`` applied (the same machine for a voltage sweep)."""
        if self.parameter in ("voltage",):
            return self.machine
        return self.machine.with_(**{self.parameter: float(self.setting[i])})

    def characteristic(self, i: int, **kwargs):
        """The characteristic at setting ``i`` (keywords go to ``Machine.characteristic``)."""
        return self.machine_at(i).characteristic(float(self.voltage[i]), **kwargs)

    def point(self, i: int, **kwargs):
        """Full :class:`OperatingResult` at setting ``i``, by the scalar solver."""
        return operating_points(self.machine_at(i), self.load, float(self.voltage[i]), **kwargs)

    def to_rows(self) -> list:
        """One dict per setting (SI, units in the keys)."""
        unit = "V" if self.parameter in ("voltage", "field_voltage") else "ohm"
        cols = {f"{self.parameter} [{unit}]": self.setting, "voltage [V]": self.voltage,
                "speed [rad/s]": self.speed, "speed [r/min]": self.speed_rpm, "torque [N*m]": self.torque,
                "armature current [A]": self.armature_current, "supply current [A]": self.supply_current,
                "field current [A]": self.field_current, "input power [W]": self.input_power,
                "output power [W]": self.output_power, "efficiency [-]": self.efficiency,
                "stable": self.stable, "reason": self.reason}
        return [{k: (v[i].item() if hasattr(v[i], "item") else v[i]) for k, v in cols.items()}
                for i in range(self.setting.size)]

    def _repr_html_(self):
        n = self.setting.size
        ok = np.isfinite(self.speed)
        lo, hi = (np.nanmin(self.speed_rpm), np.nanmax(self.speed_rpm)) if ok.any() else (math.nan, math.nan)
        return (f"<p><b>{self.machine.label}</b>: {self.parameter} from {self.setting.min():.4g} to "
                f"{self.setting.max():.4g} ({n} settings); speed {lo:.0f} to {hi:.0f} r/min; "
                f"{int((~ok).sum())} without a point, {int((ok & ~self.stable).sum())} unstable</p>")

    def __repr__(self):
        return f"ControlSweep({self.machine.label}, {self.parameter}, {self.setting.size} settings)"


def _overrides(machine, parameter, values):
    conn = machine.connection
    desc, applies = CONTROL_PARAMETERS[choice("parameter", parameter, tuple(CONTROL_PARAMETERS))]
    if applies is not None and conn not in applies:
        raise ParameterError("parameter", parameter, f"a control the {machine.label} machine has "
                                                     f"(this one applies to {', '.join(applies)})")
    col = values[:, None]
    if parameter == "voltage":
        if not np.all(col > 0):
            raise ParameterError("values", values.tolist(), "supply voltages > 0 [V]")
        return col, {}
    V = None
    if parameter in ("external_resistance", "field_rheostat", "field_voltage") and not np.all(col >= 0):
        raise ParameterError("values", values.tolist(), f"values >= 0 ({desc})")
    if parameter == "external_resistance":
        return V, {"R_x": col}
    if parameter == "field_rheostat":
        return V, {"R_f": machine.field_circuit_resistance - machine.field_rheostat + col}
    if parameter == "field_voltage":
        return V, {"V_f": col}
    if not np.all(col > 0):
        raise ParameterError("values", values.tolist(), f"values > 0, inf for none ({desc})")
    rs = machine.circuit_parameters()[_index(conn, "R_s")]
    with np.errstate(invalid="ignore"):
        d = np.where(np.isinf(col), 1.0, col / (rs + col))
    return V, {"d": d}


def _index(conn, name):
    from ..models.symbolic import CIRCUIT_PARAMETERS

    return CIRCUIT_PARAMETERS[conn].index(name)


def _state_at_roots(sub, r, i0):
    """Full state at armature currents ``r`` of evaluator rows ``sub``, and the motor's slope
    dT/dw there (central difference in I_a, step 1e-6 of the standstill current ``i0``)."""
    h = 1e-6 * i0
    with np.errstate(all="ignore"):
        st = sub.full_state(r)
        wp, tp = sub.speed_torque(r + h)
        wm, tm = sub.speed_torque(r - h)
        return st, (tp - tm) / (wp - wm)


def _anderson_bjorck(fun, a, b, fa, fb, xtol, ftol, maxiter=100):
    """Vectorized Anderson-Bjorck regula falsi on brackets [a, b] with fa*fb < 0 (elementwise)."""
    for it in range(maxiter):
        with np.errstate(divide="ignore", invalid="ignore"):
            c = b - fb * (b - a) / (fb - fa)
        c = np.where(np.isfinite(c) & (c > np.minimum(a, b)) & (c < np.maximum(a, b)), c, 0.5 * (a + b))
        fc = fun(c)
        same = np.sign(fc) == np.sign(fb)
        with np.errstate(divide="ignore", invalid="ignore"):
            m = 1.0 - fc / fb
        m = np.where(m > 0, m, 0.5)
        fa = np.where(same, fa * m, fb)
        a = np.where(same, a, b)
        b, fb = c, fc
        if np.all((np.abs(b - a) <= xtol) | (np.abs(fb) <= ftol)):
            return b, fb, it + 1
    raise SolverError(f"vectorized regula falsi did not converge in {maxiter} iterations",
                      {"a": a, "b": b, "f": fb})


def control_sweep(machine, load, parameter: str, values, *, voltage=None, grid: int = 112, safe_speed=None,
                  method: str = "anderson-bjorck") -> ControlSweep:
    """Settled operating point of ``machine`` on ``load`` at each setting of a speed control.

    Parameters
    ----------
    machine : Machine
    load : load object
        See :func:`dcchar.studies.operating.operating_points`.
    parameter : str
        One of :data:`CONTROL_PARAMETERS`: "voltage" [V], "external_resistance" [ohm],
        "field_rheostat" [ohm], "diverter_resistance" [ohm] (inf: none), "field_voltage" [V].
    values : array_like
        The settings, 1-D. [V] or [ohm]
    voltage : float, optional
        Supply voltage for the resistance and field sweeps. [V] Default: the rated voltage.
    grid : int, default 112
        Bracketing grid nodes (as for ``operating_points``).
    safe_speed : float, optional
        [rad/s] Default: the machine's.
    method : {"anderson-bjorck", "chandrupatla"}
        Vectorized bracketing root finder (the second is scipy.optimize.elementwise.find_root).

    Returns
    -------
    ControlSweep
    """
    _check_load(load)
    choice("method", method, ("anderson-bjorck", "chandrupatla"))
    try:
        vals = np.asarray(values, dtype=float).reshape(-1)
    except (TypeError, ValueError):
        raise ParameterError("values", values, "a 1-D sequence of settings") from None
    if vals.size == 0 or np.any(np.isnan(vals)) or (parameter != "diverter_resistance" and not np.all(np.isfinite(vals))):
        raise ParameterError("values", values, "a non-empty 1-D sequence of finite settings")
    V, over = _overrides(machine, parameter, vals)
    if parameter != "voltage":
        V = machine.default_voltage() if voltage is None else real("voltage", voltage)
    ws = machine.safe_speed if safe_speed is None else positive("safe_speed", safe_speed, allow_inf=True)
    if isinstance(grid, bool) or not isinstance(grid, (int, np.integer)) or grid < 16:
        raise ParameterError("grid", grid, "an integer >= 16 (number of bracketing nodes)")
    n = vals.size
    ev = _Evaluator(machine, V, over)
    breakaway = float(load.breakaway_torque)
    g = settling_cells(ev, load.torque, n, grid, ws, breakaway)
    i0, Ia, f, t_start, starts, back, cell, found = (g[k] for k in ("i0", "Ia", "f", "t_start", "starts", "back",
                                                                  "cell", "found"))
    sel = np.flatnonzero(found)
    reason = np.full(n, "", dtype=object)
    reason[(starts | back) & ~found] = "runs away"
    reason[~starts & ~back] = "cannot start"
    reason[back & found] = "cannot start"  # driven backward; "generating" below where power flows in
    out = {k: np.full(n, np.nan) for k in ("speed", "torque", "armature_current", "supply_current", "field_current",
                                            "input_power", "output_power", "efficiency", "stability_slope",
                                            "residual")}
    if sel.size:
        c = cell[sel]
        a, b = Ia[sel, c], Ia[sel, c + 1]
        fa, fb = f[sel, c], f[sel, c + 1]
        sub = ev.take(sel)
        scale = np.maximum(np.abs(t_start[sel]), 1e-12)
        lt = load.torque

        def fun(i, *rows_):
            evr = sub.take(rows_[0]) if rows_ else sub
            with np.errstate(all="ignore"):
                ww, tt = evr.speed_torque(i)
                return tt - np.asarray(lt(ww), dtype=float)

        if method == "chandrupatla":
            from scipy.optimize import elementwise

            res = elementwise.find_root(lambda i, k: fun(i, k.astype(int)), (a, b), args=(np.arange(sel.size),),
                                        tolerances={"xatol": 1e-13 * float(i0.max()), "xrtol": 4e-16})
            if not np.all(res.success):
                raise SolverError("elementwise find_root did not converge on every setting", res)
            r = res.x
        else:
            r, _, _ = _anderson_bjorck(fun, a, b, fa, fb, 1e-13 * i0[sel, 0], 1e-13 * scale)
        st, motor_slope = _state_at_roots(sub, r, i0[sel, 0])
        ws_ = np.asarray(st["speed"], dtype=float)
        p_in, p_out = st["input_power"], st["output_power"]
        out["speed"][sel] = ws_
        out["torque"][sel] = st["shaft_torque"]
        out["armature_current"][sel] = r
        out["supply_current"][sel] = st["supply_current"]
        out["field_current"][sel] = st["field_current"]
        out["input_power"][sel] = p_in
        out["output_power"][sel] = p_out
        with np.errstate(all="ignore"):
            out["efficiency"][sel] = np.where((p_in > 0) & (p_out > 0), p_out / p_in,
                                              np.where((p_in < 0) & (p_out < 0), p_in / p_out, np.nan))
        out["stability_slope"][sel] = motor_slope - np.asarray(load.slope(ws_), dtype=float)
        out["residual"][sel] = st["shaft_torque"] - np.asarray(load.torque(ws_), dtype=float)
        gen = np.zeros(n, bool)
        gen[sel] = p_out < 0
        reason[gen] = "generating"
        far = np.zeros(n, bool)
        far[sel] = ~(np.abs(ws_) <= ws)  # the bracket straddled the safe speed, root beyond it
        for k in out:
            out[k][far] = np.nan
        reason[far] = "runs away"
    volts = np.broadcast_to(np.asarray(V, dtype=float).reshape(-1), (n,)).copy()
    stable = np.where(np.isnan(out["stability_slope"]), False, out["stability_slope"] < 0)
    return ControlSweep(machine=machine, load=load, parameter=parameter, setting=vals, voltage=volts,
                        stable=stable, reason=reason.astype(str), **out)
