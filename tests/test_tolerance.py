"""Tests of the Monte Carlo tolerance study: zero spread reproduces the nominal machine, known
spreads give the analytic statistics, shares are reproducible, bad input raises."""

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose

from dcchar.errors import ParameterError
from dcchar.models.connections import PermanentMagnet, Rating, Shunt
from dcchar.models.loads import ConstantTorque, Fan
from dcchar.models.magnetics import LinearMagnetization
from dcchar.studies.demo import DEMO_RATING, demo_family
from dcchar.studies.selection import (AccelerationTime, ConstantPowerRange, LostField, LostLoad, Lowering, LowSpeed,
                                      SpeedHold, StartingTorque, TopSpeed, default_requirements, selection_matrix)
from dcchar.studies.tolerance import Spread, curve_bands, percentiles, sample_case, tolerance_study

R = DEMO_RATING


@pytest.fixture(scope="module")
def matrix():
    reqs = default_requirements("fan", R).with_(
        AccelerationTime(value=5.0), SpeedHold(value=5.0, step=20.0), ConstantPowerRange(value=2.0),
        StartingTorque(value=1.2, basis="running"), LostField(), Lowering())
    return selection_matrix(demo_family(), Fan(rated_speed=R.speed, rated_torque=0.9 * R.torque), reqs)


def test_zero_spread_reproduces_every_nominal_figure_and_verdict(matrix):
    study = tolerance_study(matrix, Spread.none(), samples=4)
    for (key, fig), cell in matrix.cells.items():
        share = study.share(key, fig)
        assert share.passed == (1.0 if cell.verdict == "pass" else 0.0), (key, fig)
        assert share.marginal == (1.0 if cell.verdict == "marginal" else 0.0), (key, fig)
        v = study.figures[(key, fig)]
        nominal = float(cell.value)
        ws = matrix.cases[key].safe_speed
        if math.isfinite(nominal) and abs(nominal) < 1e3 * ws:  # figures beyond that mean "no bound"
            # regression, not published: the vectorized twin against the scalar studies
            assert_allclose(v, nominal, rtol=1e-7, err_msg=f"{key} {fig}")


def test_zero_spread_band_collapses_to_the_nominal_curve(matrix):
    bands = curve_bands(matrix, Spread.none(), samples=5)
    for key, b in bands.items():
        ok = np.isfinite(b.nominal_speed)
        assert ok.sum() > 10
        for row in b.speed:
            assert_allclose(row[ok], b.nominal_speed[ok], rtol=1e-12, err_msg=key)
        assert np.all(np.isnan(b.speed[:, ~ok]))
        p = matrix.cases[key].operating.point
        assert_allclose(b.point_speed, p.speed, rtol=1e-9)


def _pm(voltage=200.0):
    return PermanentMagnet(armature_resistance=0.5, kphi=1.0, rating=Rating(voltage, 20.0, 180.0, 3000.0))


def test_normal_supply_gives_linear_statistics_of_no_load_speed():
    # Lossless magnet motor: no-load speed w = V/kphi (the EMF equation), so with V normal the
    # speed is normal with mean V0/kphi and standard deviation sd(V)/kphi. Standard errors of the
    # sample mean and standard deviation: s/sqrt(n) and s/sqrt(2(n-1)) (normal theory).
    m = selection_matrix({"pm": _pm()}, ConstantTorque(5.0), [LostLoad()])
    n = 20_000
    spread = Spread(resistance=0.0, magnetization=0.0, supply_voltage=0.04, distribution="normal", sigmas=2.0)
    w = tolerance_study(m, spread, samples=n, seed=7).figures[("pm", "lost_load")]
    mean, sd = 200.0 / 1.0, 0.02 * 200.0 / 1.0
    assert abs(w.mean() - mean) < 4 * sd / math.sqrt(n)
    assert abs(w.std(ddof=1) - sd) < 4 * sd / math.sqrt(2 * (n - 1))


