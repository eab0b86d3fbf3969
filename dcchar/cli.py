"""The ``dcchar`` command line: check a scenario, solve it, write its report, open the demo app.

::

    dcchar check SCENARIO.toml
    dcchar solve SCENARIO.toml [--json] [--load NAME] [--units si|us]
    dcchar report SCENARIO.toml -o DIR [--units si|us] [--force] [--figures default|all]
    dcchar demo [--port N] [--lab]

Exit codes: 0 done; 2 bad input (the message names the key path); 1 unexpected failure (a
message; the traceback only with ``--debug``).
"""

from __future__ import annotations

import argparse
import json
import math
import sys

__all__ = ["main", "build_parser", "solve_data", "solve_text", "EXIT_OK", "EXIT_FAILURE", "EXIT_BAD_INPUT"]

EXIT_OK, EXIT_FAILURE, EXIT_BAD_INPUT = 0, 1, 2


def build_parser() -> argparse.ArgumentParser:
    """The argument parser of ``dcchar``."""
    p = argparse.ArgumentParser(prog="dcchar", description="Choose the field connection of a DC motor for a load.")
    p.add_argument("--debug", action="store_true", help="show the traceback of an unexpected failure")
    common = argparse.ArgumentParser(add_help=False)
    common.add_argument("--debug", action="store_true", default=argparse.SUPPRESS,
                        help="show the traceback of an unexpected failure")
    sub = p.add_subparsers(dest="command", required=True, metavar="COMMAND")
    add = sub.add_parser

    def sub_add(name, **kw):
        return add(name, parents=[common], **kw)

    sub.add_parser = sub_add
    c = sub.add_parser("check", help="validate a scenario file")
    c.add_argument("scenario", help="scenario TOML file")
    s = sub.add_parser("solve", help="operating points and key figures of every candidate")
    s.add_argument("scenario")
    s.add_argument("--load", help="name of the load (default: the scenario's own)")
    s.add_argument("--json", action="store_true", help="print JSON (SI units) instead of a text table")
    s.add_argument("--units", choices=("si", "us"), help="display units of the text table")
    r = sub.add_parser("report", help="write the report bundle (figures, tables, summary)")
    r.add_argument("scenario")
    r.add_argument("-o", "--output", required=True, metavar="DIR", help="report folder")
    r.add_argument("--units", choices=("si", "us"))
    r.add_argument("--force", action="store_true", help="write over an existing, non-empty folder")
    r.add_argument("--figures", default="default", help="'default' (the scenario's load), 'all', or a "
                                                        "comma-separated list of load names")
    d = sub.add_parser("demo", help="serve the design-meeting app")
    d.add_argument("--port", type=int, default=0, help="TCP port on 127.0.0.1 (default 0: any free port)")
    d.add_argument("--lab", action="store_true", help="open in JupyterLab instead of the plain app")
    return p


def _json_number(v):
    if isinstance(v, float):
        if math.isnan(v):
            return None
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
    return v


def solve_data(scenario, load_name=None) -> dict:
    """What ``dcchar solve --json`` prints: SI figures of every candidate on one load.

    Numbers are SI (units under ``"units"``); nan is ``null``, an unbounded value ``"inf"``.
    """
    from .studies.comparison import TABLE_COLUMNS

    name = load_name or scenario.default_load
    comparison = scenario.compare(name)
    out = {"scenario": scenario.title, "load": name, "load_description": scenario.load_description(name),
           "units": {k: v[1] for k, v in TABLE_COLUMNS.items() if v[1]}, "candidates": {}}
    for key, cand in comparison.candidates.items():
        row = {k: _json_number(v) for k, v in cand.row().items()}
        points = [{"speed": _json_number(p.speed), "torque": _json_number(p.torque),
                   "armature_current": _json_number(p.armature_current),
                   "supply_current": _json_number(p.supply_current), "output_power": _json_number(p.output_power),
                   "efficiency": _json_number(p.efficiency), "mode": p.mode, "stable": bool(p.stable),
                   "settled": p is cand.point} for p in cand.operating.points]
        out["candidates"][key] = {"figures": row, "points": points, "voltage": cand.voltage,
                                  "cautions": [{"code": c.code, "text": c.text, "reason": c.reason,
                                                "severity": c.severity} for c in cand.cautions]}
    return out


