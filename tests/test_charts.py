"""Tests of dcchar.charts: what is drawn equals the results in display units, runaway points are
never drawn, styles survive grey-scale printing, exports have the right size and parse, and
the live chart's blitted frames equal full redraws."""

from __future__ import annotations

import json
import math
import struct
import subprocess
import sys
import types
import xml.etree.ElementTree as ET

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose, assert_array_equal

pytest.importorskip("matplotlib")

from matplotlib.backends.backend_agg import FigureCanvasAgg  # noqa: E402
from matplotlib.figure import Figure  # noqa: E402

from dcchar import charts  # noqa: E402
from dcchar.charts import curves, style  # noqa: E402
from dcchar.errors import ParameterError  # noqa: E402
from dcchar.models.connections import Compound, PermanentMagnet, SeparatelyExcited, Series, Shunt  # noqa: E402
from dcchar.models.losses import RotationalLoss  # noqa: E402
from dcchar.models.magnetics import Froehlich  # noqa: E402

# Independent unit factors, NIST SP 811 (2008), App. B.8: 1 ft = 0.3048 m, 1 lbf = 4.4482216152605 N,
# 1 hp = 550 ft*lbf/s; 1 r/min = 2*pi/60 rad/s by definition.
RPM = 2 * math.pi / 60
LBF_FT = 0.3048 * 4.4482216152605
HP = 550 * 0.3048 * 4.4482216152605

# Invented demo machines (not published data): one armature, six connections.
MAG = Froehlich(a=400.0, b=1000.0, reference_speed=1500 * RPM)
COMMON = dict(armature_resistance=0.25, brush_drop=2.0, safe_speed=2500 * RPM,
              rotational_loss=RotationalLoss(friction_torque=1.5, viscous=0.01))


def _family(**changes):
    c = {**COMMON, **changes}
    return [
        SeparatelyExcited(magnetization=MAG, field_resistance=220.0, field_voltage=220.0, field_turns=1000, **c),
        Shunt(magnetization=MAG, field_resistance=220.0, field_turns=1000, **c),
        Series(magnetization=MAG, series_turns=20, series_resistance=0.08, **c),
        Compound(magnetization=MAG, field_resistance=275.0, field_turns=1000, series_turns=5,
                 series_resistance=0.03, **c),
        Compound(magnetization=MAG, field_resistance=220.0, field_turns=1000, series_turns=3,
                 series_resistance=0.03, kind="differential", shunt_connection="short", **c),
        PermanentMagnet(kphi=1.25, **c),
    ]


MACHINES = _family()


def _curves(voltage=220.0, machines=MACHINES, top=120.0, n=400):
    return [m.characteristic(voltage, current=np.linspace(0.0, top, n)) for m in machines]


CURVES = _curves()


class QuadLoad:
    """A fan-like stand-in load: T = 3 + 57*(w/157.08)^2 N*m (invented)."""

    def torque(self, w):
        w = np.asarray(w, dtype=float)
        return np.sign(w) * (3.0 + 57.0 * (w / (1500 * RPM)) ** 2)

    def describe(self):
        return "fan-like stand-in"


LOAD = QuadLoad()


def _point(speed, torque, stable=True, current=50.0):
    return types.SimpleNamespace(speed=speed, torque=torque, armature_current=current, supply_current=current + 1,
                                 efficiency=0.85, output_power=speed * torque, stable=stable)


def _results():
    pts = [[_point(1500 * RPM, 60.0 + i, current=48.0 + i)] for i in range(len(MACHINES))]
    pts[4] = [_point(1700 * RPM, 76.0, stable=False, current=70.0)]
    return [types.SimpleNamespace(points=p, reason=None) for p in pts]


def _expected(c, view, units):
    """The display data a view must show, converted here with the NIST factors."""
    unit = {"si": {"torque": 1.0, "power": 1000.0}, "us": {"torque": LBF_FT, "power": HP}}[units]
    conv = {"shaft_torque": lambda a: a / unit["torque"], "speed": lambda a: a / RPM,
            "armature_current": lambda a: a, "efficiency": lambda a: 100.0 * a,
            "output_power": lambda a: a / unit["power"]}
    spec = curves.VIEWS[view]
    x = conv[spec.x_field](np.asarray(getattr(c, spec.x_field), float))
    y = conv[spec.y_field](np.asarray(getattr(c, spec.y_field), float))
    ok = c.within_safe_speed & np.isfinite(x) & np.isfinite(y)
    return np.where(ok, x, np.nan), np.where(ok, y, np.nan)


