"""Tests of dcchar.studies.series_starter: starter steps from a non-linear characteristic."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from dcchar.errors import ParameterError
from dcchar.models.connections import PermanentMagnet, Rating, SeparatelyExcited, Series
from dcchar.models.loads import ConstantTorque
from dcchar.models.magnetics import Froehlich, LinearMagnetization, QuadraticArmatureReaction
from dcchar.studies.series_starter import series_starter_steps
from dcchar.studies.starter_steps import starter_steps
from dcchar.studies.transients import simulate_start


@pytest.mark.parametrize("machine", [
    PermanentMagnet(armature_resistance=0.5, kphi=1.2),
    SeparatelyExcited(armature_resistance=0.5, magnetization=Froehlich(a=300.0, b=1.0, reference_speed=100.0),
                      field_resistance=100.0, field_voltage=220.0),
])
def test_constant_flux_gives_theraja_geometric_progression(machine):
    # Theraja, A Textbook of Electrical Technology Vol. II, Ex 30.50: 220 V, Ra = 0.5 ohm, 40 A,
    # 7 studs; sections 1.812, 1.215, 0.815, 0.546, 0.366, 0.246 ohm (book prints 3 decimals:
    # tolerance half a unit of the last digit). Constant flux, whatever its value.
    d = series_starter_steps(machine, 40.0, voltage=220.0, sections=6)
    assert_allclose(d.section_resistance, [1.812, 1.215, 0.815, 0.546, 0.366, 0.246], atol=5e-4, rtol=0)
    gp = starter_steps(220.0, 0.5, 40.0, sections=6)  # the closed-form geometric progression
    assert_allclose(d.total_resistance, gp.total_resistance, rtol=1e-9)
    assert_allclose(d.min_current, gp.min_current, rtol=1e-9)


def _linear_series(K=0.02, Ra=0.3, Rs=0.2):
    """kphi = K*I_a exactly: slope*N_s/w0 = K."""
    return Series(armature_resistance=Ra, magnetization=LinearMagnetization(K * 100.0, 100.0), series_turns=1.0,
                  series_resistance=Rs)


def test_linear_series_arithmetic_progression_closed_form():
    # Derivation in the docstring: R_j - R_(j+1) = V (1/I2 - 1/I1), w_j = (V/I2 - R_j)/K.
    K, V, i1 = 0.02, 220.0, 100.0
    m = _linear_series(K)
    d = series_starter_steps(m, i1, voltage=V, sections=4)
    i2 = d.min_current
    # the section count closes the chain on the loop: n = (V/I1 - R_loop)/(V (1/I2 - 1/I1))
    assert_allclose(i2, 1.0 / ((V / i1 - 0.5) / (4 * V) + 1.0 / i1), rtol=1e-10)
    assert_allclose(d.section_resistance, V * (1.0 / i2 - 1.0 / i1), rtol=1e-9)
    assert_allclose(d.cutout_speed, (V / i2 - d.total_resistance[:-1]) / K, rtol=1e-9)
    assert_allclose(d.cutout_emf, V - i2 * d.total_resistance[:-1], rtol=1e-12)


def test_linear_series_from_min_current_rounds_up():
    K, V, i1, i2 = 0.02, 220.0, 100.0, 60.0
    d = series_starter_steps(_linear_series(K), i1, voltage=V, min_current=i2)
    exact = (V / i1 - 0.5) / (V * (1 / i2 - 1 / i1))  # 1.159 sections
    assert d.sections == math.ceil(exact) == 2
    assert d.min_current > i2 and d.min_current_requested == i2


def _froehlich_series():
    # demo data, our own invention: saturating series motor with armature reaction and brush drop
    return Series(armature_resistance=0.25, brush_drop=2.0, magnetization=Froehlich(a=400.0, b=60.0,
                  reference_speed=100.0, residual_emf=4.0), series_turns=1.0, series_resistance=0.15,
                  armature_reaction=QuadraticArmatureReaction(0.05), inertia=1.5,
                  rating=Rating(220.0, 45.0, 100.0, 9000.0))


def test_saturated_series_each_stud_returns_to_the_peak():
    m = _froehlich_series()
    d = series_starter_steps(m, 100.0, voltage=220.0, sections=5)
    base = m.loop_resistance()
    for j in range(d.sections):
        nxt = m.with_(external_resistance=d.total_resistance[j + 1] - base)
        cur = m.with_(external_resistance=d.total_resistance[j] - base)
        # entering stud j+1 at the cut-out speed the current is I1; leaving stud j it is I2
        assert_allclose(nxt.scalar_state(220.0, 100.0)[0], d.cutout_speed[j], rtol=1e-9)
        assert_allclose(cur.scalar_state(220.0, d.min_current)[0], d.cutout_speed[j], rtol=1e-9)
    assert np.all(np.diff(d.cutout_speed) > 0)
    # saturation: not a geometric progression and not equal sections
    ratios = d.total_resistance[1:] / d.total_resistance[:-1]
    assert np.ptp(ratios) > 1e-3 and np.ptp(d.section_resistance) > 1e-3
    assert any("more than twice the rated" in n for n in d.notes)  # 100 A > 2 x 45 A


def test_saturated_series_matches_a_simulated_start():
    # Cross-check with the transient engine (L = 0 is the design assumption): every stud peaks at
    # I1 and each section is cut out at the designed speed.
    m = _froehlich_series()
    d = series_starter_steps(m, 100.0, voltage=220.0, sections=4)
    tr = simulate_start(m, ConstantTorque(40.0, load_inertia=1.0), 220.0, starter=d, rtol=1e-10)
    assert tr.completed
    assert_allclose(tr.stud_peak_currents, 100.0, rtol=1e-6)
    cut = [tr.speed[np.searchsorted(tr.time, ts)] for ts in tr.switch_times]
    assert_allclose(cut, d.cutout_speed, rtol=1e-6)


def test_no_starter_needed():
    d = series_starter_steps(_linear_series(), 1000.0, voltage=220.0, sections=3)
    assert not d.needed and "already limits" in d.reason


def test_bad_input():
    m = _linear_series()
    with pytest.raises(ParameterError, match="sections"):
        series_starter_steps(m, 100.0, voltage=220.0)
    with pytest.raises(ParameterError, match="min_current"):
        series_starter_steps(m, 100.0, voltage=220.0, min_current=120.0)
    with pytest.raises(ParameterError, match="sections"):
        series_starter_steps(m, 100.0, voltage=220.0, sections=0)
    with pytest.raises(ParameterError, match="max_current"):
        series_starter_steps(m, -1.0, voltage=220.0, sections=2)


@settings(max_examples=20, deadline=None)
@given(n=st.integers(1, 8), i1=st.floats(60.0, 300.0), a=st.floats(200.0, 600.0), b=st.floats(10.0, 200.0))
def test_chain_closes_on_the_loop(n, i1, a, b):
    # invariant: the last stud is the machine's loop, resistances fall, the cut-out speeds rise
    m = Series(armature_resistance=0.2, magnetization=Froehlich(a=a, b=b, reference_speed=100.0), series_turns=1.0,
               series_resistance=0.1)
    d = series_starter_steps(m, i1, voltage=220.0, sections=n)
    assert d.total_resistance[-1] == m.loop_resistance()
    assert np.all(np.diff(d.total_resistance) < 0)
    assert np.all(np.diff(d.cutout_speed) > 0) and 0 < d.min_current < i1


def test_stepped_starter_follows_the_flux_of_each_connection():
    # With a series field the flux rises with the current, so the steps are not in geometric
    # progression (Theraja, Electrical Technology, vol. II, series-motor starter, from memory,
    # unverified): the series design keeps every stud peak near I1, the constant-flux design
    # lets it fall stud by stud. Constant-flux connections keep the geometric design.
    from dcchar.models.loads import Fan
    from dcchar.studies.demo import DEMO_RATING, demo_family
    from dcchar.studies.series_starter import stepped_starter
    from dcchar.studies.starter_steps import starter_steps

    fam = demo_family()
    load = Fan(rated_speed=DEMO_RATING.speed, rated_torque=0.9 * DEMO_RATING.torque, load_inertia=0.5)
    for key in ("series", "long_shunt_compound", "short_shunt_compound"):
        m = fam[key]
        i1 = 2.0 * m.rating.current
        d = stepped_starter(m, i1, sections=4)
        ref = series_starter_steps(m, i1, sections=4, rated_current=m.rating.current)
        assert np.array_equal(d.total_resistance, ref.total_resistance)
        peaks = simulate_start(m, load, DEMO_RATING.voltage, starter=d).stud_peak_currents
        geometric = starter_steps(DEMO_RATING.voltage, m.loop_resistance(), i1, sections=4, brush_drop=m.brush_drop,
                                  rated_current=m.rating.current)
        flat = simulate_start(m, load, DEMO_RATING.voltage, starter=geometric).stud_peak_currents
        assert min(peaks) > 0.85 * i1 and min(peaks) > min(flat) + 0.1 * i1
    m = fam["shunt"]
    d = stepped_starter(m, 2.0 * m.rating.current, sections=4)
    ref = starter_steps(DEMO_RATING.voltage, m.loop_resistance(), 2.0 * m.rating.current, sections=4,
                        brush_drop=m.brush_drop, rated_current=m.rating.current)
    assert np.array_equal(d.total_resistance, ref.total_resistance)
