"""The ``dcchar`` command line: check a scenario, solve it, write its report, open the demo app.

::

    dcchar check SCENARIO.toml
    dcchar solve SCENARIO.toml [--json] [--load NAME] [--units si|us]
    dcchar select SCENARIO.toml [--load NAME] [--json] [--[no-]tolerance]
    dcchar report SCENARIO.toml -o DIR [--units si|us] [--force] [--figures default|all] [--[no-]tolerance]
    dcchar demo [--port N] [--lab]

Exit codes: 0 done; 2 bad input (the message names the key path); 1 unexpected failure (a
message; the traceback only with ``--debug``).
"""

from __future__ import annotations

import argparse
import json
import math
import sys

__all__ = ["main", "build_parser", "solve_data", "solve_text", "select_data", "select_text", "EXIT_OK", "EXIT_FAILURE",
           "EXIT_BAD_INPUT"]

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
    c = sub.add_parser("select", help="judge every candidate against the load's requirements: matrix, ranking, "
                                      "cautions")
    c.add_argument("scenario")
    c.add_argument("--load", help="name of the load (default: the scenario's own)")
    c.add_argument("--json", action="store_true", help="print JSON (SI units) instead of text")
    c.add_argument("--tolerance", action=argparse.BooleanOptionalAction, default=None,
                   help="add the tolerance study: the share of samples that pass each cell (takes seconds; progress "
                        "on stderr; default: when the scenario has a [tolerance] table)")
    r = sub.add_parser("report", help="write the report bundle (figures, tables, summary)")
    r.add_argument("scenario")
    r.add_argument("-o", "--output", required=True, metavar="DIR", help="report folder")
    r.add_argument("--units", choices=("si", "us"))
    r.add_argument("--force", action="store_true", help="write over an existing, non-empty folder")
    r.add_argument("--figures", default="default", help="'default' (the scenario's load), 'all', or a "
                                                        "comma-separated list of load names")
    r.add_argument("--tolerance", action=argparse.BooleanOptionalAction, default=None,
                   help="add the tolerance study to the choice of connection (default: when the scenario has a "
                        "[tolerance] table)")
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
                                  "cautions": _cautions_json(cand.cautions)}
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
    out = [f"{scenario.title}", f"load {name}: {scenario.load_description(name)}", ""]
    out += _aligned(cells, left=(0, len(heads) - 1))
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


def _cautions_json(cautions):
    return [{"code": c.code, "text": c.text, "reason": c.reason, "severity": c.severity} for c in cautions]


def select_data(scenario, load_name=None, tolerance=None) -> dict:
    """What ``dcchar select --json`` prints: the selection matrix of one load, SI.

    Every cell with its figure, required figure and margin (SI, in the unit named by the
    requirement; nan is ``null``, an unbounded value ``"inf"``), verdict and reason; the ranking
    with its reasons; the cautions of the leading (or closest) candidate; and, given a
    :class:`~dcchar.files.scenario_requirements.ScenarioTolerance`, the pass shares of every cell.
    """
    from .models.cautions import DEFERENCE

    name = load_name or scenario.default_load
    m = scenario.selection(name) if tolerance is None else tolerance.matrix
    reqs = [{"figure": r.figure, "title": r.title, "unit": r.unit, "comparison": r.comparison,
             "value": _json_number(r.value), "marginal": r.marginal, "description": r.describe()}
            for r in m.requirements]
    cells = []
    for key in m.ranking.order:
        for r in m.requirements:
            c = m.cell(key, r.figure)
            cells.append({"candidate": key, "connection": m.label(key), "rank": m.ranking[key].position,
                          "requirement": r.figure, "unit": r.unit, "figure": _json_number(c.value),
                          "required": _json_number(c.required), "margin": _json_number(c.margin),
                          "verdict": c.verdict, "reason": c.reason})
    entries = [{"candidate": e.key, "connection": e.label, "position": e.position, "fails": list(e.fails),
                "marginals": list(e.marginals), "efficiency": _json_number(e.efficiency), "reason": e.reason}
               for e in m.ranking.entries]
    out = {"scenario": scenario.title, "load": name, "load_description": scenario.load_description(name),
           "requirements_path": scenario.requirements_path(name), "settings": m.settings.describe(),
           "requirements": reqs, "cells": cells,
           "ranking": {"leader": m.leader, "summary": m.ranking.summary, "rule": m.ranking.rule, "entries": entries},
           "cautions_for": m.leader or m.ranking.entries[0].key,
           "cautions": _cautions_json(c for c in m.cautions if c.code != "defer"), "deference": DEFERENCE,
           "tolerance": None}
    if tolerance is not None:
        s = tolerance.spread
        out["tolerance"] = {
            "description": tolerance.describe(), "samples": tolerance.samples, "seed": tolerance.seed,
            "spread": {"resistance": s.resistance, "winding_temperature": s.winding_temperature,
                       "magnetization": s.magnetization, "magnet_temperature": s.magnet_temperature,
                       "supply_voltage": s.supply_voltage, "distribution": s.distribution, "sigmas": s.sigmas},
            "robust_share": tolerance.study.robust_share,
            "shares": [{"candidate": x.key, "requirement": x.figure, "passed": x.passed, "marginal": x.marginal,
                        "failed": x.failed, "nominal": x.nominal, "fragile": x.fragile, "note": x.note}
                       for x in tolerance.study.shares.values()]}
    return out


