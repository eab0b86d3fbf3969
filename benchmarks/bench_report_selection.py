"""Time the report of the example hoist with and without the choice of connection, in one run.

Run: MPLBACKEND=Agg python benchmarks/bench_report_selection.py [--repeats N]

Rows: the report without the choice (``selection=False``: the baseline), with it (the matrix,
selection.csv and the matrix figure), and with the tolerance study too (2000 samples per
candidate, the scenario default); and the matrix alone. Prints figures and ratios against the
baseline; asserts nothing.
"""

from __future__ import annotations

import argparse
import shutil
import tempfile
from pathlib import Path

from bench_report import HOIST
from bench_report import timed as _timed

from dcchar.files.report import write_report
from dcchar.files.scenario import load_scenario


def timed(fn, repeats):
    """Median time of ``fn`` over ``repeats`` runs after one warm run. [s]"""
    return _timed(fn, repeats)[0]


def main(argv=None):
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--repeats", type=int, default=3)
    args = p.parse_args(argv)
    scenario = load_scenario(HOIST)
    work = Path(tempfile.mkdtemp(prefix="dcchar-bench-"))
    n = [0]

    def report(**kw):
        def run():
            n[0] += 1
            write_report(scenario, work / f"r{n[0]}", **kw)
        return run

    try:
        base = timed(report(selection=False), args.repeats)
        rows = [("report without the choice (baseline)", base),
                ("report with the choice of connection", timed(report(), args.repeats)),
                ("report with the choice and its tolerance study", timed(report(tolerance=True), 1)),
                ("selection matrix alone", timed(lambda: scenario.selection(), args.repeats))]
    finally:
        shutil.rmtree(work, ignore_errors=True)
    print(f"{HOIST.name}: {len(scenario.machines())} connections, requirements on "
          f"{', '.join(scenario.requirement_loads)}; median of {args.repeats}")
    for label, t in rows:
        print(f"  {label:48s} {t:7.3f} s   x{t / base:5.2f}")


if __name__ == "__main__":
    main()
