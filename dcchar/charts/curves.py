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
- The load curve is drawn on the torque-speed view, over the chart's whole speed range,
  negative speeds included (a hoist lowering its load, where the gear efficiency acts the other
  way), with a sample at standstill. On the other views the load shows through its operating
  points, which every view marks: filled markers for stable points, hollow ones for unstable
  points.
- Each operating point is labelled with the short name of its connection, its speed and its
  torque, and "unstable" where it is; points close together on the chart share one box with a
  line per connection and one leader line. The boxes are placed in free space inside the axes
  (never over the tick labels), and markers along each curve are spaced by arc length on the
  chart, a few per curve: see :mod:`dcchar.charts.labels`. Both are laid out again when the
  figure is drawn at a new size, without extra draws; :func:`dcchar.charts.export.freeze_layout`
  fixes the layout before saving.
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
    "efficiency_torque_chart", "efficiency_power_chart", "view_xy", "point_xy", "point_values",
    "load_xy",
    "axis_limits", "lowest_safe_speed", "as_list", "pair_operating", "place_labels", "load_label",
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


def point_values(point, units: str = "si") -> tuple:
    """(speed text, torque text) of an operating point in display units, e.g.
    ``("1151 r/min", "89.5 N·m")``."""
    w = float(point.speed) / _factor("speed", units)
    t = float(point.torque) / _factor("torque", units)
    return f"{w:.0f} {_unit('speed', units)}", f"{_fmt(t)} {_unit('torque', units)}"


def load_xy(load, speed_range_si: tuple, view: str, units: str = "si", points: int = 200):
    """Display-unit (x, y) of a load curve over a speed range [rad/s], or None where the view
    does not draw loads. The load is only evaluated (``load.torque(speed)``), never solved."""
    spec = _spec(view)
    if load is None or not spec.shows_load:
        return None
    lo, hi = speed_range_si
    w = np.linspace(lo, hi, int(points))
    if lo < 0.0 < hi:  # a sample at standstill, where the torque of a hoist changes with the power flow
        w = np.sort(np.append(w, 0.0))
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
def place_labels(ax, anchors, texts=None, fontsize: float = 6.0, top=None, *, lines=(), markers=None,
                 avoid=()) -> list:
    """Offsets [pt] of label boxes from their points: inside the axes, clear of one another.

    The boxes are placed by :func:`dcchar.charts.labels.place_boxes` in the current geometry
    of ``ax`` (no drawing): inside the axes area and below ``top``, clear of one another and of
    the texts in ``avoid``, hiding as little as possible of ``lines`` and ``markers``, and near
    their points.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
    anchors : sequence of (x, y)
        Points in data coordinates.
    texts : sequence of str, optional
        The labels (their size is measured from the font).
    fontsize : float
        [pt]
    top : float, optional
        Highest data y the labels may reach (for instance the bottom of the runaway band).
    lines : sequence of Line2D, optional
        Curves to keep visible.
    markers : sequence of (x, y), optional
        Operating points to keep visible (default: ``anchors``).
    avoid : sequence of Text, optional

    Returns
    -------
    list of (dx, dy, ha)
        Offset in points of each box centre from its point, and the horizontal alignment
        ("center") for ``Axes.annotate`` with ``va="center"``.
    """
    from .labels import box_offsets

    if not len(anchors):
        return []
    texts = [""] * len(anchors) if texts is None else list(texts)
    offsets = box_offsets(ax, anchors, texts, fontsize, lines=lines, markers=markers, top=top, avoid=avoid)
    return [(float(dx), float(dy), "center") for dx, dy in offsets]


# ---------------------------------------------------------------- drawing
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


#: How operating-point labels look: an opaque white box with a thin grey edge, a thin leader line.
_ANNOTATION_KW = dict(ha="center", va="center", multialignment="left", fontsize=6, zorder=5, annotation_clip=True,
                      linespacing=1.2,
                      bbox=dict(boxstyle="round,pad=0.25", facecolor="white", edgecolor="#888888", linewidth=0.4),
                      # the leader starts at the box centre, hidden by the opaque box (clipping it at the box
                      # edge, patchA, costs a third of a live update)
                      arrowprops=dict(arrowstyle="-", color="#444444", linewidth=0.5, shrinkA=0, shrinkB=3.5,
                                      patchA=None))


def _short_names(characteristics, styles) -> list:
    """Short connection names for point labels, with the voltage where the legend gives it."""
    from .style import short_name

    names = [short_name(c.machine) for c in characteristics]
    volts = {round(float(c.voltage), 6) for c in characteristics}
    if len(volts) > 1 or len(set(names)) < len(names):
        names = [f"{n} {float(c.voltage):g} V" for n, c in zip(names, characteristics)]
    return names


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
        label boxes; points close together share one), ``band`` and ``band_label`` (runaway
        band, or None), ``notes`` (Text of the reasons results give, such as "runs away", or
        None), ``legend``, ``layout`` (the :class:`~dcchar.charts.labels.LabelLayout`).
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
            xy = load_xy(load, (ylim[0] / f, ylim[1] / f), view, units)  # negative speeds too (lowering)
            (out["load"],) = ax.plot(*xy, **LOAD_STYLE, label=load_label(load), zorder=1.5)

        entries = []
        names = _short_names(chars, styles)
        for r, idx in pairs:
            s = styles[idx] if idx is not None else None
            for p in r.points:
                x, y = point_xy(p, view, units)
                stable = bool(getattr(p, "stable", True))
                (m,) = ax.plot([x], [y], **_marker_kwargs(s, stable), zorder=4)
                out["points"].append(m)
                entries.append((x, y, names[idx] if idx is not None else "", *point_values(p, units),
                                stable))
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

        from .labels import LabelLayout, attach, label_groups

        for (x, y), text in label_groups(ax, entries):
            a = ax.annotate(text, xy=(x, y), xytext=(0.0, 0.0), textcoords="offset points", **_ANNOTATION_KW)
            a.set_in_layout(False)  # inside the axes by construction; the layout engine need not see it
            out["annotations"].append(a)
        layout = LabelLayout(ax, out["annotations"], out["lines"] + ([out["load"]] if out["load"] else []),
                             [(e[0], e[1]) for e in entries], top=lim["safe"] if spec.y_quantity == "speed" else None,
                             avoid=[t for t in (out["notes"], out["band_label"]) if t is not None],
                             marked=out["lines"])
        layout.update()  # a first layout now; drawing lays it out again once the axes have their final size
        attach(ax, layout)
        out["layout"] = layout
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
