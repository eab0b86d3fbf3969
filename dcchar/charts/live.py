"""A chart built once and updated in place, for the notebook widget kit.

:class:`LiveChart` owns one axes with a fixed set of artists: one line per connection, the load
line, operating-point markers (filled: stable, hollow: unstable), their labels, the runaway band
and a note. :meth:`LiveChart.update` changes only their data and text, rescales the axes only
when the data leaves the current limits, and redraws by blitting when the canvas can copy and
restore regions (Agg and every canvas built on it, ipympl's included, although its web canvas
reports ``supports_blit = False``): restore the background, draw the moving artists, blit.
Otherwise, and whenever the background must change (new limits, new legend, resize, a view
switch), it asks for a full draw; a ``draw_event`` handler then grabs the new background and
draws the moving artists on top.

On screen the moving texts are drawn from kept glyph bitmaps and line layouts
(:mod:`dcchar.charts._glyph_cache`), and the label boxes keep their places while their points
move by less than a pixel; saved figures are drawn by matplotlib as usual.

Examples
--------
Headless, as in the tests::

    chart = LiveChart(view="torque_speed")
    chart.update([shunt_curve, series_curve], load=fan)
    chart.set_view("efficiency_power")

In a notebook with ipympl, build the figure inside ``plt.ioff()`` and pass it in::

    with plt.ioff():
        fig = plt.figure(figsize=(6.5, 4.3))
    chart = LiveChart(fig)
"""

from __future__ import annotations

import contextlib
import math
import textwrap

import matplotlib
import numpy as np

from ..models.units import display_units
from ..models.validation import nonnegative
from .curves import (_ANNOTATION_KW, _BAND_COLOR, _BAND_TEXT, _axis_title, _factor, _legend_kwargs, _legend_labels,
                     _marker_kwargs, _nan_range, _short_names, _spec, _unit, as_list, axis_limits, load_label, load_xy,
                     pair_operating, place_labels, point_values, point_xy, view_xy)
from ._glyph_cache import GlyphCache, cached_glyphs
from .labels import arc_markevery, label_groups, text_size_pt
from .style import CONNECTION_STYLES, LOAD_STYLE, chart_style, new_figure, style_key, styles_for

#: The moving artists of the live chart (labels, markers) are drawn with unhinted glyphs: they
#: rasterize in about 60 % of the time (measured on the label boxes, 23 -> 14 ms) and look the
#: same at screen resolution. Saved figures keep matplotlib's default hinting.
_SCREEN_TEXT = {"text.hinting": "no_hinting"}

__all__ = ["LiveChart"]


def _keep_layout(text):
    """Let ``text`` (a Text) reuse its last layout while its string, font, alignment, spacing,
    rotation and the renderer stay the same: drawing an annotation lays its text out four times.
    The layout is relative to the text's position, so a moved label keeps it too."""
    compute = text._get_layout
    memo = [None, None]

    def _get_layout(renderer):
        if text.get_wrap():  # a wrapped text's lines depend on where it stands
            return compute(renderer)
        key = (id(renderer), renderer.dpi, text.get_figure(root=True).dpi, text.get_text(), hash(text._fontproperties),
               text._linespacing, text.get_horizontalalignment(), text.get_verticalalignment(),
               text._get_multialignment(), text.get_rotation(), text.get_rotation_mode(), text.get_usetex(),
               matplotlib.rcParams["text.hinting"], matplotlib.rcParams["text.hinting_factor"])
        if memo[0] != key:
            memo[0], memo[1] = key, compute(renderer)
        return memo[1]

    text._get_layout = _get_layout


@contextlib.contextmanager
def _screen_text():
    """:data:`_SCREEN_TEXT` in force (as ``matplotlib.rc_context``, without copying every rc
    setting twice a frame)."""
    rc = matplotlib.rcParams
    old = {k: rc[k] for k in _SCREEN_TEXT}
    rc.update(_SCREEN_TEXT)
    try:
        yield
    finally:
        rc.update(old)

_NEUTRAL = "neutral"

#: Label boxes are placed again once a point has moved this far since they were placed. [px]
_STILL_PX = 1.0


