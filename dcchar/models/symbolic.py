"""The steady-state machine equations, written once in sympy.

Every numeric kernel of dcchar is generated from the expressions here by ``sympy.lambdify``, built
on first use and cached, so the numbers a user sees and the equations a notebook shows are the same
object. sympy is imported only when a kernel is first built or an equation is shown.

With the armature current ``I_a`` as the sweep variable every connection is explicit:

1. the *excitation stage* gives the field currents and the net excitation F from I_a, the supply
   voltage and the circuit (armature reaction F_ar enters as a number computed beforehand);
2. the magnetization curve (passed in as a function, not a symbol) turns F into kphi;
3. the *output stage* gives the EMF, speed, torques, powers and every loss from I_a and kphi.

Circuit symbols: V supply, R_a armature (with interpoles), R_x external armature resistance, V_b
total brush drop (acting with the sign of I_a), R_s series field, d = R_d/(R_s + R_d) the share of
the series-branch current that flows in the series turns (diverter R_d; d = 1 without), N_s series
turns, R_f shunt field circuit (winding plus rheostat), N_f shunt turns, V_f separate field
voltage, sigma = +1 cumulative / -1 differential. Loss symbols: T_f Coulomb friction, B viscous,
K_w windage (torque ~ w|w|), k_h and k_e core loss (P = kphi^2 (k_h|w| + k_e w^2)), P_0 a fixed
rotational loss faded in above speed w_s (P = P_0 w^2/(w^2 + w_s^2)), c_s stray load
(T = c_s I_a^2 sign w).
"""

from __future__ import annotations

import functools

__all__ = [
    "CONNECTIONS", "CIRCUIT_PARAMETERS", "LOSS_PARAMETERS", "OUTPUTS", "excitation_expressions",
    "output_expressions", "excitation_kernel", "output_kernel", "equations_latex", "closed_form_speed",
]

CONNECTIONS = ("separately_excited", "shunt", "series", "long_shunt_compound", "short_shunt_compound",
               "permanent_magnet")

#: Circuit parameters of each connection, in kernel argument order (after I_a and V).
CIRCUIT_PARAMETERS = {
    "separately_excited": ("R_a", "R_x", "V_b", "N_f", "R_f", "V_f", "c_f"),
    "shunt": ("R_a", "R_x", "V_b", "N_f", "R_f"),
    "series": ("R_a", "R_x", "V_b", "N_s", "R_s", "d"),
    "long_shunt_compound": ("R_a", "R_x", "V_b", "N_f", "R_f", "N_s", "R_s", "d", "sigma"),
    "short_shunt_compound": ("R_a", "R_x", "V_b", "N_f", "R_f", "N_s", "R_s", "d", "sigma"),
    "permanent_magnet": ("R_a", "R_x", "V_b"),
}
LOSS_PARAMETERS = ("T_f", "B", "K_w", "k_h", "k_e", "P_0", "w_s", "c_s")

#: Names of the excitation-stage outputs and of the output-stage outputs, in kernel return order.
EXCITATION_OUTPUTS = ("excitation", "field_current", "series_field_current", "supply_current")
OUTPUTS = ("emf", "speed", "developed_torque", "shaft_torque", "input_power", "output_power",
           "armature_copper", "external_resistor", "series_field_copper", "shunt_field_copper", "brush",
           "friction_windage", "core", "stray")


def _symbols(names):
    import sympy as sp

    return {n: sp.Symbol(n, real=True) for n in names}


@functools.lru_cache(maxsize=None)
def _all_symbols():
    import sympy as sp

    names = set(LOSS_PARAMETERS) | {"I_a", "V", "F_ar", "k_phi"}
    for p in CIRCUIT_PARAMETERS.values():
        names |= set(p)
    s = _symbols(sorted(names))
    s["I_a"] = sp.Symbol("I_a", real=True)
    return s


