"""Nameplate estimate: assumptions stated, ranges, and the rated point reproduced."""

from __future__ import annotations

import subprocess
import sys

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from dcchar.errors import ModelRangeError, ParameterError
from dcchar.models.connections import Compound, PermanentMagnet, SeparatelyExcited, Series, Shunt
from dcchar.models.units import RPM
from dcchar.studies.identification import NAMEPLATE_ASSUMPTIONS, estimate_from_nameplate, output_from_hp

CONNECTIONS = {"separately_excited": SeparatelyExcited, "shunt": Shunt, "series": Series,
               "long_shunt_compound": Compound, "short_shunt_compound": Compound,
               "permanent_magnet": PermanentMagnet}

# Nameplate of our own invention (demo data): 15 hp, 230 V, 57.1 A, 1400 r/min.
PLATE = dict(voltage=230.0, current=57.1, speed=1400.0 * RPM, output=None)


def _plate():
    return dict(PLATE, output=output_from_hp(15.0))


def test_hp_helper_uses_the_nist_horsepower():
    # REFERENCE-VALUES A1-A3: NIST SP 811 App. B.8
    assert_allclose(output_from_hp(1.0), 745.6999, atol=5e-5)
    assert output_from_hp(1.0, "electric") == 746.0
    assert_allclose(output_from_hp(1.0, "metric"), 735.49875, rtol=1e-12)
    with pytest.raises(ParameterError):
        output_from_hp(1.0, "boiler")


@pytest.mark.parametrize("connection", list(CONNECTIONS))
@pytest.mark.parametrize("magnetization", ["linear", "froehlich"])
def test_estimate_reproduces_the_nameplate_point(connection, magnetization):
    e = estimate_from_nameplate(**_plate(), connection=connection, magnetization=magnetization)
    m = e.machine
    assert isinstance(m, CONNECTIONS[connection]) and m.connection == connection
    c = m.characteristic(230.0, [m.rating.current])
    # rated speed and output at rated voltage and current
    assert_allclose(c.speed[0], 1400.0 * RPM, rtol=1e-9)
    assert_allclose(c.output_power[0], output_from_hp(15.0), rtol=1e-9)
    assert_allclose(c.shaft_torque[0], m.rating.torque, rtol=1e-9)
    if connection not in ("separately_excited", "series", "permanent_magnet"):
        assert_allclose(c.supply_current[0], 57.1, rtol=1e-9)  # the nameplate is the line current
    # the parts of the loss add up to the total and the model's loss terms agree with them
    p = {k: v for k, (v, _) in e.parameters.items()}
    parts = p["armature_circuit_copper_loss"] + p["brush_loss"] + p["stray_load_loss"] + p["rotational_loss"] + \
        p.get("field_copper_loss", 0.0) * (connection != "separately_excited")
    assert_allclose(parts, p["total_loss"], rtol=1e-12)
    assert_allclose(c.brush[0], p["brush_loss"], rtol=1e-12)
    assert_allclose(c.stray[0], p["stray_load_loss"], rtol=1e-9)
    assert_allclose(c.friction_windage[0] + c.core[0], p["rotational_loss"], rtol=1e-9)
    assert_allclose(c.power_balance_residual(), 0.0, atol=1e-7)


def test_assumptions_are_stated_with_basis_and_ranges():
    e = estimate_from_nameplate(**_plate(), connection="shunt")
    assert set(e.assumptions) == {"brush_drop", "armature_loss_share", "stray_load_fraction", "core_loss_share",
                                  "winding_temperature", "field_current_share"}
    for k, (value, unit, basis) in e.assumptions.items():
        assert value == NAMEPLATE_ASSUMPTIONS[k][0] and unit == NAMEPLATE_ASSUMPTIONS[k][1]
        assert basis
        lo, hi = e.assumption_ranges[k]
        assert lo <= value <= hi
    assert e.assumptions["brush_drop"][0] == 2.0  # carbon brushes, REFERENCE-VALUES A21
    assert e.assumptions["stray_load_fraction"][0] == 0.01  # Kimberly sec. 14.5, REFERENCE-VALUES A19
    assert "no source" in e.assumptions["armature_loss_share"][2]
    for k, (v, _) in e.parameters.items():
        lo, hi = e.ranges[k]
        assert lo <= v <= hi, k
    rows = e.to_rows()
    assert {r["kind"] for r in rows} == {"assumption", "estimate"}
    assert len(rows) == len(e.assumptions) + len(e.parameters)