# ------------------------------------------------------------------ import hygiene
def _run(code):
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    return json.loads(out.stdout.strip().splitlines()[-1])


def test_import_dcchar_does_not_import_matplotlib():
    assert _run("import sys, json, dcchar; print(json.dumps('matplotlib' in sys.modules))") is False


def test_importing_and_drawing_change_neither_backend_nor_rcparams():
    code = """
import json, matplotlib
before_backend = matplotlib.get_backend()
before = {k: repr(v) for k, v in matplotlib.rcParams.items() if k != 'backend'}
import dcchar.charts as ch
import numpy as np
from dcchar.models.connections import PermanentMagnet
c = PermanentMagnet(armature_resistance=0.5, kphi=1.0).characteristic(100.0, points=50)
fig = ch.torque_speed_chart([c])['figure']
fig.canvas.draw()
live = ch.LiveChart(); live.update([c])
after = {k: repr(v) for k, v in matplotlib.rcParams.items() if k != 'backend'}
print(json.dumps([before_backend == matplotlib.get_backend(), [k for k in before if before[k] != after[k]]]))
"""
    same_backend, changed = _run(code)
    assert same_backend
    assert changed == []


# ------------------------------------------------------------------ static views
@pytest.mark.parametrize("units", ["si", "us"])
@pytest.mark.parametrize("view", list(curves.VIEWS))
def test_lines_equal_arrays_in_display_units(view, units):
    art = charts.draw_view(view, CURVES, LOAD, units=units)
    assert len(art["lines"]) == len(CURVES)
    for line, c in zip(art["lines"], CURVES):
        x, y = _expected(c, view, units)
        assert_allclose(line.get_xdata(), x, rtol=1e-12, equal_nan=True)
        assert_allclose(line.get_ydata(), y, rtol=1e-12, equal_nan=True)
    assert "[" in art["axes"].get_xlabel() and "[" in art["axes"].get_ylabel()


def test_axis_labels_carry_units():
    ax = charts.torque_speed_chart(CURVES, units="us")["axes"]
    assert ax.get_xlabel() == "Shaft torque [lbf·ft]"
    assert ax.get_ylabel() == "Speed [r/min]"
    ax = charts.efficiency_power_chart(CURVES, units="si")["axes"]
    assert ax.get_xlabel() == "Output power [kW]" and ax.get_ylabel() == "Efficiency [%]"


def test_runaway_points_not_drawn_and_band_shown():
    series = [c for c in CURVES if c.machine.connection == "series"][0]
    assert not series.within_safe_speed.all()  # the sweep does pass the safe speed at light load
    art = charts.torque_speed_chart([series], LOAD)
    y = art["lines"][0].get_ydata()
    drawn = np.isfinite(y)
    assert_array_equal(drawn, series.within_safe_speed)
    assert np.nanmax(y) <= 2500.0 + 1e-9
    band = art["band"]
    assert band is not None
    top = art["axes"].get_ylim()[1]
    assert math.isfinite(top) and 2500.0 < top <= 1.2 * 2500.0
    assert "beyond safe speed" in art["band_label"].get_text()
    # the band spans from the safe speed to the top of the axis, in display units
    assert_allclose(band.get_y(), 2500.0)
    assert_allclose(band.get_y() + band.get_height(), top)


def test_series_without_safe_speed_keeps_a_finite_axis():
    m = Series(magnetization=MAG, series_turns=20, series_resistance=0.08, armature_resistance=0.25)
    c = m.characteristic(220.0, points=400)  # from Ia = 0: unbounded speed there
    art = charts.speed_current_chart([c])
    top = art["axes"].get_ylim()[1]
    finite = np.asarray(art["lines"][0].get_ydata())
    finite = finite[np.isfinite(finite)]
    assert math.isfinite(top)
    assert top < finite.max()  # a display limit below the wild light-load speeds
    assert art["band"] is None


