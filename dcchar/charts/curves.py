"""Static views of characteristics: torque-speed, current-torque, speed-current and efficiency.

Each view function takes a list of :class:`~dcchar.models.characteristic.Characteristic`
objects (or one), an optional load, optional operating results, ``ax=None`` and
``units="si"|"us"``, draws, and returns a dict of the artists it made. Nothing here solves
physics: the arrays of the results are converted to display units (the only place where that
happens) and drawn; a load is only evaluated at speeds to draw its curve.

Axes, as the trade usually draws them:

========================  =======================  ======================
view                      horizontal axis          vertical axis
========================  =======================  ======================
``"torque_speed"``        shaft torque             speed
``"current_torque"``      armature current         shaft torque
``"speed_current"``       armature current         speed
``"efficiency_torque"``   shaft torque             efficiency
``"efficiency_power"``    output power             efficiency
========================  =======================  ======================

Drawing rules:

- Only the points a sweep marks ``within_safe_speed`` are drawn; the others (and points with
  no finite value) become NaN in the line data, which matplotlib leaves out.
- On views with a speed axis, the speeds above the lowest finite safe speed of the sweeps are a
  shaded band labelled "beyond safe speed"; the speed axis ends a little above it, never at
  infinity. Without any finite safe speed, the axis ends at the drawn data or at three times
  the median drawn speed, whichever is lower (a display limit only: points beyond it are cut
  by the axes, not removed from the data); ``speed_limit=`` sets it by hand.
- The load curve is drawn on the torque-speed view, over the chart's speed range. On the other
  views the load shows through its operating points, which every view marks: filled markers
  for stable points, hollow ones for unstable points, each labelled with its speed and torque.
"""

from __future__ import annotations

import math
import textwrap
from dataclasses import dataclass

import numpy as np

from ..errors import ParameterError
from ..models.units import display_units
from ..models.validation import choice, positive
from .style import LOAD_STYLE, chart_style, new_figure, styles_for

__all__ = [
    "VIEWS", "ViewSpec", "draw_view", "torque_speed_chart", "current_torque_chart", "speed_current_chart",
    "efficiency_torque_chart", "efficiency_power_chart", "view_xy", "point_xy", "point_label", "load_xy",
    "axis_limits", "lowest_safe_speed", "as_list", "pair_operating", "place_labels", "load_label", "merge_labels",
]


@dataclass(frozen=True)
class ViewSpec:
    """What a view draws: the result field and quantity on each axis."""

    name: str
    x_field: str  # Characteristic array on the horizontal axis
    x_quantity: str  # "torque", "speed", "current", "power" or "efficiency"
    x_title: str
    y_field: str
    y_quantity: str
    y_title: str
    shows_load: bool  # the load curve T(w) is drawn on this view
    note_corner: tuple  # axes-fraction corner for notes (x, y, ha, va)


VIEWS = {
    "torque_speed": ViewSpec("torque_speed", "shaft_torque", "torque", "Shaft torque", "speed", "speed", "Speed",
                             True, (0.98, 0.03, "right", "bottom")),
    "current_torque": ViewSpec("current_torque", "armature_current", "current", "Armature current",
                               "shaft_torque", "torque", "Shaft torque", False, (0.02, 0.97, "left", "top")),
    "speed_current": ViewSpec("speed_current", "armature_current", "current", "Armature current", "speed",
                              "speed", "Speed", False, (0.98, 0.03, "right", "bottom")),
    "efficiency_torque": ViewSpec("efficiency_torque", "shaft_torque", "torque", "Shaft torque", "efficiency",
                                  "efficiency", "Efficiency", False, (0.98, 0.03, "right", "bottom")),
    "efficiency_power": ViewSpec("efficiency_power", "output_power", "power", "Output power", "efficiency",
                                 "efficiency", "Efficiency", False, (0.98, 0.03, "right", "bottom")),
}

# OperatingPoint attribute holding each characteristic field.
_POINT_ATTR = {"shaft_torque": "torque", "speed": "speed", "armature_current": "armature_current",
               "efficiency": "efficiency", "output_power": "output_power", "supply_current": "supply_current"}

