"""Saving figures for print: every format rendered first, then moved into place atomically.

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

__all__ = ["save_figure", "clipped_texts", "EXPORT_FORMATS"]

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


def clipped_texts(fig, tolerance_px: float = 0.5) -> list:
    """Parts of a figure that stick out of it, after laying it out.

    Checks every axes with its decorations (tick labels, axis labels, titles, texts and
    annotations as drawn), every figure legend and every figure-level text.

    Returns
    -------
    list of matplotlib.artist.Artist
        Empty when nothing is clipped.
    """
    fig.draw_without_rendering()
    renderer = fig._get_renderer()
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
