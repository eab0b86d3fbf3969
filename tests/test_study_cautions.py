"""Caution rules for a machine on a load (dcchar.studies.cautions). The thresholds are stated
defaults (common practice, no source); each rule is checked to fire when its condition holds and
to stay quiet otherwise."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

from dcchar.errors import ParameterError
from dcchar.models.cautions import DEFERENCE
from dcchar.models.connections import PermanentMagnet
from dcchar.models.loads import ConstantTorque, Fan, Gearing, Hoist
from dcchar.studies.cautions import Thresholds, all_cautions, cautions_for
from dcchar.studies.demo import DEMO_RATING, demo_family
from dcchar.studies.operating import operating_points

FAM = demo_family(differential=True)
T_R = DEMO_RATING.torque


def codes(machine, load, **kw):
    r = operating_points(machine, load)
    return [c.code for c in cautions_for(machine, load, r, **kw)], r


class BeltedTorque:
    """A constant torque through a belt (a load flagged ``belted``)."""

    kind = "constant"
    belted = True
    inertia = 0.0

    def __init__(self, t):
        self.breakaway_torque = t
        self.t = t

    def torque(self, w):
        return np.full(np.shape(w), self.t) * np.where(np.asarray(w) < 0, -1.0, 1.0)

    def slope(self, w):
        return np.zeros(np.shape(w))


def test_series_light_load_and_belt():
    c, _ = codes(FAM["series"], ConstantTorque(0.1 * T_R))
    assert "series_light_load" in c and c[-1] == "defer"
    c, _ = codes(FAM["series"], ConstantTorque(T_R))
    assert "series_light_load" not in c and "series_belted" not in c
    c, _ = codes(FAM["series"], BeltedTorque(T_R))
    assert "series_belted" in c
    c, _ = codes(FAM["shunt"], BeltedTorque(T_R))
    assert "series_belted" not in c


def test_field_loss_on_shunt_and_differential_not_on_series_or_magnets():
    for key in ("shunt", "separately_excited", "differential_long_shunt_compound", "long_shunt_compound"):
        assert "field_loss_runaway" in codes(FAM[key], ConstantTorque(T_R))[0], key
    for key in ("series", "permanent_magnet"):
        assert "field_loss_runaway" not in codes(FAM[key], ConstantTorque(T_R))[0], key


def test_differential_compound_reverses_at_standstill():
    c, r = codes(FAM["differential_long_shunt_compound"], ConstantTorque(T_R))
    assert r.locked_rotor_torque < 0 and "differential_start" in c
    assert "differential_start" not in codes(FAM["long_shunt_compound"], ConstantTorque(T_R))[0]


def test_starting_current_threshold():
    m = FAM["shunt"]
    assert "starting_current" in codes(m, ConstantTorque(T_R))[0]  # about 20 x rated across the line
    assert "starting_current" not in codes(m, ConstantTorque(T_R), thresholds=Thresholds(starting_multiple=50.0))[0]
    # with a starting resistor in circuit the rule does not apply
    assert "starting_current" not in codes(m.with_(external_resistance=2.0), ConstantTorque(20.0))[0]


def test_hoist_brake_and_overhauling():
    hoist = Hoist(load_mass=900.0, drum_diameter=0.4, gearing=Gearing(ratio=25.0, efficiency=0.9))
    c, _ = codes(FAM["shunt"], hoist)
    assert "hoist_brake" in c and "overhauling" in c
    # an overhauling torque at positive speed: the shunt motor regenerates above no-load speed
    c, r = codes(FAM["shunt"], ConstantTorque(-20.0, active=True))
    assert r.reason == "generating" and "overhauling" in c and "hoist_brake" not in c
    assert "overhauling" not in codes(FAM["shunt"], ConstantTorque(T_R))[0]


def test_runaway_and_cannot_start():
    c, r = codes(FAM["series"], ConstantTorque(0.0))
    assert r.reason == "runs away" and "runaway" in c
    c, r = codes(FAM["shunt"], ConstantTorque(1.2 * operating_points(FAM["shunt"], ConstantTorque(1.0))
                                              .locked_rotor_torque))
    assert r.reason == "cannot start" and "cannot_start" in c


def test_unstable_point_rule():
    m = FAM["shunt"]
    load = ConstantTorque(T_R)
    r = operating_points(m, load)
    assert "unstable" not in [c.code for c in cautions_for(m, load, r)]
    bad = dataclasses.replace(r, point=dataclasses.replace(r.point, stable=False, stability_slope=3.0))
    found = [c for c in cautions_for(m, load, bad) if c.code == "unstable"]
    assert found and found[0].severity == "danger" and "3" in found[0].reason


def test_overcurrent_and_speed_margin():
    m = FAM["permanent_magnet"]
    c, r = codes(m, ConstantTorque(1.3 * T_R))
    assert "overcurrent" in c and r.point.margins.current < 0
    assert "overcurrent" not in codes(m, ConstantTorque(0.8 * T_R))[0]
    assert "overspeed_margin" in codes(m, ConstantTorque(T_R), thresholds=Thresholds(speed_fraction=0.3))[0]
    assert "overspeed_margin" not in codes(m, ConstantTorque(T_R))[0]


def test_nothing_applies_gives_no_list_and_defer_closes_every_list():
    m = PermanentMagnet(armature_resistance=0.5, kphi=1.5, external_resistance=5.0)
    load = ConstantTorque(10.0)
    r = operating_points(m, load, 100.0)
    assert cautions_for(m, load, r) == []
    c = cautions_for(FAM["series"], ConstantTorque(0.0), operating_points(FAM["series"], ConstantTorque(0.0)))
    assert c[-1].code == "defer" and c[-1].text == DEFERENCE


def test_thresholds_validate():
    with pytest.raises(ParameterError):
        Thresholds(starting_multiple=-1.0)


def test_every_study_shows_the_machine_cautions_with_the_load_ones():
    # a series motor must never run unloaded (common practice, no source): the machine-only rule
    # comes with the load rules wherever cautions are shown (comparison and selection matrix)
    from dcchar.studies.comparison import compare
    from dcchar.studies.selection import StartingCurrent, selection_matrix

    load = Fan(rated_speed=DEMO_RATING.speed, rated_torque=0.9 * DEMO_RATING.torque)
    r = operating_points(FAM["series"], load)
    codes = [c.code for c in all_cautions(FAM["series"], load, r)]
    assert "series_no_load" in codes and "starting_current" in codes and codes[-1] == "defer"
    assert compare({"series": FAM["series"]}, load).candidates["series"].cautions == all_cautions(
        FAM["series"], load, r)
    m = selection_matrix({"series": FAM["series"]}, load, [StartingCurrent(value=1e6)])
    lead = m.cases["series"]
    assert m.cautions == all_cautions(lead.machine, load, lead.operating)
