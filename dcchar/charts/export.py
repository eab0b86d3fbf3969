"""Saving figures for print: every format rendered first, then moved into place atomically.

:func:`freeze_layout` lays a figure out once (its layout engine, then the labels of operating
points) and fixes that layout, so that each format then draws the figure exactly once; without
it matplotlib lays a figure out again for every format, and twice for each.
:func:`clipped_texts` and :func:`overlapping_texts` check the result.

Each format is rendered into a temporary file in the destination folder; only when every
format has rendered are the files moved over their final names with :func:`os.replace` (atomic
on one file system). If any rendering fails, the temporary files are removed and nothing is
written. Nothing outside the destination folder is touched, and the folder is not created.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from ..errors import ParameterError
from ..models.validation import positive

__all__ = ["save_figure", "export_figure", "clipped_texts", "overlapping_texts", "freeze_layout", "EXPORT_FORMATS"]

#: Formats :func:`save_figure` writes.
EXPORT_FORMATS = ("png", "svg", "pdf")


def _metadata(fmt: str) -> dict:
    from .. import __version__

    software = f"dcchar {__version__}"
    if fmt == "png":
        return {"Software": software}
    if fmt == "svg":
        return {"Creator": software, "Date": None}  # no date: the same figure gives the same file
    return {"Creator": software, "CreationDate": None}


def save_figure(fig, path_stem, formats=("png", "svg"), dpi: float = 300) -> list:
    """Save a figure in several formats, atomically.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
    path_stem : str or os.PathLike
        Destination without the extension, in an existing folder: ``out/torque_speed`` writes
        ``out/torque_speed.png`` and ``out/torque_speed.svg``.
    formats : sequence of str, default ("png", "svg")
        Any of :data:`EXPORT_FORMATS`.
    dpi : float, default 300
        Raster resolution [dots per inch]; the PNG is ``figure size [in] * dpi`` pixels and
        carries the resolution in its metadata.

    Returns
    -------
    list of pathlib.Path
        The files written, in the order of ``formats``.

    Raises
    ------
    ParameterError
        Unknown format, bad dpi, missing folder or a stem naming a folder.
    """
    if isinstance(formats, str):
        formats = (formats,)
    formats = tuple(formats)
    if not formats:
        raise ParameterError("formats", formats, f"one or more of {EXPORT_FORMATS}")
    for f in formats:
        if f not in EXPORT_FORMATS:
            raise ParameterError("formats", f, f"one of {EXPORT_FORMATS}")
    if len(set(formats)) != len(formats):
        raise ParameterError("formats", formats, "each format once")
    dpi = positive("dpi", dpi)
    try:
        stem = Path(os.fspath(path_stem))
    except TypeError:
        raise ParameterError("path_stem", path_stem, "a path (str or os.PathLike)") from None
    if not stem.name or stem.name in (".", ".."):
        raise ParameterError("path_stem", str(path_stem), "a file name stem such as 'out/torque_speed'")
    folder = stem.parent
    if not folder.is_dir():
        raise ParameterError("path_stem", str(path_stem), f"a path in an existing folder ({str(folder)!r} is not one)")
    targets = [folder / f"{stem.name}.{f}" for f in formats]
    for t in targets:
        if t.is_dir():
            raise ParameterError("path_stem", str(path_stem), f"a stem whose files are not folders ({t})")

    temps = []
    try:
        for fmt, target in zip(formats, targets):
            fd, tmp = tempfile.mkstemp(prefix=f".{stem.name}.", suffix=f".{fmt}.part", dir=folder)
            temps.append(tmp)
            with os.fdopen(fd, "wb") as fh:
                fig.savefig(fh, format=fmt, dpi=dpi, metadata=_metadata(fmt))
                fh.flush()
                os.fsync(fh.fileno())
            mode = (target.stat().st_mode & 0o777) if target.exists() else 0o644
            os.chmod(tmp, mode)
        for tmp, target in zip(temps, targets):
            os.replace(tmp, target)
        temps = []
    finally:
        for tmp in temps:
            try:
                os.unlink(tmp)
            except FileNotFoundError:
                pass
    return targets


def freeze_layout(fig):
    """Lay a figure out once and keep that layout.

    Runs the figure's layout engine (constrained layout for dcchar figures) once, then the
    label layout of every axes drawn by :func:`dcchar.charts.curves.draw_view`, and removes the
    layout engine, so that the axes keep their places. Saving then draws the figure once per
    format, and :func:`clipped_texts` / :func:`overlapping_texts` can check it with
    ``draw=False``. Call it after the last change to the figure (title block included).

    Returns
    -------
    matplotlib.figure.Figure
        ``fig``.
    """
    engine = fig.get_layout_engine()
    if engine is not None:
        engine.execute(fig)
        fig.set_layout_engine(None)
    for ax in fig.axes:
        for child in ax.get_children():
            layout = getattr(child, "layout", None)
            if hasattr(layout, "update"):
                layout.update()
    return fig


def _renderer(fig, draw: bool):
    if draw:
        fig.draw_without_rendering()
    return fig._get_renderer()


def _box(text, renderer):
    """Window extent [px] of a text, with its box when it has one (annotations positioned first)."""
    if hasattr(text, "update_positions"):
        text.update_positions(renderer)
    patch = text.get_bbox_patch()
    if patch is not None:
        text.update_bbox_position_size(renderer)
        return patch.get_window_extent(renderer)
    from matplotlib.text import Text

    return Text.get_window_extent(text, renderer)


def overlapping_texts(fig, tolerance_px: float = 0.5, draw: bool = True) -> list:
    """Pairs of texts that overlap: labels in the axes against each other and against the
    texts around the axes.

    The labels are every visible text drawn inside an axes (annotations such as the labels of
    operating points, the note of reasons, the band label), measured with their boxes. Each is
    checked against the others and against the tick labels, axis titles and titles of every
    axes, the figure's texts (title block) and the legends.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
    tolerance_px : float
        Overlaps narrower or lower than this are ignored. [px]
    draw : bool, default True
        Lay the figure out first (``draw_without_rendering``); False when the layout is fixed
        (:func:`freeze_layout`).

    Returns
    -------
    list of (Artist, Artist)
        Empty when nothing overlaps.
    """
    renderer = _renderer(fig, draw)
    inner, outer = [], []
    for ax in fig.axes:
        if not ax.get_visible():
            continue
        for t in ax.texts:
            if t.get_visible() and t.get_text().strip():
                if hasattr(t, "xy") and getattr(t, "_check_xy", None) and not t._check_xy(renderer):
                    continue  # an annotation whose point lies outside the axes is not drawn
                inner.append((t, _box(t, renderer)))
        ticks = []
        for axis in (ax.xaxis, ax.yaxis):
            axis._update_ticks()
            ticks += [t for t in axis.get_ticklabels(which="both") if t.get_visible() and t.get_text().strip()]
            ticks.append(axis.label)
        ticks += [ax.title, ax._left_title, ax._right_title]
        outer += [(t, t.get_window_extent(renderer)) for t in ticks if t.get_visible() and t.get_text().strip()]
        if ax.get_legend() is not None:
            outer.append((ax.get_legend(), ax.get_legend().get_window_extent(renderer)))
    figtexts = list(fig.texts) + [t for t in (fig._suptitle, fig._supxlabel, fig._supylabel) if t is not None]
    outer += [(t, t.get_window_extent(renderer)) for t in figtexts if t.get_visible() and t.get_text().strip()]
    outer += [(leg, leg.get_window_extent(renderer)) for leg in fig.legends if leg.get_visible()]

    def hit(a, b):
        w = min(a.x1, b.x1) - max(a.x0, b.x0)
        h = min(a.y1, b.y1) - max(a.y0, b.y0)
        return w > tolerance_px and h > tolerance_px

    bad = []
    for i, (t, bb) in enumerate(inner):
        for u, cc in inner[i + 1:] + outer:
            if hit(bb, cc):
                bad.append((t, u))
    return bad


def clipped_texts(fig, tolerance_px: float = 0.5, draw: bool = True) -> list:
    """Parts of a figure that stick out of it, after laying it out.

    Checks every axes with its decorations (tick labels, axis labels, titles, texts and
    annotations as drawn), every figure legend and every figure-level text. ``draw=False``
    skips laying the figure out (when :func:`freeze_layout` has fixed it).

    Returns
    -------
    list of matplotlib.artist.Artist
        Empty when nothing is clipped.
    """
    renderer = _renderer(fig, draw)
    box = fig.bbox
    parts = [(ax, ax.get_tightbbox(renderer)) for ax in fig.axes if ax.get_visible()]
    parts += [(leg, leg.get_window_extent(renderer)) for leg in fig.legends if leg.get_visible()]
    texts = list(fig.texts) + [t for t in (fig._suptitle, fig._supxlabel, fig._supylabel) if t is not None]
    parts += [(t, t.get_window_extent(renderer)) for t in texts if t.get_visible() and t.get_text().strip()]
    bad = []
    for artist, bb in parts:
        if bb is None:
            continue
        if (bb.x0 < box.x0 - tolerance_px or bb.y0 < box.y0 - tolerance_px or bb.x1 > box.x1 + tolerance_px
                or bb.y1 > box.y1 + tolerance_px):
            bad.append(artist)
    return bad


def _words(artist) -> str:
    get = getattr(artist, "get_text", None)
    return " ".join(str(get()).split()) if get is not None else type(artist).__name__


def export_figure(fig, path_stem, formats=("png", "svg"), dpi: float = 300) -> tuple:
    """Lay ``fig`` out at the resolution it is saved at, once (:func:`freeze_layout`), check it
    and save it (:func:`save_figure`). Call it after the last change to the figure (title block
    included).

    Text measured at the screen's 100 dpi comes out wider at 300 dpi, so the layout is made at
    ``dpi``; each format then draws the figure once.

    Returns
    -------
    (list of pathlib.Path, list of str)
        The files written, and the problems found: texts reaching outside the figure, then
        ``"overlap: a | b"`` for texts that overlap.
    """
    fig.set_dpi(dpi)
    freeze_layout(fig)
    problems = [_words(a) for a in clipped_texts(fig, draw=False)]
    problems += [f"overlap: {_words(a)} | {_words(b)}" for a, b in overlapping_texts(fig, draw=False)]
    return save_figure(fig, path_stem, formats=formats, dpi=dpi), problems
