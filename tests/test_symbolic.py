"""The numeric kernels against the sympy closed forms and against sympy evaluated directly."""

import numpy as np
import pytest
import sympy as sp
from numpy.testing import assert_allclose

from dcchar.models import symbolic
from dcchar.models.connections import Series, Shunt
from dcchar.models.magnetics import Froehlich, LinearMagnetization
from dcchar.models.losses import RotationalLoss


def test_shunt_closed_form_matches_kernel():
    # closed form derived by sympy for linear magnetics: w = V/K - R*T/K^2
    expr, sy = symbolic.closed_form_speed("shunt")
    s = symbolic._all_symbols()
    K = 1.8
    m = Shunt(armature_resistance=0.4, external_resistance=0.3,
              magnetization=LinearMagnetization(slope=K * 100.0 / 2.0, reference_speed=100.0),
              field_resistance=110.0)
    c = m.characteristic(220.0, np.linspace(1.0, 300.0, 50))
    f = sp.lambdify(sy["T"], expr.subs({s["V"]: 220.0, s["R_a"]: 0.4, s["R_x"]: 0.3, sy["K"]: K}))
    assert_allclose(c.speed, f(c.developed_torque), rtol=1e-12)
    assert sp.simplify(expr - (s["V"] / sy["K"] - (s["R_a"] + s["R_x"]) * sy["T"] / sy["K"] ** 2)) == 0


def test_series_closed_form_matches_kernel():
    # closed form derived by sympy: w = V/sqrt(K*T) - R/K with kphi = K*Ia
    expr, sy = symbolic.closed_form_speed("series")
    s = symbolic._all_symbols()
    K = 0.02
    m = Series(armature_resistance=0.2, magnetization=LinearMagnetization(slope=K * 100.0, reference_speed=100.0),
               series_turns=1.0, series_resistance=0.1)
    c = m.characteristic(220.0, np.linspace(5.0, 500.0, 50))
    f = sp.lambdify(sy["T"], expr.subs({s["V"]: 220.0, s["R_a"]: 0.2, s["R_x"]: 0.0, s["R_s"]: 0.1, sy["K"]: K}))
    assert_allclose(c.speed, f(c.developed_torque), rtol=1e-10)
    T, Kk, R = sy["T"], sy["K"], s["R_a"] + s["R_x"] + s["R_s"]
    assert sp.simplify(expr - (s["V"] / sp.sqrt(Kk * T) - R / Kk)) == 0


@pytest.mark.parametrize("connection", symbolic.CONNECTIONS)
def test_kernels_equal_sympy_subs(connection):
    """The lambdified kernel equals the same sympy expressions evaluated by subs at sample points."""
    rng = np.random.default_rng(7)
    out = symbolic.output_expressions(connection)
    ex = symbolic.excitation_expressions(connection)
    args_o = symbolic._args(connection, "output")
    args_e = symbolic._args(connection, "excitation")
    for _ in range(3):
        vals = {a: float(rng.uniform(0.5, 2.0)) for a in set(args_o) | set(args_e)}
        s = symbolic._all_symbols()
        vals[s["V"]] = 220.0
        vals[s["I_a"]] = 30.0
        if "d" in symbolic.CIRCUIT_PARAMETERS[connection]:
            vals[s["d"]] = 0.8
        if "sigma" in symbolic.CIRCUIT_PARAMETERS[connection]:
            vals[s["sigma"]] = -1.0
        ke = symbolic.excitation_kernel(connection)(*[vals[a] for a in args_e])
        for name, got in zip(symbolic.EXCITATION_OUTPUTS, ke):
            assert_allclose(got, float(ex[name].subs(vals)), rtol=1e-12)
        ko = symbolic.output_kernel(connection)(*[vals[a] for a in args_o])
        ks = symbolic.output_kernel(connection, True)(*[vals[a] for a in args_o])
        for name, got, got_s in zip(symbolic.OUTPUTS, ko, ks):
            want = float(out[name].subs(vals))
            assert_allclose(got, want, rtol=1e-12, atol=1e-12)
            assert_allclose(got_s, want, rtol=1e-12, atol=1e-12)


def test_scalar_state_equals_array_state():
    m = Series(armature_resistance=0.2, magnetization=Froehlich(300.0, 40.0, 150.0, residual_emf=3.0),
               series_turns=1.0, series_resistance=0.1, brush_drop=2.0,
               rotational_loss=RotationalLoss(friction_torque=1.0, windage=1e-4, core_eddy=1e-3))
    for i in (3.0, 50.0, 400.0):
        w, t = m.scalar_state(220.0, i)
        st = m.state_arrays(220.0, np.array([i]))
        assert_allclose([w, t], [st["speed"][0], st["shaft_torque"][0]], rtol=1e-13)


@pytest.mark.parametrize("connection", symbolic.CONNECTIONS)
def test_equations_render_as_latex(connection):
    lines = symbolic.equations_latex(connection)
    assert any("omega" in line for line in lines)
    assert all(isinstance(line, str) and line for line in lines)