def test_load_curve_is_the_load_over_the_chart_speed_range():
    art = charts.torque_speed_chart(CURVES, LOAD)
    line = art["load"]
    x, y = np.asarray(line.get_xdata()), np.asarray(line.get_ydata())
    assert_allclose(x, LOAD.torque(y * RPM), rtol=1e-12)
    assert_allclose([y.min(), y.max()], art["axes"].get_ylim())
    assert "fan-like stand-in" in line.get_label()
    # views without a torque-speed plane draw no load curve
    assert charts.current_torque_chart(CURVES, LOAD)["load"] is None


def _spread_results():
    """One point per connection, far apart on the torque-speed view; the fifth one unstable."""
    pts = [_point((600 + 300 * i) * RPM, 20.0 + 35.0 * i, current=20.0 + 15 * i) for i in range(len(MACHINES))]
    pts[4] = _point(1700 * RPM, 76.0, stable=False, current=70.0)
    return [types.SimpleNamespace(points=[p], reason=None) for p in pts]


def test_load_curve_spans_negative_speeds_with_the_lowering_torque():
    from dcchar.models.loads import Gearing, Hoist

    hoist = Hoist(load_mass=2000.0, drum_diameter=0.5, reeving=2.0, gearing=Gearing(ratio=32.0, efficiency=0.92))
    # drum torque m*g*r/reeving; at the motor /(ratio*eff) raising, *eff/ratio lowering: gear efficiency by
    # the direction of power flow, G. K. Dubey, Fundamentals of Electrical Drives, 2nd ed., ch. 2, Ex. 2.1
    t_drum = 2000.0 * 9.80665 * 0.25 / 2.0
    raising, lowering = t_drum / (32.0 * 0.92), t_drum * 0.92 / 32.0
    res = [types.SimpleNamespace(points=[_point(1200 * RPM, raising)], reason=None),
           types.SimpleNamespace(points=[_point(-900 * RPM, lowering, stable=False, current=-20.0)], reason=None)]
    for art in (charts.torque_speed_chart(CURVES[:2], hoist, res),):
        lo, hi = art["axes"].get_ylim()
        assert lo < -900.0  # the axis shows the lowering point
        x, y = np.asarray(art["load"].get_xdata()), np.asarray(art["load"].get_ydata())
        assert_allclose([y.min(), y.max()], [lo, hi])  # the load over the whole speed axis
        assert_allclose(x[y > 0], raising, rtol=1e-9)
        assert_allclose(x[y < 0], lowering, rtol=1e-9)
        assert 0.0 in y  # a sample at standstill, where the torque steps
    # the live chart draws it the same way
    chart = charts.LiveChart()
    chart.update(CURVES[:2], hoist, res)
    y = np.asarray(chart.load_line.get_ydata())
    assert y.min() < -900.0 and y.max() > 1200.0
    assert_allclose(np.asarray(chart.load_line.get_xdata())[y < 0], lowering, rtol=1e-9)


def test_markers_spaced_evenly_along_the_visible_curve():
    from dcchar.charts.labels import arc_markevery

    art = charts.efficiency_power_chart(CURVES, None, _results())
    ax = art["axes"]
    for k, line in enumerate(art["lines"]):
        idx = line.get_markevery()
        assert 2 <= len(idx) <= 7
        assert idx == arc_markevery(ax, line.get_xdata(), line.get_ydata(), phase=(k + 0.5) / len(CURVES))
        pts = ax.transData.transform(np.column_stack([line.get_xdata(), line.get_ydata()]))
        ok = np.isfinite(pts).all(axis=1)
        seg = np.hypot(*np.diff(np.where(ok[:, None], pts, 0.0), axis=0).T) * (ok[1:] & ok[:-1])
        s = np.concatenate([[0.0], np.cumsum(seg)])
        gaps = np.diff(s[idx])
        # even spacing by arc length (to a few sweep steps on the steep light-load end)
        assert gaps.max() - gaps.min() <= 0.35 * gaps.mean()
        # and not bunched: a marker spacing is a good share of the axes diagonal
        diag = math.hypot(ax.bbox.width, ax.bbox.height)
        assert gaps.min() > 0.1 * diag


