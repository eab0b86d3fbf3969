"""The look of dcchar charts: one line style, marker and colour per connection, page sizes in mm.

Every connection gets a colour *and* a line style *and* a marker, so a chart printed in grey
scale still tells the curves apart. The colours are the eight-colour palette for colour-blind
readers of Okabe and Ito [1]_. Nothing here changes matplotlib's global state: the rc settings
below are applied only inside :func:`chart_style` (a ``matplotlib.rc_context``), and the view
functions set the properties of their artists explicitly.

References
----------
.. [1] M. Okabe and K. Ito, "Color Universal Design (CUD): how to make figures and
   presentations that are friendly to colorblind people," J*FLY, 2008.
"""

from __future__ import annotations

import contextlib
import datetime as _dt
from dataclasses import dataclass

from ..errors import ParameterError
from ..models.validation import positive

__all__ = [
    "ConnectionStyle", "CONNECTION_STYLES", "FALLBACK_STYLES", "LOAD_STYLE", "MM_PER_INCH", "COLUMN_MM",
    "DOUBLE_COLUMN_MM", "FONT_SIZE", "STYLE_RC", "style_key", "style_for", "styles_for", "figure_size_mm",
    "new_figure", "chart_style", "title_block", "SHORT_NAMES", "short_name",
]

MM_PER_INCH = 25.4
#: Width of one page column [mm] (common journal and report practice, no source).
COLUMN_MM = 85.0
#: Width of a figure across two columns [mm].
DOUBLE_COLUMN_MM = 175.0
#: Base font size of exported charts [pt]; 7 pt stays legible at column width when printed.
FONT_SIZE = 7.0


@dataclass(frozen=True)
class ConnectionStyle:
    """How one connection is drawn.

    Attributes
    ----------
    label : str
        Legend text.
    color : str
        Line and marker colour (hex).
    linestyle : str or tuple
        Matplotlib line style (named or dash tuple).
    marker : str
        Matplotlib marker, placed a few times along the line.
    """

    label: str
    color: str
    linestyle: object
    marker: str

    def line_kwargs(self) -> dict:
        """Keyword arguments for ``Axes.plot`` / ``Line2D`` (markers spaced along the line)."""
        return dict(color=self.color, linestyle=self.linestyle, marker=self.marker, markersize=4.0,
                    markevery=0.12, markerfacecolor=self.color, markeredgecolor=self.color,
                    markeredgewidth=0.8, linewidth=1.3, label=self.label)


# Okabe-Ito colours; the line styles and markers alone already tell the eight apart.
#: Style per connection key (see :func:`style_key`).
CONNECTION_STYLES = {
    "separately_excited": ConnectionStyle("separately excited", "#0072B2", "-", "o"),
    "shunt": ConnectionStyle("shunt", "#D55E00", (0, (6, 2)), "s"),
    "series": ConnectionStyle("series", "#009E73", (0, (1.5, 1.5)), "^"),
    "long_shunt_compound/cumulative": ConnectionStyle("cumulative compound (long shunt)", "#CC79A7",
                                                      (0, (6, 1.5, 1.5, 1.5)), "D"),
    "short_shunt_compound/cumulative": ConnectionStyle("cumulative compound (short shunt)", "#E69F00",
                                                       (0, (3, 1.5)), "v"),
    "long_shunt_compound/differential": ConnectionStyle("differential compound (long shunt)", "#56B4E9",
                                                        (0, (6, 1.5, 1.5, 1.5, 1.5, 1.5)), "P"),
    "short_shunt_compound/differential": ConnectionStyle("differential compound (short shunt)", "#000000",
                                                         (0, (8, 2, 2, 2)), "X"),
    "permanent_magnet": ConnectionStyle("permanent magnet", "#7F7F7F", (0, (2, 1, 2, 4)), "h"),
}

#: Short names of the connections, for the labels of operating points (the legend keeps the full names).
SHORT_NAMES = {
    "separately_excited": "sep. excited",
    "shunt": "shunt",
    "series": "series",
    "long_shunt_compound/cumulative": "cum. compound, long",
    "short_shunt_compound/cumulative": "cum. compound, short",
    "long_shunt_compound/differential": "diff. compound, long",
    "short_shunt_compound/differential": "diff. compound, short",
    "permanent_magnet": "perm. magnet",
}


def short_name(machine) -> str:
    """Short name of a machine's connection (:data:`SHORT_NAMES`); else its label, cut to 20 characters."""
    key = style_key(machine)
    if key in SHORT_NAMES:
        return SHORT_NAMES[key]
    label = str(getattr(machine, "label", key))
    return label if len(label) <= 20 else label[:19] + "\u2026"


#: Styles for machines of unknown connection, and for a second curve of one connection.
FALLBACK_STYLES = (
    ConnectionStyle("", "#333333", (0, (4, 1, 1, 1, 1, 1)), "*"),
    ConnectionStyle("", "#8C510A", (0, (1, 3)), "p"),
    ConnectionStyle("", "#01665E", (0, (5, 3)), "<"),
    ConnectionStyle("", "#762A83", (0, (3, 1, 1, 3)), ">"),
)

#: The load curve: thick, solid, dark grey, no marker (it is one curve whatever the connections).
LOAD_STYLE = dict(color="#222222", linestyle="-", linewidth=2.2, alpha=0.45, marker="None", solid_capstyle="butt")

