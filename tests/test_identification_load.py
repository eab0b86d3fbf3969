"""Load test: armature reaction and loss coefficients fitted to points on load."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from dcchar.errors import ParameterError, SolverError
from dcchar.models.connections import PermanentMagnet, Series, Shunt
from dcchar.models.losses import RotationalLoss
from dcchar.models.magnetics import Froehlich, QuadraticArmatureReaction
from dcchar.studies.identification import load_test


def _shunt(ar=0.0, tf=0.0, cs=0.0):
    return Shunt(armature_resistance=0.2, brush_drop=2.0,
                 magnetization=Froehlich(a=400.0, b=1.0, reference_speed=150.0),
                 field_resistance=125.0, armature_reaction=QuadraticArmatureReaction(ar),
                 rotational_loss=RotationalLoss(friction_torque=tf), stray_load=cs)


def test_exact_data_give_the_parameters_back():
    true = _shunt(ar=0.004, tf=3.0, cs=2e-4)
    Ia = np.linspace(10.0, 150.0, 12)
    s = true.state_arrays(250.0, Ia)
    r = load_test(_shunt(), 250.0, Ia, s["speed"], s["shaft_torque"], speed_uncertainty=0.01,
                  torque_uncertainty=0.01)
    assert r.fitted == ("armature_reaction_linear", "friction_torque", "stray_load")
    assert_allclose([r.parameters[k] for k in r.fitted], [0.004, 3.0, 2e-4], rtol=1e-6)
    assert_allclose(r.speed_residuals, 0.0, atol=1e-8)
    # the implied machine is the true one on these points
    st_fit = r.machine.state_arrays(250.0, Ia)
    assert_allclose(st_fit["speed"], s["speed"], rtol=1e-9)


def test_supply_current_readings_are_converted():
    true = _shunt(ar=0.004)
    Ia = np.linspace(10.0, 150.0, 8)
    s = true.state_arrays(250.0, Ia)
    r = load_test(_shunt(), 250.0, s["supply_current"], s["speed"], current_kind="supply", speed_uncertainty=0.01)
    assert_allclose(r.armature_current, Ia, rtol=1e-12)
    assert_allclose(r.parameters["armature_reaction_linear"], 0.004, rtol=1e-6)
    assert r.torque_residuals is None


def test_permanent_magnet_demagnetization():
    true = PermanentMagnet(armature_resistance=0.5, brush_drop=1.0, kphi=0.6, demagnetization=1e-3,
                           rotational_loss=RotationalLoss(friction_torque=0.2, viscous=1e-3))
    Ia = np.linspace(2.0, 40.0, 10)
    s = true.state_arrays(48.0, Ia)
    base = true.with_(demagnetization=0.0, rotational_loss=RotationalLoss())
    r = load_test(base, 48.0, Ia, s["speed"], s["shaft_torque"],
                  parameters=("demagnetization", "friction_torque", "viscous"))
    assert_allclose([r.parameters[k] for k in r.fitted], [1e-3, 0.2, 1e-3], rtol=1e-5)


def test_series_machine_quadratic_reaction():
    true = Series(armature_resistance=0.1, series_turns=1.0, series_resistance=0.05,
                  magnetization=Froehlich(a=600.0, b=80.0, reference_speed=100.0),
                  armature_reaction=QuadraticArmatureReaction(0.05, 2e-4))
    Ia = np.linspace(20.0, 200.0, 10)
    s = true.state_arrays(240.0, Ia)
    base = true.with_(armature_reaction=None)
    r = load_test(base, 240.0, Ia, s["speed"], parameters=("armature_reaction_linear", "armature_reaction_quadratic"))
    assert_allclose([r.parameters[k] for k in r.fitted], [0.05, 2e-4], rtol=1e-5)


def test_readings_at_one_speed_cannot_separate_friction_and_viscous_terms():
    # a shunt motor held at one speed: T_f + B*w is all the data can see
    m = _shunt(tf=2.0)
    Ia = np.full(6, 60.0)
    s = m.state_arrays(250.0, Ia)
    with pytest.raises(SolverError, match="apart"):
        load_test(_shunt(), 250.0, Ia, s["speed"], s["shaft_torque"] + np.linspace(-0.1, 0.1, 6),
                  parameters=("friction_torque", "viscous"), speed_uncertainty=0.1, torque_uncertainty=0.1)


@pytest.mark.parametrize("kwargs, match", [
    ({"parameters": ("magic",)}, "one of"),
    ({"parameters": ("friction_torque",), "torque": None}, "torque"),
    ({"parameters": ("demagnetization",)}, "permanent magnets"),
    ({"current": [10.0, np.nan, 30.0]}, "finite"),
    ({"speed": [100.0, 99.0]}, "one per reading"),
    ({"current": [10.0], "speed": [100.0], "torque": None}, "more readings"),
    ({"current": [-10.0, 20.0, 30.0]}, "motoring"),
    ({"current_kind": "line"}, "current_kind"),
])
def test_bad_input_is_typed(kwargs, match):
    args = dict(voltage=250.0, current=[10.0, 20.0, 30.0], speed=[100.0, 99.0, 98.0], torque=[5.0, 15.0, 25.0])
    args.update(kwargs)
    with pytest.raises(ParameterError, match=match):
        load_test(_shunt(), **args)


@settings(max_examples=15, deadline=None, derandomize=True)
@given(ar=st.floats(0.002, 0.01), tf=st.floats(1.0, 6.0), cs=st.floats(1e-4, 5e-4),
       sw=st.floats(0.02, 0.2), stq=st.floats(0.05, 0.5), seed=st.integers(0, 2**32 - 1))
def test_fit_recovers_known_parameters_within_4_sigma(ar, tf, cs, sw, stq, seed):
    # synthetic load test (generated here): 30 points, normal noise on speed and torque,
    # uncertainties estimated from the residuals
    true = _shunt(ar=ar, tf=tf, cs=cs)
    Ia = np.linspace(10.0, 150.0, 30)
    s = true.state_arrays(250.0, Ia)
    rng = np.random.default_rng(seed)
    w = s["speed"] + rng.normal(0.0, sw, Ia.size)
    T = s["shaft_torque"] + rng.normal(0.0, stq, Ia.size)
    r = load_test(_shunt(), 250.0, Ia, w, T)
    for k, v in (("armature_reaction_linear", ar), ("friction_torque", tf), ("stray_load", cs)):
        assert abs(r.parameters[k] - v) <= 4.0 * r.standard_errors[k], k