_BAND_COLOR = "#D55E00"
_BAND_TEXT = "beyond safe speed"


# ---------------------------------------------------------------- conversions (display units)
def _spec(view) -> ViewSpec:
    return VIEWS[choice("view", view, tuple(VIEWS))]


def _factor(quantity: str, units: str) -> float:
    """Display = SI / factor (efficiency: fraction -> per cent)."""
    if quantity == "efficiency":
        return 0.01
    return display_units(units)[quantity][1]


def _unit(quantity: str, units: str) -> str:
    if quantity == "efficiency":
        return "%"
    return display_units(units)[quantity][0]


def _axis_title(title: str, quantity: str, units: str) -> str:
    return f"{title} [{_unit(quantity, units)}]"


def view_xy(characteristic, view: str, units: str = "si") -> tuple:
    """Display-unit arrays (x, y) of one characteristic on one view.

    Points outside the safe speed (``within_safe_speed`` False) or with a non-finite value are
    NaN, so they are not drawn; the arrays keep the sweep's length.

    Returns
    -------
    tuple of numpy.ndarray
        (x, y) in the display units of ``units``.
    """
    spec = _spec(view)
    x = np.asarray(getattr(characteristic, spec.x_field), dtype=float) / _factor(spec.x_quantity, units)
    y = np.asarray(getattr(characteristic, spec.y_field), dtype=float) / _factor(spec.y_quantity, units)
    ok = np.asarray(characteristic.within_safe_speed, dtype=bool) & np.isfinite(x) & np.isfinite(y)
    return np.where(ok, x, np.nan), np.where(ok, y, np.nan)


def point_xy(point, view: str, units: str = "si") -> tuple:
    """Display-unit (x, y) of an operating point on a view (NaN where the point lacks the field)."""
    spec = _spec(view)
    out = []
    for fld, qty in ((spec.x_field, spec.x_quantity), (spec.y_field, spec.y_quantity)):
        v = getattr(point, _POINT_ATTR[fld], None)
        v = math.nan if v is None else float(v)
        out.append(v / _factor(qty, units))
    return tuple(out)


def _fmt(v: float) -> str:
    a = abs(v)
    if not math.isfinite(v):
        return str(v)
    if a >= 100:
        return f"{v:.0f}"
    if a >= 10:
        return f"{v:.1f}"
    return f"{v:.2f}"


def point_label(point, units: str = "si") -> str:
    """Annotation of an operating point: speed, then torque on a second line, in display units;
    an unstable point's label begins with "unstable"."""
    w = float(point.speed) / _factor("speed", units)
    t = float(point.torque) / _factor("torque", units)
    text = f"{w:.0f} {_unit('speed', units)}\n{_fmt(t)} {_unit('torque', units)}"
    return text if getattr(point, "stable", True) else f"unstable, {text}"


def load_xy(load, speed_range_si: tuple, view: str, units: str = "si", points: int = 200):
    """Display-unit (x, y) of a load curve over a speed range [rad/s], or None where the view
    does not draw loads. The load is only evaluated (``load.torque(speed)``), never solved."""
    spec = _spec(view)
    if load is None or not spec.shows_load:
        return None
    lo, hi = speed_range_si
    w = np.linspace(lo, hi, int(points))
    t = np.asarray(load.torque(w), dtype=float)
    return t / _factor("torque", units), w / _factor("speed", units)


def load_label(load, width: int = 30) -> str:
    """Legend text of a load: ``"load: "`` and its description, wrapped."""
    try:
        text = "load: " + str(load.describe())
    except AttributeError:
        text = "load"
    return "\n".join(textwrap.wrap(text, width)) or "load"


# ---------------------------------------------------------------- inputs
def as_list(characteristics) -> list:
    """One characteristic or a sequence of them, as a list (raises on an empty list)."""
    if hasattr(characteristics, "armature_current"):
        out = [characteristics]
    else:
        try:
            out = list(characteristics)
        except TypeError:
            raise ParameterError("characteristics", characteristics, "a Characteristic or a list of them") from None
    for i, c in enumerate(out):
        for attr in ("armature_current", "within_safe_speed", "machine", "safe_speed"):
            if not hasattr(c, attr):
                raise ParameterError(f"characteristics[{i}]", c, f"a Characteristic (no .{attr})")
    if not out:
        raise ParameterError("characteristics", characteristics, "at least one Characteristic")
    return out


