"""Physical invariants of every connection over random valid machines (hypothesis)."""

import numpy as np
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from dcchar.models.connections import Compound, PermanentMagnet, SeparatelyExcited, Series, Shunt
from dcchar.models.losses import RotationalLoss
from dcchar.models.magnetics import Froehlich, QuadraticArmatureReaction, TabulatedMagnetization

pos = lambda lo, hi: st.floats(lo, hi, allow_nan=False, allow_infinity=False)  # noqa: E731


@st.composite
def magnetizations(draw):
    w0 = draw(pos(50.0, 300.0))
    if draw(st.booleans()):
        return Froehlich(a=draw(pos(100.0, 600.0)), b=draw(pos(0.5, 50.0)), reference_speed=w0,
                         residual_emf=draw(pos(0.0, 10.0)))
    n = draw(st.integers(3, 7))
    F = np.cumsum(draw(st.lists(pos(0.2, 20.0), min_size=n, max_size=n)))
    dE = draw(st.lists(pos(1.0, 80.0), min_size=n, max_size=n))
    E = np.cumsum(sorted(dE, reverse=True))  # concave: saturating
    return TabulatedMagnetization(F, E, reference_speed=w0)


@st.composite
def losses(draw):
    return RotationalLoss(friction_torque=draw(pos(0.0, 2.0)), viscous=draw(pos(0.0, 0.01)),
                          windage=draw(pos(0.0, 1e-4)), core_hysteresis=draw(pos(0.0, 0.5)),
                          core_eddy=draw(pos(0.0, 0.005)), fixed_power=draw(pos(0.0, 200.0)))


@st.composite
def machines(draw, connections=("separately_excited", "shunt", "series", "long", "short", "pm"), reaction=True):
    conn = draw(st.sampled_from(connections))
    mag = draw(magnetizations())
    common = dict(armature_resistance=draw(pos(0.01, 1.0)), brush_drop=draw(pos(0.0, 3.0)),
                  external_resistance=draw(pos(0.0, 0.5)), rotational_loss=draw(losses()),
                  stray_load=draw(pos(0.0, 1e-4)), winding_temperature=draw(pos(20.0, 120.0)))
    if reaction and draw(st.booleans()):
        common["armature_reaction"] = QuadraticArmatureReaction(draw(pos(0.0, 0.01)), draw(pos(0.0, 1e-5)))
    fr = draw(pos(20.0, 400.0))
    if conn == "separately_excited":
        return SeparatelyExcited(magnetization=mag, field_resistance=fr, field_voltage=draw(pos(50.0, 300.0)),
                                 count_field_input=draw(st.booleans()), **common)
    if conn == "shunt":
        return Shunt(magnetization=mag, field_resistance=fr, field_rheostat=draw(pos(0.0, 100.0)), **common)
    if conn == "series":
        return Series(magnetization=mag, series_turns=draw(pos(0.01, 1.0)), series_resistance=draw(pos(0.01, 0.3)),
                      diverter_resistance=draw(st.one_of(st.just(float("inf")), pos(0.01, 1.0))), **common)
    if conn in ("long", "short"):
        return Compound(magnetization=mag, field_resistance=fr, series_turns=draw(pos(0.001, 0.05)),
                        series_resistance=draw(pos(0.01, 0.1)), shunt_connection=conn,
                        kind=draw(st.sampled_from(["cumulative", "differential"])), **common)
    return PermanentMagnet(kphi=draw(pos(0.2, 3.0)), magnet_material=draw(st.sampled_from(["ferrite", "ndfeb"])),
                           magnet_temperature=draw(pos(0.0, 120.0)), demagnetization=draw(pos(0.0, 1e-3)),
                           **common)


@settings(max_examples=300, deadline=None)
@given(machines(), pos(24.0, 600.0))
def test_power_balance_closes(m, voltage):
    i_lr = m.locked_rotor_current(voltage)
    c = m.characteristic(voltage, np.linspace(-0.5 * i_lr, i_lr, 101))
    ok = np.isfinite(c.speed) & np.isfinite(c.input_power)
    terms = np.abs(c.input_power) + np.abs(c.output_power) + c.total_losses
    resid = np.abs(c.power_balance_residual())[ok]
    assert np.all(resid <= 1e-9 * terms[ok] + 1e-9)


@settings(max_examples=300, deadline=None)
@given(machines(), pos(24.0, 600.0))
def test_efficiency_between_zero_and_one_when_motoring(m, voltage):
    c = m.characteristic(voltage, points=101)
    motoring = (c.output_power > 0) & (c.input_power > 0) & np.isfinite(c.speed)
    assert np.all((c.efficiency[motoring] > 0) & (c.efficiency[motoring] < 1))
    # every loss term is non-negative where the speed is defined
    fin = np.isfinite(c.speed)
    for name in ("armature_copper", "series_field_copper", "shunt_field_copper", "brush", "friction_windage",
                 "core", "stray"):
        assert np.all(getattr(c, name)[fin] >= -1e-12), name


@settings(max_examples=200, deadline=None)
@given(machines(connections=("shunt", "series", "long", "short", "separately_excited"), reaction=False),
       pos(100.0, 600.0))
def test_speed_falls_with_torque_in_normal_range(m, voltage):
    # common practice, no source: without armature reaction, shunt, series and cumulative compound
    # speed falls as the developed torque rises, from light load to rated-like currents.
    assume(getattr(m, "kind", "cumulative") == "cumulative")
    i_lr = m.locked_rotor_current(voltage)
    c = m.characteristic(voltage, np.linspace(0.02 * i_lr, 0.5 * i_lr, 60))
    ok = np.isfinite(c.speed)
    w, t = c.speed[ok], c.developed_torque[ok]
    assert np.all(np.diff(t) > 0)
    assert np.all(np.diff(w) < 0)
