"""Draw every view of a family of DC motors on a fan load and save them for print.

Run headless::

    MPLBACKEND=Agg python examples/plot_characteristics.py [output-folder]

The folder (default ``out/``) receives ``<view>.png`` (300 dpi) and ``<view>.svg`` for each
view, sized for one page column (85 mm). The machines are invented for the demonstration
(``dcchar.studies.demo.demo_family()`` is used when that module is present); the operating
points come from :func:`dcchar.studies.operating.operating_points` when it is present.

The shaded band marks speeds above the machines' safe speed: a series motor whose load falls
away runs into it. Keep a mechanical load coupled to a series motor at all times and defer to
local codes and licensed practice for overspeed protection.
"""

from __future__ import annotations

import argparse
import importlib
import sys
from pathlib import Path

import numpy as np

from dcchar import charts
from dcchar.models.connections import Compound, PermanentMagnet, SeparatelyExcited, Series, Shunt
from dcchar.models.losses import RotationalLoss
from dcchar.models.magnetics import Froehlich
from dcchar.models.units import RPM

VOLTAGE = 220.0  # [V]


def invented_family():
    """Six machines on one armature, invented data (about 11 kW at 220 V, 1500 r/min)."""
    mag = Froehlich(a=400.0, b=1000.0, reference_speed=1500 * RPM)  # E0 [V] against A-turns per pole
    common = dict(armature_resistance=0.25, brush_drop=2.0, safe_speed=2500 * RPM,
                  rotational_loss=RotationalLoss(friction_torque=1.5, viscous=0.01))
    return [
        SeparatelyExcited(magnetization=mag, field_resistance=220.0, field_voltage=220.0, field_turns=1000,
                          **common),
        Shunt(magnetization=mag, field_resistance=220.0, field_turns=1000, **common),
        Series(magnetization=mag, series_turns=20, series_resistance=0.08, **common),
        Compound(magnetization=mag, field_resistance=275.0, field_turns=1000, series_turns=5,
                 series_resistance=0.03, **common),
        Compound(magnetization=mag, field_resistance=220.0, field_turns=1000, series_turns=3,
                 series_resistance=0.03, kind="differential", shunt_connection="short", **common),
        PermanentMagnet(kphi=1.25, **common),
    ]


def _optional(module: str):
    try:
        return importlib.import_module(module)
    except ImportError:
        return None


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("out", nargs="?", default="out", help="output folder (created if missing)")
    parser.add_argument("--units", choices=("si", "us"), default="si")
    args = parser.parse_args(argv)
    out = Path(args.out)
    out.mkdir(parents=True, exist_ok=True)

    demo = _optional("dcchar.studies.demo")
    machines = demo.demo_family() if demo is not None and hasattr(demo, "demo_family") else invented_family()
    machines = list(machines.values()) if isinstance(machines, dict) else list(machines)
    from dcchar.models.loads import Fan

    rating = getattr(machines[0], "rating", None)
    if rating is not None:  # the demo family: its rated point sets the supply, the sweep and the fan
        voltage, top = rating.voltage, 2.2 * rating.current
        # a fan taking 80 % of the rated torque at rated speed: each connection meets it elsewhere
        load = Fan(rated_speed=rating.speed, rated_torque=0.8 * rating.torque, static_torque=0.04 * rating.torque)
    else:  # invented machines, about 11 kW at 220 V and 1500 r/min
        voltage, top = VOLTAGE, 120.0
        load = Fan(rated_speed=1500 * RPM, rated_torque=60.0, static_torque=3.0)
    # the sweep covers the working range (about twice the load's current), not standstill
    curves = [m.characteristic(voltage, current=np.linspace(0.0, top, 400)) for m in machines]
    operating = _optional("dcchar.studies.operating")
    results = [operating.operating_points(m, load, voltage) for m in machines] if operating else None
    if results is None:
        print("dcchar.studies.operating is not available: drawing without operating points")

    written = []
    for view in charts.VIEWS:
        art = charts.draw_view(view, curves, load, results, units=args.units)
        charts.title_block(art["figure"], "Fan drive: choice of field connection",
                           f"invented scenario, {voltage:g} V supply")
        bad = charts.clipped_texts(art["figure"])
        if bad:
            print(f"{view}: parts outside the figure: {bad}", file=sys.stderr)
        written += charts.save_figure(art["figure"], out / view, formats=("png", "svg"), dpi=300)
    for path in written:
        print(path)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