def test_armature_resistance_follows_the_loss_share_and_temperature():
    base = estimate_from_nameplate(**_plate(), connection="shunt")
    more = estimate_from_nameplate(**_plate(), connection="shunt", armature_loss_share=0.6)
    ra = base.parameters["hot_armature_resistance"][0]
    assert_allclose(more.parameters["hot_armature_resistance"][0] / ra, 0.6 / 0.5, rtol=1e-12)
    # resistance stated at 25 degC from the hot value at 75 degC: 234.5 constant (REFERENCE-VALUES A16)
    assert_allclose(ra / base.parameters["armature_resistance"][0], 1.193, atol=5e-4)
    lo, hi = base.ranges["hot_armature_resistance"]
    assert_allclose([lo / ra, hi / ra], [0.35 / 0.5, 0.65 / 0.5], rtol=1e-12)


def test_field_data_set_the_field_and_rheostat():
    e = estimate_from_nameplate(**_plate(), connection="shunt", field_current=1.5, field_resistance=100.0)
    m = e.machine
    assert "field_current_share" not in e.assumptions
    c = m.characteristic(230.0, [m.rating.current])
    assert_allclose(c.field_current[0], 1.5, rtol=1e-12)
    assert m.field_rheostat > 0
    with pytest.raises(ParameterError, match="field_resistance"):
        estimate_from_nameplate(**_plate(), connection="shunt", field_current=1.5, field_resistance=1000.0)
    s = estimate_from_nameplate(**_plate(), connection="short_shunt_compound", field_resistance=115.0)
    cs = s.machine.characteristic(230.0, [s.machine.rating.current])
    assert_allclose(cs.speed[0], 1400.0 * RPM, rtol=1e-9)


def test_bad_or_inconsistent_input_is_typed():
    with pytest.raises(ParameterError, match="output"):
        estimate_from_nameplate(230.0, 10.0, 150.0, 2400.0)
    with pytest.raises(ParameterError, match="known assumption"):
        estimate_from_nameplate(**_plate(), brush_fudge=1.0)
    with pytest.raises(ParameterError, match="connection"):
        estimate_from_nameplate(**_plate(), connection="wound")
    with pytest.raises(ModelRangeError, match="exceed"):
        estimate_from_nameplate(**_plate(), armature_loss_share=0.95, brush_drop=10.0)
    with pytest.raises(ParameterError, match="assumption_ranges"):
        estimate_from_nameplate(**_plate(), assumption_ranges={"rated_saturation": (0.6, 0.9)})


def test_import_stays_light():
    code = ("import sys, dcchar.studies.identification as m; "
            "print(any(k.split('.')[0] in ('scipy', 'sympy', 'matplotlib') for k in sys.modules))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"


@settings(max_examples=60, deadline=None)
@given(connection=st.sampled_from(list(CONNECTIONS)), V=st.floats(24.0, 750.0), I=st.floats(2.0, 800.0),
       rpm=st.floats(300.0, 4000.0), eff=st.floats(0.72, 0.94))
def test_any_plausible_nameplate_is_reproduced(connection, V, I, rpm, eff):
    # physical invariant: the estimate passes through its own rated point
    P = eff * V * I
    try:
        e = estimate_from_nameplate(V, I, rpm * RPM, P, connection)
    except ModelRangeError:
        # the default assumptions cannot hold on a low-voltage or very efficient plate (2 V of
        # brush drop, 2 % field current and half the loss in copper leave nothing for rotation);
        # in the usual region they must hold
        assert V < 100.0 or eff > 0.88
        return
    m = e.machine
    w, T = m.scalar_state(V, m.rating.current)
    assert_allclose(w, rpm * RPM, rtol=1e-9)
    assert_allclose(T * w, P, rtol=1e-9)
    assert np.isfinite(e.parameters["kphi"][0]) and e.parameters["kphi"][0] > 0
