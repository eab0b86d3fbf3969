"""Charts of identification results: a fitted magnetization curve against the test points."""

from __future__ import annotations

import numpy as np

from .style import COLUMN_MM, chart_style, new_figure

__all__ = ["magnetization_fit_chart"]


def magnetization_fit_chart(result, *, ax=None, field_turns: float = 1.0, points: int = 200) -> dict:
    """The test points of a magnetization test and the Froehlich curve fitted to them.

    Parameters
    ----------
    result : dcchar.studies.identification.MagnetizationTestResult
    ax : matplotlib Axes, optional
        Draw into these axes (default: a new one-column figure).
    field_turns : float, default 1
        The turns the test used, so the horizontal axis reads in field amperes. [-]
    points : int
        Samples of the fitted curve.

    Returns
    -------
    dict
        ``figure``, ``axes``, ``points`` (the markers' Line2D), ``curve`` (the fitted Line2D).
    """
    F = np.asarray(result.excitation, dtype=float)
    E = np.asarray(result.emf, dtype=float)
    grid = np.linspace(0.0, 1.1 * float(F.max()), points)
    fitted = np.asarray(result.froehlich.emf(grid), dtype=float)
    with chart_style():
        if ax is None:
            fig = new_figure(COLUMN_MM, aspect=0.72)
            ax = fig.add_subplot()
        fig = ax.figure
        (curve,) = ax.plot(grid / field_turns, fitted, color="#1f5a96", linewidth=1.3, label="Froehlich fit")
        (marks,) = ax.plot(F / field_turns, E, linestyle="none", marker="o", markersize=4, markerfacecolor="white",
                           markeredgecolor="#b33c00", markeredgewidth=1.0, label="test points")
        p = result.parameters
        text = f"a = {p['a']:.4g} V, b = {p['b'] / field_turns:.4g} A"
        if "residual_emf" in p:
            text += f", E_r = {p['residual_emf']:.3g} V"
        rms = float(np.sqrt(np.mean(np.square(result.residuals)))) if len(result.residuals) else 0.0
        ax.text(0.98, 0.04, f"{text}\nrms residual {rms:.3g} V", transform=ax.transAxes, ha="right", va="bottom",
                fontsize=6.5, color="#333333")
        ax.set_xlabel("field current [A]")
        ax.set_ylabel(f"EMF at {result.reference_speed * 60 / (2 * np.pi):.0f} r/min [V]")
        ax.set_xlim(0.0, grid[-1] / field_turns)
        ax.set_ylim(0.0, 1.08 * max(float(E.max()), float(fitted.max())))
        ax.grid(True, linewidth=0.4, color="#dddddd")
        ax.legend(loc="upper left", frameon=False, fontsize=7)
    return {"figure": fig, "axes": ax, "points": marks, "curve": curve}
