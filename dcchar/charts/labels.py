"""Labels of operating points and markers along curves, laid out without drawing the figure.

Every operating point is labelled with the short name of its connection (see
:data:`dcchar.charts.style.SHORT_NAMES`), its speed and torque, and the word "unstable" where it
is unstable. Points that sit close together on the chart (for instance an equal-rating family
meeting one constant load) share one box that lists one line per connection; the box has one
leader line to the middle of its points.

Boxes are placed in free space inside the axes: a box never leaves the axes area (so it cannot
cover the tick labels or the axis titles), never covers another box, the runaway band or the
note of reasons, and among the places that satisfy that, the one that hides the least of the
curves and markers and lies nearest its points is chosen. Everything is computed in points
[pt] from the axes transforms and text metrics of the font (no renderer, no draw), so the same
layout results on screen, in the PNG and in the SVG.

Markers along a curve are spaced by arc length in display space over the visible part of the
curve, a few per curve, with the phase staggered between curves so that markers of curves lying
on top of each other do not hide one another.
"""

from __future__ import annotations

import functools
import math

import numpy as np

__all__ = ["LABEL_FONT_SIZE", "text_size_pt", "group_points", "group_text", "place_boxes", "label_groups",
           "arc_markevery", "box_offsets", "LabelLayout", "attach"]

#: Font size of operating-point labels [pt].
LABEL_FONT_SIZE = 6.0
_BOX_PAD = 0.25  # box padding, fraction of the font size (boxstyle "round,pad=...")
_GAP_PT = 1.5  # clear space kept between boxes and between a box and the axes edge [pt]
_GROUP_RADIUS_PT = 9.0  # points closer than this on the chart share one box [pt]


@functools.lru_cache(maxsize=4096)
def _line_metrics(text: str, fontsize: float) -> tuple:
    from matplotlib.font_manager import FontProperties
    from matplotlib.textpath import text_to_path

    w, h, d = text_to_path.get_text_width_height_descent(text or " ", FontProperties(size=fontsize), ismath=False)
    return float(w), float(h), float(d)


@functools.lru_cache(maxsize=4096)
def _line_width(text: str, fontsize: float) -> float:
    """Width [pt] of one line. A line whose digits can be written as 0 without moving a glyph
    (tabular figures) is measured as that line, so that the changing numbers of a live label
    are measured once."""
    from ._glyph_cache import zeroed_digits

    key = zeroed_digits(text, lambda t: _line_metrics(t, fontsize)[0])
    return _line_metrics(text if key is None else key, fontsize)[0]


def text_size_pt(text: str, fontsize: float = LABEL_FONT_SIZE, pad: float = _BOX_PAD) -> tuple:
    """Width and height [pt] of a text block drawn in a box with padding ``pad`` [fraction of the
    font size], as matplotlib lays out lines (line spacing 1.2)."""
    lines = text.split("\n")
    width = max(_line_width(s, fontsize) for s in lines)
    height = len(lines) * 1.2 * fontsize  # matplotlib's line pitch: 1.2 x the font size
    return width + 2 * pad * fontsize, height + 2 * pad * fontsize


def group_points(xy_pt, radius_pt: float = _GROUP_RADIUS_PT) -> list:
    """Groups of points closer than ``radius_pt`` to one another (single linkage).

    Parameters
    ----------
    xy_pt : array of shape (n, 2)
        Positions on the chart [pt]; rows with NaN form groups of their own.

    Returns
    -------
    list of list of int
        Indices of each group, groups in order of their first member.
    """
    xy = np.asarray(xy_pt, dtype=float).reshape(-1, 2)
    n = len(xy)
    parent = list(range(n))

    def root(i):
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    ok = np.isfinite(xy).all(axis=1)
    for i in range(n):
        if not ok[i]:
            continue
        for j in range(i + 1, n):
            if ok[j] and math.hypot(*(xy[i] - xy[j])) < radius_pt:
                parent[root(j)] = root(i)
    groups: dict = {}
    for i in range(n):
        groups.setdefault(root(i), []).append(i)
    return sorted(groups.values(), key=lambda g: g[0])


