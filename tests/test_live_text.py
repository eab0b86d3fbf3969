"""The live chart's fast paths against the libraries they stand in for.

- Label text drawn from the glyph cache (:mod:`dcchar.charts._glyph_cache`) against matplotlib's
  own Agg renderer (``RendererAgg.draw_text`` and ``get_text_width_height_descent``).
- Line widths measured with the digits written as 0 against the width of the line itself.
- The kit canvas's frames (:func:`dcchar.widgets.controls.png_rgba`) against Pillow's PNG decoder
  and against the frames matplotlib's web canvas makes itself.
"""

from __future__ import annotations

import io
import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_array_equal

import matplotlib
from matplotlib.backends.backend_agg import FigureCanvasAgg, RendererAgg
from matplotlib.figure import Figure
from matplotlib.font_manager import FontProperties

from dcchar.charts._glyph_cache import GlyphCache, cached_glyphs, zeroed_digits
from dcchar.charts.labels import _line_metrics, _line_width

# label lines of the kinds the live chart shows (speeds, torques, connection names)
LINES = ["sep. excited: 1031 r/min", "1151 r/min, 89.5 N·m", "at 86.3 N·m:", "series, unstable",
         "cum. compound, short: 1062 r/min", "(207.4 lbf·ft)", "Tw AV 7/4", "shunt: 980 r/min, 12.5 N·m"]
HINTING = ["no_hinting", "default"]


def _canvas(width_in=3.0, height_in=2.0):
    fig = Figure(figsize=(width_in, height_in), dpi=100)
    FigureCanvasAgg(fig)
    fig.canvas.draw()
    return fig


def _pixels(fig):
    return np.asarray(fig.canvas.buffer_rgba()).copy()


def _gc(renderer):
    gc = renderer.new_gc()
    gc.set_foreground("#202020")
    return gc


@pytest.mark.parametrize("hinting", HINTING)
@pytest.mark.parametrize("origin", [(30.0, 60.0), (30.25, 61.75), (12.5, 101.0)])
def test_cached_line_is_the_renderers_line_at_a_quarter_pixel(hinting, origin):
    # reference: matplotlib's RendererAgg.draw_text on the same canvas, font and origin
    cache = GlyphCache()
    prop = FontProperties(size=6)
    with matplotlib.rc_context({"text.hinting": hinting}):
        for text in LINES:
            fig = _canvas()
            r = fig.canvas.get_renderer()
            r.draw_text(_gc(r), *origin, text, prop, 0)
            reference = _pixels(fig).astype(int)
            ink = (reference[..., 0] < 255).sum()
            assert ink > 20  # the line was drawn
            for _ in range(2):  # the second draw comes from the kept layout and glyphs
                fig = _canvas()
                r = fig.canvas.get_renderer()
                assert cache.draw_text(r, _gc(r), *origin, text, prop, 0)
                # where the antialiased edges of two glyphs overlap, the cache blends them at
                # once and Agg one after the other: one level in 255 apart at most
                diff = np.abs(_pixels(fig).astype(int) - reference)
                assert diff.max() <= 1
                assert (diff > 0).any(axis=2).sum() <= 0.1 * ink
    made = cache.stats["glyphs"]
    assert made < sum(len(t) for t in LINES) * 2  # glyphs are kept, not made again for each draw


def test_cached_line_off_the_quarter_grid_moves_at_most_an_eighth_pixel():
    prop = FontProperties(size=6)
    text = LINES[0]
    with matplotlib.rc_context({"text.hinting": "no_hinting"}):
        fig = _canvas()
        r = fig.canvas.get_renderer()
        GlyphCache().draw_text(r, r.new_gc(), 30.1, 60.1, text, prop, 0)
        cached = _pixels(fig)
        fig = _canvas()
        r = fig.canvas.get_renderer()
        r.draw_text(r.new_gc(), 30.0, 60.0, text, prop, 0)  # where the cache puts the line
        assert_array_equal(cached, _pixels(fig))


def test_math_rotated_and_aliased_text_is_left_to_the_renderer():
    fig = _canvas()
    r = fig.canvas.get_renderer()
    cache = GlyphCache()
    prop = FontProperties(size=6)
    gc = r.new_gc()
    assert not cache.draw_text(r, gc, 10, 10, r"$x^2$", prop, 0, ismath=True)
    assert not cache.draw_text(r, gc, 10, 10, "1031 r/min", prop, 90)
    gc.set_antialiased(False)
    assert not cache.draw_text(r, gc, 10, 10, "1031 r/min", prop, 0)
    assert cache.text_metrics(r, r"$x^2$", prop, True) is None
    assert cache.text_metrics(r, "no digits", prop, False) is None


@pytest.mark.parametrize("hinting", HINTING)
@settings(max_examples=60, deadline=None)
@given(speed=st.integers(0, 99999), torque=st.floats(0.0, 9999.0, allow_nan=False))
def test_metrics_of_a_line_with_numbers_are_the_renderers(hinting, speed, torque):
    # reference: RendererAgg.get_text_width_height_descent of the line itself
    r = _RENDERER
    prop = FontProperties(size=6)
    with matplotlib.rc_context({"text.hinting": hinting}):
        for text in (f"shunt: {speed} r/min", f"{speed} r/min, {torque:.1f} N·m", f"at {torque:.2f} N·m:"):
            expected = RendererAgg.get_text_width_height_descent(r, text, prop, False)
            got = _CACHE.text_metrics(r, text, prop, False)
            if got is None:  # left to the renderer: only a line whose digits are all 0 already
                assert not any(c in text for c in "123456789")
            else:
                assert got == expected


