"""Tests of dcchar.studies.duty_machine: a machine on a duty cycle."""

from __future__ import annotations

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose

from dcchar.errors import ParameterError
from dcchar.models.connections import PermanentMagnet, Rating
from dcchar.models.loads import ConstantTorque, Gearing, Hoist
from dcchar.studies.braking import dynamic_braking
from dcchar.studies.demo import demo_family
from dcchar.studies.duty_machine import MachineSegment as S, compare_duty, duty_summary
from dcchar.studies.operating import operating_points
from dcchar.studies.thermal import FirstOrderThermal
from dcchar.studies.transients import simulate_start

KPHI, RA, V = 1.5, 0.4, 200.0


def _pm():
    """kphi constant, no losses but Ra: I = T/kphi exactly at any steady point."""
    return PermanentMagnet(armature_resistance=RA, kphi=KPHI, inertia=0.2,
                           rating=Rating(V, 40.0, (V - 40.0 * RA) / KPHI, 7000.0))


def test_rms_current_and_energy_of_constant_torque_segments():
    # Constant flux: I_k = T_k/kphi; rms = sqrt(sum I_k^2 t_k / T) (Dubey, Fundamentals of
    # Electrical Drives, 2nd ed., ch. 4 rms method); energy drawn = sum V I_k t_k.
    t1, t2 = ConstantTorque(30.0), ConstantTorque(60.0)
    segs = [S(40.0, t1), S(20.0, t2), S(30.0, kind="rest")]
    r = duty_summary(_pm(), segs, voltage=V)
    i = np.array([30.0, 60.0]) / KPHI
    dt = np.array([40.0, 20.0])
    assert_allclose(r.rms_current, math.sqrt(np.sum(i**2 * dt) / 90.0), rtol=1e-9)
    assert_allclose(r.rms_torque, math.sqrt(np.sum(np.array([30.0, 60.0])**2 * dt) / 90.0), rtol=1e-9)
    assert_allclose(r.energy_drawn, np.sum(V * i * dt), rtol=1e-9)
    assert_allclose(r.energy_losses, np.sum(i**2 * RA * dt), rtol=1e-9)
    assert_allclose(r.peak_current, 40.0, rtol=1e-9)
    assert_allclose(r.rated_current_ratio, r.rms_current / 40.0, rtol=1e-12)
    # IEC 60034-1: periodic with rest and no starting or braking -> S3, CDF = 60/90
    assert r.duty.duty_type == "S3" and r.duty.cdf == pytest.approx(60.0 / 90.0, rel=1e-12)
    assert r.feasible and r.within_rating


def test_points_agree_with_operating_points():
    m = demo_family()["series"]
    load = ConstantTorque(70.0)
    r = duty_summary(m, [S(10.0, load)], periodic=False)
    op = operating_points(m, load).point
    seg = r.cycle.segments[0]
    assert seg.current == op.armature_current and seg.speed == op.speed and seg.power == op.input_power
    assert r.duty.duty_type == "S1"


def test_reverse_passive_load_mirrors_forward():
    m = demo_family()["shunt"]
    load = ConstantTorque(50.0)
    fwd = duty_summary(m, [S(10.0, load)]).cycle.segments[0]
    rev = duty_summary(m, [S(10.0, load, direction=-1)]).cycle.segments[0]
    assert rev.speed == -fwd.speed and rev.current == -fwd.current and rev.power == fwd.power


def test_hoist_lowering_series_infeasible_shunt_returns_energy():
    hoist = Hoist(load_mass=500.0, drum_diameter=0.5, gearing=Gearing(15.0, 0.9), drum_inertia=2.0)
    segs = [S(3.0, kind="start", current=90.0), S(20.0, hoist), S(10.0, kind="rest"),
            S(20.0, hoist, direction=-1), S(10.0, kind="rest")]
    fam = demo_family()
    res = compare_duty({"series": fam["series"], "shunt": fam["shunt"]}, segs)
    assert not res["series"].feasible
    assert any("runs away" in why for why in res["series"].reasons)
    assert res["shunt"].feasible and res["shunt"].energy_returned > 0
    assert any("mechanical holding brake" in n for n in res["shunt"].notes)
    assert res["shunt"].duty.duty_type == "S4"


def test_transient_segments_and_thermal():
    m = demo_family()["shunt"]
    load = ConstantTorque(60.0, load_inertia=0.5)
    start = simulate_start(m, load, starter=[2.0, 1.0, m.loop_resistance()], switch_times=[0.5, 1.0],
                           run_time=1.0)
    stop = dynamic_braking(m, load, resistance=3.0)
    segs = [S(None, load, kind="start", transient=start), S(40.0, load), S(None, kind="brake", transient=stop),
            S(30.0, kind="rest")]
    th = FirstOrderThermal(0.04, 1800.0, 3600.0)
    r = duty_summary(m, segs, thermal=th)
    seg0 = r.cycle.segments[0]
    assert seg0.duration == start.duration and seg0.current == pytest.approx(start.rms(), rel=1e-12)
    assert r.peak_current == pytest.approx(max(start.peak_current, stop.peak_current), rel=1e-12)
    assert r.duty.duty_type == "S5" and r.thermal.max_rise > 0


def test_bad_segments():
    with pytest.raises(ParameterError, match="load"):
        S(10.0)
    with pytest.raises(ParameterError, match="direction"):
        S(10.0, ConstantTorque(1.0), direction=2)
    with pytest.raises(ParameterError, match="transient"):
        S(10.0, kind="start")
    with pytest.raises(ParameterError, match="duration"):
        S(None, ConstantTorque(1.0))
    with pytest.raises(ParameterError, match="segments"):
        duty_summary(_pm(), [], voltage=V)


def test_braking_and_duty_count_energy_exchanged_alike():
    # one transient, one account of the energy drawn and returned, wherever it is reported
    # (reference: the solver's own energy integrals, EnergyTerms)
    from dcchar.studies.braking import regenerative_braking
    from dcchar.studies.duty_machine import _transient_values

    m = demo_family()["separately_excited"]
    for br in (dynamic_braking(m, resistance=2.0), regenerative_braking(m, ramp_time=2.0)):
        tr = br.transient
        drawn, returned = tr.energy_exchanged
        values, _ = _transient_values(m, S(kind="brake", transient=br))
        assert (values["drawn"], values["returned"]) == (drawn, returned) == (br.energy_drawn, br.energy_returned)
        e = tr.energy
        assert drawn >= 0.0 and returned >= 0.0
        assert drawn - returned == pytest.approx(e.supply + e.field_supply, rel=1e-3, abs=1e-3 * e.losses)