def _aligned(rows, left=(0, 1)) -> list:
    """Lines of an aligned text table (the first row is the heading, followed by a rule)."""
    widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]

    def line(r):
        return "  ".join(c.ljust(w) if i in left else c.rjust(w) for i, (c, w) in enumerate(zip(r, widths))).rstrip()

    return [line(rows[0]), "  ".join("-" * w for w in widths)] + [line(r) for r in rows[1:]]


def select_text(scenario, load_name=None, tolerance=None) -> str:
    """What ``dcchar select`` prints: the matrix as an aligned text table, the ranking with its
    reasons, the cells that do not pass and the cautions of the leading candidate."""
    from .models.cautions import DEFERENCE
    from .studies.selection import VERDICTS
    from .studies.selection.requirements import format_value as figure_text

    name = load_name or scenario.default_load
    m = scenario.selection(name) if tolerance is None else tolerance.matrix
    reqs = list(m.requirements)
    out = [scenario.title, f"load {name}: {scenario.load_description(name)}", "",
           f"requirements ({scenario.requirements_path(name)}; {m.settings.describe()}):"]
    out += [f"  {r.figure.replace('_', ' ')}: {r.describe()} (marginal within {100 * r.marginal:g} %)" for r in reqs]
    head = ["rank", "connection"] + [r.figure.replace("_", " ") for r in reqs]
    body = []
    for key in m.ranking.order:
        row = [str(m.ranking[key].position), m.label(key)]
        for r in reqs:
            c = m.cell(key, r.figure)
            row.append(f"{VERDICTS[c.verdict]} {figure_text(c.value, r.unit)}")
        body.append(row)
    out += ["", "matrix (+ pass, ~ marginal, x fail; speeds in r/min):", ""] + _aligned([head] + body)
    if tolerance is not None:
        body = []
        for key in m.ranking.order:
            row = [str(m.ranking[key].position), m.label(key)]
            for r in reqs:
                s = tolerance.study.share(key, r.figure)
                row.append(f"{VERDICTS[s.nominal]} {100 * s.passed:.0f} %" + (" !" if s.fragile else ""))
            body.append(row)
        out += ["", f"share of samples that pass (! = fragile): {tolerance.describe()}", ""]
        out += _aligned([head] + body)
    out += ["", f"ranking: {m.ranking.summary}."]
    out += [f"  {e.position}. {e.label}: {e.reason}" for e in m.ranking.entries]
    out += [f"rule: {m.ranking.rule}"]
    failing = [(key, r) for key in m.ranking.order for r in reqs if m.cell(key, r.figure).verdict != "pass"]
    if failing:
        out += ["", "cells that do not pass:"]
        out += [f"  {m.label(k)}: {m.cell(k, r.figure).reason}" for k, r in failing]
    who = m.leader or m.ranking.entries[0].key
    lead = (f"the leading candidate, {m.label(who)}" if m.leader else
            f"the closest candidate, {m.label(who)} (no candidate meets every requirement)")
    out += ["", f"cautions for {lead}:"]
    for c in m.cautions:
        if c.code == "defer":
            continue
        out.append(f"  - {'DANGER: ' if c.severity == 'danger' else ''}{c.text}" + (f" ({c.reason})" if c.reason else ""))
    out += ["", DEFERENCE]
    return "\n".join(out) + "\n"


def _fraction_progress(what):
    last = [-1]

    def report(f):
        pct = int(100 * f)
        if pct // 10 != last[0] // 10 or f >= 1.0:
            last[0] = pct
            print(f"{what}: {pct:3d} %", file=sys.stderr, flush=True)

    return report


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
    if getattr(args, "load", None) is not None and args.load not in scenario.loads():
        from .errors import ScenarioError

        raise ScenarioError("--load", f"{args.load!r} is not allowed: expected one of {tuple(scenario.loads())}")
    if args.command == "check":
        n_m, n_l = len(scenario.machines()), len(scenario.loads())
        print(f"{args.scenario}: valid ({n_m} machine(s), {n_l} load(s); default load {scenario.default_load})")
        return EXIT_OK
    if args.command == "solve":
        if args.json:
            print(json.dumps(solve_data(scenario, args.load), indent=1, allow_nan=False))
        else:
            sys.stdout.write(solve_text(scenario, args.load, args.units))
        return EXIT_OK
    if args.command == "select":
        name = args.load or scenario.default_load
        scenario.requirements(name)  # no requirements: a clear message before any work
        with_tolerance = scenario.has_tolerance if args.tolerance is None else args.tolerance
        tol = scenario.tolerance(name, progress=_fraction_progress(f"{name}: tolerance study")) \
            if with_tolerance else None
        if args.json:
            print(json.dumps(select_data(scenario, name, tol), indent=1, allow_nan=False))
        else:
            sys.stdout.write(select_text(scenario, name, tol))
        return EXIT_OK
    from .files.report import write_report

    figures = None if args.figures == "default" else "all" if args.figures == "all" else \
        [n.strip() for n in args.figures.split(",") if n.strip()]
    result = write_report(scenario, args.output, units=args.units, force=args.force, progress=_progress,
                          figure_loads=figures, tolerance=args.tolerance)
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
