"""Draw every view of a family of DC motors on a fan load and save them for print.

Run headless::

    MPLBACKEND=Agg python examples/plot_characteristics.py [output-folder]

The folder (default ``out/``) receives ``<view>.png`` (300 dpi) and ``<view>.svg`` for each
view, sized for one page column (85 mm). The machines are the invented demonstration family
(:func:`dcchar.studies.demo.demo_family`); the operating points come from
:func:`dcchar.studies.operating.operating_points`.

The shaded band marks speeds above the machines' safe speed: a series motor whose load falls
away runs into it. Keep a mechanical load coupled to a series motor at all times and defer to
local codes and licensed practice for overspeed protection.
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

import numpy as np

from dcchar import charts
from dcchar.models.loads import Fan
from dcchar.studies.demo import DEMO_RATING, demo_family
from dcchar.studies.operating import operating_points


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("out", nargs="?", default="out", help="output folder (created if missing)")
    parser.add_argument("--units", choices=("si", "us"), default="si")
    args = parser.parse_args(argv)
    out = Path(args.out)
    out.mkdir(parents=True, exist_ok=True)

    machines = list(demo_family().values())
    rating = DEMO_RATING
    voltage = rating.voltage
    # a fan taking 80 % of the rated torque at rated speed: each connection meets it elsewhere
    load = Fan(rated_speed=rating.speed, rated_torque=0.8 * rating.torque, static_torque=0.04 * rating.torque)
    # the sweep covers the working range (about twice the load's current), not standstill
    curves = [m.characteristic(voltage, current=np.linspace(0.0, 2.2 * rating.current, 400)) for m in machines]
    results = [operating_points(m, load, voltage) for m in machines]

    written = []
    for view in charts.VIEWS:
        art = charts.draw_view(view, curves, load, results, units=args.units)
        charts.title_block(art["figure"], "Fan drive: choice of field connection",
                           f"invented scenario, {voltage:g} V supply")
        files, bad = charts.export_figure(art["figure"], out / view, formats=("png", "svg"), dpi=300)
        if bad:
            print(f"{view}: {bad}", file=sys.stderr)
        written += files
    for path in written:
        print(path)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
