"""The comparison study: every figure equals the underlying study's, settings act where they should."""

import math

import pytest
from numpy.testing import assert_allclose

from dcchar.errors import ParameterError
from dcchar.files.tables import display_table, format_value
from dcchar.models.loads import ConstantTorque, Fan
from dcchar.models.units import LBF_FT, RPM
from dcchar.studies.comparison import ControlSettings, apply_settings, compare
from dcchar.studies.demo import DEMO_RATING, demo_family
from dcchar.studies.operating import operating_points, speed_regulation, starting


@pytest.fixture(scope="module")
def family():
    return demo_family()


def test_rows_equal_the_studies(family):
    load = ConstantTorque(0.8 * DEMO_RATING.torque)
    c = compare(family, load, ControlSettings(voltage=210.0))
    for key, row in zip(c.candidates, c.rows()):
        m = family[key]
        op = operating_points(m, load, 210.0)
        assert_allclose(row["speed"], op.point.speed, rtol=1e-12)
        assert_allclose(row["torque"], op.point.torque, rtol=1e-12)
        assert_allclose(row["efficiency"], 100 * op.point.efficiency, rtol=1e-12)
        assert_allclose(row["regulation"], speed_regulation(m, None, 210.0).percent, rtol=1e-12)
        assert_allclose(row["starting_current"], starting(m, 210.0).direct.armature_current, rtol=1e-12)
        # every row's torque meets the load (constant torque): common sense check of the glue
        assert_allclose(row["torque"], 0.8 * DEMO_RATING.torque, rtol=1e-9)


def test_settings_act_only_where_the_part_exists(family):
    s = ControlSettings(field_rheostat=20.0, diverter_resistance=0.5, external_resistance=0.3,
                        magnet_temperature=60.0)
    shunt = apply_settings(family["shunt"], s)
    assert shunt.field_rheostat == family["shunt"].field_rheostat + 20.0
    assert shunt.external_resistance == pytest.approx(0.3)
    series = apply_settings(family["series"], s)
    assert series.diverter_resistance == 0.5 and not hasattr(series, "field_rheostat")
    pm = apply_settings(family["permanent_magnet"], s)
    assert pm.magnet_temperature == 60.0
    assert apply_settings(family["shunt"], ControlSettings()) is family["shunt"]


def test_field_weakening_raises_shunt_speed(family):
    # common practice, no source: weakening the shunt field raises the speed on a constant-torque load
    load = ConstantTorque(0.5 * DEMO_RATING.torque)
    base = compare({"shunt": family["shunt"]}, load).rows()[0]["speed"]
    weak = compare({"shunt": family["shunt"]}, load, ControlSettings(field_rheostat=30.0)).rows()[0]["speed"]
    assert weak > base


def test_series_always_carries_its_caution(family):
    c = compare({"series": family["series"]}, Fan.from_duty(DEMO_RATING.speed, torque=DEMO_RATING.torque))
    codes = [x.code for x in c.cautions()["series"]]
    assert "series_no_load" in codes or "series_light_load" in codes
    assert codes[-1] == "defer"


def test_display_table_converts_units(family):
    c = compare({"shunt": family["shunt"]}, ConstantTorque(50.0))
    h_si, r_si = display_table(c, "si")
    h_us, r_us = display_table(c, "us")
    i = h_si.index("shaft torque [N·m]")
    assert h_us[i] == "shaft torque [lbf·ft]"
    # NIST SP 811 B.8: 1 lbf*ft = 1.355818 N*m
    assert_allclose(r_us[0][i] * 1.355818, r_si[0][i], rtol=1e-6)
    j = h_si.index("operating speed [r/min]")
    assert_allclose(r_si[0][j], c.rows()[0]["speed"] * 60 / (2 * math.pi), rtol=1e-12)
    assert format_value(float("nan")) == "–" and format_value(True) == "yes"
    assert LBF_FT and RPM  # factors used by the table come from the units module


def test_bad_settings_name_the_field():
    with pytest.raises(ParameterError, match="field_rheostat"):
        ControlSettings(field_rheostat=-1.0)
    with pytest.raises(ParameterError, match="voltage"):
        ControlSettings(voltage=0.0)