def pair_operating(characteristics: list, operating) -> list:
    """Pair operating results with characteristics: list of (result, index or None).

    A list as long as ``characteristics`` pairs by position; otherwise a result with a
    ``machine`` attribute pairs with the characteristic of that machine; others get None (drawn
    in a neutral style).
    """
    if operating is None:
        return []
    results = [operating] if hasattr(operating, "points") else list(operating)
    for i, r in enumerate(results):
        if r is not None and not hasattr(r, "points"):
            raise ParameterError(f"operating[{i}]", r, "an operating result with .points (or None)")
    if len(results) == len(characteristics):
        return [(r, i) for i, r in enumerate(results) if r is not None]
    out = []
    for r in results:
        if r is None:
            continue
        idx = next((i for i, c in enumerate(characteristics) if getattr(r, "machine", None) is c.machine), None)
        out.append((r, idx))
    return out


def lowest_safe_speed(characteristics) -> float | None:
    """The lowest finite safe speed of the sweeps [rad/s], or None."""
    finite = [float(c.safe_speed) for c in characteristics if math.isfinite(float(c.safe_speed))]
    return min(finite) if finite else None


def _nan_range(arrays) -> tuple:
    lo, hi = math.inf, -math.inf
    for a in arrays:
        a = np.asarray(a, dtype=float)
        a = a[np.isfinite(a)]
        if a.size:
            lo, hi = min(lo, float(a.min())), max(hi, float(a.max()))
    return lo, hi


def _speed_top_si(characteristics, points, speed_limit) -> tuple:
    """(top of the speed axis [rad/s], safe speed where the band starts or None)."""
    safe = lowest_safe_speed(characteristics)
    drawn = [np.where(np.asarray(c.within_safe_speed, bool), np.asarray(c.speed, float), np.nan)
             for c in characteristics]
    lo, hi = _nan_range(drawn + [[getattr(p, "speed", math.nan) for p in points]])
    if not math.isfinite(hi) or hi <= 0:
        hi = safe if safe is not None else 1.0
    if speed_limit is not None:
        return positive("speed_limit", speed_limit), safe
    if safe is not None:
        near = hi >= 0.75 * safe or any(not np.all(np.asarray(c.within_safe_speed, bool)) for c in characteristics)
        if near:
            return max(hi, safe) * 1.12, safe
        return hi * 1.08, safe
    finite = np.concatenate([a[np.isfinite(a) & (a > 0)] for a in drawn]) if drawn else np.array([])
    if finite.size:
        hi = min(hi, 3.0 * float(np.median(finite)))
    return hi * 1.08, None


def axis_limits(characteristics, view: str, units: str = "si", points=(), speed_limit=None) -> dict:
    """Axis limits of a view in display units, with headroom.

    Returns
    -------
    dict
        ``{"xlim": (lo, hi), "ylim": (lo, hi), "safe": safe speed in display units or None}``.
    """
    spec = _spec(view)
    points = list(points)
    top_si, safe_si = _speed_top_si(characteristics, points, speed_limit)
    xy = [view_xy(c, view, units) for c in characteristics]
    pxy = [point_xy(p, view, units) for p in points]
    out = {"safe": None}
    for axis, qty, k in (("xlim", spec.x_quantity, 0), ("ylim", spec.y_quantity, 1)):
        if qty == "efficiency":
            out[axis] = (0.0, 100.0)
            continue
        lo, hi = _nan_range([a[k] for a in xy] + [[p[k] for p in pxy]])
        if qty == "speed":
            hi = top_si / _factor("speed", units)
            lo = min(0.0, lo) if math.isfinite(lo) else 0.0
            if safe_si is not None:
                out["safe"] = safe_si / _factor("speed", units)
        else:
            if not math.isfinite(lo):
                lo, hi = 0.0, 1.0
            span = hi - lo if hi > lo else max(abs(hi), 1.0)
            lo = min(0.0, lo - 0.03 * span) if lo < 0 else 0.0
            hi = hi + 0.05 * span
        if qty == "speed" and lo < 0:
            lo -= 0.03 * (hi - lo)
        out[axis] = (lo, hi)
    return out