def test_freeze_layout_draws_once_per_format(tmp_path):
    art = charts.draw_view("torque_speed", CURVES, LOAD, _results())
    fig = art["figure"]
    charts.title_block(fig, "Fan drive", "invented scenario", date="2024-05-01")
    charts.freeze_layout(fig)
    assert fig.get_layout_engine() is None
    before = art["axes"].get_position().bounds
    draws = []
    fig.canvas.mpl_connect("draw_event", lambda event: draws.append(event))
    offsets = [a.get_position() for a in art["annotations"]]
    charts.save_figure(fig, tmp_path / "ts", formats=("png", "svg"), dpi=300)
    assert len(draws) == 2  # one draw per format, no layout passes
    assert art["axes"].get_position().bounds == before
    assert [a.get_position() for a in art["annotations"]] == offsets  # one label layout for PNG and SVG


def test_operating_points_marked_and_annotated():
    res = _spread_results()
    art = charts.torque_speed_chart(CURVES, LOAD, res)
    assert len(art["points"]) == len(res)
    texts = [a.get_text() for a in art["annotations"]]
    assert len(texts) == len(res)  # far apart: a label each
    # each label names its connection, then speed and torque in display units
    assert texts[0] == "sep. excited\n600 r/min, 20.0 N·m"
    assert texts[1] == "shunt\n900 r/min, 55.0 N·m"
    unstable = art["points"][4]
    assert unstable.get_markerfacecolor() == "#FFFFFF"  # hollow
    assert texts[4] == "diff. compound, short, unstable\n1700 r/min, 76.0 N·m"
    assert art["points"][0].get_markerfacecolor() != "#FFFFFF"
    assert_allclose(art["points"][0].get_xydata(), [[20.0, 600.0]])
    # the same point on the efficiency-power view, display units
    art = charts.efficiency_power_chart(CURVES, None, res, units="us")
    p = res[0].points[0]
    assert_allclose(art["points"][0].get_xydata(), [[p.output_power / HP, 85.0]])
    assert f"600 r/min, {20.0 / LBF_FT:.1f} lbf·ft" in "\n".join(a.get_text() for a in art["annotations"])


def test_close_points_gather_in_one_box_naming_each_connection():
    res = _results()  # five stable points at 1500 r/min, 60..65 N·m, and an unstable one apart
    art = charts.torque_speed_chart(CURVES, LOAD, res)
    texts = [a.get_text() for a in art["annotations"]]
    assert len(texts) == 2
    group = texts[0].split("\n")
    assert group[0] == "at 1500 r/min:"  # the shared speed heads the box
    names = [style.short_name(m) for m in MACHINES]
    assert group[1:] == [f"{names[i]}: {60.0 + i:.1f} N·m" for i in (0, 1, 2, 3, 5)]
    assert texts[1].startswith("diff. compound, short, unstable\n")
    # the box has one leader line, to the middle of its points
    xy = np.array([[60.0 + i, 1500.0] for i in (0, 1, 2, 3, 5)])
    assert_allclose(art["annotations"][0].xy, xy.mean(axis=0))


def test_group_text_forms():
    from dcchar.charts.labels import group_text

    one = [("shunt", "1151 r/min", "89.5 N·m", True)]
    assert group_text(one) == "shunt\n1151 r/min, 89.5 N·m"
    assert group_text(one * 3) == group_text(one)  # repeats dropped
    two = one + [("series", "1157 r/min", "89.5 N·m", False)]
    assert group_text(two) == "at 89.5 N·m:\nshunt: 1151 r/min\nseries: 1157 r/min, unstable"
    mixed = one + [("series", "1157 r/min", "80.0 N·m", True)]
    assert group_text(mixed) == "shunt: 1151 r/min, 89.5 N·m\nseries: 1157 r/min, 80.0 N·m"
    same = one + [("series", "1151 r/min", "89.5 N·m", True)]
    assert group_text(same) == "at 1151 r/min, 89.5 N·m:\nshunt\nseries"


def test_group_points_single_linkage():
    from dcchar.charts.labels import group_points

    # a chain 0-1-2 within 9 pt step by step (though 0 and 2 are 16 pt apart), and two lone points
    xy = [(0, 0), (8, 0), (16, 0), (100, 0), (np.nan, 5)]
    assert group_points(xy, 9.0) == [[0, 1, 2], [3], [4]]


