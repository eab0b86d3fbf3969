"""Time LiveChart.update (blitting, Agg canvas) against building and drawing the same figure from
scratch, for 6 connections x 400 points, in the same run. Prints figures; asserts nothing.

Run: MPLBACKEND=Agg python benchmarks/bench_charts.py

Targets: an update takes at most one third of a from-scratch build and at most 40 ms (median).

Then one column-wide export figure (PNG 300 dpi + SVG, title block, checks), saved two ways in
the same run: with its layout engine kept (matplotlib lays it out again for each format, twice
each, and the clipping check draws it once more) against :func:`dcchar.charts.freeze_layout`
(laid out once, one draw per format). Prints draws per figure and the ratio.
The machines and the fan-like load are invented demo data; the operating points are simple
stand-ins placed on the curves (charts never solve, so any point will do for timing).
"""

from __future__ import annotations

import shutil
import statistics
import tempfile
import time
import types
from pathlib import Path

import numpy as np

from dcchar import charts
from dcchar.models.connections import Compound, PermanentMagnet, SeparatelyExcited, Series, Shunt
from dcchar.models.losses import RotationalLoss
from dcchar.models.magnetics import Froehlich
from dcchar.models.units import RPM

WIDTH_MM, HEIGHT_MM, DPI = 160.0, 105.0, 100.0  # about 630 x 413 px, a notebook-sized chart
REPEATS = 30


def machines():
    mag = Froehlich(a=400.0, b=1000.0, reference_speed=1500 * RPM)
    common = dict(armature_resistance=0.25, brush_drop=2.0, safe_speed=2500 * RPM,
                  rotational_loss=RotationalLoss(friction_torque=1.5, viscous=0.01))
    return [
        SeparatelyExcited(magnetization=mag, field_resistance=220.0, field_voltage=220.0, field_turns=1000, **common),
        Shunt(magnetization=mag, field_resistance=220.0, field_turns=1000, **common),
        Series(magnetization=mag, series_turns=20, series_resistance=0.08, **common),
        Compound(magnetization=mag, field_resistance=275.0, field_turns=1000, series_turns=5,
                 series_resistance=0.03, **common),
        Compound(magnetization=mag, field_resistance=220.0, field_turns=1000, series_turns=3,
                 series_resistance=0.03, kind="differential", shunt_connection="short", **common),
        PermanentMagnet(kphi=1.25, **common),
    ]


class Load:
    def torque(self, w):
        return 3.0 + 57.0 * (np.asarray(w, float) / (1500 * RPM)) ** 2

    def describe(self):
        return "fan-like, 60 N*m at 1500 r/min"


def stand_in_points(curves):
    out = []
    for c in curves:
        i = c.armature_current.size // 2
        p = types.SimpleNamespace(speed=float(c.speed[i]), torque=float(c.shaft_torque[i]),
                                  armature_current=float(c.armature_current[i]),
                                  supply_current=float(c.supply_current[i]), efficiency=float(c.efficiency[i]),
                                  output_power=float(c.output_power[i]), stable=True)
        out.append(types.SimpleNamespace(points=[p], reason=None))
    return out


def median_ms(fn, n=REPEATS):
    fn()
    times = []
    for _ in range(n):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return 1e3 * statistics.median(times), 1e3 * max(times)


def main():
    ms = machines()
    sets = [[m.characteristic(v, current=np.linspace(0.0, 120.0, 400)) for m in ms] for v in (216.0, 218.0, 220.0)]
    load = Load()
    ops = [stand_in_points(s) for s in sets]
    print(f"figure {WIDTH_MM:g} x {HEIGHT_MM:g} mm at {DPI:g} dpi, {len(ms)} connections x 400 points, "
          f"median of {REPEATS}")
    rows = []
    for label, with_points in (("lines + load", False), ("lines + load + 6 labelled points", True)):
        chart = charts.LiveChart(charts.new_figure(WIDTH_MM, HEIGHT_MM, dpi=DPI))
        k = [0]

        def update():
            k[0] += 1
            j = k[0] % 3
            how = chart.update(sets[j], load, ops[j] if with_points else None)
            if k[0] > 1 and how != "blit":
                raise RuntimeError("the update did not blit")

        def scratch():
            j = k[0] % 3
            fig = charts.new_figure(WIDTH_MM, HEIGHT_MM, dpi=DPI)
            charts.draw_view("torque_speed", sets[j], load, ops[j] if with_points else None,
                             ax=fig.add_subplot(), legend="outside")
            fig.canvas.draw()

        up, up_max = median_ms(update)
        sc, sc_max = median_ms(scratch, n=max(5, REPEATS // 3))
        rows.append((label, up, up_max, sc, up / sc))
        print(f"{label:34s} update {up:7.2f} ms (max {up_max:6.2f})   from scratch {sc:7.1f} ms   "
              f"ratio {up / sc:5.3f}  [{'ok' if up <= 40 and up / sc <= 1 / 3 else 'MISSED'}: <= 40 ms, <= 1/3]")
        print(f"{'':34s} redraws: {chart.stats}")
    rows += export_figures(sets[2], load, ops[2])
    return rows


def export_figures(curves, load, ops, repeats=5):
    work = Path(tempfile.mkdtemp(prefix="dcchar-bench-"))
    results = {}
    try:
        for how in ("layout kept", "freeze_layout"):
            draws = []

            def one():
                out = charts.draw_view("torque_speed", curves, load, ops)
                fig = out["figure"]
                charts.title_block(fig, "Fan drive, six connections", "benchmark", date="2024-01-01")
                fig.canvas.mpl_connect("draw_event", lambda event: draws.append(1))
                if how == "freeze_layout":
                    charts.freeze_layout(fig)
                    charts.clipped_texts(fig, draw=False)
                    charts.overlapping_texts(fig, draw=False)
                else:
                    charts.clipped_texts(fig)
                    charts.overlapping_texts(fig)
                charts.save_figure(fig, work / "fig", formats=("png", "svg"), dpi=300)

            med, worst = median_ms(one, n=repeats)
            results[how] = (med, worst, len(draws) / (repeats + 1))
    finally:
        shutil.rmtree(work, ignore_errors=True)
    base = results["layout kept"][0]
    rows = []
    for how, (med, worst, per) in results.items():
        print(f"export figure, {how:14s} {med:7.1f} ms (max {worst:6.1f})   {per:3.0f} draws per figure   "
              f"ratio {med / base:5.3f}")
        rows.append((f"export, {how}", med, worst, base, med / base))
    return rows


if __name__ == "__main__":
    main()
