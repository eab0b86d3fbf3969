"""Tests of the tolerance charts: what is drawn matches the results, grey-scale cues, export."""

import numpy as np
import pytest
from numpy.testing import assert_allclose

from dcchar.models.loads import Fan
from dcchar.studies.demo import DEMO_RATING, demo_family
from dcchar.studies.selection import default_requirements, selection_matrix
from dcchar.studies.tolerance import Spread, curve_bands, tolerance_study

R = DEMO_RATING


@pytest.fixture(scope="module")
def results():
    m = selection_matrix(demo_family(), Fan(rated_speed=R.speed, rated_torque=0.9 * R.torque),
                         default_requirements("fan", R))
    return m, curve_bands(m, Spread(), samples=300), tolerance_study(m, Spread(), samples=300)


def test_band_chart_draws_the_percentiles(results):
    from dcchar.charts.bands import band_chart
    from dcchar.charts.style import style_for
    from dcchar.models.units import RPM

    m, bands, _ = results
    out = band_chart(bands)
    assert len(out["fills"]) == len(bands) == len(out["medians"])
    for line, b in zip(out["medians"], bands.values()):
        x, y = line.get_data()
        assert_allclose(x, b.torque)  # SI torque is N*m on screen
        assert_allclose(np.asarray(y, float), b.speed[1] / RPM, equal_nan=True)
        assert line.get_color() == style_for(b.machine).color
    assert out["legend"] is not None


def test_pass_share_chart_cells_symbols_and_hatches(results, tmp_path):
    from dcchar.charts.bands import VERDICT_LOOK, pass_share_chart
    from dcchar.charts.export import save_figure

    m, _, study = results
    out = pass_share_chart(m, study)
    assert len(out["cells"]) == len(m.cells)
    for (key, fig), rect in out["cells"].items():
        verdict = m.cell(key, fig).verdict
        assert (rect.get_hatch() or "") == VERDICT_LOOK[verdict]["hatch"]
        text = out["texts"][(key, fig)].get_text()
        assert text.startswith(VERDICT_LOOK[verdict]["symbol"])
        assert f"{100 * study.share(key, fig).passed:.0f} %" in text
    # grey scale: the three verdicts differ in shade and in hatch
    shades = {v["facecolor"] for v in VERDICT_LOOK.values()}
    hatches = {v["hatch"] for v in VERDICT_LOOK.values()}
    assert len(shades) == 3 and len(hatches) == 3
    files = save_figure(out["figure"], tmp_path / "matrix", formats=("png",), dpi=100)
    assert files[0].stat().st_size > 1000


def test_matrix_chart_without_study(results):
    from dcchar.charts.bands import pass_share_chart

    m, _, _ = results
    out = pass_share_chart(m)
    assert all("%" not in t.get_text() for t in out["texts"].values())
