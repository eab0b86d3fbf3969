"""Tests of dcchar.studies.duty: rms, peak, energy, equivalent rating and duty-type classification."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from dcchar.errors import ParameterError
from dcchar.studies.duty import (DutyCycle, DutySegment, classify_duty, cyclic_duration_factor, energy,
                                 equivalent_continuous_rating, mean_absolute, peak, rms)

MIN = 60.0


@pytest.fixture
def dubey_ex_4_3():
    """Dubey, Fundamentals of Electrical Drives, 2nd ed., Ex 4.3 (p. 53): load rising linearly
    0 -> 400 kW in 5 min; 500 kW for 5 min; regenerative braking returning 400 kW for 4 min;
    idle 2 min."""
    return DutyCycle([
        DutySegment(5 * MIN, power=(0.0, 400e3), label="rising load"),
        DutySegment(5 * MIN, power=500e3),
        DutySegment(4 * MIN, power=-400e3, kind="brake"),
        DutySegment(2 * MIN, kind="rest"),
    ])


def test_dubey_ex_4_3_rms_power(dubey_ex_4_3):
    # book answer 367.1 kW (4 significant figures): tolerance half a unit of the last digit
    assert_allclose(rms(dubey_ex_4_3, "power"), 367.1e3, atol=50.0, rtol=0)
    # recomputed from the same data: sqrt((400^2*5/3 + 500^2*5 + 400^2*4)/16) kW
    assert_allclose(rms(dubey_ex_4_3, "power"), 1e3 * math.sqrt((400**2 * 5 / 3 + 500**2 * 5 + 400**2 * 4) / 16),
                    rtol=1e-12)


def test_dubey_ex_4_3_peak_check(dubey_ex_4_3):
    # Dubey Ex 4.3 checks P_max = 500 kW < 2*P_rms: no overload caution
    r = equivalent_continuous_rating(dubey_ex_4_3, "power")
    assert r.peak == 500e3 and r.peak < 2 * r.rms
    assert not any("peak" in n for n in r.notes)
    tight = equivalent_continuous_rating(dubey_ex_4_3, "power", overload_limit=1.2)
    assert any("choose the motor for the peak" in n for n in tight.notes)


def test_ramp_written_with_ramp_flag_matches_pair(dubey_ex_4_3):
    # the first segment ramps from the end of the last one (rest, 0 W) when the cycle repeats
    c = DutyCycle([DutySegment(5 * MIN, power=400e3, ramp=True)] + list(dubey_ex_4_3.segments[1:]))
    assert_allclose(rms(c, "power"), rms(dubey_ex_4_3, "power"), rtol=1e-15)
    a, b = c.profile("power")
    assert a[0] == 0.0 and b[0] == 400e3


def test_energy_dubey_data(dubey_ex_4_3):
    # recomputed from the data of Dubey Ex 4.3 (not a book answer):
    # drawn = 0.5*400 kW*300 s + 500 kW*300 s = 210 MJ, returned = 400 kW*240 s = 96 MJ
    e = energy(dubey_ex_4_3)
    assert e.source == "power"
    assert_allclose([e.drawn, e.returned, e.net], [210e6, 96e6, 114e6], rtol=1e-12)


def test_energy_linear_ramp_through_zero():
    # power ramps -100 W -> 300 W over 4 s: zero at 1 s; drawn = 300*3/2 = 450 J, returned = 100*1/2 = 50 J
    e = energy(DutyCycle([DutySegment(4.0, power=(-100.0, 300.0)), DutySegment(2.0, power=(50.0, -50.0))]))
    assert_allclose([e.drawn, e.returned], [450.0 + 25.0, 50.0 + 25.0], rtol=1e-14)


def test_energy_torque_speed_against_quad():
    from scipy.integrate import quad

    # torque and speed both ramp so that the power changes sign inside a segment
    c = DutyCycle([DutySegment(10.0, torque=(50.0, -30.0), speed=(20.0, 120.0)),
                   DutySegment(5.0, torque=(-30.0, 40.0), speed=(120.0, -60.0)),
                   DutySegment(3.0, torque=10.0, speed=5.0)], periodic=False)
    pos = neg = 0.0
    for s in c.segments:
        t0, t1 = s.torque if isinstance(s.torque, tuple) else (s.torque, s.torque)
        w0, w1 = s.speed if isinstance(s.speed, tuple) else (s.speed, s.speed)
        p = lambda x: (t0 + (t1 - t0) * x / s.duration) * (w0 + (w1 - w0) * x / s.duration)  # noqa: E731
        pos += quad(lambda x: max(p(x), 0.0), 0, s.duration, limit=200)[0]
        neg += quad(lambda x: max(-p(x), 0.0), 0, s.duration, limit=200)[0]
    e = energy(c)
    assert e.source == "torque*speed"
    assert_allclose([e.drawn, e.returned], [pos, neg], rtol=1e-8)


def test_mean_square_of_ramp_against_quad():
    from scipy.integrate import quad

    a, b, dt = -7.0, 19.0, 13.0
    c = DutyCycle([DutySegment(dt, current=(a, b))])
    ms = quad(lambda x: (a + (b - a) * x / dt) ** 2, 0, dt)[0] / dt
    assert_allclose(rms(c, "current") ** 2, ms, rtol=1e-12)
    mabs = quad(lambda x: abs(a + (b - a) * x / dt), 0, dt, points=[dt * 7 / 26])[0] / dt
    assert_allclose(mean_absolute(c, "current"), mabs, rtol=1e-10)
    assert peak(c, "current") == 19.0


def test_rest_weight_reduces_denominator():
    # beta weighting of rest time (common practice, no source): rms = sqrt(T^2 t_on/(t_on + beta*t_rest))
    c = DutyCycle([DutySegment(60.0, torque=100.0), DutySegment(180.0, kind="rest")])
    assert_allclose(rms(c), 100.0 * math.sqrt(60 / 240), rtol=1e-14)
    assert_allclose(rms(c, rest_weight=0.25), 100.0 * math.sqrt(60 / (60 + 45)), rtol=1e-14)
    c2 = DutyCycle([DutySegment(10.0, torque=200.0, kind="start"), DutySegment(50.0, torque=100.0),
                    DutySegment(180.0, kind="rest")])
    expected = math.sqrt((200.0**2 * 10 + 100.0**2 * 50) / (10 * 0.625 + 50 + 180 * 0.25))
    assert_allclose(rms(c2, rest_weight=0.25, transient_weight=0.625), expected, rtol=1e-14)
    with pytest.raises(ParameterError):
        rms(c, rest_weight=0.0)


def test_map_fills_missing_quantity():
    c = DutyCycle([DutySegment(10.0, torque=50.0), DutySegment(20.0, torque=20.0), DutySegment(5.0, kind="rest")])
    with pytest.raises(ParameterError) as e:
        rms(c, "current")
    assert e.value.field == "segments[0].current"
    kphi = 2.0  # a constant machine constant stands in for an operating-point solver here
    filled = c.map(lambda s: s if s.kind == "rest" else s.replace(current=s.torque / kphi))
    assert_allclose(rms(filled, "current"), rms(c, "torque") / kphi, rtol=1e-14)


@pytest.mark.parametrize("bad, field", [
    (dict(duration=0.0), "duration"),
    (dict(duration=1.0, kind="coast"), "kind"),
    (dict(duration=1.0, torque=(1.0, 2.0, 3.0)), "torque"),
    (dict(duration=1.0, torque=float("nan")), "torque"),
    (dict(duration=1.0, ramp="yes"), "ramp"),
])
def test_bad_segment_raises(bad, field):
    with pytest.raises(ParameterError) as e:
        DutySegment(**bad)
    assert e.value.field == field


def test_empty_cycle_raises():
    with pytest.raises(ParameterError):
        DutyCycle([])
    with pytest.raises(ParameterError):
        DutyCycle([1.0])


# --- classification (IEC 60034-1 duty types, REFERENCE-VALUES A26/A27) ------------------------------

def test_classify_dubey_cycle_is_s5(dubey_ex_4_3):
    c = classify_duty(dubey_ex_4_3)
    assert c.duty_type == "S5" and c.designation == "S5 87.5 %"
    assert_allclose(c.cdf, 14 / 16, rtol=1e-15)
    assert any("electric braking" in r for r in c.reasons)


def test_classify_s1():
    c = classify_duty(DutyCycle([DutySegment(3600.0, torque=80.0, speed=150.0)]))
    assert c.duty_type == "S1" and c.designation == "S1"
    c2 = classify_duty(DutyCycle([DutySegment(3600.0, torque=80.0)], periodic=False))
    assert c2.duty_type == "S1"


def test_classify_s2():
    c = classify_duty(DutyCycle([DutySegment(30 * MIN, torque=80.0), DutySegment(5 * 3600.0, kind="rest")],
                                periodic=False))
    # designation form "S2 60 min" (A26); here 30 min
    assert c.duty_type == "S2" and c.designation == "S2 30 min"
    assert any("2 K" in n for n in c.notes)


def test_classify_s3_25_percent():
    # designation example "S3 25 %" (A26): 2.5 min on, 7.5 min rest in a 10 min cycle
    c = classify_duty(DutyCycle([DutySegment(2.5 * MIN, torque=80.0), DutySegment(7.5 * MIN, kind="rest")]))
    assert c.duty_type == "S3" and c.designation == "S3 25 %"
    assert_allclose(c.cdf, 0.25)
    assert_allclose(cyclic_duration_factor(DutyCycle([DutySegment(2.5 * MIN, torque=80.0),
                                                      DutySegment(7.5 * MIN, kind="rest")])), 0.25)


def test_classify_s4_with_inertia():
    c = classify_duty(DutyCycle([DutySegment(5.0, torque=150.0, kind="start"), DutySegment(115.0, torque=80.0),
                                 DutySegment(480.0, kind="rest")]), motor_inertia=0.5, load_inertia=2.0)
    assert c.duty_type == "S4"
    assert c.designation.startswith("S4 20 %") and "J_M = 0.5" in c.designation and "J_ext = 2" in c.designation


def test_classify_s6_40_percent():
    # designation example "S6 40 %" (A26): 4 min load, 6 min no-load running, no rest
    c = classify_duty(DutyCycle([DutySegment(4 * MIN, torque=80.0, speed=150.0),
                                 DutySegment(6 * MIN, torque=0.0, speed=155.0)]))
    assert c.duty_type == "S6" and c.designation == "S6 40 %"


def test_classify_s7_and_s8():
    s7 = classify_duty(DutyCycle([DutySegment(5.0, torque=150.0, kind="start"), DutySegment(60.0, torque=80.0),
                                  DutySegment(4.0, torque=-120.0, kind="brake")]))
    assert s7.duty_type == "S7" and s7.cdf == 1.0
    s8 = classify_duty(DutyCycle([DutySegment(180.0, torque=80.0, speed=77.0),
                                  DutySegment(180.0, torque=40.0, speed=150.0)]))
    assert s8.duty_type == "S8" and "50 %" in s8.designation


def test_classify_s9_and_s10():
    segs = [DutySegment(3600.0, torque=80.0), DutySegment(3600.0, torque=40.0), DutySegment(3600.0, torque=60.0)]
    nonperiodic = DutyCycle(segs, periodic=False)
    assert classify_duty(nonperiodic).duty_type == "S9"
    # each load held >= 3.9 tau (exp(-t/tau) <= 2 %): discrete constant loads
    assert classify_duty(nonperiodic, heating_time_constant=600.0).duty_type == "S10"
    assert classify_duty(nonperiodic, heating_time_constant=3600.0).duty_type == "S9"
    varying = DutyCycle([DutySegment(60.0, torque=80.0), DutySegment(60.0, torque=(80.0, 40.0), kind="run")])
    c = classify_duty(varying)
    assert c.duty_type == "S9" and any("rms" in n for n in c.notes)


# --- properties ---------------------------------------------------------------------------------------

_values = st.floats(-1e4, 1e4, allow_nan=False)
_segment = st.builds(
    lambda d, a, b, ramp, kind: DutySegment(d, torque=(a, b) if ramp else a, kind=kind),
    st.floats(0.01, 1e4), _values, _values, st.booleans(), st.sampled_from(["run", "start", "brake", "hold"]))


@settings(max_examples=200, deadline=None)
@given(st.lists(_segment, min_size=1, max_size=12),
       st.lists(st.floats(0.01, 1e4), max_size=3))
def test_rms_at_least_mean_absolute(segs, rests):
    c = DutyCycle(segs + [DutySegment(r, kind="rest") for r in rests])
    # Cauchy-Schwarz: sqrt(mean(x^2)) >= mean(|x|), rest counted fully
    assert rms(c) >= mean_absolute(c) * (1 - 1e-12) - 1e-12
    assert peak(c) >= rms(c) * (1 - 1e-12)


@settings(max_examples=100, deadline=None)
@given(st.floats(-1e5, 1e5, allow_nan=False), st.lists(st.floats(0.01, 1e4), min_size=1, max_size=8))
def test_rms_of_constant_is_itself(value, durations):
    c = DutyCycle([DutySegment(d, current=value) for d in durations])
    assert_allclose(rms(c, "current"), abs(value), rtol=1e-12, atol=1e-300)
    assert_allclose(mean_absolute(c, "current"), abs(value), rtol=1e-12, atol=1e-300)