def group_text(entries) -> str:
    """Text of one label box.

    Parameters
    ----------
    entries : sequence of (name, speed text, torque text, stable)
        One per point of the group (repeats are dropped).

    Returns
    -------
    str
        One point: ``"shunt\\n1151 r/min, 89.5 N·m"`` (``"series, unstable\\n..."``). Several: a
        line per point, ``"shunt: 1151 r/min, 89.5 N·m"``; when all share the torque (or the
        speed, or both) it heads the box (``"at 89.5 N·m:"``) and the lines give the rest.
    """
    seen, rows = set(), []
    for e in entries:
        if e not in seen:
            seen.add(e)
            rows.append(e)
    if len(rows) == 1:
        name, w, t, stable = rows[0]
        head = name if stable else (f"{name}, unstable" if name else "unstable")
        return f"{head}\n{w}, {t}" if head else f"{w}\n{t}"
    tail = ["" if stable else ", unstable" for *_, stable in rows]
    if len({(w, t) for _, w, t, _ in rows}) == 1:
        return "\n".join([f"at {rows[0][1]}, {rows[0][2]}:"] + [f"{n}{s}" for (n, *_), s in zip(rows, tail)])
    if len({t for _, _, t, _ in rows}) == 1:
        return "\n".join([f"at {rows[0][2]}:"] + [f"{n}: {w}{s}" for (n, w, _, _), s in zip(rows, tail)])
    if len({w for _, w, _, _ in rows}) == 1:
        return "\n".join([f"at {rows[0][1]}:"] + [f"{n}: {t}{s}" for (n, _, t, _), s in zip(rows, tail)])
    return "\n".join(f"{n}: {w}, {t}{s}" for (n, w, t, _), s in zip(rows, tail))


def _boxes_overlap(a, b, gap=0.0) -> bool:
    return a[0] < b[2] + gap and b[0] < a[2] + gap and a[1] < b[3] + gap and b[1] < a[3] + gap


def place_boxes(anchors_pt, sizes_pt, region_pt, *, samples_pt=None, markers_pt=None, blocked=()) -> list:
    """Centres [pt] of label boxes, each near its anchor, in free space.

    A greedy search over places around the anchor (eight directions, six distances) and a grid
    over the region, run smallest box first and largest box first; the pass of lower total
    cost wins. A place is allowed when the box lies inside
    ``region_pt`` (x0, y0, x1, y1) and clear of the boxes placed so far and of ``blocked``
    (boxes (x0, y0, x1, y1)). Of the allowed places the cheapest wins: 3 per curve sample
    covered (samples 2 pt apart), 40 per operating-point marker covered, 0.4 per pt of
    distance from the anchor, 150 when its leader line would cross a box placed before or the box
    would cover a leader line placed before. When no place is allowed, the one overlapping least is taken.

    Returns
    -------
    list of (float, float)
        Box centres [pt], in the order of ``anchors_pt``.
    """
    anchors = np.asarray(anchors_pt, dtype=float).reshape(-1, 2)
    samples = np.zeros((0, 2)) if samples_pt is None else np.asarray(samples_pt, dtype=float).reshape(-1, 2)
    markers = np.zeros((0, 2)) if markers_pt is None else np.asarray(markers_pt, dtype=float).reshape(-1, 2)
    rx0, ry0, rx1, ry1 = region_pt
    count = _sample_counter(samples, region_pt) if len(samples) else None
    area = [w * h for w, h in sizes_pt]
    orders = [sorted(range(len(anchors)), key=lambda i: area[i]), sorted(range(len(anchors)), key=lambda i: -area[i])]
    best = None
    for order in orders[:1 if len(anchors) == 1 else 2]:
        out, total = _place_in_order(order, anchors, sizes_pt, region_pt, count, markers, blocked)
        if best is None or total < best[1] - 1e-9:
            best = (out, total)
    return best[0]


_T_LEAD = np.linspace(0.0, 1.0, 24)[:, None]
_DIRS = [(1, 1), (1, 0), (1, -1), (0, 1), (0, -1), (-1, 1), (-1, 0), (-1, -1)]