@functools.lru_cache(maxsize=None)
def excitation_expressions(connection: str) -> dict:
    """Field currents, net excitation and supply current of ``connection`` as sympy expressions.

    Returns a dict with the keys of ``EXCITATION_OUTPUTS`` plus ``"armature_voltage"``: the EMF
    expression E(I_a) = V - (loop drops), which does not depend on kphi.
    """
    import sympy as sp

    s = _all_symbols()
    Ia, V, Ra, Rx, Vb, Far = s["I_a"], s["V"], s["R_a"], s["R_x"], s["V_b"], s["F_ar"]
    drop_a = Ia * (Ra + Rx) + Vb * sp.sign(Ia)
    zero = sp.Integer(0)
    if connection == "separately_excited":
        If = s["V_f"] / s["R_f"]
        return {"excitation": s["N_f"] * If - Far, "field_current": If, "series_field_current": zero,
                "supply_current": Ia, "armature_voltage": V - drop_a}
    if connection == "shunt":
        If = V / s["R_f"]
        return {"excitation": s["N_f"] * If - Far, "field_current": If, "series_field_current": zero,
                "supply_current": Ia + If, "armature_voltage": V - drop_a}
    if connection == "series":
        Is = s["d"] * Ia
        return {"excitation": s["N_s"] * Is - Far, "field_current": zero, "series_field_current": Is,
                "supply_current": Ia, "armature_voltage": V - drop_a - Ia * s["R_s"] * s["d"]}
    if connection == "long_shunt_compound":
        If = V / s["R_f"]
        Is = s["d"] * Ia
        return {"excitation": s["N_f"] * If + s["sigma"] * s["N_s"] * Is - Far, "field_current": If,
                "series_field_current": Is, "supply_current": Ia + If,
                "armature_voltage": V - drop_a - Ia * s["R_s"] * s["d"]}
    if connection == "short_shunt_compound":
        Rse = s["R_s"] * s["d"]
        If = (V - Ia * Rse) / (s["R_f"] + Rse)
        IL = Ia + If
        Is = s["d"] * IL
        return {"excitation": s["N_f"] * If + s["sigma"] * s["N_s"] * Is - Far, "field_current": If,
                "series_field_current": Is, "supply_current": IL,
                "armature_voltage": V - IL * Rse - drop_a}
    if connection == "permanent_magnet":
        return {"excitation": zero, "field_current": zero, "series_field_current": zero,
                "supply_current": Ia, "armature_voltage": V - drop_a}
    raise KeyError(connection)


@functools.lru_cache(maxsize=None)
def output_expressions(connection: str) -> dict:
    """EMF, speed, torques, powers and losses of ``connection`` as sympy expressions of I_a and kphi."""
    import sympy as sp

    s = _all_symbols()
    ex = excitation_expressions(connection)
    Ia, V, kphi = s["I_a"], s["V"], s["k_phi"]
    E = ex["armature_voltage"]
    w = E / kphi
    sg = sp.sign(w)
    Tdev = kphi * Ia
    T_fw = s["T_f"] * sg + s["B"] * w + s["K_w"] * w * sp.Abs(w) + s["P_0"] * w / (w**2 + s["w_s"] ** 2)
    T_core = kphi**2 * (s["k_h"] * sg + s["k_e"] * w)
    T_stray = s["c_s"] * Ia**2 * sg
    Tsh = Tdev - T_fw - T_core - T_stray
    If = ex["field_current"]
    zero = sp.Integer(0)
    if connection in ("series", "long_shunt_compound", "short_shunt_compound"):
        # whole series branch (turns plus diverter): I^2 * R_s * d, see module notes
        branch = ex["supply_current"] if connection == "short_shunt_compound" else Ia
        p_series = branch**2 * s["R_s"] * s["d"]
    else:
        p_series = zero
    if connection == "separately_excited":
        # the separate field's loss is counted only when its input is (c_f = 1)
        p_shunt = s["c_f"] * s["V_f"] * If
        p_in = V * Ia + p_shunt
    elif connection == "short_shunt_compound":
        p_shunt = If**2 * s["R_f"]
        p_in = V * ex["supply_current"]
    elif connection in ("shunt", "long_shunt_compound"):
        p_shunt = V * If
        p_in = V * ex["supply_current"]
    else:
        p_shunt = zero
        p_in = V * Ia
    return {
        "emf": E, "speed": w, "developed_torque": Tdev, "shaft_torque": Tsh,
        "input_power": p_in, "output_power": Tsh * w,
        "armature_copper": Ia**2 * s["R_a"], "external_resistor": Ia**2 * s["R_x"],
        "series_field_copper": p_series, "shunt_field_copper": p_shunt,
        "brush": s["V_b"] * sp.Abs(Ia), "friction_windage": T_fw * w, "core": T_core * w,
        "stray": T_stray * w,
    }


def _sign(x):
    return (x > 0) - (x < 0)


def _args(connection, stage):
    s = _all_symbols()
    head = ["I_a", "V"] if stage == "excitation" else ["I_a", "k_phi", "V"]
    names = head + list(CIRCUIT_PARAMETERS[connection])
    if stage == "excitation":
        names.append("F_ar")
    else:
        names += list(LOSS_PARAMETERS)
    return [s[n] for n in names]