# ---------------------------------------------------------------- label placement
def _spread(desired, heights, low, high) -> list:
    """1-D label layout: positions near ``desired`` with gaps of at least the half-heights,
    groups of overlapping labels centred on their mean wish, the whole kept in [low, high]."""
    order = sorted(range(len(desired)), key=lambda i: desired[i])
    groups = []  # each: [members, centre]
    for i in order:
        groups.append([[i], desired[i]])
        while len(groups) > 1:
            (a, ca), (b, cb) = groups[-2], groups[-1]
            ha = sum(heights[j] for j in a)
            hb = sum(heights[j] for j in b)
            if ca + 0.5 * ha <= cb - 0.5 * hb:
                break
            members = a + b
            centre = sum(desired[j] for j in members) / len(members)
            groups[-2:] = [[members, centre]]
    pos = [0.0] * len(desired)
    total = sum(heights)
    # keep the stack inside [low, high]: shift groups down from the top, then up from the bottom
    tops = []
    for members, centre in groups:
        h = sum(heights[j] for j in members)
        tops.append([centre + 0.5 * h, h, members])
    limit = high
    for g in reversed(tops):
        g[0] = min(g[0], limit)
        limit = g[0] - g[1]
    floor = low if total <= high - low else high - total
    for g in tops:
        g[0] = max(g[0], floor + g[1])
        floor = g[0]
    for top, h, members in tops:
        y = top
        for j in reversed(members):  # members run from the lowest wish up
            pos[j] = y - 0.5 * heights[j]
            y -= heights[j]
    return pos