class LiveChart:
    """One axes of characteristics that updates in place.

    Parameters
    ----------
    figure : matplotlib.figure.Figure, optional
        An empty figure to draw in (for ipympl: made inside ``plt.ioff()``). Default: a new
        headless figure with an Agg canvas, 160 mm x 105 mm at 100 dpi.
    view : str, default "torque_speed"
        One of :data:`dcchar.charts.curves.VIEWS`.
    units : {"si", "us"}
    speed_limit : float, optional
        Top of the speed axis [rad/s]; default as in :func:`dcchar.charts.curves.draw_view`.
    headroom : float, default 0.15
        When an axis must grow, it grows this fraction of its span beyond the data, so that
        small changes do not rescale it again. [-]
    blit : bool, default True
        Blit when the canvas can; False always asks for a full (idle) draw.

    Attributes
    ----------
    figure, axes : the matplotlib figure and axes.
    lines : dict
        Line2D per slot: the style key of a connection (see
        :func:`dcchar.charts.style.style_key`), with ``#n`` added for a second curve of one
        connection.
    load_line, band, band_label, note : the load Line2D, runaway band Rectangle, its Text and
        the Text of the reasons results give (``reason`` not None).
    stats : dict
        Counts of ``"blit"`` and ``"full"`` redraws and ``"rescale"`` events.
    """

    def __init__(self, figure=None, *, view: str = "torque_speed", units: str = "si", speed_limit=None,
                 headroom: float = 0.15, blit: bool = True):
        self._view = _spec(view).name
        display_units(units)
        self.units = units
        self.speed_limit = speed_limit
        self.headroom = nonnegative("headroom", headroom)
        if figure is None:
            figure = new_figure(160.0, 105.0, dpi=100.0)
        if figure.get_layout_engine() is None:
            figure.set_layout_engine("constrained")
        self.figure = figure
        self._want_blit = bool(blit)
        self._background = None
        self._pending_full = True
        self._state = None
        self._legend_signature = None
        self._band_state = None
        self._label_args = {}
        self._placed_for = None
        self._curve_keys = []  # slots of the curves drawn, in order
        self._placed = None  # what the label boxes were last placed for
        self._glyphs = GlyphCache()
        self._styled = {}  # style last given to each slot
        self.stats = {"blit": 0, "full": 0, "rescale": 0}
        with chart_style():
            self.axes = ax = figure.add_subplot()
            ax.grid(True, color="#D0D0D0", linewidth=0.4)
            ax.set_axisbelow(True)
            ax.set_autoscale_on(False)
            self.lines = {}
            self._markers = {}
            for key in CONNECTION_STYLES:
                self._slot(key)
            self.load_line = ax.plot([], [], **LOAD_STYLE, zorder=1.5)[0]
            self.band = ax.axhspan(0.0, 1.0, facecolor=_BAND_COLOR, alpha=0.12, edgecolor=_BAND_COLOR,
                                   linewidth=0.6, zorder=0.5, visible=False)
            self.band_label = ax.text(0.02, 0.0, "", transform=ax.get_yaxis_transform(), ha="left", va="center",
                                      fontsize=6, color="#8A3A00", zorder=0.6, visible=False)
            self.note = ax.text(0, 0, "", transform=ax.transAxes, fontsize=5.5, zorder=5, visible=False,
                                bbox=dict(boxstyle="round,pad=0.3", facecolor="white", edgecolor="#999999",
                                          linewidth=0.4, alpha=0.9))
            self._annotations = []
        for a in (self.band, self.band_label):  # background artists, inside the axes
            a.set_in_layout(False)
        self._label_axes()
        self._set_animated()
        self._cid = figure.canvas.mpl_connect("draw_event", self._on_draw)

    # ------------------------------------------------------------------ public
    @property
    def view(self) -> str:
        """The current view name."""
        return self._view

    @property
    def canvas(self):
        """The figure's current canvas."""
        return self.figure.canvas

    @property
    def can_blit(self) -> bool:
        """True when updates blit: asked for, and the canvas can copy and restore regions."""
        c = self.figure.canvas
        return self._want_blit and hasattr(c, "copy_from_bbox") and hasattr(c, "restore_region")

    @property
    def annotations(self) -> list:
        """The visible operating-point labels (Annotation), in drawing order."""
        return [a for a in self._annotations if a.get_visible()]

    def update(self, characteristics, load=None, operating=None, *, refit: bool = False) -> str:
        """Show new results: change line data, markers and texts, then redraw.

        Parameters
        ----------
        characteristics : Characteristic or list of Characteristic
        load : object with ``torque(speed)`` and ``describe()``, optional
        operating : operating result or list of them, optional
            As for :func:`dcchar.charts.curves.draw_view`.
        refit : bool, default False
            Fit the axes to these results (a full draw); otherwise the axes only grow, so that a
            dragged slider never makes the chart jump.

        Returns
        -------
        str
            ``"blit"`` when the update was blitted, ``"full"`` when a full draw was asked for.
        """
        chars = as_list(characteristics)
        pairs = pair_operating(chars, operating)
        self._state = (chars, load, operating)
        full = self._apply(chars, load, pairs, force_limits=refit)
        return self._render(full or refit)

    def set_view(self, name: str) -> str:
        """Switch to another view (see :data:`VIEWS`); redraws fully with the last results."""
        self._view = _spec(name).name
        self._label_axes()
        if self._state is None:
            return self._render(True)
        chars, load, operating = self._state
        self._apply(chars, load, pair_operating(chars, operating), force_limits=True)
        return self._render(True)

    def set_units(self, units: str) -> str:
        """Switch display units ("si" or "us"); redraws fully."""
        display_units(units)
        self.units = units
        return self.set_view(self._view)

    def rescale(self) -> str:
        """Fit the axes to the current data now (updates only grow them)."""
        return self.set_view(self._view)

    def disconnect(self):
        """Remove the draw-event handler (the chart stops redrawing its moving artists)."""
        self.figure.canvas.mpl_disconnect(self._cid)

    # ------------------------------------------------------------------ artists
    def _slot(self, key):
        if key in self.lines:
            return self.lines[key]
        ax = self.axes
        base = key.split("#")[0]
        style = CONNECTION_STYLES.get(base)
        kw = style.line_kwargs() if style is not None else dict(color="#333333", linewidth=1.3)
        kw.pop("label", None)
        line = ax.plot([], [], **kw, zorder=2, visible=False)[0]
        line.set_in_layout(False)
        self.lines[key] = line
        self._markers[key] = tuple(ax.plot([], [], **_marker_kwargs(style, s), zorder=4, visible=False)[0]
                                   for s in (True, False))
        if hasattr(self, "_annotations"):
            self._set_animated()
        return line

    def _restyle(self, key, style):
        if self._styled.get(key) == style:
            return
        self._styled[key] = style
        line = self.lines[key]
        kw = style.line_kwargs()
        kw.pop("label")
        line.set(**kw)
        for m, stable in zip(self._markers[key], (True, False)):
            m.set(**_marker_kwargs(style, stable))

    def _moving(self) -> list:
        arts = [self.load_line]
        arts += list(self.lines.values())
        for pair in self._markers.values():
            arts += list(pair)
        arts += self._annotations
        arts.append(self.note)
        return arts

    def _set_animated(self):
        on = self.can_blit
        for a in self._moving():
            a.set_animated(on)
            a.set_in_layout(False)

    def _annotation(self, i):
        while len(self._annotations) <= i:
            with chart_style():
                a = self.axes.annotate("", xy=(0, 0), xytext=(0, 0), textcoords="offset points", visible=False,
                                       **_ANNOTATION_KW)
            a.set_animated(self.can_blit)
            a.set_in_layout(False)
            _keep_layout(a)
            self._annotations.append(a)
        return self._annotations[i]

    def _space_markers(self):
        """Markers along the visible curves, spaced by arc length on screen, staggered from curve to curve."""
        shown = [self.lines[k] for k in self._curve_keys]
        for k, line in enumerate(shown):
            line.set_markevery(arc_markevery(self.axes, line.get_xdata(), line.get_ydata(),
                                             phase=(k + 0.5) / len(shown)))

    def _geometry(self):
        ax = self.axes
        return ax.get_position().bounds, ax.get_xlim(), ax.get_ylim(), tuple(self.figure.get_size_inches())

    def _place_labels(self):
        """Place the visible label boxes in the current geometry of the axes.

        The boxes keep their offsets when nothing the placement looks at has changed but for
        the points moving by less than :data:`_STILL_PX` since the boxes were placed (a slider
        step often moves them by a fraction of a pixel): the same geometry, box sizes, texts to
        avoid and band. The curves are not compared; they pass through the points.
        """
        shown = self.annotations
        geometry = self._geometry()
        self._placed_for = geometry
        if not shown:
            self._placed = None
            return
        avoid = [t for t in (self.note, self.band_label) if t.get_visible()]
        args = self._label_args
        fixed = (geometry, tuple(text_size_pt(a.get_text(), 6) for a in shown), args.get("top"),
                 tuple((t.get_text(), tuple(t.get_position()), t.get_horizontalalignment(),
                        t.get_verticalalignment()) for t in avoid))
        points = self.axes.transData.transform(list([a.xy for a in shown]) + list(args.get("markers", ())))
        last = self._placed
        if (last is not None and last[0] == fixed and last[1].shape == points.shape
                and np.all(np.abs(points - last[1]) < _STILL_PX)):
            return
        offsets = place_labels(self.axes, [a.xy for a in shown], [a.get_text() for a in shown], fontsize=6,
                               avoid=avoid, **args)
        for a, (dx, dy, ha) in zip(shown, offsets):
            a.xyann = (dx, dy)
            a.set_horizontalalignment(ha)
        self._placed = (fixed, points)

    def _label_axes(self):
        spec = _spec(self._view)
        with chart_style():
            self.axes.set_xlabel(_axis_title(spec.x_title, spec.x_quantity, self.units))
            self.axes.set_ylabel(_axis_title(spec.y_title, spec.y_quantity, self.units))

    # ------------------------------------------------------------------ data
    def _apply(self, chars, load, pairs, force_limits) -> bool:
        """Set every moving artist from the results; True when the background must be redrawn."""
        view, units, ax = self._view, self.units, self.axes
        spec = _spec(view)
        full = False
        styles = styles_for([c.machine for c in chars])
        labels = _legend_labels(chars, styles)
        seen: dict = {}
        keys = []
        for c in chars:
            base = style_key(c.machine)
            n = seen.get(base, 0)
            seen[base] = n + 1
            keys.append(base if n == 0 else f"{base}#{n}")
        used = set()
        xs, ys = [], []
        for key, c, style in zip(keys, chars, styles):
            if key not in self.lines:
                self._slot(key)
            self._restyle(key, style)
            x, y = view_xy(c, view, units)
            self.lines[key].set_data(x, y)
            self.lines[key].set_visible(True)
            xs.append(x)
            ys.append(y)
            used.add(key)
        for key, line in self.lines.items():
            if key not in used and line.get_visible():
                line.set_visible(False)
                line.set_data([], [])

        # limits (grow only, with headroom)
        all_points = [p for r, _ in pairs for p in r.points]
        pxy = [point_xy(p, view, units) for p in all_points]
        target = axis_limits(chars, view, units, all_points, self.speed_limit)
        new_lims = []
        for k, (axis, qty) in enumerate((("xlim", spec.x_quantity), ("ylim", spec.y_quantity))):
            cur = ax.get_xlim() if k == 0 else ax.get_ylim()
            lo, hi = _nan_range((xs if k == 0 else ys) + [[p[k] for p in pxy]])
            t_lo, t_hi = target[axis]
            banded = qty == "speed" and target["safe"] is not None and target["safe"] < t_hi
            need = force_limits or self._legend_signature is None
            if not need and math.isfinite(lo):
                need = lo < cur[0] or hi > cur[1]
            if not need and banded:
                need = not (cur[0] < target["safe"] < cur[1]) or cur[1] < t_hi * 0.999
            if need:
                span = t_hi - t_lo
                if qty != "efficiency" and not banded and not force_limits and self._legend_signature is not None:
                    t_hi += self.headroom * span
                    if t_lo < 0:
                        t_lo -= self.headroom * span
                new_lims.append((t_lo, t_hi))
            else:
                new_lims.append(None)
        if new_lims[0] is not None:
            ax.set_xlim(*new_lims[0])
        if new_lims[1] is not None:
            ax.set_ylim(*new_lims[1])
        if any(v is not None for v in new_lims):
            self.stats["rescale"] += 1
            full = True
        ylim = ax.get_ylim()

        # runaway band on speed axes
        safe = target["safe"] if spec.y_quantity == "speed" else None
        band_state = (safe, ylim[1]) if safe is not None and safe < ylim[1] else None
        if band_state != self._band_state:  # the band is part of the background: redraw it fully
            self._band_state = band_state
            full = True
        if safe is not None and safe < ylim[1]:
            self.band.set_y(safe)
            self.band.set_height(ylim[1] - safe)
            self.band.set_visible(True)
            self.band_label.set_position((0.02, 0.5 * (safe + ylim[1])))
            self.band_label.set_text(f"{_BAND_TEXT} ({safe:.0f} {_unit('speed', units)})")
            self.band_label.set_visible(True)
        else:
            self.band.set_visible(False)
            self.band_label.set_visible(False)

        # load line
        load_text = None
        if load is not None and spec.shows_load:
            f = _factor("speed", units)
            self.load_line.set_data(*load_xy(load, (ylim[0] * f, ylim[1] * f), view, units))  # negative speeds too
            self.load_line.set_visible(True)
            load_text = load_label(load)
        else:
            self.load_line.set_visible(False)

        label_of = dict(zip(keys, (s.label for s in styles)))
        reasons = [f"{label_of.get(keys[i], 'result') if i is not None else 'result'}: {r.reason}"
                   for r, i in pairs if getattr(r, "reason", None)]
        if reasons:
            cx, cy, ha, va = spec.note_corner
            self.note.set_position((cx, cy))
            self.note.set_horizontalalignment(ha)
            self.note.set_verticalalignment(va)
            self.note.set_text("\n".join(textwrap.fill(t, 48) for t in reasons))
            self.note.set_visible(True)
        else:
            self.note.set_visible(False)

        # operating points and labels: one box per group of close points, naming the connections
        names = dict(zip(keys, _short_names(chars, styles)))
        marks: dict = {}
        entries = []
        for r, idx in pairs:
            key = keys[idx] if idx is not None else _NEUTRAL
            if key == _NEUTRAL and key not in self.lines:
                self._slot(_NEUTRAL)
                self.lines[_NEUTRAL].set_visible(False)
            for p in r.points:
                xy = point_xy(p, view, units)
                stable = bool(getattr(p, "stable", True))
                marks.setdefault((key, stable), []).append(xy)
                entries.append((*xy, names.get(key, ""), *point_values(p, units), stable))
        for key, pair in self._markers.items():
            for m, stable in zip(pair, (True, False)):
                pts = marks.get((key, stable))
                if pts:
                    m.set_data([q[0] for q in pts], [q[1] for q in pts])
                    m.set_visible(True)
                elif m.get_visible():
                    m.set_visible(False)
                    m.set_data([], [])
        band_top = safe if (safe is not None and safe < ylim[1]) else None
        self._curve_keys = list(keys)
        self._space_markers()
        groups = label_groups(ax, entries)
        for i, ((x, y), text) in enumerate(groups):
            a = self._annotation(i)
            a.xy = (x, y)
            a.set_text(text)
            a.set_visible(True)
        for a in self._annotations[len(groups):]:
            a.set_visible(False)
        self._label_args = dict(top=band_top, lines=[self.lines[k] for k in keys] + [self.load_line],
                                markers=[(e[0], e[1]) for e in entries])
        self._place_labels()

        # legend: rebuilt only when its entries change
        signature = (tuple(zip(keys, labels, (s.linestyle for s in styles), (s.marker for s in styles))), load_text)
        if signature != self._legend_signature:
            self._legend_signature = signature
            self._rebuild_legend(keys, labels, load_text)
            full = True
        return full

    def _rebuild_legend(self, keys, labels, load_text):
        for leg in list(self.figure.legends):
            leg.remove()
        handles = [self.lines[k] for k in keys]
        names = list(labels)
        if load_text is not None:
            handles.append(self.load_line)
            names.append(load_text)
        with chart_style():
            leg = self.figure.legend(handles, names, loc="outside lower center",
                                     **_legend_kwargs(3 if len(names) > 4 else 2))
        for a in leg.findobj():
            if a is not leg:
                a.set_animated(False)
        self.legend = leg

    # ------------------------------------------------------------------ drawing
    def _render(self, full: bool) -> str:
        canvas = self.figure.canvas
        if full or self._pending_full or self._background is None or not self.can_blit:
            self._pending_full = True
            self.stats["full"] += 1
            canvas.draw_idle()
            return "full"
        canvas.restore_region(self._background)
        self._draw_moving(canvas.get_renderer())
        canvas.blit(self.figure.bbox)
        self.stats["blit"] += 1
        return "blit"

    def _on_draw(self, event):
        """After every full draw: keep the new background, then draw the moving artists on it.

        When the figure is being saved, matplotlib draws animated artists itself, so nothing is
        added (and the screen background is kept).
        """
        canvas = event.canvas if event is not None else self.figure.canvas
        if hasattr(canvas, "is_saving") and canvas.is_saving():
            return
        if not any(a.get_animated() for a in self._moving()):
            self._pending_full = False
            return
        if self._placed_for != self._geometry():  # the layout engine moved the axes: space and place again
            self._space_markers()
            self._place_labels()
        renderer = getattr(event, "renderer", None) or canvas.get_renderer()
        if hasattr(canvas, "copy_from_bbox"):
            self._background = canvas.copy_from_bbox(self.figure.bbox)
            self._pending_full = False
        self._draw_moving(renderer)

    def _draw_moving(self, renderer):
        """Draw the visible moving artists, their text from the glyph cache."""
        with _screen_text(), cached_glyphs(renderer, self._glyphs):
            for a in self._moving():
                if a.get_visible():
                    a.draw(renderer)