@functools.lru_cache(maxsize=None)
def excitation_kernel(connection: str, scalar: bool = False):
    """Numeric kernel ``f(I_a, V, *circuit, F_ar) -> (F, I_f, I_s, I_L)``, numpy (or math if scalar)."""
    import sympy as sp

    ex = excitation_expressions(connection)
    exprs = [ex[k] for k in EXCITATION_OUTPUTS]
    modules = [{"sign": _sign, "Abs": abs}, "math"] if scalar else "numpy"
    return sp.lambdify(_args(connection, "excitation"), exprs, modules=modules, cse=True)


@functools.lru_cache(maxsize=None)
def output_kernel(connection: str, scalar: bool = False):
    """Numeric kernel ``f(I_a, kphi, V, *circuit, *losses) -> OUTPUTS``, numpy (or math if scalar)."""
    import sympy as sp

    out = output_expressions(connection)
    exprs = [out[k] for k in OUTPUTS]
    modules = [{"sign": _sign, "Abs": abs}, "math"] if scalar else "numpy"
    return sp.lambdify(_args(connection, "output"), exprs, modules=modules, cse=True)


@functools.lru_cache(maxsize=None)
def speed_torque_kernel(connection: str):
    """numpy kernel ``f(I_a, kphi, V, *circuit, *losses) -> (speed, shaft torque)``: the part of
    :func:`output_kernel` that searches along a characteristic need."""
    import sympy as sp

    out = output_expressions(connection)
    return sp.lambdify(_args(connection, "output"), [out["speed"], out["shaft_torque"]], modules="numpy", cse=True)


def equations_latex(connection: str) -> list[str]:
    """The equations of ``connection`` as LaTeX lines, with the magnetization as a function."""
    import sympy as sp

    s = _all_symbols()
    ex = excitation_expressions(connection)
    out = output_expressions(connection)
    F, w, T, E = sp.symbols("F omega T E")
    lines = []
    if connection != "permanent_magnet":
        lines.append(sp.latex(sp.Eq(F, ex["excitation"])))
        lines.append(r"k\phi = \frac{E_0(F)}{\omega_0}")
        if connection in ("separately_excited", "shunt", "long_shunt_compound", "short_shunt_compound"):
            lines.append(sp.latex(sp.Eq(sp.Symbol("I_f"), ex["field_current"])))
    else:
        lines.append(r"k\phi = k\phi_{20}\,[1 + \alpha (T_m - 20)]\,(1 - \delta |I_a|)")
    lines.append(sp.latex(sp.Eq(E, ex["armature_voltage"])))
    lines.append(sp.latex(sp.Eq(w, E / s["k_phi"])))
    lines.append(sp.latex(sp.Eq(T, out["developed_torque"])))
    lines.append(sp.latex(sp.Eq(sp.Symbol("I_L"), ex["supply_current"])))
    return lines


@functools.lru_cache(maxsize=None)
def closed_form_speed(connection: str):
    """Speed as a function of developed torque for linear magnetics, derived by sympy.

    Returns ``(expr, symbols)``: ``expr`` is the speed [rad/s] in terms of the developed torque
    ``T`` and the circuit symbols, for I_a > 0, no armature reaction, no brush drop.

    - shunt / separately excited: kphi = K (constant), so w = V/K - R T/K^2;
    - series: kphi = K_s I_a (K_s = slope*N_s*d/w0), so w = V/sqrt(K_s T) - R/K_s.
    """
    import sympy as sp

    s = _all_symbols()
    T = sp.Symbol("T", positive=True)
    Ia = sp.Symbol("I_a", positive=True)
    K = sp.Symbol("K", positive=True)
    if connection in ("shunt", "separately_excited", "permanent_magnet"):
        R = s["R_a"] + s["R_x"]
        ia = sp.solve(sp.Eq(T, K * Ia), Ia)[0]
        w = (s["V"] - ia * R) / K
        return sp.simplify(w), {"T": T, "K": K}
    if connection == "series":
        R = s["R_a"] + s["R_x"] + s["R_s"]
        sols = [r for r in sp.solve(sp.Eq(T, K * Ia**2), Ia) if r.is_positive is not False]
        ia = sols[0]
        w = (s["V"] - ia * R) / (K * ia)
        return sp.simplify(sp.expand(w)), {"T": T, "K": K}
    raise KeyError(connection)