def test_labels_of_crowded_points_do_not_overlap():
    res = _results()
    art = charts.torque_speed_chart(CURVES, LOAD, res)
    fig = art["figure"]
    fig.canvas.draw()
    r = fig.canvas.get_renderer()
    boxes = [a.get_bbox_patch().get_window_extent(r) for a in art["annotations"]]  # the white label boxes
    ax_box = art["axes"].bbox
    for i, a in enumerate(boxes):
        assert ax_box.x0 - 1 <= a.x0 and a.x1 <= ax_box.x1 + 1 and ax_box.y0 - 1 <= a.y0 and a.y1 <= ax_box.y1 + 1
        for b in boxes[i + 1:]:
            assert not a.overlaps(b) or a.intersection(a, b).height < 1.0
    assert charts.overlapping_texts(fig) == []


@pytest.mark.parametrize("view", list(curves.VIEWS))
@pytest.mark.parametrize("results", [_results, _spread_results])
def test_labels_clear_of_ticks_titles_and_each_other(view, results):
    art = charts.draw_view(view, CURVES, LOAD, results())
    fig = art["figure"]
    charts.title_block(fig, "Fan drive", "invented scenario", date="2024-05-01")
    charts.freeze_layout(fig)
    assert charts.overlapping_texts(fig, draw=False) == []
    assert charts.clipped_texts(fig, draw=False) == []
    # the boxes, as drawn, lie inside the axes area
    fig.canvas.draw()
    r = fig.canvas.get_renderer()
    ax_box = art["axes"].bbox
    for a in art["annotations"]:
        b = a.get_bbox_patch().get_window_extent(r)
        assert ax_box.x0 <= b.x0 and b.x1 <= ax_box.x1 and ax_box.y0 <= b.y0 and b.y1 <= ax_box.y1


def test_overlapping_texts_finds_a_label_on_the_ticks():
    fig = style.new_figure()
    ax = fig.add_subplot()
    ax.set_xlim(0, 10)
    ax.set_ylim(0, 10)
    assert charts.overlapping_texts(fig) == []
    low = ax.annotate("over the ticks", xy=(5, 0.1), xytext=(0, -8), textcoords="offset points", ha="center",
                      bbox=dict(boxstyle="round,pad=0.2"), annotation_clip=False)
    pairs = charts.overlapping_texts(fig)
    assert pairs and all(a is low for a, _ in pairs)
    assert any(b in ax.xaxis.get_ticklabels() for _, b in pairs)
    a = ax.text(2, 5, "one", bbox=dict(pad=2))
    b = ax.text(2.1, 5.05, "two", bbox=dict(pad=2))
    assert (a, b) in charts.overlapping_texts(fig)


def test_coinciding_points_share_one_label():
    res = [types.SimpleNamespace(points=[_point(1500 * RPM, 60.0)], reason=None) for _ in MACHINES]
    art = charts.torque_speed_chart(CURVES, LOAD, res)
    assert len(art["points"]) == len(MACHINES)
    text = "\n".join(["at 1500 r/min, 60.0 N·m:"] + [style.short_name(m) for m in MACHINES])
    assert [a.get_text() for a in art["annotations"]] == [text]
    chart = charts.LiveChart()
    chart.update(CURVES, LOAD, res)
    assert [a.get_text() for a in chart.annotations] == [text]


def test_reason_shown_when_a_result_gives_one():
    res = _results()
    res[2] = types.SimpleNamespace(points=[], reason="runs away")
    art = charts.torque_speed_chart(CURVES, LOAD, res)
    assert "series: runs away" in art["notes"].get_text()


def test_real_operating_results_draw():
    operating = pytest.importorskip("dcchar.studies.operating")
    from dcchar.models.loads import Fan

    fan = Fan(rated_speed=1500 * RPM, rated_torque=60.0, static_torque=3.0)
    res = [operating.operating_points(m, fan, 220.0) for m in MACHINES]
    art = charts.torque_speed_chart(CURVES, fan, res)
    n = sum(len(r.points) for r in res)
    assert len(art["points"]) == n
    assert 1 <= len(art["annotations"]) <= n  # coinciding points share a label
    for m, r in zip(art["points"], [p for r in res for p in r.points]):
        assert_allclose(m.get_xydata(), [[r.torque, r.speed / RPM]], rtol=1e-12)
    # a single result (not a list) pairs with its machine
    art = charts.torque_speed_chart(CURVES, fan, res[1])
    assert art["points"][0].get_marker() == style.CONNECTION_STYLES["shunt"].marker


