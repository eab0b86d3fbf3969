"""Speed-control sweeps (dcchar.studies.control)."""

from __future__ import annotations

import numpy as np
import pytest
import sympy as sp
from numpy.testing import assert_allclose

from dcchar.errors import ParameterError
from dcchar.models import symbolic
from dcchar.models.connections import SeparatelyExcited, Series, Shunt
from dcchar.models.loads import ConstantTorque, Fan
from dcchar.models.magnetics import LinearMagnetization
from dcchar.models.units import RPM
from dcchar.studies.control import control_sweep
from dcchar.studies.demo import DEMO_RATING, demo_family

S = symbolic._all_symbols()


def closed_form(connection, **values):
    expr, syms = symbolic.closed_form_speed(connection)
    subs = {syms[k] if k in syms else S[k]: v for k, v in values.items()}
    return float(expr.subs(subs))


def se_linear(R=0.4, K=2.0, w0=100.0):
    return SeparatelyExcited(armature_resistance=R, magnetization=LinearMagnetization(K * w0, w0),
                             field_resistance=1.0, field_voltage=1.0)


@pytest.mark.parametrize("method", ["anderson-bjorck", "chandrupatla"])
def test_voltage_control_constant_torque_matches_sympy(method):
    # unsaturated separately excited motor: w = V/K - R*T/K^2 (closed form derived by sympy)
    volts = np.linspace(40.0, 240.0, 41)
    s = control_sweep(se_linear(), ConstantTorque(90.0), "voltage", volts, method=method)
    exact = [closed_form("separately_excited", T=90.0, K=2.0, V=v, R_a=0.4, R_x=0.0) for v in volts]
    assert_allclose(s.speed, exact, rtol=1e-10)
    assert s.stable.all() and (s.reason == "").all()


def test_fan_under_armature_voltage_matches_sympy():
    # K*(V - K*w)/R = k*w^2 (fan, no losses), the positive root
    R, K, wr, Tr = 0.4, 2.0, 100.0, 150.0
    volts = np.linspace(30.0, 230.0, 9)
    s = control_sweep(se_linear(R, K), Fan(rated_speed=wr, rated_torque=Tr), "voltage", volts)
    w = sp.Symbol("w", positive=True)
    for v, got in zip(volts, s.speed):
        root = [r for r in sp.solve(sp.Eq(K * (v - K * w) / R, Tr * (w / wr) ** 2), w) if r.is_positive][0]
        assert_allclose(got, float(root), rtol=1e-10)


def test_external_resistance_matches_sympy():
    rx = np.linspace(0.0, 1.5, 16)
    s = control_sweep(se_linear(), ConstantTorque(60.0), "external_resistance", rx, voltage=200.0)
    exact = [closed_form("separately_excited", T=60.0, K=2.0, V=200.0, R_a=0.4, R_x=r) for r in rx]
    assert_allclose(s.speed, exact, rtol=1e-10)
    assert_allclose(s.armature_current, 30.0, rtol=1e-10)  # T/K, whatever the resistance


def test_field_weakening_shunt_matches_sympy():
    # linear magnetization, K = slope*N_f*V/(R_f + R_rheo)/w0; shunt speed w = V/K - R*T/K^2
    slope, w0, Rf, V, T = 100.0, 100.0, 200.0, 200.0, 50.0
    m = Shunt(armature_resistance=0.5, magnetization=LinearMagnetization(slope, w0), field_resistance=Rf)
    rheo = np.linspace(0.0, 150.0, 31)
    s = control_sweep(m, ConstantTorque(T), "field_rheostat", rheo, voltage=V)
    exact = [closed_form("shunt", T=T, K=slope * V / (Rf + r) / w0, V=V, R_a=0.5, R_x=0.0) for r in rheo]
    assert_allclose(s.speed, exact, rtol=1e-10)
    assert np.all(np.diff(s.speed) > 0)  # weaker field, higher speed
    assert_allclose(s.field_current, V / (Rf + rheo), rtol=1e-12)


def test_series_diverter_matches_sympy():
    # linear series motor: w = V/sqrt(K_s*T) - R/K_s with K_s = slope*N_s*d/w0 and R_s -> R_s*d
    slope, w0, Ns, Rs, V, T = 2.0, 100.0, 10.0, 0.2, 220.0, 80.0
    m = Series(armature_resistance=0.3, magnetization=LinearMagnetization(slope, w0), series_turns=Ns,
               series_resistance=Rs)
    rd = np.array([np.inf, 2.0, 1.0, 0.5, 0.2])
    s = control_sweep(m, ConstantTorque(T), "diverter_resistance", rd, voltage=V)
    d = np.array([1.0 if np.isinf(r) else r / (Rs + r) for r in rd])
    exact = [closed_form("series", T=T, K=slope * Ns * di / w0, V=V, R_a=0.3, R_x=0.0, R_s=Rs * di) for di in d]
    assert_allclose(s.speed, exact, rtol=1e-10)


def test_each_setting_equals_the_scalar_solver():
    fan = Fan(rated_speed=DEMO_RATING.speed, rated_torque=DEMO_RATING.torque, static_torque=5.0)
    for key, m in demo_family().items():
        s = control_sweep(m, fan, "voltage", np.linspace(40.0, 240.0, 11))
        for i in (0, 5, 10):
            r = s.point(i)
            assert (r.reason or "") == s.reason[i]
            if r.point is None:
                assert np.isnan(s.speed[i])
            else:
                assert_allclose(s.speed[i], r.point.speed, rtol=1e-9, err_msg=key)
                assert_allclose(s.efficiency[i], r.point.efficiency, rtol=1e-9)
                assert s.stable[i] == r.point.stable
        assert np.nanmax(np.abs(s.residual)) <= 1e-9 * DEMO_RATING.torque * 20


def test_views_and_characteristic():
    m = demo_family()["shunt"]
    s = control_sweep(m, ConstantTorque(50.0), "field_rheostat", [0.0, 20.0, 40.0])
    rows = s.to_rows()
    assert rows[1]["field_rheostat [ohm]"] == 20.0 and rows[1]["speed [r/min]"] == pytest.approx(s.speed[1] / RPM)
    c = s.characteristic(2, points=50)
    assert c.machine.field_rheostat == 40.0 and c.armature_current.size == 50
    assert "settings" in s._repr_html_()


def test_bad_input():
    m = se_linear()
    with pytest.raises(ParameterError):
        control_sweep(m, ConstantTorque(1.0), "diverter_resistance", [1.0], voltage=100.0)
    with pytest.raises(ParameterError):
        control_sweep(m, ConstantTorque(1.0), "frequency", [1.0], voltage=100.0)
    with pytest.raises(ParameterError):
        control_sweep(m, ConstantTorque(1.0), "voltage", [100.0, -5.0])
    with pytest.raises(ParameterError):
        control_sweep(m, ConstantTorque(1.0), "external_resistance", [], voltage=100.0)
    with pytest.raises(ParameterError):
        control_sweep(m, ConstantTorque(1.0), "voltage", [100.0], method="newton")
