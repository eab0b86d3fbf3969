"""Widget kit, Python side: from a slider change to a finished redraw of chart and table, against
building and drawing the same figure from scratch in the same run; and the comparer's build time.
Prints figures; asserts nothing.

Run: MPLBACKEND=Agg python benchmarks/bench_widgets.py

Targets: a slider update (solve, chart, table) at most 40 ms and at most one third of the same
update done from scratch (solve, new figure drawn in full, table), medians; a comparer built in
at most 2 s. A browser is simulated the way ipympl sees one: the canvas stops keeping a full PNG
for the notebook file (``syncing_data_url`` False) and a full draw the chart asks for is done at
once, as the browser's draw request would have it done. The demo frame and the hoist are invented.
"""

from __future__ import annotations

import statistics
import time
import warnings

REPEATS = 20


def median_ms(values):
    return 1e3 * statistics.median(values), 1e3 * max(values)


def main():
    t0 = time.perf_counter()
    from dcchar.widgets import Comparer
    t_import = time.perf_counter() - t0

    t0 = time.perf_counter()
    comparer = Comparer(title="bench")
    t_cold = time.perf_counter() - t0
    warm = []
    for _ in range(5):
        t0 = time.perf_counter()
        Comparer(title="bench")
        warm.append(time.perf_counter() - t0)
    print(f"import dcchar.widgets: {t_import:.2f} s")
    print(f"comparer build, first in the process (sympy kernels compiled, demo family designed): {t_cold:.2f} s")
    print(f"comparer build, warm: median {median_ms(warm)[0]:.0f} ms (target at most 2000 ms)")

    # simulate an attached browser
    canvas = comparer.canvas
    canvas.syncing_data_url = False
    canvas.draw()  # the first frame the browser asks for; the chart grabs its background
    chart = comparer.chart

    def step(v):
        full_before = chart.stats["full"]
        comparer.controls["voltage"].value = v
        if chart.stats["full"] != full_before:
            canvas.draw()  # what the browser's draw request triggers

    volts = [230.0 - k for k in range(1, 4 + REPEATS)]
    times, cpu, parts = [], [], {"compare": [], "chart": [], "panels": []}
    for i, v in enumerate(volts):
        t0, c0 = time.perf_counter(), time.process_time()
        step(v)
        if i >= 3:
            times.append(time.perf_counter() - t0)
            cpu.append(time.process_time() - c0)
            for k in parts:
                parts[k].append(comparer.timings[k])
    upd, upd_max = median_ms(times)
    part = {k: median_ms(v)[0] for k, v in parts.items()}
    print(f"(CPU time of this process per step: median {median_ms(cpu)[0]:.1f} ms; wall time above it means "
          "other processes share the cores)")
    print(f"slider step -> chart blitted and table written: median {upd:.1f} ms, max {upd_max:.1f} ms "
          f"({chart.stats['blit']} blits, {chart.stats['full']} full draws in all)")
    print(f"  medians of the parts: solve {part['compare']:.1f} ms, chart {part['chart']:.1f} ms, "
          f"table and cautions {part['panels']:.1f} ms")

    # what the blit spends on the operating-point labels
    labels = chart.annotations
    c0 = time.process_time()
    for _ in range(10):
        chart._render(False)
    with_labels = (time.process_time() - c0) / 10
    for a in labels:
        a.set_visible(False)
    c0 = time.process_time()
    for _ in range(10):
        chart._render(False)
    without = (time.process_time() - c0) / 10
    for a in labels:
        a.set_visible(True)
    print(f"  blit alone, CPU: {1e3 * with_labels:.1f} ms with the {len(labels)} point labels, "
          f"{1e3 * without:.1f} ms without them")

    # the same update from scratch: solve, a new figure of the same size drawn in full, table
    import numpy as np
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    from dcchar.charts.curves import draw_view
    from dcchar.studies.comparison import compare
    from dcchar.widgets.panels import cautions_html, results_html

    machines = comparer.selected()
    load = comparer.load
    size = comparer.chart.figure.get_size_inches()
    scratch = []
    chart_only_scratch = []
    for i, v in enumerate(volts):
        t0 = time.perf_counter()
        comp = compare(machines, load, comparer.current_settings().replace(voltage=v))
        chars, ops, _ = comparer.chart_data(comp)
        t1 = time.perf_counter()
        fig = Figure(figsize=size, dpi=100, layout="constrained")
        FigureCanvasAgg(fig)
        draw_view("torque_speed", chars, load, ops, ax=fig.add_subplot(), legend="inside")
        fig.canvas.draw()
        np.asarray(fig.canvas.buffer_rgba()).copy()
        t2 = time.perf_counter()
        results_html(comp, "si")
        cautions_html(comp)
        if i >= 3:
            scratch.append(time.perf_counter() - t0)
            chart_only_scratch.append(t2 - t1)
    s_med, _ = median_ms(scratch)
    c_med, _ = median_ms(chart_only_scratch)
    print(f"same update from scratch (solve, new figure drawn in full, table): median {s_med:.1f} ms")
    print(f"  of which the figure alone: median {c_med:.1f} ms; the live chart's part: median "
          f"{part['chart']:.1f} ms")
    print(f"ratio update / from scratch: {upd / s_med:.2f} (target at most 0.33); update {upd:.1f} ms "
          f"(target at most 40 ms)")

    # a burst of 30 browser events within a few ms: how many updates run
    import asyncio

    from dcchar.widgets.controls import Coalescer

    runs = []

    async def burst():
        c = Coalescer(lambda: (runs.append(1), step_work()), delay=comparer._coalescer.delay)
        for _ in range(30):
            c.request(defer=True)
            await asyncio.sleep(0.001)
        await asyncio.sleep(0.2)

    def step_work():
        comparer._recompute()

    t0 = time.perf_counter()
    asyncio.run(burst())
    print(f"burst of 30 slider events 1 ms apart: {len(runs)} updates run in {1e3 * (time.perf_counter() - t0):.0f} ms "
          "(stale states dropped)")


if __name__ == "__main__":
    with warnings.catch_warnings():
        warnings.simplefilter("default")
        main()