def test_bad_view_and_units_raise():
    with pytest.raises(ParameterError, match="view"):
        charts.draw_view("torque_velocity", CURVES)
    with pytest.raises(ParameterError, match="units"):
        charts.torque_speed_chart(CURVES, units="imperial")
    with pytest.raises(ParameterError):
        charts.torque_speed_chart([])


# ------------------------------------------------------------------ style
def test_connection_styles_distinct_in_grey_scale():
    items = list(style.CONNECTION_STYLES.values())
    for i, a in enumerate(items):
        for b in items[i + 1:]:
            assert a.linestyle != b.linestyle or a.marker != b.marker, (a, b)
    # every one of them is distinct in both, in fact
    assert len({repr(s.linestyle) for s in items}) == len(items)
    assert len({s.marker for s in items}) == len(items)


def test_drawn_lines_distinct_also_for_repeated_connections():
    two_shunts = [CURVES[1], _curves(200.0, [MACHINES[1]])[0]]
    lines = charts.torque_speed_chart(CURVES + two_shunts)["lines"]
    keys = [(repr(line.get_linestyle()), repr(line.get_dashes() if hasattr(line, "get_dashes") else None),
             line.get_marker()) for line in lines]
    for i, a in enumerate(keys):
        for b in keys[i + 1:]:
            assert a != b
    labels = charts.torque_speed_chart(two_shunts)["lines"]
    assert labels[0].get_label() != labels[1].get_label()  # "shunt, 220 V" and "shunt, 200 V"


def test_figure_size_in_mm():
    assert_allclose(style.figure_size_mm(85.0, 60.0), (85.0 / 25.4, 60.0 / 25.4))
    assert_allclose(style.figure_size_mm(175.0), (175.0 / 25.4, 0.75 * 175.0 / 25.4))
    with pytest.raises(ParameterError):
        style.figure_size_mm(-1.0)


@pytest.mark.parametrize("view", list(curves.VIEWS))
def test_nothing_clipped_with_title_block(view):
    art = charts.draw_view(view, CURVES, LOAD, _results())
    tb = charts.title_block(art["figure"], "Fan drive", "invented scenario", date="2024-05-01")
    assert tb["details"].get_text() == "invented scenario  ·  2024-05-01  ·  dcchar " + __import__("dcchar").__version__
    assert charts.clipped_texts(art["figure"]) == []


def test_clipped_texts_finds_a_text_outside():
    fig = style.new_figure()
    ax = fig.add_subplot()
    ax.text(1.6, 0.5, "far out", transform=ax.transAxes)
    assert charts.clipped_texts(fig) == [ax]


# ------------------------------------------------------------------ export
def _png_size_and_phys(path):
    """Width, height and the pHYs chunk (PNG spec, W3C 2nd ed., sec. 11.3.5.3)."""
    data = path.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    w, h = struct.unpack(">II", data[16:24])
    i = data.index(b"pHYs")
    ppx, ppy, unit = struct.unpack(">IIB", data[i + 4:i + 13])
    return w, h, ppx, ppy, unit


def test_save_figure_png_and_svg(tmp_path):
    art = charts.torque_speed_chart(CURVES, LOAD)
    fig = art["figure"]
    paths = charts.save_figure(fig, tmp_path / "ts", formats=("png", "svg"), dpi=300)
    assert [p.name for p in paths] == ["ts.png", "ts.svg"]
    assert sorted(p.name for p in tmp_path.iterdir()) == ["ts.png", "ts.svg"]  # no temporary left
    w_in, h_in = fig.get_size_inches()
    w, h, ppx, ppy, unit = _png_size_and_phys(paths[0])
    # Agg renders int(size [in] * dpi) pixels: 85 mm at 300 dpi is 1003.9 -> 1003 px
    assert (w, h) == (int(w_in * 300), int(h_in * 300))
    assert w == int(85.0 / 25.4 * 300)
    # 300 dots per inch = 300/0.0254 = 11811 pixels per metre, unit 1 (metre)
    assert (ppx, ppy, unit) == (11811, 11811, 1)
    import matplotlib.image as mimage

    assert mimage.imread(paths[0]).shape[:2] == (h, w)
    try:
        from PIL import Image
    except ImportError:  # pragma: no cover - PIL comes with matplotlib
        pass
    else:
        with Image.open(paths[0]) as im:
            assert_allclose(im.info["dpi"], (300, 300), atol=0.01)
    root = ET.parse(paths[1]).getroot()
    assert root.tag.endswith("svg")
    assert root.get("width").endswith("pt")
    assert_allclose(float(root.get("width")[:-2]), w_in * 72, rtol=1e-3)


