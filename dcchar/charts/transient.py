"""Charts of simulated transients: armature current and speed against time, with the starter steps."""

from __future__ import annotations

import numpy as np

from .style import DOUBLE_COLUMN_MM, chart_style, new_figure, styles_for

__all__ = ["transient_chart"]


def transient_chart(transients, machines=None, *, figure=None) -> dict:
    """Armature current (top) and speed (bottom) against time for one or more starts.

    Parameters
    ----------
    transients : mapping of key -> dcchar.studies.transients.Transient
    machines : mapping of key -> Machine, optional
        For the connection colours, line styles and legend labels (default: the keys).
    figure : matplotlib Figure, optional
        Draw into this (empty) figure; default a new two-column figure.

    Returns
    -------
    dict
        ``figure``, ``axes`` (current, speed), ``current`` and ``speed`` (key -> Line2D),
        ``switches`` (key -> list of the vertical lines at the starter's cut-out times).
    """
    from ..models.units import RPM

    keys = list(transients)
    styles = styles_for([machines[k] for k in keys]) if machines is not None else [None] * len(keys)
    with chart_style():
        fig = figure if figure is not None else new_figure(DOUBLE_COLUMN_MM, aspect=0.62)
        ax_i, ax_w = fig.subplots(2, 1, sharex=True)
        out = {"figure": fig, "axes": (ax_i, ax_w), "current": {}, "speed": {}, "switches": {}}
        for key, style in zip(keys, styles):
            tr = transients[key]
            kw = dict(color=style.color, linestyle=style.linestyle, label=style.label) if style else dict(label=key)
            t = np.asarray(tr.time, dtype=float)
            (li,) = ax_i.plot(t, tr.armature_current, linewidth=1.1, **kw)
            (lw,) = ax_w.plot(t, np.asarray(tr.speed, dtype=float) / RPM, linewidth=1.1, **kw)
            out["current"][key], out["speed"][key] = li, lw
            out["switches"][key] = [ax_i.axvline(s, color=li.get_color(), linewidth=0.5, linestyle=":")
                                    for s in tr.switch_times]
        ax_i.set_ylabel("armature current [A]")
        ax_w.set_ylabel("speed [r/min]")
        ax_w.set_xlabel("time [s]")
        for ax in (ax_i, ax_w):
            ax.grid(True, linewidth=0.4, color="#dddddd")
        ax_i.set_xlim(0.0, max(float(np.max(transients[k].time)) for k in keys))
        ax_i.legend(loc="upper right", frameon=False, fontsize=6.5, ncols=2)
        ax_i.text(0.0, 1.02, "dotted: a starter section cut out", transform=ax_i.transAxes, fontsize=6,
                  color="#444444", va="bottom")
    return out