def solve_text(scenario, load_name=None, units=None) -> str:
    """What ``dcchar solve`` prints: an aligned text table of the key figures and the points."""
    from .files.tables import display_table, format_value

    units = units or scenario.units
    name = load_name or scenario.default_load
    comparison = scenario.compare(name)
    cols = ["connection", "speed", "torque", "armature_current", "efficiency", "stable", "current_ratio",
            "regulation", "starting_current", "note"]
    heads, rows = display_table(comparison, units, cols)
    cells = [heads] + [[format_value(v) for v in r] for r in rows]
    widths = [max(len(r[i]) for r in cells) for i in range(len(heads))]

    def line(r):
        return "  ".join(c.ljust(w) if i in (0, len(r) - 1) else c.rjust(w)
                         for i, (c, w) in enumerate(zip(r, widths))).rstrip()

    out = [f"{scenario.title}", f"load {name}: {scenario.load_description(name)}", "", line(cells[0]),
           "  ".join("-" * w for w in widths)]
    out += [line(r) for r in cells[1:]]
    from .models.units import display_units

    sp = display_units(units)["speed"]
    tq = display_units(units)["torque"]
    out += ["", "operating points (* = where the drive settles from rest):"]
    for key, cand in comparison.candidates.items():
        pts = ", ".join(f"{'*' if p is cand.point else ''}{format_value(p.speed / sp[1])} {sp[0]} "
                        f"{format_value(p.torque / tq[1])} {tq[0]} ({p.mode}{'' if p.stable else ', unstable'})"
                        for p in cand.operating.points) or "none"
        out.append(f"  {cand.machine.label}: {pts}")
    codes = sorted({c.code for cand in comparison.candidates.values() for c in cand.cautions if c.code != "defer"})
    if codes:
        out += ["", "cautions: " + ", ".join(codes) + " (see the report for the texts)"]
    from .models.cautions import DEFERENCE

    out += ["", DEFERENCE]
    return "\n".join(out) + "\n"


def _progress(done, total, what):
    print(f"[{done:>2}/{total}] {what}", file=sys.stderr, flush=True)


def _run(args) -> int:
    if args.command == "demo":
        try:
            from .widgets import app
        except ImportError as exc:
            print(f"dcchar demo: the app is not available ({exc}); install dcchar with its widgets extra "
                  "(pip install 'dcchar[widgets]')", file=sys.stderr)
            return EXIT_FAILURE
        serve = getattr(app, "serve", None)
        if serve is None:
            print("dcchar demo: dcchar.widgets.app has no serve() in this version", file=sys.stderr)
            return EXIT_FAILURE
        code = serve(notebook=None, port=args.port, lab=args.lab)
        return code if isinstance(code, int) and not isinstance(code, bool) else EXIT_OK
    from .files.scenario import load_scenario

    scenario = load_scenario(args.scenario)
    if args.command == "check":
        n_m, n_l = len(scenario.machines()), len(scenario.loads())
        print(f"{args.scenario}: valid ({n_m} machine(s), {n_l} load(s); default load {scenario.default_load})")
        return EXIT_OK
    if args.command == "solve":
        if args.load is not None and args.load not in scenario.loads():
            from .errors import ScenarioError

            raise ScenarioError("--load", f"{args.load!r} is not allowed: expected one of {tuple(scenario.loads())}")
        if args.json:
            print(json.dumps(solve_data(scenario, args.load), indent=1, allow_nan=False))
        else:
            sys.stdout.write(solve_text(scenario, args.load, args.units))
        return EXIT_OK
    from .files.report import write_report

    figures = None if args.figures == "default" else "all" if args.figures == "all" else \
        [n.strip() for n in args.figures.split(",") if n.strip()]
    result = write_report(scenario, args.output, units=args.units, force=args.force, progress=_progress,
                          figure_loads=figures)
    print(f"report written to {result.folder} ({len(result.files)} files)")
    return EXIT_OK


def main(argv=None) -> int:
    """Run the command line; returns the exit code (see the module notes)."""
    from .errors import DcCharError

    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return _run(args)
    except DcCharError as exc:
        print(f"dcchar {args.command}: error: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except KeyboardInterrupt:
        print("dcchar: interrupted", file=sys.stderr)
        return EXIT_FAILURE
    except Exception as exc:  # noqa: BLE001 - the one place that reports any failure to a person
        if args.debug:
            raise
        print(f"dcchar {args.command}: unexpected failure: {type(exc).__name__}: {exc} "
              "(run with --debug for the traceback)", file=sys.stderr)
        return EXIT_FAILURE


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