def test_save_figure_writes_nothing_when_rendering_fails(tmp_path):
    art = charts.torque_speed_chart(CURVES)
    fig = art["figure"]
    (tmp_path / "ts.png").write_bytes(b"old")
    original = fig.savefig

    def failing(fh, format, **kw):
        if format == "svg":
            raise RuntimeError("renderer broke")
        return original(fh, format=format, **kw)

    fig.savefig = failing
    with pytest.raises(RuntimeError, match="renderer broke"):
        charts.save_figure(fig, tmp_path / "ts")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["ts.png"]
    assert (tmp_path / "ts.png").read_bytes() == b"old"


def test_save_figure_bad_input(tmp_path):
    fig = charts.torque_speed_chart(CURVES)["figure"]
    with pytest.raises(ParameterError, match="formats"):
        charts.save_figure(fig, tmp_path / "x", formats=("jpg",))
    with pytest.raises(ParameterError, match="path_stem"):
        charts.save_figure(fig, tmp_path / "missing" / "x")
    with pytest.raises(ParameterError, match="dpi"):
        charts.save_figure(fig, tmp_path / "x", dpi=0)
    assert list(tmp_path.iterdir()) == []


# ------------------------------------------------------------------ live chart
def _buffer(fig):
    return np.asarray(fig.canvas.buffer_rgba()).copy()


def test_live_chart_spaces_markers_for_the_axes_as_laid_out():
    # the marker spacing is by arc length on screen, so it is worked out again once the layout
    # engine has sized the axes on the first draw (reference: arc_markevery itself)
    from dcchar.charts.labels import arc_markevery

    chart = charts.LiveChart()
    chart.update(CURVES, LOAD, _results())
    chart.figure.canvas.draw()
    keys = [style.style_key(m) for m in MACHINES]
    for k, key in enumerate(keys):
        line = chart.lines[key]
        expected = arc_markevery(chart.axes, line.get_xdata(), line.get_ydata(), phase=(k + 0.5) / len(keys))
        assert list(line.get_markevery()) == list(expected)


def test_live_chart_data_and_blit_equals_full_draw():
    chart = charts.LiveChart()
    assert chart.can_blit
    assert chart.update(CURVES, LOAD, _results()) == "full"
    new = _curves(218.0)
    assert chart.update(new, LOAD, _results()) == "blit"
    for c, key in zip(new, [style.style_key(m) for m in MACHINES]):
        x, y = _expected(c, "torque_speed", "si")
        assert_allclose(chart.lines[key].get_xdata(), x, rtol=1e-12, equal_nan=True)
        assert_allclose(chart.lines[key].get_ydata(), y, rtol=1e-12, equal_nan=True)
    blitted = _buffer(chart.figure)
    chart.figure.canvas.draw()  # full redraw: the draw_event handler redraws the moving artists
    assert_array_equal(blitted, _buffer(chart.figure))
    texts = [a.get_text() for a in chart.annotations]
    assert texts[0].startswith("at 1500 r/min:\nsep. excited: 60.0 N·m\n")
    assert texts[-1].startswith("diff. compound, short, unstable\n")
    # the labels were placed again for the axes as laid out, inside them and apart
    r = chart.figure.canvas.get_renderer()
    boxes = [a.get_bbox_patch().get_window_extent(r) for a in chart.annotations]
    ax_box = chart.axes.bbox
    for i, b in enumerate(boxes):
        assert ax_box.x0 <= b.x0 and b.x1 <= ax_box.x1 and ax_box.y0 <= b.y0 and b.y1 <= ax_box.y1
        assert all(not b.overlaps(c) for c in boxes[i + 1:])


def test_live_chart_rescales_only_when_data_leaves_limits():
    chart = charts.LiveChart(view="current_torque")
    chart.update(CURVES)
    lim = chart.axes.get_xlim(), chart.axes.get_ylim()
    chart.update(_curves(top=110.0))  # inside the limits: no rescale
    assert (chart.axes.get_xlim(), chart.axes.get_ylim()) == lim
    assert chart.stats["rescale"] == 1
    assert chart.update(_curves(top=200.0)) == "full"  # leaves them: grows with headroom
    assert chart.axes.get_xlim()[1] >= 200.0 * 1.1
    assert chart.stats["rescale"] == 2


