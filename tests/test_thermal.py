"""Tests of dcchar.studies.thermal: first-order heating, periodic cycles, rating factors, insulation."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from dcchar.errors import ParameterError
from dcchar.studies.duty import DutyCycle, DutySegment
from dcchar.studies.thermal import (INSULATION_CLASSES, FirstOrderThermal, insulation_class,
                                    intermittent_rating_factor, periodic_cycle, periodic_steady_state,
                                    short_time_rating_factor, simulate, simulate_cycle)

MIN = 60.0


# --- Dubey, Fundamentals of Electrical Drives, 2nd ed., Ex 4.4 (p. 55) --------------------------------
# tau_h = 60 min, tau_c = 90 min, continuous rating 20 kW, constant losses neglected.

def test_dubey_ex_4_4_short_time():
    k = short_time_rating_factor(10 * MIN, 60 * MIN)
    assert_allclose(k, 2.5522, atol=5e-5, rtol=0)  # printed to 4 decimals
    assert_allclose(20.0 * k, 51.0, atol=0.05, rtol=0)  # book 51.0 kW


def test_dubey_ex_4_4_intermittent():
    k = intermittent_rating_factor(10 * MIN, 10 * MIN, 60 * MIN, 90 * MIN)
    assert_allclose(k, 1.2569, atol=5e-5, rtol=0)
    assert_allclose(20.0 * k, 25.14, atol=0.005, rtol=0)  # book 25.14 kW


def test_rating_factors_reach_rated_rise_by_simulation():
    # self-consistency with the simulator: losses alpha + K^2 (per unit copper loss) reach the rated
    # steady rise (1 + alpha) at the end of the short-time load / at the cycle peak
    alpha, tau_h, tau_c = 0.6, 2400.0, 5400.0
    m = FirstOrderThermal(1.0, tau_h, tau_c)
    k = short_time_rating_factor(900.0, tau_h, alpha)
    assert_allclose(simulate(m, [900.0], [alpha + k * k]).final_rise, 1 + alpha, rtol=1e-12)
    k2 = intermittent_rating_factor(900.0, 1200.0, tau_h, tau_c, alpha)
    p = periodic_steady_state(m, [900.0, 1200.0], [alpha + k2 * k2, 0.0], standstill=[False, True])
    assert_allclose(p.max_rise, 1 + alpha, rtol=1e-12)
    # alpha = 0 reduces to the square root of 1/(1 - exp(-t/tau)) (Dubey Ex 4.4 (i))
    assert_allclose(short_time_rating_factor(900.0, tau_h), math.sqrt(1 / (1 - math.exp(-900 / tau_h))))


# --- Dubey Ex 4.1 (p. 47): declutched rise 15, 10 clutched / 20 declutched, tau = 60, min rise 40 ------

def test_dubey_ex_4_1_temperature_cycle():
    from scipy.optimize import brentq

    m = FirstOrderThermal(1.0, 60.0)  # losses given directly as steady rises (R_th = 1 K/W)

    def min_rise(theta_clutched):
        return periodic_steady_state(m, [10.0, 20.0], [theta_clutched, 15.0]).min_rise - 40.0

    theta_ss = brentq(min_rise, 20.0, 500.0, xtol=1e-12)
    p = periodic_steady_state(m, [10.0, 20.0], [theta_ss, 15.0])
    assert_allclose(theta_ss, 104.4, atol=0.05, rtol=0)  # book 104.4 degC
    assert_allclose(p.max_rise, 49.9, atol=0.05, rtol=0)  # book 49.9 degC
    assert_allclose(p.start_rise, 40.0, rtol=1e-9)  # the cycle starts at its minimum (after cooling)


# --- the simulator against a reference ODE solver -------------------------------------------------------

def test_simulate_matches_solve_ivp_with_ramps_and_standstill():
    from scipy.integrate import solve_ivp

    r_th, tau_h, tau_c = 0.05, 1800.0, 4000.0
    m = FirstOrderThermal(r_th, tau_h, tau_c)
    dt = np.array([300.0, 600.0, 120.0, 900.0])
    p0 = np.array([800.0, 2000.0, 500.0, 0.0])
    p1 = np.array([2000.0, 2000.0, 100.0, 0.0])
    still = np.array([False, False, True, True])
    tr = simulate(m, dt, p0, loss_end=p1, standstill=still, initial_rise=12.0)
    theta = 12.0
    for k in range(dt.size):
        tau = tau_c if still[k] else tau_h
        f = lambda t, y: [(r_th * (p0[k] + (p1[k] - p0[k]) * t / dt[k]) - y[0]) / tau]  # noqa: E731
        sol = solve_ivp(f, (0.0, dt[k]), [theta], rtol=1e-11, atol=1e-11, dense_output=True)
        theta = sol.y[0, -1]
        assert_allclose(tr.rise[k + 1], theta, rtol=1e-8)
        mid = tr.times[k] + dt[k] / 3
        assert_allclose(tr.at(mid), sol.sol(dt[k] / 3)[0], rtol=1e-8)
    assert tr.peak_rise >= tr.rise.max()


def test_peak_inside_a_ramp():
    # losses fall from high to low: the rise peaks inside the segment, not at its ends
    m = FirstOrderThermal(1.0, 100.0)
    tr = simulate(m, [300.0], [100.0], loss_end=[0.0], initial_rise=0.0)
    fine = tr.at(np.linspace(0.0, 300.0, 30001))
    assert_allclose(tr.peak_rise, fine.max(), rtol=1e-7)
    assert tr.peak_rise > tr.rise.max()


@pytest.mark.parametrize("dt_max", [500.0, 5e4])
def test_runs_match_plain_recursion(dt_max):
    # the vectorized scan splits the sequence into runs of <= 600 time constants and steps very
    # long segments directly: compare with the plain step-by-step recursion
    rng = np.random.default_rng(3)  # regression, not published: data drawn at random
    n = 1000
    dt = rng.uniform(1.0, dt_max, n)
    dt[::97] = 1.2e6  # single segments of 400 to 1000 time constants
    p = rng.uniform(0.0, 3000.0, n)
    still = rng.random(n) < 0.3
    m = FirstOrderThermal(0.02, 1200.0, 3000.0)
    tr = simulate(m, dt, p, standstill=still, initial_rise=5.0)
    theta = 5.0
    for k in range(n):
        tau = 3000.0 if still[k] else 1200.0
        ss = 0.02 * p[k]
        theta = ss + (theta - ss) * math.exp(-dt[k] / tau)
        assert_allclose(tr.rise[k + 1], theta, rtol=1e-10, atol=1e-12)


def test_duty_cycle_interface():
    cycle = DutyCycle([DutySegment(600.0, losses=1500.0, speed=150.0), DutySegment(300.0, kind="rest"),
                       DutySegment(120.0, losses=400.0, kind="hold")])
    m = FirstOrderThermal.from_rating(2000.0, 80.0, 1800.0, 5400.0)
    assert_allclose(m.thermal_resistance, 0.04)
    p = periodic_cycle(m, cycle)
    direct = periodic_steady_state(m, [600.0, 300.0, 120.0], [1500.0, 0.0, 400.0],
                                   standstill=[False, True, True])
    assert_allclose(p.start_rise, direct.start_rise, rtol=1e-14)
    tr = simulate_cycle(m, cycle, initial_rise=p.start_rise)
    assert_allclose(tr.final_rise, p.start_rise, rtol=1e-12)
    with pytest.raises(ParameterError):
        periodic_cycle(m, DutyCycle(cycle.segments, periodic=False))
    with pytest.raises(ParameterError):
        simulate_cycle(m, DutyCycle([DutySegment(10.0, torque=5.0)]))  # no losses given


def test_bad_input_raises():
    m = FirstOrderThermal(1.0, 60.0)
    with pytest.raises(ParameterError):
        FirstOrderThermal(0.0, 60.0)
    with pytest.raises(ParameterError):
        FirstOrderThermal(1.0, 60.0, -5.0)
    with pytest.raises(ParameterError):
        simulate(m, [10.0, -1.0], [1.0, 1.0])
    with pytest.raises(ParameterError):
        simulate(m, [10.0, 1.0], [1.0])
    with pytest.raises(ParameterError):
        simulate(m, [10.0], [-1.0])
    with pytest.raises(ParameterError):
        simulate(m, [10.0], [1.0], standstill=[True, False])
    with pytest.raises(ParameterError):
        simulate(m, [10.0], [1.0]).at(11.0)
    with pytest.raises(ParameterError):
        short_time_rating_factor(0.0, 60.0)
    with pytest.raises(ParameterError):
        intermittent_rating_factor(10.0, 10.0, 60.0, constant_loss_ratio=-0.1)


# --- insulation classes (REFERENCE-VALUES A17, A18) -------------------------------------------------------

def test_insulation_classes():
    # IEC 60085 thermal classes: tnlab.org table; Vascat ID-series manual Table 9 (A17)
    assert {k: v.class_temperature for k, v in INSULATION_CLASSES.items()} == \
        {"A": 105.0, "E": 120.0, "B": 130.0, "F": 155.0, "H": 180.0}
    # IEC 60034-1 rises (resistance method, 40 degC coolant): Vascat Table 10, B 80, F 105, H 125 K (A18)
    assert [insulation_class(c).permissible_rise for c in "BFH"] == [80.0, 105.0, 125.0]
    # hydro-tek: "Class F: 40 + 105 + 10 = 155 degC" (10 K hot-spot allowance)
    f = insulation_class("f")
    assert f.class_temperature - f.winding_limit() == 10.0
    assert "unverified" in insulation_class("A").rise_source and "unverified" not in f.rise_source
    assert f.margin(110.0) == -5.0
    with pytest.raises(ParameterError):
        insulation_class("C")
    with pytest.raises(ParameterError):
        f.winding_limit(50.0)


# --- properties -----------------------------------------------------------------------------------------

@settings(max_examples=100, deadline=None)
@given(st.floats(1e-3, 10.0), st.floats(1.0, 1e5), st.floats(0.0, 1e5), st.floats(0.0, 500.0))
def test_long_constant_loss_approaches_steady_rise(r_th, tau, losses, theta0):
    m = FirstOrderThermal(r_th, tau)
    tr = simulate(m, np.full(50, tau), np.full(50, losses), initial_rise=theta0)  # 50 time constants
    assert_allclose(tr.final_rise, r_th * losses, rtol=1e-9, atol=1e-9)


@settings(max_examples=100, deadline=None)
@given(st.lists(st.tuples(st.floats(1.0, 1e4), st.floats(0.0, 5e3), st.floats(0.0, 5e3), st.booleans()),
                min_size=1, max_size=20),
       st.floats(10.0, 1e4), st.floats(10.0, 3e4))
def test_periodic_state_is_a_fixed_point(segments, tau_h, tau_c):
    dt, p0, p1, still = (np.array(x) for x in zip(*segments))
    m = FirstOrderThermal(0.03, tau_h, tau_c)
    p = periodic_steady_state(m, dt, p0, loss_end=p1, standstill=still)
    again = simulate(m, dt, p0, loss_end=p1, standstill=still, initial_rise=p.start_rise)
    assert_allclose(again.final_rise, p.start_rise, rtol=1e-9, atol=1e-9)
    assert p.min_rise <= p.start_rise <= p.max_rise
