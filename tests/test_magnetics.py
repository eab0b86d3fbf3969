"""Magnetization curves, armature reaction and temperature corrections."""

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from dcchar.errors import ParameterError
from dcchar.models.magnetics import (Froehlich, LinearMagnetization, QuadraticArmatureReaction,
                                     TabulatedArmatureReaction, TabulatedMagnetization)
from dcchar.models.temperature import copper_resistance, magnet_flux_factor


def test_froehlich_self_consistency():
    # Froehlich law E = a*F/(b + F) (from memory, unverified): only its own properties are used,
    # E(b) = a/2 and E -> a as F -> inf.
    m = Froehlich(a=300.0, b=2.0, reference_speed=100.0, residual_emf=5.0)
    assert_allclose(m.emf(2.0), 5.0 + 150.0, rtol=1e-15)
    assert_allclose(m.emf(1e12), 305.0, rtol=1e-9)
    assert_allclose(m.emf(-2.0), 5.0 - 150.0, rtol=1e-15)  # odd about the residual
    assert np.isnan(m.excitation_for_emf(305.0))  # at the asymptote: no finite field


@given(st.floats(0.0, 1e4))
def test_froehlich_inverse_round_trip(F):
    m = Froehlich(a=250.0, b=3.0, reference_speed=120.0, residual_emf=4.0)
    assert_allclose(m.excitation_for_emf(m.emf(F)), F, rtol=1e-9, atol=1e-9)


def test_tabulated_passes_through_points_and_extends_monotone():
    F = [0.5, 1.0, 1.5, 2.0, 3.0]
    E = [60.0, 115.0, 160.0, 190.0, 220.0]
    m = TabulatedMagnetization(F, E, reference_speed=150.0)
    assert_allclose(m.emf(F), E, rtol=1e-12)  # PCHIP interpolates the points exactly
    x = np.linspace(-5, 8, 2001)
    assert np.all(np.diff(m.emf(x)) > 0)  # monotone everywhere, beyond the last point too
    assert_allclose(m.emf(4.0), 220.0 + 30.0, rtol=1e-12)  # extended with the last chord slope 30 V/A
    assert_allclose(m.excitation_for_emf(m.emf(x)), x, atol=1e-9)
    assert_allclose(m.kphi(3.0), 220.0 / 150.0, rtol=1e-12)


@pytest.mark.parametrize("F, E, field", [
    ([1.0, 0.8, 2.0], [50.0, 80.0, 100.0], "excitation[1]"),
    ([1.0, 2.0, 3.0], [50.0, 40.0, 100.0], "emf[1]"),
    ([1.0, 2.0, 3.0], [50.0, float("nan"), 100.0], "emf"),
    ([1.0], [50.0], "excitation"),
    ([1.0, 2.0], [50.0, 60.0, 70.0], "emf"),
])
def test_tabulated_rejects_bad_tables(F, E, field):
    with pytest.raises(ParameterError) as e:
        TabulatedMagnetization(F, E, reference_speed=100.0)
    assert e.value.field == field


def test_armature_reaction_laws():
    q = QuadraticArmatureReaction(linear=2.0, quadratic=0.01)
    assert_allclose(q.excitation([-10.0, 0.0, 10.0]), [21.0, 0.0, 21.0])
    t = TabulatedArmatureReaction([50.0, 100.0], [100.0, 300.0])
    assert_allclose(t.excitation([25.0, 75.0, 150.0, -150.0]), [50.0, 200.0, 500.0, 500.0])
    with pytest.raises(ParameterError):
        QuadraticArmatureReaction(linear=-1.0)


def test_copper_resistance_check_vectors():
    # Hioki RM3545 manual, App. 4: 100 ohm at 30 degC referred to 20 degC is 96.22 ohm (alpha 0.00393);
    # with the 234.5 constant the same case gives 96.22 to the printed digits.
    assert_allclose(copper_resistance(100.0, 30.0, 20.0), 96.22, atol=5e-3)
    # copper correction table: 25 -> 75 degC factor 1.193, 25 -> 100 degC 1.289
    assert_allclose(copper_resistance(1.0, 25.0, 75.0), 1.193, atol=5e-4)
    assert_allclose(copper_resistance(1.0, 25.0, 100.0), 1.289, atol=5e-4)
    with pytest.raises(ParameterError, match="temperature"):
        copper_resistance(1.0, 25.0, -300.0)


def test_magnet_flux_factor():
    # bymagnets.com worked example: alpha = -0.10 %/K, Br(20) = 12 kG gives Br(120) = 10.8 kG
    assert_allclose(12.0 * magnet_flux_factor(-0.001, 120.0), 10.8, rtol=1e-12)
    with pytest.raises(ParameterError, match="magnet_material"):
        magnet_flux_factor("unobtainium", 50.0)


def test_linear_rejects_nonpositive_slope():
    with pytest.raises(ParameterError, match="slope"):
        LinearMagnetization(slope=0.0, reference_speed=100.0)