def _place_in_order(order, anchors, sizes_pt, region_pt, count, markers, blocked):
    """One greedy pass of :func:`place_boxes` in the given order: (centres, total cost)."""
    rx0, ry0, rx1, ry1 = region_pt
    taken = [tuple(b) for b in blocked]
    out = [None] * len(anchors)
    leaders = []  # points along the leader lines placed so far [pt]
    t_lead = _T_LEAD
    grid = np.stack(np.meshgrid(np.linspace(rx0, rx1, 16), np.linspace(ry0, ry1, 12)), axis=-1).reshape(-1, 2)
    dirs = _DIRS
    total = 0.0
    for i in order:
        w, h = sizes_pt[i]
        ax_, ay_ = anchors[i]
        if not (math.isfinite(ax_) and math.isfinite(ay_)):
            ax_, ay_ = 0.5 * (rx0 + rx1), 0.5 * (ry0 + ry1)
        near = [(ax_ + dx * (0.5 * w + g * (0.75 if dx and dy else 1.0)),
                 ay_ + dy * (0.5 * h + g * (0.75 if dx and dy else 1.0)))
                for g in (5.0, 10.0, 18.0, 30.0, 46.0, 66.0) for dx, dy in dirs]
        cand = np.vstack([np.array(near), grid])
        # keep the box inside the region: clamp the centre (a clamped near place is still a place)
        cand[:, 0] = np.clip(cand[:, 0], rx0 + 0.5 * w, max(rx0 + 0.5 * w, rx1 - 0.5 * w))
        cand[:, 1] = np.clip(cand[:, 1], ry0 + 0.5 * h, max(ry0 + 0.5 * h, ry1 - 0.5 * h))
        x0, x1 = cand[:, 0] - 0.5 * w, cand[:, 0] + 0.5 * w
        y0, y1 = cand[:, 1] - 0.5 * h, cand[:, 1] + 0.5 * h
        # hard: overlap area with what is taken
        clash = np.zeros(len(cand))
        for b in taken:
            ox = np.clip(np.minimum(x1, b[2] + _GAP_PT) - np.maximum(x0, b[0] - _GAP_PT), 0, None)
            oy = np.clip(np.minimum(y1, b[3] + _GAP_PT) - np.maximum(y0, b[1] - _GAP_PT), 0, None)
            clash += ox * oy
        outside = (x0 < rx0 - 1e-6) | (x1 > rx1 + 1e-6) | (y0 < ry0 - 1e-6) | (y1 > ry1 + 1e-6)
        # soft: what the box hides, and how far it is
        cost = 3.0 * count(x0, y0, x1, y1) if count is not None else np.zeros(len(cand))
        if len(markers):
            inside = ((markers[None, :, 0] > x0[:, None] - 4) & (markers[None, :, 0] < x1[:, None] + 4)
                      & (markers[None, :, 1] > y0[:, None] - 4) & (markers[None, :, 1] < y1[:, None] + 4))
            cost += 40.0 * inside.sum(axis=1)
        dx = np.maximum(np.maximum(x0 - ax_, ax_ - x1), 0.0)
        dy = np.maximum(np.maximum(y0 - ay_, ay_ - y1), 0.0)
        cost += 0.4 * np.hypot(dx, dy)
        # a leader line must not run across another box, nor a box across another leader
        lead = np.array([ax_, ay_])[None, None, :] + t_lead[None, :, :] * (cand[:, None, :] - [[ax_, ay_]])
        own = ((lead[..., 0] >= x0[:, None]) & (lead[..., 0] <= x1[:, None]) & (lead[..., 1] >= y0[:, None])
               & (lead[..., 1] <= y1[:, None]))
        for b in taken:
            across = ((lead[..., 0] > b[0]) & (lead[..., 0] < b[2]) & (lead[..., 1] > b[1]) & (lead[..., 1] < b[3])
                      & ~own)
            cost += 150.0 * across.any(axis=1)
        if leaders:
            lp = np.vstack(leaders)
            hits = ((lp[None, :, 0] > x0[:, None]) & (lp[None, :, 0] < x1[:, None]) & (lp[None, :, 1] > y0[:, None])
                    & (lp[None, :, 1] < y1[:, None]))
            cost += 150.0 * hits.any(axis=1)
        ok = (clash <= 0) & ~outside
        if ok.any():
            k = int(np.argmin(np.where(ok, cost, np.inf)))
            total += float(cost[k])
        else:
            k = int(np.argmin(clash + 1e6 * outside + 1e-3 * cost))
            total += 1e6 + float(clash[k])
        out[i] = (float(cand[k, 0]), float(cand[k, 1]))
        taken.append((x0[k], y0[k], x1[k], y1[k]))
        seg = lead[k][~own[k]]
        if len(seg) > 2:
            leaders.append(seg[1:-1])  # not its ends: a box may touch the point another leader ends at
    return out, total