#: rc settings used inside :func:`chart_style` only.
STYLE_RC = {
    "font.size": FONT_SIZE,
    "axes.titlesize": FONT_SIZE + 1,
    "axes.labelsize": FONT_SIZE,
    "xtick.labelsize": FONT_SIZE - 0.5,
    "ytick.labelsize": FONT_SIZE - 0.5,
    "legend.fontsize": FONT_SIZE - 0.5,
    "figure.titlesize": FONT_SIZE + 1,
    "axes.linewidth": 0.6,
    "grid.linewidth": 0.4,
    "xtick.major.width": 0.6,
    "ytick.major.width": 0.6,
    "svg.hashsalt": "dcchar",
}


def style_key(machine) -> str:
    """The key of :data:`CONNECTION_STYLES` for a machine.

    Compound machines are keyed by shunt connection and kind, so a cumulative and a
    differential compound never look alike; unknown connections give their own name.
    """
    conn = getattr(machine, "connection", "unknown")
    if conn in ("long_shunt_compound", "short_shunt_compound"):
        return f"{conn}/{getattr(machine, 'kind', 'cumulative')}"
    return str(conn)


def style_for(machine, occurrence: int = 0) -> ConnectionStyle:
    """The style of a machine; ``occurrence`` > 0 (a second curve of one connection) borrows
    a fallback style's line style and marker but keeps the colour."""
    key = style_key(machine)
    base = CONNECTION_STYLES.get(key)
    label = getattr(machine, "label", key)
    if base is None:
        fb = FALLBACK_STYLES[occurrence % len(FALLBACK_STYLES)]
        return ConnectionStyle(label, fb.color, fb.linestyle, fb.marker)
    if occurrence == 0:
        return ConnectionStyle(label, base.color, base.linestyle, base.marker)
    fb = FALLBACK_STYLES[(occurrence - 1) % len(FALLBACK_STYLES)]
    return ConnectionStyle(label, base.color, fb.linestyle, fb.marker)


def styles_for(machines) -> list:
    """Styles for a list of machines, distinct even when two share a connection."""
    seen: dict = {}
    out = []
    for m in machines:
        key = style_key(m)
        n = seen.get(key, 0)
        seen[key] = n + 1
        out.append(style_for(m, n))
    return out


def figure_size_mm(width_mm: float = COLUMN_MM, height_mm: float | None = None, *, aspect: float = 0.75) -> tuple:
    """Figure size in inches from millimetres.

    Parameters
    ----------
    width_mm : float, default :data:`COLUMN_MM`
        [mm]
    height_mm : float, optional
        [mm] Default: ``aspect * width_mm``.
    aspect : float, default 0.75
        Height over width when no height is given. [-]

    Returns
    -------
    tuple of float
        (width, height) [in], for ``Figure(figsize=...)``.
    """
    w = positive("width_mm", width_mm)
    h = positive("height_mm", height_mm) if height_mm is not None else w * positive("aspect", aspect)
    return (w / MM_PER_INCH, h / MM_PER_INCH)


def new_figure(width_mm: float = COLUMN_MM, height_mm: float | None = None, *, aspect: float = 0.75,
               dpi: float = 100.0):
    """A :class:`matplotlib.figure.Figure` sized in mm, with constrained layout and an Agg canvas.

    The figure is made without pyplot, so it is not registered with any GUI or notebook
    backend and no global state changes; it works headless.
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    with chart_style():
        fig = Figure(figsize=figure_size_mm(width_mm, height_mm, aspect=aspect), dpi=positive("dpi", dpi),
                     layout="constrained")
    FigureCanvasAgg(fig)
    return fig


@contextlib.contextmanager
def chart_style():
    """Context in which dcchar's rc settings apply (a ``matplotlib.rc_context``); nothing global changes."""
    import matplotlib

    with matplotlib.rc_context(STYLE_RC):
        yield


def title_block(fig, title: str, scenario: str | None = None, date=None, version: str | None = None):
    """Add a small title block to a figure for export.

    The study title goes on top (bold, the figure's ``suptitle``); below it, a line in small
    grey type with the scenario, the date and the dcchar version (the left title of the first
    axes). Constrained layout makes room for both, so nothing is clipped, and they stay clear
    of a legend drawn below the axes.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
        A figure with at least one axes.
    title : str
        Study title.
    scenario : str, optional
        Scenario name or one-line description.
    date : datetime.date or str, optional
        Default: today.
    version : str, optional
        Default: ``dcchar.__version__``.

    Returns
    -------
    dict
        ``{"title": Text, "details": Text}``.
    """
    if not isinstance(title, str) or not title.strip():
        raise ParameterError("title", title, "a non-empty str")
    if not fig.axes:
        raise ParameterError("fig", fig, "a figure with at least one axes (draw the chart first)")
    if version is None:
        from .. import __version__ as version
    if date is None:
        date = _dt.date.today()
    date_text = date.isoformat() if hasattr(date, "isoformat") else str(date)
    parts = ([scenario] if scenario else []) + [date_text, f"dcchar {version}"]
    with chart_style():
        head = fig.suptitle(title, fontsize=FONT_SIZE + 1, fontweight="bold", x=0.02, ha="left")
        details = fig.axes[0].set_title("  \u00b7  ".join(parts), loc="left", fontsize=FONT_SIZE - 1,
                                        color="#444444", pad=3.0)
    return {"title": head, "details": details}