def test_live_chart_views_units_and_hidden_lines():
    chart = charts.LiveChart()
    chart.update(CURVES, LOAD)
    assert chart.load_line.get_visible()
    assert chart.set_view("efficiency_power") == "full"
    assert chart.axes.get_xlabel() == "Output power [kW]"
    assert not chart.load_line.get_visible()
    x, y = _expected(CURVES[0], "efficiency_power", "si")
    assert_allclose(chart.lines["separately_excited"].get_xdata(), x, equal_nan=True)
    chart.set_units("us")
    assert chart.axes.get_xlabel() == "Output power [hp]"
    chart.update(CURVES[:2])
    assert not chart.lines["series"].get_visible()
    assert chart.lines["shunt"].get_visible()
    with pytest.raises(ParameterError):
        chart.set_view("nonsense")


def test_live_chart_runaway_band_and_savefig_keeps_moving_artists(tmp_path):
    chart = charts.LiveChart(view="speed_current")
    chart.update(CURVES)
    assert chart.band.get_visible()
    assert_allclose(chart.band.get_y(), 2500.0)
    y = chart.lines["series"].get_ydata()
    assert np.nanmax(y) <= 2500.0 + 1e-9
    screen = _buffer(chart.figure)
    chart.figure.savefig(tmp_path / "live.png", dpi=100)
    import matplotlib.image as mimage

    saved = (mimage.imread(tmp_path / "live.png") * 255).round().astype(np.uint8)
    assert saved.shape == screen.shape
    diff = np.abs(saved.astype(int) - screen.astype(int)).max(axis=2)
    # the same picture; the save draws the moving artists in z-order among the axes' own (spines),
    # the screen on top of them, so a few edge pixels may differ
    assert (diff > 2).mean() < 0.01
    # the translucent band is drawn once, not twice, in the saved file
    row = int(chart.axes.transData.transform((0, 2600.0))[1])
    col = int(chart.axes.bbox.x0 + 0.5 * chart.axes.bbox.width)
    r0 = screen.shape[0] - 1 - row
    assert_array_equal(saved[r0, col], screen[r0, col])
    assert chart.update(_curves(219.0)) == "blit"  # the screen background survived the save


def test_live_chart_without_blitting_canvas_uses_full_draws():
    fig = Figure(figsize=(5, 3.5))  # plain base canvas: no copy_from_bbox
    chart = charts.LiveChart(fig)
    assert not chart.can_blit
    assert chart.update(CURVES) == "full"
    assert chart.update(_curves(218.0)) == "full"
    assert not chart.lines["shunt"].get_animated()
    fig2 = Figure()
    FigureCanvasAgg(fig2)
    assert charts.LiveChart(fig2, blit=False).update(CURVES) == "full"


# ------------------------------------------------------------------ label layout property
@settings(max_examples=60, deadline=None)
@given(st.lists(st.tuples(st.floats(0, 300), st.floats(0, 200), st.floats(20, 80), st.floats(8, 40)),
                min_size=1, max_size=6))
def test_place_boxes_inside_and_apart_when_they_fit(items):
    from dcchar.charts.labels import _GAP_PT, place_boxes

    region = (0.0, 0.0, 300.0, 200.0)
    anchors = [(x, y) for x, y, _, _ in items]
    sizes = [(w, h) for _, _, w, h in items]
    if sum(w * h for w, h in sizes) > 0.25 * 300 * 200:
        return  # crowded beyond what a chart needs; the search may not find room
    centres = place_boxes(anchors, sizes, region)
    boxes = [(cx - w / 2, cy - h / 2, cx + w / 2, cy + h / 2) for (cx, cy), (w, h) in zip(centres, sizes)]
    for i, b in enumerate(boxes):
        assert b[0] >= -1e-9 and b[1] >= -1e-9 and b[2] <= 300 + 1e-9 and b[3] <= 200 + 1e-9
        for c in boxes[i + 1:]:
            apart = (b[2] + _GAP_PT <= c[0] + 1e-9 or c[2] + _GAP_PT <= b[0] + 1e-9
                     or b[3] + _GAP_PT <= c[1] + 1e-9 or c[3] + _GAP_PT <= b[1] + 1e-9)
            assert apart, (b, c)