def _sample_counter(samples, region, cell=1.0):
    """A function counting the samples inside boxes, from a summed-area table over cells of
    ``cell`` [pt] (the count of a box is exact to one cell at its edges)."""
    x0, y0, x1, y1 = region
    nx = max(1, int(math.ceil((x1 - x0) / cell)) + 2)
    ny = max(1, int(math.ceil((y1 - y0) / cell)) + 2)
    ix = np.clip(np.floor((samples[:, 0] - x0) / cell).astype(int) + 1, 0, nx - 1)
    iy = np.clip(np.floor((samples[:, 1] - y0) / cell).astype(int) + 1, 0, ny - 1)
    sat = np.bincount((iy + 1) * (nx + 1) + ix + 1, minlength=(ny + 1) * (nx + 1)).astype(np.int32)
    sat = sat.reshape(ny + 1, nx + 1)
    np.cumsum(sat, axis=1, out=sat)
    np.cumsum(sat, axis=0, out=sat)

    def count(bx0, by0, bx1, by1):
        c0 = np.clip(np.floor((bx0 - x0) / cell).astype(int) + 1, 0, nx)
        c1 = np.clip(np.floor((bx1 - x0) / cell).astype(int) + 2, 0, nx)
        r0 = np.clip(np.floor((by0 - y0) / cell).astype(int) + 1, 0, ny)
        r1 = np.clip(np.floor((by1 - y0) / cell).astype(int) + 2, 0, ny)
        return sat[r1, c1] - sat[r0, c1] - sat[r1, c0] + sat[r0, c0]

    return count


def _to_pt(ax, xy):
    """Data coordinates -> points [pt] from the figure's lower left corner."""
    xy = np.asarray(xy, dtype=float).reshape(-1, 2)
    if not len(xy):
        return xy
    return ax.transData.transform(xy) * (72.0 / ax.figure.dpi)


def _axes_pt(ax):
    b = ax.bbox
    f = 72.0 / ax.figure.dpi
    return b.x0 * f, b.y0 * f, b.x1 * f, b.y1 * f


def _resample(pts, region, step=2.0):
    """Points every ``step`` [pt] along a polyline [pt], the parts inside ``region`` only."""
    x0, y0, x1, y1 = region
    fin = np.isfinite(pts).all(axis=1)
    out = []
    for run in np.split(np.arange(len(pts)), np.flatnonzero(np.diff(fin.astype(int)) != 0) + 1):
        if not len(run) or not fin[run[0]]:
            continue
        p = pts[run]
        if len(p) == 1:
            out.append(p)
            continue
        s = np.concatenate([[0.0], np.cumsum(np.hypot(*np.diff(p, axis=0).T))])
        t = np.arange(0.0, s[-1] + step, step)
        out.append(np.column_stack([np.interp(t, s, p[:, 0]), np.interp(t, s, p[:, 1])]))
    if not out:
        return np.zeros((0, 2))
    q = np.vstack(out)
    keep = (q[:, 0] >= x0) & (q[:, 0] <= x1) & (q[:, 1] >= y0) & (q[:, 1] <= y1)
    return q[keep]


def label_groups(ax, entries, radius_pt: float = _GROUP_RADIUS_PT) -> list:
    """Group labelled points that lie close together on ``ax``.

    Parameters
    ----------
    entries : sequence of (x, y, name, speed text, torque text, stable)
        Points in data coordinates with their label parts.

    Returns
    -------
    list of ((x, y), text)
        One per box: its anchor (the middle of its points, data coordinates) and its text.
    """
    if not entries:
        return []
    xy = np.array([(e[0], e[1]) for e in entries], dtype=float)
    out = []
    for g in group_points(_to_pt(ax, xy), radius_pt):
        pts = xy[g]
        fin = np.isfinite(pts).all(axis=1)
        anchor = tuple(pts[fin].mean(axis=0)) if fin.any() else tuple(pts[0])
        out.append(((float(anchor[0]), float(anchor[1])), group_text([tuple(entries[i][2:]) for i in g])))
    return out


