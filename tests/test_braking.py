"""Tests of dcchar.studies.braking: dynamic braking, plugging and regenerative braking."""

from __future__ import annotations

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose

from dcchar.errors import ParameterError
from dcchar.models.connections import SeparatelyExcited, Series
from dcchar.models.loads import Fan, Gearing, Hoist
from dcchar.models.magnetics import Froehlich, LinearMagnetization
from dcchar.studies.braking import can_regenerate, dynamic_braking, plugging, regenerative_braking
from dcchar.studies.demo import demo_family

K, RA, J, V = 1.2, 0.5, 0.3, 220.0


def _linear_se(L=0.0):
    """kphi = K exactly, no losses but R (closed forms below)."""
    return SeparatelyExcited(armature_resistance=RA, magnetization=LinearMagnetization(K * 100.0, 100.0),
                             field_resistance=100.0, field_voltage=100.0, armature_inductance=L, inertia=J)


def test_dynamic_braking_closed_form():
    # L = 0, no load: J dw/dt = -K^2 w/(Ra + Rb), so w = w0 exp(-t/tau), tau = J (Ra + Rb)/K^2;
    # to 1 % of w0 takes tau ln 100; the resistor takes Rb/(Ra + Rb) of the kinetic energy.
    # (Newton's law and Ohm's law; common practice, no source.)
    rb, w0 = 2.0, 150.0
    r = dynamic_braking(_linear_se(), None, resistance=rb, voltage=V, initial_speed=w0, rtol=1e-10)
    tau = J * (RA + rb) / K**2
    assert_allclose(r.stopping_time, tau * math.log(100.0), rtol=1e-6)
    ke = 0.5 * J * w0**2 * (1 - 0.01**2)
    assert_allclose(r.kinetic_energy, ke, rtol=1e-6)
    assert_allclose(r.resistor_energy, ke * rb / (RA + rb), rtol=1e-6)
    assert_allclose(r.transient.speed, w0 * np.exp(-r.transient.time / tau), rtol=1e-6, atol=1e-6 * w0)
    assert r.energy_returned == 0.0
    assert_allclose(r.peak_current, K * w0 / (RA + rb), rtol=1e-9)


def test_plugging_closed_form():
    # L = 0: i = (-V - K w)/R, w(t) = -V/K + (w0 + V/K) exp(-t/tau), tau = J R/K^2; standstill at
    # t = tau ln((w0 + V/K)/(V/K)).
    rb, w0 = 4.0, 150.0
    R = RA + rb
    r = plugging(_linear_se(), None, resistance=rb, voltage=V, initial_speed=w0, rtol=1e-10)
    tau = J * R / K**2
    assert_allclose(r.stopping_time, tau * math.log((w0 + V / K) / (V / K)), rtol=1e-6)
    assert_allclose(r.peak_current, (V + K * w0) / R, rtol=1e-9)
    assert r.transient.speed[-1] == 0.0
    # supply energy plus kinetic energy all end up as heat
    assert_allclose(r.energy_drawn + r.kinetic_energy, r.resistor_energy + r.machine_losses, rtol=1e-6)
    assert any("zero-speed" in n for n in r.notes) and any("stress" in n for n in r.notes)


def test_series_cannot_regenerate():
    m = demo_family()["series"]
    ok, why = can_regenerate(m)
    assert not ok and "reconnection" in why
    r = regenerative_braking(m, Fan(rated_speed=120.0, rated_torque=60.0), ramp_time=2.0)
    assert not r.possible and r.transient is None and "reconnection" in r.reason


@pytest.mark.parametrize("key", ["separately_excited", "shunt", "long_shunt_compound", "permanent_magnet"])
def test_regeneration_returns_energy_and_balances(key):
    m = demo_family()[key]
    r = regenerative_braking(m, Fan(rated_speed=120.0, rated_torque=40.0, load_inertia=0.5), ramp_time=1.5)
    assert r.possible and r.energy_returned > 0
    assert r.transient.energy.relative_residual < 1e-6
    assert np.min(r.transient.armature_current) < 0  # the current reverses while regenerating


def test_series_dynamic_braking_needs_reversed_field():
    # A saturating series motor braked on a resistor: with the field reversed the braking current
    # keeps magnetizing it and the machine stops quickly; connected as for motoring it
    # demagnetizes and brakes hardly at all.
    m = Series(armature_resistance=0.2, magnetization=Froehlich(a=300.0, b=40.0, reference_speed=100.0,
               residual_emf=3.0), series_turns=1.0, series_resistance=0.1, armature_inductance=0.005,
               series_inductance=0.02, inertia=0.5)
    load = Fan(rated_speed=100.0, rated_torque=20.0)
    rev = dynamic_braking(m, load, resistance=1.0, voltage=220.0)
    norm = dynamic_braking(m, load, resistance=1.0, voltage=220.0, series_connection="normal")
    assert rev.transient.energy.relative_residual < 1e-6
    assert rev.resistor_energy > 5 * norm.resistor_energy
    assert any("reverse the field" in n for n in norm.notes)
    assert any("reversed with respect to the armature" in n for n in rev.notes)


def test_hoist_caution_and_bad_input():
    hoist = Hoist(load_mass=300.0, drum_diameter=0.4, gearing=Gearing(20.0, 0.9), drum_inertia=1.0)
    m = demo_family()["shunt"]
    r = dynamic_braking(m, hoist, resistance=2.0, initial_speed=100.0)
    assert any("mechanical holding brake" in n for n in r.notes)
    with pytest.raises(ParameterError, match="resistance"):
        dynamic_braking(m, None, resistance=-1.0, initial_speed=100.0)
    with pytest.raises(ParameterError, match="initial_speed"):
        plugging(m, None, resistance=1.0, initial_speed=-5.0)
    with pytest.raises(ParameterError, match="final_voltage"):
        regenerative_braking(m, None, ramp_time=1.0, final_voltage=500.0, initial_speed=100.0)