def test_shunt_no_load_speed_ignores_supply_with_linear_magnetics():
    # Linear magnetics, no residual, no losses: kphi is proportional to V (field across the
    # supply) so the no-load speed V/kphi does not depend on V at all (shunt motor equation).
    sh = Shunt(armature_resistance=0.5, magnetization=LinearMagnetization(200.0, 100.0), field_resistance=200.0,
               rating=Rating(200.0, 20.0, 100.0, 2000.0))
    m = selection_matrix({"sh": sh}, ConstantTorque(5.0), [LostLoad()])
    w = tolerance_study(m, Spread(resistance=0.0, magnetization=0.0, supply_voltage=0.1), samples=2000).figures[
        ("sh", "lost_load")]
    # the model takes the no-load limit at 1e-9 x the locked-rotor current: an I*R drop of ~1e-9 V/V
    assert_allclose(w, 200.0 / 2.0, rtol=1e-8)


def test_spread_makes_fragile_verdicts_visible(matrix):
    study = tolerance_study(matrix, Spread(), samples=2000, seed=1)
    assert 0.0 < study.share("separately_excited", "constant_power_range").passed < 1.0
    assert study.share("separately_excited", "constant_power_range").fragile
    assert all(0.0 <= s.passed + s.marginal + s.failed <= 1.0 + 1e-12 for s in study.shares.values())
    assert len(study.to_rows()) == len(matrix.cells)


def test_seeded_and_progress(matrix):
    seen = []
    a = tolerance_study(matrix, Spread(), samples=300, seed=3, progress=seen.append)
    b = tolerance_study(matrix, Spread(), samples=300, seed=3)
    assert [s.passed for s in a.shares.values()] == [s.passed for s in b.shares.values()]
    assert seen == sorted(seen) and seen[-1] == pytest.approx(1.0)


def test_percentiles_match_numpy():
    rng = np.random.default_rng(0)
    a = rng.normal(size=(101, 4))
    # numpy.percentile with its default linear method as the reference
    assert_allclose(percentiles(a, [5, 50, 95]), np.percentile(a, [5, 50, 95], axis=0), rtol=1e-14)
    b = a.copy()
    b[:50, 0] = np.nan
    b[:, 1] = np.nan
    p = percentiles(b, [50])
    assert_allclose(p[0, 0], np.median(a[50:, 0]))
    assert np.isnan(p[0, 1])


def test_bad_input(matrix):
    with pytest.raises(ParameterError):
        Spread(resistance=-0.1)
    with pytest.raises(ParameterError):
        Spread(winding_temperature=(80.0, 20.0))
    with pytest.raises(ParameterError):
        Spread(distribution="triangular")
    with pytest.raises(ParameterError):
        tolerance_study(matrix, Spread(), samples=0)
    with pytest.raises(ParameterError):
        curve_bands(matrix, "wide", samples=10)


def test_temperature_spreads_move_resistance_and_magnets():
    m = selection_matrix({"pm": _pm()}, ConstantTorque(5.0), [LostLoad(), LowSpeed(value=50.0)])
    hot = tolerance_study(m, Spread.none().__class__(resistance=0.0, magnetization=0.0, supply_voltage=0.0,
                                                     magnet_temperature=(80.0, 80.0)), samples=3)
    # ferrite loses 0.2 %/K (magnet makers' data, as in dcchar.models.temperature): 60 K -> 12 % less flux
    assert_allclose(hot.figures[("pm", "lost_load")], 200.0 / (1.0 - 0.0020 * 60.0), rtol=1e-9)
    warm = tolerance_study(m, Spread(resistance=0.0, magnetization=0.0, supply_voltage=0.0,
                                     winding_temperature=(25.0, 125.0)), samples=500)
    assert np.ptp(warm.figures[("pm", "low_speed")]) > 0