def arc_markevery(ax, x, y, phase: float = 0.5, spacing: float = 0.2, most: int = 7) -> list:
    """Indices of the vertices where markers go, evenly spaced along the visible curve.

    Parameters
    ----------
    x, y : array
        Line data (data coordinates; NaN breaks the line).
    phase : float
        Where the first marker sits, as a fraction of one spacing. [-]
    spacing : float
        Arc length between markers as a fraction of the axes diagonal (in display space). [-]
    most : int
        At most this many markers.

    Returns
    -------
    list of int
        For ``Line2D.set_markevery``; empty when nothing of the line is visible.
    """
    pts = _to_pt(ax, np.column_stack([np.asarray(x, float), np.asarray(y, float)]))
    x0, y0, x1, y1 = _axes_pt(ax)
    vis = np.isfinite(pts).all(axis=1)
    vis &= (pts[:, 0] >= x0) & (pts[:, 0] <= x1) & (pts[:, 1] >= y0) & (pts[:, 1] <= y1)
    idx = np.flatnonzero(vis)
    if not len(idx):
        return []
    seg = np.hypot(*np.diff(pts[idx], axis=0).T) if len(idx) > 1 else np.zeros(0)
    seg = np.where(np.diff(idx) == 1, seg, 0.0)  # a gap (hidden or NaN points) adds no length
    s = np.concatenate([[0.0], np.cumsum(seg)])
    step = spacing * math.hypot(x1 - x0, y1 - y0)
    if s[-1] <= 0 or step <= 0:
        return [int(idx[0])]
    n = int(min(most, max(1, math.floor(s[-1] / step + (1 - phase)))))
    step = max(step, s[-1] / (n + 0.5))  # short curves: spread the few markers over the length
    want = (phase + np.arange(n)) * step
    want = want[want <= s[-1]]
    picks = np.searchsorted(s, want)
    picks = np.clip(picks, 0, len(s) - 1)
    return sorted({int(idx[k]) for k in picks})


class LabelLayout:
    """The labels and curve markers of one axes, laid out again whenever the geometry changes.

    Added to the axes as an invisible artist drawn first (lowest z-order), so that the layout is
    computed after the layout engine has sized the axes and before the labels and lines are
    drawn; the result is kept until the axes size, limits or figure size change (not the dpi,
    so the PNG and the SVG share one layout). :meth:`update` lays out now.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
    annotations : list of Annotation
        One per box, with ``xy`` set to its anchor and text set.
    lines : list of Line2D
        Curves the boxes avoid.
    markers : array (n, 2)
        Operating points (data coordinates), avoided by the boxes.
    top : float or None
        Boxes stay below this data y (the bottom of the runaway band).
    avoid : list of Text
        Texts in the axes (the note, the band label) that boxes keep clear of.
    marked : list of Line2D
        Curves whose markers are spaced by arc length (:func:`arc_markevery`), the phase
        staggered from one to the next.
    """

    def __init__(self, ax, annotations, lines, markers, top=None, avoid=(), marked=()):
        self.ax, self.annotations, self.lines = ax, list(annotations), list(lines)
        self.markers = np.asarray(markers, dtype=float).reshape(-1, 2)
        self.top, self.avoid, self.marked = top, list(avoid), list(marked)
        self._key = None

    def _geometry(self):
        ax = self.ax
        return (tuple(np.round(ax.get_position().bounds, 6)), ax.get_xlim(), ax.get_ylim(),
                tuple(np.round(ax.figure.get_size_inches(), 6)))

    def update(self, force: bool = False) -> bool:
        """Lay out the markers and labels if the geometry changed (or ``force``); True if it did."""
        key = self._geometry()
        if key == self._key and not force:
            return False
        self._key = key
        ax = self.ax
        n = len(self.marked)
        for k, line in enumerate(self.marked):
            _quiet(line, "set_markevery", arc_markevery(ax, line.get_xdata(), line.get_ydata(),
                                                        phase=(k + 0.5) / max(n, 1)))
        if not self.annotations:
            return True
        offsets = box_offsets(ax, [a.xy for a in self.annotations], [a.get_text() for a in self.annotations],
                              [a.get_fontsize() for a in self.annotations], lines=self.lines,
                              markers=self.markers, top=self.top, avoid=self.avoid)
        for a, off in zip(self.annotations, offsets):
            _quiet(a, "set_position", off)
            _quiet(a, "set_horizontalalignment", "center")
            _quiet(a, "set_verticalalignment", "center")
        return True


