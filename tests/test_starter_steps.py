"""Tests of dcchar.studies.starter_steps: starter resistance steps and run-up time."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from dcchar.errors import ParameterError
from dcchar.models import units
from dcchar.studies.starter_steps import (acceleration_time, acceleration_time_curve,
                                          single_starting_resistor, starter_steps)


# --- Theraja, A Textbook of Electrical Technology Vol. II, Ex 30.50 --------------------------------
# 220 V shunt motor, Ra = 0.5 ohm, starting current <= 40 A, 7 studs (6 sections), no brush drop.

def test_theraja_ex_30_50_sections():
    d = starter_steps(220.0, 0.5, 40.0, sections=6)
    # book prints 3 decimals: tolerance half a unit of the last digit
    assert_allclose(d.section_resistance, [1.812, 1.215, 0.815, 0.546, 0.366, 0.246], atol=5e-4, rtol=0)
    assert d.studs == 7 and d.sections == 6 and d.needed
    # R1 = 220/40 = 5.5 ohm and k = 1.4913 (book, 4 decimals)
    assert_allclose(d.total_resistance[0], 5.5, rtol=1e-12)
    assert_allclose(d.ratio, 1.4913, atol=5e-5, rtol=0)
    assert_allclose(d.total_resistance[-1], 0.5, rtol=0, atol=0)
    assert_allclose(d.external_resistance, 5.0, rtol=1e-12)


def test_theraja_ex_30_50_recomputed_to_1e6():
    # REFERENCE-VALUES: recomputed sections 1.8119, 1.2150, 0.8147, 0.5463, 0.3663, 0.2457
    d = starter_steps(220.0, 0.5, 40.0, sections=6)
    k = 11.0 ** (1.0 / 6.0)
    expected = [5.5 / k ** (j - 1) - 5.5 / k ** j for j in range(1, 7)]
    assert_allclose(d.section_resistance, expected, rtol=1e-9)
    assert_allclose(d.section_resistance, [1.8119, 1.2150, 0.8147, 0.5463, 0.3663, 0.2457], atol=5e-5, rtol=0)


def test_derived_relations_a34():
    # REFERENCE-VALUES A34 (Theraja Ex 30.50/30.53; gino-ag lexicon "starting steps"):
    # R_(k+1)/R_k = I2/I1, (I1/I2)^(n) = R1/Ra for n sections, R1 = V/I1.
    d = starter_steps(440.0, 0.3, 120.0, sections=5)
    r = d.total_resistance
    assert_allclose(r[1:] / r[:-1], d.min_current / d.max_current, rtol=1e-12)
    assert_allclose((d.max_current / d.min_current) ** d.sections, r[0] / 0.3, rtol=1e-12)
    assert_allclose(r[0], 440.0 / 120.0, rtol=1e-14)


def test_sections_derived_from_min_current():
    # n = ceil(ln(R1/Ra)/ln(I1/I2)) = ceil(ln 11 / ln(4/3)) = ceil(8.335) = 9
    d = starter_steps(220.0, 0.5, 40.0, min_current=30.0)
    assert d.sections == math.ceil(math.log(11.0) / math.log(40.0 / 30.0)) == 9
    assert d.min_current_requested == 30.0
    # the actual switching current is recomputed for the integer: higher than asked
    assert_allclose(d.min_current, 40.0 / 11.0 ** (1.0 / 9.0), rtol=1e-12)
    assert d.min_current > 30.0


def test_exact_integer_does_not_round_up():
    # I2 chosen so that ln(R1/Ra)/ln(I1/I2) is exactly 6: must give 6 sections, not 7
    d = starter_steps(220.0, 0.5, 40.0, min_current=40.0 / 11.0 ** (1.0 / 6.0))
    assert d.sections == 6


def test_brush_drop_series_field_and_speeds():
    v, ra, rse, vb, kphi = 230.0, 0.4, 0.1, 2.0, 1.1
    d = starter_steps(v, ra, 60.0, sections=4, series_field_resistance=rse, brush_drop=vb, machine_constant=kphi)
    assert_allclose(d.total_resistance[0], (v - vb) / 60.0, rtol=1e-14)
    assert_allclose(d.total_resistance[-1], ra + rse, rtol=1e-14)
    # cut-out back EMF E = V - Vb - I2*R_k and speed w = E/kphi (definitions of the brief)
    assert_allclose(d.cutout_emf, v - vb - d.min_current * d.total_resistance[:-1], rtol=1e-12)
    assert_allclose(d.cutout_speed, d.cutout_emf / kphi, rtol=1e-12)
    assert any("compound" in n for n in d.notes)
    rows = d.to_rows()
    assert len(rows) == 5 and rows[-1]["section_resistance"] is None
    assert_allclose([r["total_resistance"] for r in rows], d.total_resistance)


def test_no_starter_needed_is_a_result():
    d = starter_steps(12.0, 0.5, 40.0, sections=3)
    assert not d.needed and d.sections == 0 and "does not exceed" in d.reason
    assert_allclose(d.peak_current, [24.0])


def test_caution_above_twice_rated():
    d = starter_steps(220.0, 0.5, 40.0, sections=6, rated_current=15.0)
    assert any("twice the rated current" in n and "licensed practice" in n for n in d.notes)
    d2 = starter_steps(220.0, 0.5, 40.0, sections=6, rated_current=25.0)
    assert not any("twice the rated current" in n for n in d2.notes)


@pytest.mark.parametrize("kwargs, field", [
    (dict(voltage=-1.0, armature_resistance=0.5, max_current=40.0, sections=3), "voltage"),
    (dict(voltage=220.0, armature_resistance=0.0, max_current=40.0, sections=3), "armature_resistance"),
    (dict(voltage=220.0, armature_resistance=0.5, max_current=40.0, min_current=40.0), "min_current"),
    (dict(voltage=220.0, armature_resistance=0.5, max_current=40.0, min_current=50.0), "min_current"),
    (dict(voltage=220.0, armature_resistance=0.5, max_current=40.0), "sections"),
    (dict(voltage=220.0, armature_resistance=0.5, max_current=40.0, sections=3, min_current=20.0), "sections"),
    (dict(voltage=220.0, armature_resistance=0.5, max_current=40.0, sections=0), "sections"),
    (dict(voltage=220.0, armature_resistance=0.5, max_current=40.0, sections=2.5), "sections"),
    (dict(voltage=220.0, armature_resistance=0.5, max_current=40.0, sections=3, brush_drop=220.0), "brush_drop"),
    (dict(voltage=220.0, armature_resistance=0.5, max_current=40.0, sections=3, machine_constant=0.0),
     "machine_constant"),
])
def test_bad_input_raises(kwargs, field):
    with pytest.raises(ParameterError) as e:
        starter_steps(**kwargs)
    assert e.value.field == field


@settings(max_examples=200, deadline=None)
@given(v=st.floats(12.0, 1000.0), ra=st.floats(0.01, 5.0), i1=st.floats(1.0, 2000.0),
       ratio=st.floats(1.05, 4.0), vb=st.floats(0.0, 3.0))
def test_every_stud_keeps_current_between_limits(v, ra, i1, ratio, vb):
    i2 = i1 / ratio
    d = starter_steps(v, ra, i1, min_current=i2, brush_drop=vb)
    if not d.needed:
        assert (v - vb) / ra <= i1
        return
    r = d.total_resistance
    # recompute the currents from the resistances alone: stud 1 at standstill, then each step
    # switches when the current has fallen to the switching current (EMF continuous)
    e = 0.0
    for j in range(d.studs):
        i_peak = (v - vb - e) / r[j]
        assert i_peak <= i1 * (1 + 1e-9)
        assert i_peak >= i2 * (1 - 1e-9)
        if j < d.studs - 1:
            e = v - vb - d.min_current * r[j]
            assert d.min_current >= i2 * (1 - 1e-12)
    assert_allclose(r[-1], ra, rtol=1e-12)


def test_single_resistor_theraja():
    # Theraja Ex 30.50 data: R1 = 220/40 = 5.5 ohm total, so 5.0 ohm outside the 0.5 ohm armature
    s = single_starting_resistor(220.0, 0.5, 40.0)
    assert s.needed
    assert_allclose(s.external_resistance, 5.0, rtol=1e-14)
    assert_allclose(s.starting_current, 40.0, rtol=1e-14)
    assert_allclose(s.direct_current, 440.0, rtol=1e-14)
    s2 = single_starting_resistor(220.0, 0.5, 40.0, brush_drop=2.0)
    assert_allclose(s2.external_resistance, 218.0 / 40.0 - 0.5, rtol=1e-14)
    s3 = single_starting_resistor(10.0, 0.5, 40.0)
    assert not s3.needed and s3.external_resistance == 0.0
    with pytest.raises(ParameterError):
        single_starting_resistor(220.0, 0.5, -1.0)


# --- acceleration time -----------------------------------------------------------------------------

def test_acceleration_time_us_formula():
    # PDH course E161 (Fruge), Eq. 2: t = Wk^2 * dn / (308 * T), lb*ft^2, r/min, lb*ft.
    # The 308 is a rounded 60*g/(2*pi) = 307.2 (g = 32.174 ft/s^2), so the SI result differs by
    # 0.25 %: tolerance 0.3 %.
    wk2, dn, t_lbft = 100.0, 1800.0, 50.0
    t = acceleration_time(wk2 * units.LB_FT2, dn * units.RPM, t_lbft * units.LBF_FT)
    assert_allclose(t, wk2 * dn / (308.0 * t_lbft), rtol=3e-3)
    # exact constant 60*g/(2*pi) with g = 9.80665 m/s^2 in ft/s^2 (definition of lbf)
    g_ft = 9.80665 / 0.3048
    assert_allclose(t, wk2 * dn / (60.0 * g_ft / (2 * math.pi) * t_lbft), rtol=1e-12)


def test_acceleration_time_errors():
    assert_allclose(acceleration_time(2.0, -100.0, -50.0), 4.0)
    with pytest.raises(ParameterError):
        acceleration_time(2.0, 100.0, -50.0)
    with pytest.raises(ParameterError):
        acceleration_time(0.0, 100.0, 50.0)
    with pytest.raises(ParameterError):
        acceleration_time(2.0, 0.0, 50.0)


def test_curve_linear_torque_exact():
    # T_acc = T0*(1 - w/wf): t(w) = J*wf/T0 * ln(1/(1 - w/wf)) (calculus, closed form)
    j, t0, wf = 3.0, 120.0, 150.0
    w = np.linspace(0.0, 140.0, 15)
    r = acceleration_time_curve(j, w, t0 * (1 - w / wf))
    assert r.reaches and r.stall_speed is None
    assert_allclose(r.time, j * wf / t0 * np.log(1.0 / (1.0 - w / wf)), rtol=1e-12, atol=1e-15)


def test_curve_against_scipy_quad():
    from scipy.integrate import quad

    j = 1.7
    torque = lambda w: 200.0 - 0.004 * w ** 2 - 0.1 * w  # noqa: E731  motor minus fan-type load
    w = np.linspace(0.0, 180.0, 4001)
    r = acceleration_time_curve(j, w, torque(w))
    ref, _ = quad(lambda x: j / torque(x), 0.0, 180.0)
    assert_allclose(r.total_time, ref, rtol=1e-6)  # scipy reference; piecewise-linear torque error


def test_curve_constant_torque_and_stall():
    r = acceleration_time_curve(2.0, [0.0, 50.0, 100.0], [50.0, 50.0, 50.0])
    assert_allclose(r.total_time, acceleration_time(2.0, 100.0, 50.0), rtol=1e-14)
    s = acceleration_time_curve(2.0, [0.0, 50.0, 100.0], [50.0, 10.0, -30.0])
    assert not s.reaches and math.isinf(s.total_time)
    assert_allclose(s.stall_speed, 50.0 + 50.0 * 10.0 / 40.0)
    assert np.isnan(s.time[-1]) and np.isfinite(s.time[1])
    z = acceleration_time_curve(2.0, [0.0, 50.0], [0.0, 10.0])
    assert not z.reaches and "does not start" in z.reason
    with pytest.raises(ParameterError):
        acceleration_time_curve(2.0, [0.0, 50.0, 40.0], [1.0, 1.0, 1.0])
    with pytest.raises(ParameterError):
        acceleration_time_curve(2.0, [0.0, 50.0], [1.0, 1.0, 1.0])