def _dense_band(case, spread, samples, seed, grid, q):
    """Reference band: the same samples (drawn as curve_bands draws them), each swept over 6,400
    current nodes, read off its running branch with numpy.interp; numpy.percentile over them."""
    s = sample_case(case, spread, samples, np.random.default_rng(seed))
    x = np.unique(np.concatenate([np.geomspace(1e-6, 0.02, 400), np.linspace(0.02, 1.0, 6000)]))
    ev = s.evaluator()
    with np.errstate(all="ignore"):
        w, t = ev.speed_torque(np.asarray(ev.standstill_current()).reshape(-1, 1) * x)
    w = np.broadcast_to(w, t.shape)
    speed = np.full((samples, grid.size), np.nan)
    for r in range(samples):
        with np.errstate(invalid="ignore"):
            ok = np.isfinite(w[r]) & np.isfinite(t[r]) & (np.abs(w[r]) <= case.safe_speed)
        j = np.argmax(ok)
        run = ok[j:] & np.concatenate([[True], np.diff(t[r, j:]) >= 0])  # within the safe speed, torque rising
        n = run.size if run.all() else np.argmin(run)
        if n >= 2:
            speed[r] = np.interp(grid, t[r, j:j + n], w[r, j:j + n], left=np.nan, right=np.nan)
    cover = np.isfinite(speed).mean(axis=0)
    pct = np.array([np.percentile(c[np.isfinite(c)], q) if np.isfinite(c).any() else np.full(len(q), np.nan)
                    for c in speed.T]).T
    return pct, cover


@pytest.mark.parametrize("key, rtol, coverage", [
    ("shunt", 1e-5, 0.0), ("separately_excited", 1e-5, 0.0), ("permanent_magnet", 1e-5, 0.0),
    ("long_shunt_compound", 3e-4, 0.0), ("short_shunt_compound", 3e-4, 0.0), ("series", 1e-2, 0.1),
    ("differential_long_shunt_compound", 1e-2, 0.01), ("differential_short_shunt_compound", 1e-2, 0.01)])
def test_band_matches_a_dense_sweep(key, rtol, coverage):
    # regression, not published: the band's nodes against 6,400 nodes on the same samples, numpy.interp
    # and numpy.percentile as the reference; the tolerances are those stated in curve_bands
    fam = demo_family(differential=True)
    m = selection_matrix({key: fam[key]}, Fan(rated_speed=R.speed, rated_torque=0.9 * R.torque), [LostLoad()])
    b = curve_bands(m, Spread(), samples=400, seed=11)[key]
    pct, cover = _dense_band(m.cases[key], Spread(), 400, 11, b.torque, b.percentiles)
    both = np.isfinite(b.speed) & np.isfinite(pct)
    assert both.sum() > 60
    assert_allclose(b.speed[both], pct[both], rtol=rtol)
    assert_allclose(b.coverage, cover, atol=coverage + 1e-12)


def test_blocks_and_node_split_leave_the_band_unchanged(monkeypatch):
    # How the samples are cut into blocks, and which nodes are swept for every sample, are matters of
    # speed: blocks of 7 samples and every node for every sample give the same band.
    import dcchar.studies.tolerance as tolerance

    fam = demo_family()
    m = selection_matrix({k: fam[k] for k in ("shunt", "series")}, Fan(rated_speed=R.speed, rated_torque=0.9 * R.torque),
                         [LostLoad()])
    spread = Spread(winding_temperature=(0.0, 150.0), supply_voltage=0.1)  # hot, low-voltage samples sweep further
    sweeps = []
    curves = tolerance._curves
    monkeypatch.setattr(tolerance, "_curves", lambda s, nodes: sweeps.append(s.n) or curves(s, nodes))
    a = curve_bands(m, spread, samples=1200, seed=4)
    assert len(sweeps) > 2 * 3  # three blocks per candidate, and the rest of the nodes for some samples
    monkeypatch.setattr(tolerance, "_BLOCK", 7)
    monkeypatch.setattr(tolerance, "_REACH", math.inf)
    b = curve_bands(m, spread, samples=1200, seed=4)
    for key in a:
        assert np.array_equal(a[key].speed, b[key].speed, equal_nan=True)
        assert np.array_equal(a[key].nominal_speed, b[key].nominal_speed, equal_nan=True)
        assert_allclose(a[key].point_speed, b[key].point_speed, rtol=1e-10)
