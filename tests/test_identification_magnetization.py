"""Magnetization (open-circuit) test: tabulated curve, Froehlich fit, speed referral, bad data."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from dcchar.errors import ParameterError
from dcchar.models.connections import Shunt
from dcchar.models.magnetics import LinearMagnetization
from dcchar.models.units import RPM
from dcchar.studies.identification import magnetization_test, refer_to_speed

DATA = Path(__file__).parent / "data"


@pytest.fixture(scope="module")
def exam_occ_400v_shunt():
    """OCC of a 400 V shunt machine at 1500 r/min (exam question; see the file header)."""
    a = np.loadtxt(DATA / "exam_occ_400v_shunt.csv", delimiter=",", comments="#", skiprows=7)
    return a[:, 0], a[:, 1], 1500.0 * RPM


def test_froehlich_fit_matches_scipy_curve_fit(exam_occ_400v_shunt):
    # reference library: scipy.optimize.curve_fit (Levenberg-Marquardt, pcov = s^2 (J^T J)^-1)
    from scipy.optimize import curve_fit

    If, E, w = exam_occ_400v_shunt
    r = magnetization_test(If, E, w)
    p, pcov = curve_fit(lambda F, a, b: a * F / (b + F), If, E, p0=[900.0, 1.0])
    assert r.fitted == ("a", "b")
    assert_allclose([r.parameters["a"], r.parameters["b"]], p, rtol=1e-6)
    assert_allclose([r.standard_errors["a"], r.standard_errors["b"]], np.sqrt(np.diag(pcov)), rtol=1e-4)
    assert_allclose(r.residuals, r.froehlich.emf(If) - E, atol=1e-9)
    assert r.rms_residual == pytest.approx(np.sqrt(np.mean(r.residuals**2)))


def test_tabulated_curve_passes_through_the_points(exam_occ_400v_shunt):
    If, E, w = exam_occ_400v_shunt
    r = magnetization_test(If, E, w)
    assert_allclose(r.tabulated.emf(If), E, rtol=1e-12)
    assert r.tabulated.reference_speed == w
    # monotone between points (PCHIP), as the TabulatedMagnetization promises
    F = np.linspace(0.0, 2.0, 500)
    assert np.all(np.diff(r.tabulated.emf(F)) > 0)


def test_points_at_another_speed_are_referred_by_faraday_law(exam_occ_400v_shunt):
    # Faraday's law: at one excitation E/w is constant, so E read at w is E*w_ref/w at w_ref
    If, E, w_ref = exam_occ_400v_shunt
    speeds = w_ref * np.array([0.9, 1.1, 1.0, 0.95, 1.05, 0.8])
    read = E * speeds / w_ref
    r = magnetization_test(If, read, speeds, reference_speed=w_ref)
    assert_allclose(r.emf, E, rtol=1e-12)
    r0 = magnetization_test(If, E, w_ref)
    assert_allclose(r.parameters["a"], r0.parameters["a"], rtol=1e-9)
    assert_allclose(refer_to_speed(200.0, 100.0, 150.0), [300.0])


def test_mixed_speeds_need_a_reference(exam_occ_400v_shunt):
    If, E, w = exam_occ_400v_shunt
    with pytest.raises(ParameterError, match="reference_speed"):
        magnetization_test(If, E, np.linspace(w, 1.1 * w, If.size))


def test_unsorted_points_are_sorted_and_residual_is_fitted_when_read():
    # residual EMF read at zero field: fitted as a third parameter
    F = np.array([2.0, 0.0, 0.5, 1.0, 4.0, 8.0])
    E = 5.0 + 300.0 * F / (1.5 + F)
    r = magnetization_test(F, E, 120.0)
    assert r.fitted == ("a", "b", "residual_emf")
    assert_allclose([r.parameters["a"], r.parameters["b"], r.parameters["residual_emf"]], [300.0, 1.5, 5.0],
                    rtol=1e-7)
    assert np.all(np.diff(r.excitation) > 0)


def test_result_implies_a_machine():
    F = np.array([0.5, 1.0, 2.0, 4.0, 8.0])
    E = 500.0 * F / (2.0 + F)
    m = Shunt(armature_resistance=0.5, magnetization=LinearMagnetization(100.0, 150.0), field_resistance=250.0)
    r = magnetization_test(F, E, 150.0, machine=m)
    assert r.machine.magnetization == r.froehlich
    assert r.apply_to(m, "tabulated").magnetization is r.tabulated
    with pytest.raises(ParameterError):
        r.apply_to(m, "spline")


@pytest.mark.parametrize("F, E, match", [
    ([0.5, 1.0], [100.0, 150.0], "at least 3"),           # too few for a, b and one degree of freedom
    ([0.5, 1.0, 1.5, 2.0, 2.5], [100.0, 150.0, 140.0, 190.0, 200.0], "non-monotone"),
    ([0.5, 1.0, 1.0, 2.0, 2.5], [100.0, 150.0, 155.0, 190.0, 200.0], "distinct"),
    ([0.5, 1.0, np.nan, 2.0, 2.5], [100.0, 150.0, 170.0, 190.0, 200.0], "finite"),
    ([-0.5, 1.0, 1.5, 2.0, 2.5], [100.0, 150.0, 170.0, 190.0, 200.0], ">= 0"),
    ([0.5, 1.0, 1.5, 2.0], [100.0, 150.0, 170.0], "one reading"),
])
def test_bad_data_is_a_typed_error(F, E, match):
    with pytest.raises(ParameterError, match=match):
        magnetization_test(F, E, 150.0)


@settings(max_examples=25, deadline=None, derandomize=True)
@given(a=st.floats(200.0, 800.0), b=st.floats(0.3, 3.0), er=st.floats(0.0, 15.0),
       frac=st.floats(0.02, 0.25), seed=st.integers(0, 2**32 - 1))
def test_froehlich_fit_recovers_parameters_within_4_sigma(a, b, er, frac, seed):
    # synthetic data (generated here): 40 points to 4*b, normal noise of a fraction of the
    # smallest step between points, so that the readings stay monotone; 4 standard errors
    rng = np.random.default_rng(seed)
    F = np.linspace(0.0, 4.0 * b, 40)
    clean = er + a * F / (b + F)
    E = clean + rng.normal(0.0, frac * np.diff(clean).min(), F.size)
    assume(E[0] >= 0.0 and np.all(np.diff(E) > 0))
    r = magnetization_test(F, E, 100.0)
    for name, true in (("a", a), ("b", b), ("residual_emf", er)):
        if name == "residual_emf" and r.parameters[name] == 0.0:
            continue  # on its bound: no normal error there
        assert abs(r.parameters[name] - true) <= 4.0 * r.standard_errors[name], name