_RENDERER = RendererAgg(300, 200, 100)
_CACHE = GlyphCache()


def test_zeroed_digits_needs_tabular_figures():
    tabular = {c: 5.0 for c in "0123456789"}
    proportional = {**tabular, "1": 3.0}

    def width(table, kern=0.0):
        return lambda s: sum(table.get(c, 4.0) for c in s) + (kern if s == "r1" else 0.0)

    assert zeroed_digits("no digits", width(tabular)) is None
    assert zeroed_digits("1031 r/min", width(tabular)) == "0000 r/min"
    assert zeroed_digits("1031 r/min", width(proportional)) is None  # "1" narrower than "0"
    assert zeroed_digits("r1", width(tabular, kern=-0.5)) is None  # a kerning pair next to the digit


@settings(max_examples=80, deadline=None)
@given(st.text(alphabet="0123456789 .,:/()rminNm·lbfthsueapcdxgkov", min_size=1, max_size=28))
def test_zeroed_width_is_the_width_of_the_line(text):
    # reference: matplotlib's TextPath measure of the line itself (labels' _line_metrics)
    assert _line_width(text, 6.0) == _line_metrics(text, 6.0)[0]


def test_live_text_context_restores_the_renderer():
    fig = _canvas()
    r = fig.canvas.get_renderer()
    with cached_glyphs(r, GlyphCache()):
        assert "draw_text" in vars(r)
    assert "draw_text" not in vars(r) and "get_text_width_height_descent" not in vars(r)


def test_without_the_font_engine_calls_text_is_left_to_the_renderer(monkeypatch):
    # the glyph cache uses matplotlib's internal FreeType calls; where a version lacks them the
    # renderer draws its own text (reference: the renderer itself)
    import dcchar.charts._glyph_cache as gc_mod

    monkeypatch.setattr(gc_mod, "_font_engine_supported", lambda: False)
    fig = _canvas()
    r = fig.canvas.get_renderer()
    with cached_glyphs(r, GlyphCache()):
        assert "draw_text" not in vars(r)


# ------------------------------------------------------------------ frames sent to the browser
@settings(max_examples=40, deadline=None)
@given(st.integers(1, 40), st.integers(1, 40), st.integers(0, 2**32 - 1), st.booleans(), st.floats(0.0, 1.0))
def test_png_rgba_decodes_to_the_image(height, width, seed, sparse, blank_rows):
    import struct
    import zlib

    from PIL import Image

    from dcchar.widgets.controls import png_rgba

    rng = np.random.default_rng(seed)
    rgba = rng.integers(0, 256, (height, width, 4), dtype=np.uint8)
    if sparse:
        rgba[rng.random((height, width)) < 0.8] = 0
        rgba[rng.random(height) < blank_rows] = 0  # runs of zero rows, written from kept segments
    png = png_rgba(rgba, sparse=sparse)
    # reference: Pillow's PNG decoder, and zlib for the stream with its Adler-32 check
    decoded = np.asarray(Image.open(io.BytesIO(png)).convert("RGBA"))
    assert_array_equal(decoded, rgba)
    assert png[12:16] == b"IHDR" and png[37:41] == b"IDAT"
    raw = zlib.decompress(png[41:41 + struct.unpack(">I", png[33:37])[0]])
    assert len(raw) == height * (4 * width + 1)


def test_kit_canvas_frames_are_the_web_canvas_frames():
    pytest.importorskip("ipympl")
    from PIL import Image
    from ipympl.backend_nbagg import Canvas, FigureManager

    from dcchar.widgets.controls import chart_canvas_class

    def frames(canvas_class):
        fig = Figure(figsize=(3, 2), dpi=100)
        with warnings.catch_warnings():  # ipympl's toolbar hands its canvas to traitlets, which warns
            warnings.filterwarnings("ignore", "Passing unrecognized arguments", DeprecationWarning)
            canvas = canvas_class(fig)
            FigureManager(canvas, 0)
        canvas.syncing_data_url = False
        ax = fig.add_subplot()
        line, = ax.plot([0, 1], [0, 1])
        out = []
        for y in (1.0, 0.5, 0.5):
            line.set_ydata([0, y])
            canvas._png_is_old = True
            canvas.figure.draw(canvas.get_renderer())
            png = canvas.get_diff_image()  # ipympl's Canvas: matplotlib's web canvas method
            out.append((canvas._current_image_mode, np.asarray(Image.open(io.BytesIO(png)).convert("RGBA"))))
        return out

    ours, reference = frames(chart_canvas_class()), frames(Canvas)
    assert [m for m, _ in ours] == [m for m, _ in reference] == ["full", "diff", "diff"]
    for (_, a), (_, b) in zip(ours, reference):
        assert_array_equal(a, b)
    assert not ours[2][1].any()  # nothing changed: an empty difference frame
