"""Charts of the tolerance study: bands of speed-torque curves, and the pass-share matrix.

Charts only draw: they take :class:`dcchar.studies.tolerance.CurveBand` objects and a
:class:`dcchar.studies.selection.SelectionMatrix` (with an optional
:class:`dcchar.studies.tolerance.ToleranceStudy`) and never solve. Each connection keeps its
colour, line style and marker of :mod:`dcchar.charts.style`; the matrix figure marks verdicts
with a symbol and a hatch as well as a shade, so it reads in grey scale.
"""

from __future__ import annotations

import numpy as np

from ..errors import ParameterError
from .curves import _factor, _unit
from .style import COLUMN_MM, DOUBLE_COLUMN_MM, chart_style, new_figure, style_for

__all__ = ["band_chart", "pass_share_chart", "VERDICT_LOOK"]

#: How each verdict is drawn: face shade, hatch and symbol (readable without colour).
VERDICT_LOOK = {
    "pass": {"facecolor": "#FFFFFF", "hatch": "", "symbol": "+", "text": "pass"},
    "marginal": {"facecolor": "#D9D9D9", "hatch": "...", "symbol": "~", "text": "marginal"},
    "fail": {"facecolor": "#8C8C8C", "hatch": "xxx", "symbol": "x", "text": "fail"},
}


def band_chart(bands, *, ax=None, units: str = "si", low: int = 0, high: int = -1, legend: bool = True) -> dict:
    """Speed against shaft torque: the median line and the shaded band between two percentiles.

    Parameters
    ----------
    bands : dict of key -> CurveBand, or a list of CurveBand
    ax : matplotlib.axes.Axes, optional
    units : {"si", "us"}
    low, high : int
        Indices into each band's ``percentiles`` for the shaded edges (default: first and last).
    legend : bool

    Returns
    -------
    dict
        ``figure``, ``axes``, ``fills`` (one per band), ``medians``, ``nominals`` (Line2D), ``points``
        (the operating-point spread: an error bar per band), ``legend``.
    """
    items = list(bands.values()) if isinstance(bands, dict) else list(bands)
    if not items:
        raise ParameterError("bands", bands, "at least one CurveBand")
    fw, ft = _factor("speed", units), _factor("torque", units)
    with chart_style():
        if ax is None:
            fig = new_figure(COLUMN_MM, 80.0)
            ax = fig.add_subplot()
        fig = ax.figure
        out = {"figure": fig, "axes": ax, "fills": [], "medians": [], "nominals": [], "points": [], "legend": None}
        mid = len(items[0].percentiles) // 2
        for b in items:
            st = style_for(b.machine)
            x = b.torque / ft
            lo, hi, med = b.speed[low] / fw, b.speed[high] / fw, b.speed[mid] / fw
            ok = np.isfinite(lo) & np.isfinite(hi)
            out["fills"].append(ax.fill_between(x, lo, hi, where=ok, facecolor=st.color, alpha=0.22, edgecolor=st.color,
                                                linewidth=0.4, zorder=1))
            kw = st.line_kwargs()
            kw["label"] = f"{st.label} (p{b.percentiles[low]:g} to p{b.percentiles[high]:g})"
            (line,) = ax.plot(x, med, **kw, zorder=2)
            out["medians"].append(line)
            (nom,) = ax.plot(x, b.nominal_speed / fw, color=st.color, linewidth=0.6, linestyle="-", zorder=2.5)
            out["nominals"].append(nom)
            pw = b.point_percentiles("speed") / fw
            pt = b.point_percentiles("torque") / ft
            if np.all(np.isfinite(pw)) and np.all(np.isfinite(pt)):
                out["points"].append(ax.errorbar(pt[mid], pw[mid], xerr=[[pt[mid] - pt[low]], [pt[high] - pt[mid]]],
                                                 yerr=[[pw[mid] - pw[low]], [pw[high] - pw[mid]]], fmt=st.marker,
                                                 color="#000000", markerfacecolor=st.color, markersize=5,
                                                 elinewidth=0.8, capsize=2, zorder=4))
        ax.set_xlabel(f"Shaft torque [{_unit('torque', units)}]")
        ax.set_ylabel(f"Speed [{_unit('speed', units)}]")
        ax.grid(True, color="#D0D0D0", linewidth=0.4)
        ax.set_xlim(0.0, float(items[0].torque[-1]) / ft)
        ax.set_ylim(bottom=0.0)
        if legend:
            out["legend"] = ax.legend(loc="upper right", fontsize=5.5, framealpha=0.9, handlelength=3.0)
        ax.text(0.02, 0.02, f"{items[0].samples} samples each; thin line: nominal; bars: operating point",
                transform=ax.transAxes, fontsize=5.5, color="#444444")
    return out


def pass_share_chart(matrix, study=None, *, ax=None) -> dict:
    """Candidates (rows, ranked) x requirements (columns): verdict by shade, hatch and symbol,
    with the pass share of the samples printed in each cell when a tolerance study is given.

    Returns
    -------
    dict
        ``figure``, ``axes``, ``cells`` (Rectangle per cell, keyed (key, figure)), ``texts``.
    """
    from matplotlib.patches import Patch, Rectangle

    keys = list(matrix.ranking.order)
    figs = list(matrix.requirements.figures)
    with chart_style():
        if ax is None:
            fig = new_figure(DOUBLE_COLUMN_MM, 22.0 + 9.0 * len(keys))
            ax = fig.add_subplot()
        fig = ax.figure
        out = {"figure": fig, "axes": ax, "cells": {}, "texts": {}}
        for r, key in enumerate(keys):
            for c, f in enumerate(figs):
                cell = matrix.cell(key, f)
                look = VERDICT_LOOK[cell.verdict]
                rect = Rectangle((c, r), 1, 1, facecolor=look["facecolor"], hatch=look["hatch"], edgecolor="#333333",
                                 linewidth=0.6)
                ax.add_patch(rect)
                out["cells"][(key, f)] = rect
                text = look["symbol"]
                if study is not None:
                    s = study.share(key, f)
                    text += f" {100 * s.passed:.0f} %" + (" !" if s.fragile else "")
                    if s.marginal >= 0.005:
                        text += f"\n(~ {100 * s.marginal:.0f} %)"
                out["texts"][(key, f)] = ax.text(c + 0.5, r + 0.5, text, ha="center", va="center", fontsize=6.5,
                                                 fontweight="bold", color="#000000",
                                                 bbox=dict(boxstyle="round,pad=0.15", facecolor="white",
                                                           edgecolor="none", alpha=0.85))
        ax.set_xlim(0, len(figs))
        ax.set_ylim(len(keys), 0)
        ax.set_xticks(np.arange(len(figs)) + 0.5)
        ax.set_xticklabels([f.replace("_", "\n") for f in figs], fontsize=5.5)
        ax.set_yticks(np.arange(len(keys)) + 0.5)
        ax.set_yticklabels([f"{matrix.ranking[k].position}. {matrix.label(k)}" for k in keys], fontsize=6)
        ax.tick_params(length=0)
        ax.xaxis.tick_top()
        handles = [Patch(facecolor=v["facecolor"], hatch=v["hatch"], edgecolor="#333333",
                         label=f"{v['symbol']} {v['text']}") for v in VERDICT_LOOK.values()]
        note = ("share of samples that pass in each cell (marginal share in brackets); ! = fragile"
                if study is not None else "")
        fig.legend(handles=handles, loc="outside lower center", ncols=3, frameon=False, fontsize=6,
                   title=note or None, title_fontsize=5.5)
    return out
