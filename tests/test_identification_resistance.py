"""Armature resistance from a DC voltage-drop (locked-rotor) test, referred for temperature."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from dcchar.errors import ParameterError
from dcchar.models.connections import PermanentMagnet
from dcchar.studies.identification import armature_resistance_test


def test_line_fit_matches_scipy_linregress():
    # reference library: scipy.stats.linregress (slope, intercept and their standard errors)
    from scipy.stats import linregress

    I = np.array([20.0, 40.0, 60.0, 80.0, 100.0, 120.0])
    V = np.array([3.61, 5.22, 6.79, 8.43, 9.98, 11.62])  # regression, not published
    r = armature_resistance_test(V, I, test_temperature=20.0)
    ref = linregress(I, V)
    assert r.method == "slope and intercept"
    assert_allclose(r.resistance_at_test, ref.slope, rtol=1e-12)
    assert_allclose(r.brush_drop, ref.intercept, rtol=1e-12)
    assert_allclose(r.standard_errors["resistance_at_test"], ref.stderr, rtol=1e-9)
    assert_allclose(r.standard_errors["brush_drop"], ref.intercept_stderr, rtol=1e-9)
    assert_allclose(r.residuals, ref.slope * I + ref.intercept - V, atol=1e-12)


def test_reference_temperature_a15():
    # REFERENCE-VALUES A15: Cu 100 ohm at 30 degC referred to 20 degC = 96.22 ohm (Hioki RM3545
    # manual, App. 4); the source prints 4 significant figures: half a unit of the last is 0.005
    I = np.array([0.1, 0.2, 0.3])
    r = armature_resistance_test(100.0 * I, I, test_temperature=30.0, reference_temperature=20.0, brush_drop="none")
    assert r.method == "through the origin"
    assert_allclose(r.resistance, 96.22, atol=0.005)
    assert_allclose(r.resistance_at_test, 100.0, rtol=1e-12)


@pytest.mark.parametrize("t_ref, factor", [(75.0, 1.193), (100.0, 1.289)])
def test_reference_temperature_a16(t_ref, factor):
    # REFERENCE-VALUES A16: copper multiplying factor from 25 degC, 1.193 (75) and 1.289 (100),
    # printed to 4 figures (tolerance 0.0005); A12: the constant is 234.5 degC
    I = np.array([10.0, 20.0, 40.0])
    r = armature_resistance_test(0.05 * I + 2.0, I, test_temperature=25.0, reference_temperature=t_ref)
    assert_allclose(r.resistance / 0.05, factor, atol=0.0005)
    assert_allclose(r.resistance / r.resistance_at_test, (t_ref + 234.5) / (25.0 + 234.5), rtol=1e-12)
    assert_allclose(r.brush_drop, 2.0, rtol=1e-9)


def test_given_brush_drop_is_taken_off_first():
    I = np.array([10.0, 20.0])
    r = armature_resistance_test(0.1 * I + 1.5, I, test_temperature=25.0, brush_drop=1.5)
    assert r.method == "slope, brush drop given"
    assert_allclose(r.resistance, 0.1, rtol=1e-12)
    assert r.brush_drop == 1.5


def test_auto_does_not_separate_a_narrow_current_range():
    # brush drop and resistance cannot be told apart from currents within a factor of 2
    I = np.array([50.0, 60.0, 70.0])
    r = armature_resistance_test(0.1 * I + 2.0, I, test_temperature=25.0)
    assert r.method == "through the origin"
    assert r.brush_drop == 0.0
    assert r.resistance > 0.1  # the drop is inside R when not separated


def test_result_implies_a_machine():
    m = PermanentMagnet(armature_resistance=1.0, kphi=0.5)
    I = np.array([2.0, 4.0, 8.0])
    r = armature_resistance_test(0.3 * I + 1.8, I, test_temperature=22.0, reference_temperature=25.0, machine=m)
    assert r.machine.brush_drop == pytest.approx(1.8)
    assert r.machine.armature_resistance == pytest.approx(r.resistance)
    assert r.machine.reference_temperature == 25.0
    # the hot resistance of the machine at the test temperature is the measured one
    assert r.machine.with_(winding_temperature=22.0).hot_armature_resistance == pytest.approx(0.3)


@pytest.mark.parametrize("V, I, kwargs, match", [
    ([1.0, 2.0], [10.0, 20.0], {"brush_drop": "fit"}, "at least 3"),
    ([1.0, 2.0, np.nan], [10.0, 20.0, 30.0], {}, "finite"),
    ([1.0, 2.0, 3.0], [10.0, 0.0, 30.0], {}, "> 0"),
    ([1.0, 2.0], [10.0, 20.0, 30.0], {}, "one reading"),
    ([3.0, 2.0, 1.0], [10.0, 20.0, 30.0], {}, "resistance > 0"),
    ([1.0, 2.0, 3.0], [10.0, 20.0, 30.0], {"brush_drop": "guess"}, "auto"),
    ([1.0, 2.0, 3.0], [10.0, 20.0, 30.0], {"brush_drop": -1.0}, ">= 0"),
])
def test_bad_readings_are_typed_errors(V, I, kwargs, match):
    with pytest.raises(ParameterError, match=match):
        armature_resistance_test(V, I, test_temperature=25.0, **kwargs)


@settings(max_examples=30, deadline=None, derandomize=True)
@given(R=st.floats(0.01, 2.0), vb=st.floats(0.5, 3.0), noise=st.floats(0.001, 0.05), seed=st.integers(0, 2**32 - 1))
def test_fit_recovers_resistance_and_brush_drop_within_4_sigma(R, vb, noise, seed):
    # synthetic readings (generated here), 30 points from 10 % to 100 % of a 100 A test current
    rng = np.random.default_rng(seed)
    I = np.linspace(10.0, 100.0, 30)
    V = R * I + vb + rng.normal(0.0, noise, I.size)
    r = armature_resistance_test(V, I, test_temperature=25.0, brush_drop="fit")
    assert abs(r.resistance - R) <= 4.0 * r.standard_errors["resistance"]
    assert abs(r.brush_drop - vb) <= 4.0 * r.standard_errors["brush_drop"]
