"""Time the full report of the example hoist scenario against its parts, in the same run.

Run: MPLBACKEND=Agg python benchmarks/bench_report.py [--repeats N]

Target: the full report (default figure load, tables for all five loads) in at most 5 s. The
baselines, timed in the same run: reading the scenario (the equal-rating family is solved), the
comparison of every load alone, and one figure drawn and saved as PNG (300 dpi) and SVG. Prints
figures; asserts nothing.
"""

from __future__ import annotations

import argparse
import shutil
import statistics
import tempfile
import time
from pathlib import Path

from dcchar import charts
from dcchar.files.report import FIGURE_VIEWS, report_curves, write_report
from dcchar.files.scenario import load_scenario

HOIST = Path(__file__).resolve().parents[1] / "examples" / "hoist.toml"


def timed(fn, repeats):
    fn()  # warm: lambdified kernels, font cache
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times), max(times)


def main(argv=None):
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--repeats", type=int, default=3)
    args = p.parse_args(argv)
    scenario = load_scenario(HOIST)
    loads = list(scenario.loads())
    work = Path(tempfile.mkdtemp(prefix="dcchar-bench-"))
    counter = [0]

    def read():
        load_scenario(HOIST)

    def comparisons():
        for name in loads:
            scenario.compare(name)

    comparison = scenario.compare(scenario.default_load)
    curves = report_curves(comparison)

    def one_figure():
        out = charts.draw_view(FIGURE_VIEWS[0], curves, comparison.load, comparison.operating())
        charts.title_block(out["figure"], scenario.title, "bench")
        charts.save_figure(out["figure"], work / "one", formats=("png", "svg"), dpi=300)

    def report():
        counter[0] += 1
        write_report(scenario, work / f"r{counter[0]}")

    def report_all_figures():
        counter[0] += 1
        write_report(scenario, work / f"a{counter[0]}", figure_loads="all")

    try:
        rows = [("read scenario (family solved)", *timed(read, args.repeats)),
                (f"compare {len(loads)} loads", *timed(comparisons, args.repeats)),
                ("one figure, PNG 300 dpi + SVG", *timed(one_figure, args.repeats)),
                ("full report (figures: default load)", *timed(report, args.repeats)),
                (f"full report (figures: all {len(loads)} loads)", *timed(report_all_figures, 1))]
    finally:
        shutil.rmtree(work, ignore_errors=True)
    base = rows[2][1]
    print(f"{HOIST.name}: {len(scenario.machines())} connections, {len(loads)} loads, "
          f"{len(FIGURE_VIEWS)} views; median of {args.repeats}")
    for label, med, worst in rows:
        print(f"{label:42s} {med:7.3f} s (max {worst:7.3f})   {med / base:6.2f} x one figure")
    full = rows[3][1]
    print(f"full report {full:.2f} s against the 5 s target: {'ok' if full <= 5.0 else 'MISSED'}")
    return rows


if __name__ == "__main__":
    main()