def box_offsets(ax, anchors, texts, fontsizes, *, lines=(), markers=None, top=None, avoid=()) -> list:
    """Offsets [pt] from each anchor (data coordinates) to the centre of its label box, laid out
    by :func:`place_boxes` in the current geometry of ``ax``: inside the axes and below the data
    y ``top``, clear of the texts ``avoid``, hiding as little as possible of the visible
    ``lines`` (Line2D) and of ``markers`` (data coordinates; default: the anchors)."""
    if not len(anchors):
        return []
    if np.isscalar(fontsizes):
        fontsizes = [float(fontsizes)] * len(anchors)
    x0, y0, x1, y1 = _axes_pt(ax)
    if top is not None and math.isfinite(top):
        y1 = min(y1, float(_to_pt(ax, [(ax.get_xlim()[0], top)])[0, 1]))
    region = (x0 + _GAP_PT, y0 + _GAP_PT, x1 - _GAP_PT, y1 - _GAP_PT)
    samples = [_resample(_to_pt(ax, np.column_stack([line.get_xdata(), line.get_ydata()])), region)
               for line in lines if line.get_visible()]
    samples = np.vstack(samples) if samples else None
    blocked = [b for b in (_text_box_pt(t) for t in avoid) if b is not None]
    anchors_pt = _to_pt(ax, anchors)
    sizes = [text_size_pt(t, f) for t, f in zip(texts, fontsizes)]
    centres = place_boxes(anchors_pt, sizes, region, samples_pt=samples,
                          markers_pt=_to_pt(ax, anchors if markers is None else markers), blocked=blocked)
    out = []
    for (cx, cy), (px, py) in zip(centres, anchors_pt):
        out.append((cx - px, cy - py) if math.isfinite(px) and math.isfinite(py) else (0.0, 0.0))
    return out


def _text_box_pt(text):
    """Box (x0, y0, x1, y1) [pt] of a visible Text placed in axes or axes-y coordinates, from its
    metrics (with its bbox padding when it has a box), or None."""
    if text is None or not text.get_visible() or not text.get_text():
        return None
    ax = text.axes
    f = 72.0 / ax.figure.dpi
    pad = 0.3 if text.get_bbox_patch() is not None else 0.1
    w, h = text_size_pt(text.get_text(), text.get_fontsize(), pad=pad)
    x, y = text.get_transform().transform(text.get_position()) * f
    ha, va = text.get_horizontalalignment(), text.get_verticalalignment()
    x0 = x - {"left": 0.0, "center": 0.5, "right": 1.0}[ha] * w
    y0 = y - {"bottom": 0.0, "baseline": 0.2, "center": 0.5, "center_baseline": 0.5, "top": 1.0}[va] * h
    return (x0, y0, x0 + w, y0 + h)


def _quiet(artist, method, value):
    """Call a setter without telling the figure it is stale (used while the figure draws, where
    a stale signal would ask an interactive canvas for yet another draw)."""
    cb = artist.stale_callback
    artist.stale_callback = None
    try:
        getattr(artist, method)(value)
    finally:
        artist.stale_callback = cb


_HOOK_CLASS = None


def attach(ax, layout: LabelLayout):
    """Add ``layout`` to ``ax`` as an invisible artist drawn before everything else (see
    :class:`LabelLayout`); returns the artist."""
    global _HOOK_CLASS
    if _HOOK_CLASS is None:
        from matplotlib.artist import Artist

        class _LayoutHook(Artist):
            """Runs a :class:`LabelLayout` at the start of the axes' draw; draws nothing."""

            def __init__(self, layout):
                super().__init__()
                self.layout = layout
                self.set_zorder(-1e6)
                self.set_in_layout(False)

            def draw(self, renderer):
                self.layout.update()
                self.stale = False

        _HOOK_CLASS = _LayoutHook
    hook = _HOOK_CLASS(layout)
    ax.add_artist(hook)
    return hook
