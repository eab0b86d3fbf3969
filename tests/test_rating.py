"""Equal-rating families (dcchar.studies.rating) and the demo frame (dcchar.studies.demo)."""

from __future__ import annotations

import math

import pytest
import sympy as sp
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy.optimize import brentq

from dcchar.errors import ModelRangeError, ParameterError
from dcchar.models.connections import Rating
from dcchar.models.losses import RotationalLoss
from dcchar.models.magnetics import Froehlich, QuadraticArmatureReaction, TabulatedMagnetization
from dcchar.models.units import RPM
from dcchar.studies.demo import DEMO_RATING, demo_family, demo_machine
from dcchar.studies.rating import FAMILY_KEYS, Armature, equal_rating_family


def speed_at_torque(m, V, T, i_hi):
    """Speed where the machine's own characteristic gives shaft torque T (brentq on scalar_state)."""
    i = brentq(lambda i: m.scalar_state(V, i)[1] - T, 1e-6 * i_hi, i_hi, xtol=1e-14 * i_hi, rtol=8.9e-16)
    return m.scalar_state(V, i)[0]


def check_family(fam, rating):
    for key, m in fam.items():
        d = fam.designs[key]
        w = speed_at_torque(m, rating.voltage, rating.torque, 1.5 * d.armature_current)
        # the member passes through the rated point: speed at rated torque = rated speed
        assert abs(w - rating.speed) <= 1e-9 * rating.speed, key
        assert m.rating == rating


def test_demo_family_passes_through_rated_point():
    fam = demo_family(differential=True)
    assert tuple(fam) == FAMILY_KEYS
    for key, m in fam.items():
        w = speed_at_torque(m, 230.0, DEMO_RATING.torque, 120.0)
        assert abs(w - DEMO_RATING.speed) <= 1e-9 * DEMO_RATING.speed, key
    assert demo_machine("series") is fam["series"]
    with pytest.raises(ParameterError):
        demo_machine("triple")


def test_lossless_current_matches_quadratic_formula():
    # no brush drop, no losses: (V - I*R)*I = T_r*w_r, so I = (V - sqrt(V^2 - 4*R*P))/(2R) (sympy)
    V, R, P, w = 220.0, 0.3, 9000.0, 1000 * RPM
    rating = Rating(voltage=V, current=45.0, speed=w, output=P)
    mag = Froehlich(a=300.0, b=1500.0, reference_speed=w)
    fam = equal_rating_family({"armature_resistance": R}, rating, magnetization=mag,
                              connections=("separately_excited", "permanent_magnet"))
    i = sp.Symbol("i", positive=True)
    i_exact = min(float(r) for r in sp.solve(sp.Eq((V - i * R) * i, P), i))
    for key in ("separately_excited", "permanent_magnet"):
        assert_allclose(fam.designs[key].armature_current, i_exact, rtol=1e-12)
        assert_allclose(fam.designs[key].kphi, (V - i_exact * R) / w, rtol=1e-12)
    check_family(fam, rating)


def test_tabulated_curve_and_differential_compounds():
    rating = Rating(voltage=440.0, current=30.0, speed=1500 * RPM, output=11_000.0)
    mag = TabulatedMagnetization([0, 500, 1000, 1500, 2000, 3000, 4000], [6, 130, 240, 320, 370, 420, 450],
                                 reference_speed=1500 * RPM)
    arm = Armature(armature_resistance=0.6, brush_drop=2.0, stray_load=1e-4,
                   rotational_loss=RotationalLoss(friction_torque=0.5, viscous=0.01, core_eddy=2e-4),
                   armature_reaction=QuadraticArmatureReaction(2.0), winding_temperature=75.0)
    fam = equal_rating_family(arm, rating, magnetization=mag, connections=FAMILY_KEYS, series_share=0.4)
    check_family(fam, rating)
    # compound split: series turns give series_share of the field's excitation at rated load
    for key in ("long_shunt_compound", "differential_short_shunt_compound"):
        m, d = fam[key], fam.designs[key]
        assert_allclose(m.series_turns * d.series_current, 0.4 * d.field_excitation, rtol=1e-12)
        sign = 1 if m.kind == "cumulative" else -1
        assert_allclose(m.field_turns * d.field_current + sign * m.series_turns * d.series_current,
                        d.field_excitation, rtol=1e-12)
    assert fam["differential_long_shunt_compound"].kind == "differential"
    assert "<table>" in fam._repr_html_()


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.floats(150.0, 500.0), st.floats(0.05, 0.8), st.floats(600.0, 2000.0), st.floats(0.5, 0.9),
       st.floats(0.05, 0.6))
def test_random_ratings_pass_through(V, R, n, frac, share):
    # output a fraction of what the armature could give at most, (V^2/4R) less a margin
    w = n * RPM
    P = frac * 0.7 * V * V / (4 * R)
    rating = Rating(voltage=V, current=P / (0.8 * V), speed=w, output=min(P, 0.95 * V * P / (0.8 * V)))
    mag = Froehlich(a=1.6 * V, b=2000.0, reference_speed=w, residual_emf=0.01 * V)
    fam = equal_rating_family({"armature_resistance": R, "brush_drop": 2.0}, rating, magnetization=mag,
                              series_share=share)
    check_family(fam, rating)


def test_impossible_ratings_raise_with_the_reason():
    mag = Froehlich(a=300.0, b=1500.0, reference_speed=100.0)
    # more power than the armature can pass: (V - Vb)^2/(4R) = 48400/2 W at most
    r = Rating(voltage=220.0, current=250.0, speed=100.0, output=30_000.0)
    with pytest.raises(ModelRangeError, match="more than this armature can give"):
        equal_rating_family({"armature_resistance": 0.5}, r, magnetization=mag)
    # a kphi above the Froehlich asymptote (300 V at 100 rad/s: kphi < 3)
    r = Rating(voltage=220.0, current=10.0, speed=50.0, output=1500.0)
    with pytest.raises(ModelRangeError, match="saturation"):
        equal_rating_family({"armature_resistance": 0.5}, r, magnetization=mag, connections=("shunt",))
    # a brush drop above the supply: no current flows (common practice, no source)
    r = Rating(voltage=220.0, current=10.0, speed=100.0, output=1500.0)
    with pytest.raises(ModelRangeError, match="does not exceed the brush drop"):
        equal_rating_family({"armature_resistance": 0.5, "brush_drop": 300.0}, r, magnetization=mag)


def test_bad_arguments():
    r = Rating(voltage=220.0, current=10.0, speed=100.0, output=1500.0)
    mag = Froehlich(a=300.0, b=1500.0, reference_speed=100.0)
    with pytest.raises(ParameterError):
        equal_rating_family({"armature_resistance": 0.5, "colour": "red"}, r, magnetization=mag)
    with pytest.raises(ParameterError):
        equal_rating_family({"armature_resistance": 0.5}, r, magnetization=mag, connections=("triple",))
    with pytest.raises(ParameterError):
        equal_rating_family({"armature_resistance": 0.5}, r, magnetization=None, connections=("shunt",))
    with pytest.raises(ParameterError):
        equal_rating_family({"armature_resistance": 0.5}, r, magnetization=mag, series_share=1.0)
    fam = equal_rating_family({"armature_resistance": 0.5}, r, connections=("permanent_magnet",))
    assert list(fam) == ["permanent_magnet"] and math.isfinite(fam["permanent_magnet"].kphi)