def place_labels(ax, anchors, texts=None, fontsize: float = 6.0, top=None) -> list:
    """Offsets [pt] for labels of points so that no two labels overlap and all stay in the axes.

    Labels go to the right or the left of their points: points near an edge of the axes put
    their label on the free side; of the others, the left half (by x) labels to the left and
    the right half to the right, so that labels of opposite sides cannot cross; a label that
    would not fit on its side is moved along it to stay inside the axes. On each side the labels are then spread
    vertically (groups of crowded labels centred on their points) within the axes, below
    ``top`` when given.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
    anchors : sequence of (x, y)
        Points in data coordinates.
    texts : sequence of str, optional
        The labels, to estimate their widths and line counts.
    fontsize : float
        [pt]
    top : float, optional
        Highest data y the labels may reach (for instance the bottom of the runaway band).

    Returns
    -------
    list of (dx, dy, ha)
        Offsets in points and horizontal alignment for ``Axes.annotate``.
    """
    n = len(anchors)
    if n == 0:
        return []
    texts = [""] * n if texts is None else list(texts)
    px_per_pt = ax.figure.dpi / 72.0
    disp = ax.transData.transform(np.asarray(anchors, dtype=float).reshape(-1, 2))
    bbox = ax.bbox
    gap = 14.0 * px_per_pt
    line_h = 1.45 * fontsize * px_per_pt  # line spacing 1.2 of a glyph height ~1.17 em, plus box padding
    heights = [line_h * (t.count("\n") + 1) for t in texts]
    widths = [0.56 * fontsize * px_per_pt * max((len(s) for s in t.split("\n")), default=0) for t in texts]
    high = bbox.y1 - 2.0 * px_per_pt
    if top is not None:
        high = min(high, float(ax.transData.transform((0.0, top))[1]) - 2.0 * px_per_pt)
    low = bbox.y0 + 2.0 * px_per_pt
    finite = [i for i in range(n) if np.isfinite(disp[i]).all()]
    # points in the left half (by x) of the crowd label to the left, the others to the right,
    # so that labels on opposite sides never cross; edge points label towards the free side
    by_x = sorted(finite, key=lambda i: disp[i][0])
    side = {}
    for rank, i in enumerate(by_x):
        x = disp[i][0]
        frac = (x - bbox.x0) / max(bbox.width, 1.0)
        want = 1 if frac < 0.15 else -1 if frac > 0.85 else (-1 if rank < len(by_x) // 2 else 1)
        side[i] = want
    # horizontal offset of each label, kept inside the axes
    dxs = {}
    for i in finite:
        x = disp[i][0]
        if side[i] == 1:
            dxs[i] = min(gap, bbox.x1 - 2.0 * px_per_pt - widths[i] - x)
        else:
            dxs[i] = -min(gap, x - bbox.x0 - 2.0 * px_per_pt - widths[i])

    def spread(groups):
        ys = {}
        for idx in groups:
            if idx:
                for i, y in zip(idx, _spread([disp[i][1] for i in idx], [heights[i] for i in idx], low, high)):
                    ys[i] = y
        return ys

    def extent(i, y):
        x = disp[i][0] + dxs[i]
        x0, x1 = (x, x + widths[i]) if side[i] == 1 else (x - widths[i], x)
        return x0, x1, y - 0.5 * heights[i], y + 0.5 * heights[i]

    ys = spread([[i for i in finite if side[i] == s] for s in (1, -1)])
    tol = 0.5 * px_per_pt
    boxes = {i: extent(i, ys[i]) for i in finite}
    crossed = any(a[0] < b[1] - tol and b[0] < a[1] - tol and a[2] < b[3] - tol and b[2] < a[3] - tol
                  for i, a in boxes.items() for j, b in boxes.items() if side[i] == 1 and side[j] == -1)
    if crossed:  # labels of the two sides would meet: one stack for all
        ys = spread([finite])
    out = [(10.0, 8.0, "left")] * n
    for i in finite:
        out[i] = (dxs[i] / px_per_pt, (ys[i] - disp[i][1]) / px_per_pt, "left" if side[i] == 1 else "right")
    return out


# ---------------------------------------------------------------- drawing
def merge_labels(anchors, texts, decimals: int = 6) -> tuple:
    """Drop repeated labels: points with the same text at the same place get one label.

    Returns
    -------
    tuple of list
        (anchors, texts) without repeats, in first-seen order.
    """
    seen = set()
    out_a, out_t = [], []
    for (x, y), t in zip(anchors, texts):
        key = (t, round(float(x), decimals), round(float(y), decimals))
        if key in seen:
            continue
        seen.add(key)
        out_a.append((x, y))
        out_t.append(t)
    return out_a, out_t


def _marker_kwargs(style, stable: bool) -> dict:
    color = style.color if style is not None else "#000000"
    marker = style.marker if style is not None else "o"
    if stable:
        return dict(marker=marker, markersize=6.5, markerfacecolor=color, markeredgecolor="#000000",
                    markeredgewidth=0.7, linestyle="None", color=color)
    return dict(marker=marker, markersize=7.5, markerfacecolor="#FFFFFF", markeredgecolor=color,
                markeredgewidth=1.4, linestyle="None", color=color)


def _legend_labels(characteristics, styles) -> list:
    labels = [s.label for s in styles]
    volts = {round(float(c.voltage), 6) for c in characteristics}
    if len(volts) > 1 or len(set(labels)) < len(labels):
        labels = [f"{lab}, {float(c.voltage):g} V" for lab, c in zip(labels, characteristics)]
    # long names on two lines, so that two legend columns fit a page column
    return [lab.replace(" (", "\n(", 1) if len(lab) > 22 else lab for lab in labels]


def _legend_kwargs(ncol: int) -> dict:
    return dict(ncols=ncol, frameon=False, handlelength=2.8, fontsize=6, columnspacing=1.2, labelspacing=0.35,
                borderaxespad=0.2)


def _column_height_mm(entries, ncol: int, plot_mm: float = 58.0) -> float:
    """Height of a column-wide figure [mm]: room for the plot, plus the legend rows below it."""
    lines = [e.count("\n") + 1 for e in entries]
    rows = [max(lines[i:i + ncol]) for i in range(0, len(lines), ncol)]
    return plot_mm + 2.6 * sum(rows) + 1.2 * len(rows) + 2.0


def draw_view(view: str, characteristics, load=None, operating=None, *, ax=None, units: str = "si",
              speed_limit: float | None = None, legend: str | None = "auto") -> dict:
    """Draw one view (see :data:`VIEWS`) of some characteristics.

    Parameters
    ----------
    view : str
        One of :data:`VIEWS`.
    characteristics : Characteristic or list of Characteristic
    load : object, optional
        Anything with ``torque(speed)`` (vectorized, [N*m] at the motor shaft for speed [rad/s])
        and ``describe()``; drawn on the torque-speed view.
    operating : operating result or list of them, optional
        Objects with ``.points`` (each with ``speed`` [rad/s], ``torque`` [N*m],
        ``armature_current`` [A], ``efficiency`` [-], ``output_power`` [W], ``stable``) and
        ``.reason``. A list as long as ``characteristics`` pairs with them by position and
        takes their colours and markers.
    ax : matplotlib.axes.Axes, optional
        Default: a new column-wide figure (:func:`~dcchar.charts.style.new_figure`).
    units : {"si", "us"}
        Display units (:data:`dcchar.models.units.UNIT_SYSTEMS`).
    speed_limit : float, optional
        Top of the speed axis [rad/s] (see the module notes for the default).
    legend : {"auto", "outside", "inside", None}
        "auto": below the axes when this function made the figure, else inside ("best").

    Returns
    -------
    dict
        ``figure``, ``axes``, ``lines`` (one Line2D per characteristic, in order), ``load``
        (Line2D or None), ``points`` (Line2D of operating markers), ``annotations`` (their
        labels; points that coincide share one), ``band`` and ``band_label`` (runaway band, or None), ``notes`` (Text of
        the reasons results give, such as "runs away", or None), ``legend``.
    """
    spec = _spec(view)
    display_units(units)
    chars = as_list(characteristics)
    choice("legend", legend, ("auto", "outside", "inside", None))
    pairs = pair_operating(chars, operating)
    all_points = [p for r, _ in pairs for p in r.points]
    made = ax is None
    with chart_style():
        styles = styles_for([c.machine for c in chars])
        labels = _legend_labels(chars, styles)
        entries = labels + ([load_label(load)] if (spec.shows_load and load is not None) else [])
        outside = legend == "outside" or (legend == "auto" and made)
        ncol = 2 if len(entries) > 3 else 1
        if made:
            fig = new_figure(height_mm=_column_height_mm(entries, ncol) if outside else None)
            ax = fig.add_subplot()
        fig = ax.figure
        lim = axis_limits(chars, view, units, all_points, speed_limit)
        ax.set_xlim(*lim["xlim"])
        ax.set_ylim(*lim["ylim"])
        ax.set_autoscale_on(False)
        ax.set_xlabel(_axis_title(spec.x_title, spec.x_quantity, units))
        ax.set_ylabel(_axis_title(spec.y_title, spec.y_quantity, units))
        ax.grid(True, color="#D0D0D0", linewidth=0.4)
        ax.set_axisbelow(True)
        out = {"figure": fig, "axes": ax, "lines": [], "load": None, "points": [], "annotations": [],
               "band": None, "band_label": None, "notes": None, "legend": None}

        if lim["safe"] is not None and lim["safe"] < lim["ylim"][1]:
            out["band"] = ax.axhspan(lim["safe"], lim["ylim"][1], facecolor=_BAND_COLOR, alpha=0.12,
                                     edgecolor=_BAND_COLOR, linewidth=0.6, zorder=0.5)
            out["band_label"] = ax.text(0.02, 0.5 * (lim["safe"] + lim["ylim"][1]),
                                        f"{_BAND_TEXT} ({lim['safe']:.0f} {_unit('speed', units)})",
                                        transform=ax.get_yaxis_transform(), ha="left", va="center",
                                        fontsize=6, color="#8A3A00", zorder=0.6)

        for c, s, lab in zip(chars, styles, labels):
            x, y = view_xy(c, view, units)
            kw = s.line_kwargs()
            kw["label"] = lab
            (line,) = ax.plot(x, y, **kw, zorder=2)
            out["lines"].append(line)

        ylim = lim["ylim"]
        if spec.shows_load and load is not None:
            f = 1.0 / _factor("speed", units)
            xy = load_xy(load, (max(0.0, ylim[0]) / f, ylim[1] / f), view, units)
            (out["load"],) = ax.plot(*xy, **LOAD_STYLE, label=load_label(load), zorder=1.5)

        anchors, texts = [], []
        for r, idx in pairs:
            s = styles[idx] if idx is not None else None
            for p in r.points:
                x, y = point_xy(p, view, units)
                stable = bool(getattr(p, "stable", True))
                (m,) = ax.plot([x], [y], **_marker_kwargs(s, stable), zorder=4)
                out["points"].append(m)
                anchors.append((x, y))
                texts.append(point_label(p, units))
        reasons = [f"{styles[i].label if i is not None else 'result'}: {r.reason}"
                   for r, i in pairs if getattr(r, "reason", None)]
        if reasons:
            cx, cy, ha, va = spec.note_corner
            out["notes"] = ax.text(cx, cy, "\n".join(textwrap.fill(t, 48) for t in reasons),
                                   transform=ax.transAxes, ha=ha, va=va, fontsize=5.5, zorder=5,
                                   bbox=dict(boxstyle="round,pad=0.3", facecolor="white", edgecolor="#999999",
                                             linewidth=0.4, alpha=0.9))

        if outside:
            out["legend"] = fig.legend(loc="outside lower center", **_legend_kwargs(ncol))
        elif legend is not None:
            out["legend"] = ax.legend(loc="best", handlelength=3.2, fontsize=6, framealpha=0.9)

        anchors, texts = merge_labels(anchors, texts)
        if anchors:
            if fig.get_layout_engine() is not None:
                fig.draw_without_rendering()  # settle the layout so label spacing is final
            for (x, y), text, (dx, dy, ha) in zip(anchors, texts,
                                                   place_labels(ax, anchors, texts, fontsize=6, top=lim["safe"])):
                out["annotations"].append(ax.annotate(
                    text, xy=(x, y), xytext=(dx, dy), textcoords="offset points", ha=ha, va="center",
                    fontsize=6, zorder=5, annotation_clip=True,
                    bbox=dict(boxstyle="round,pad=0.15", facecolor="white", edgecolor="none", alpha=0.8),
                    arrowprops=dict(arrowstyle="-", color="#555555", linewidth=0.5, shrinkA=0, shrinkB=3, patchA=None)))
    return out


def torque_speed_chart(characteristics, load=None, operating=None, *, ax=None, units="si", **kwargs) -> dict:
    """Speed (vertical) against shaft torque, with the load curve. See :func:`draw_view`."""
    return draw_view("torque_speed", characteristics, load, operating, ax=ax, units=units, **kwargs)


def current_torque_chart(characteristics, load=None, operating=None, *, ax=None, units="si", **kwargs) -> dict:
    """Shaft torque (vertical) against armature current. See :func:`draw_view`."""
    return draw_view("current_torque", characteristics, load, operating, ax=ax, units=units, **kwargs)


def speed_current_chart(characteristics, load=None, operating=None, *, ax=None, units="si", **kwargs) -> dict:
    """Speed (vertical) against armature current. See :func:`draw_view`."""
    return draw_view("speed_current", characteristics, load, operating, ax=ax, units=units, **kwargs)


def efficiency_torque_chart(characteristics, load=None, operating=None, *, ax=None, units="si", **kwargs) -> dict:
    """Efficiency [%] (vertical) against shaft torque. See :func:`draw_view`."""
    return draw_view("efficiency_torque", characteristics, load, operating, ax=ax, units=units, **kwargs)


def efficiency_power_chart(characteristics, load=None, operating=None, *, ax=None, units="si", **kwargs) -> dict:
    """Efficiency [%] (vertical) against output power. See :func:`draw_view`."""
    return draw_view("efficiency_power", characteristics, load, operating, ax=ax, units=units, **kwargs)
