"""The report bundle for a specification: curves, tables and a summary, in SI or US units.

:func:`write_report` writes into one folder::

    summary.md, summary.html     key figures per connection and load, the cautions, the figures
    scenario.toml                the scenario as read (so the report can be reproduced)
    <load>/comparison.csv        the comparison table (:func:`dcchar.files.tables.write_table_csv`)
    <load>/operating_points.csv  every operating point found, with the one the drive settles at
    <load>/curves.csv            every characteristic, long format (one row per connection and point)
    <load>/<view>.png, .svg      the five views with the load and operating points (figure loads only)
    <load>/selection.csv, pass_share.png, .svg
                                 loads with requirements: the choice of connection (the selection
                                 matrix; see :mod:`dcchar.files.report_selection`), and with a
                                 tolerance study also tolerance.csv, bands.csv, bands.png, .svg
    manifest.json                written last: every file with its size and SHA-256

Units: SI (r/min, N·m, kW) or US (r/min, lbf·ft, hp); factors and sources in
:mod:`dcchar.models.units`. Every CSV heading carries its unit.

How the folder is written: the whole bundle is built in a temporary folder next to the chosen
one (``.<name>.partial-*``), then renamed into place, so a report appears whole or not at all.
An existing empty folder is replaced the same way. An existing folder with files in it is
refused unless ``force=True``; then its old ``manifest.json`` is removed first (from that moment
the folder no longer claims to be a whole report), each new file is moved in over its old
namesake (``os.replace``, atomic per file), stale files listed by the old manifest are removed,
and the new manifest is moved in last. Files the report did not write are never deleted. A
report is whole exactly when ``manifest.json`` is present and its checksums match.
"""

from __future__ import annotations

import hashlib
import json
import math
import os
import shutil
import tempfile
import textwrap
from dataclasses import dataclass
from pathlib import Path

from ..errors import ScenarioError
from ..models.cautions import DEFERENCE, GENERAL_CAUTIONS
from ..models.units import display_units
from ..models.validation import choice
from .atomic import atomic_write_text
from .tables import display_table, format_value, table_csv, table_html, table_markdown, write_table_csv

__all__ = ["ReportResult", "write_report", "report_curves", "curve_table", "points_table", "FIGURE_VIEWS", "MANIFEST"]

#: The views drawn for each figure load, in order (see :data:`dcchar.charts.VIEWS`).
FIGURE_VIEWS = ("torque_speed", "current_torque", "speed_current", "efficiency_torque", "efficiency_power")
#: Name of the manifest, written last.
MANIFEST = "manifest.json"
_DPI = 300
_TITLE_WIDTH = 46  # characters per title line at column width (bold 8 pt in 85 mm)


@dataclass(frozen=True)
class ReportResult:
    """What :func:`write_report` wrote.

    Attributes
    ----------
    folder : pathlib.Path
    files : tuple of pathlib.Path
        Every file written, manifest last.
    units : str
    figure_loads : tuple of str
        Loads with figures.
    clipped : dict
        ``file stem -> [texts]`` of artists sticking out of a figure, and of texts overlapping
        (``"overlap: a | b"``); empty when all fit.
    """

    folder: Path
    files: tuple
    units: str
    figure_loads: tuple
    clipped: dict

    def file(self, name: str) -> Path:
        """The path of one file of the report, e.g. ``"raise_rated/curves.csv"``."""
        return self.folder / name


# -------------------------------------------------------------------------------- tables

_CURVE_FIELDS = (("armature_current", "armature current", "current"), ("supply_current", "supply current", "current"),
                 ("field_current", "field current", "current"), ("speed", "speed", "speed"),
                 ("shaft_torque", "shaft torque", "torque"), ("developed_torque", "developed torque", "torque"),
                 ("input_power", "input power", "power"), ("output_power", "output power", "power"),
                 ("efficiency", "efficiency", None))


def curve_table(comparison, units: str = "si", curves=None):
    """Headings and rows of characteristics, long format, display units.

    ``curves``: one Characteristic per candidate of ``comparison`` (default: the comparison's
    own, see :func:`report_curves` for the report's).

    Columns: connection key and name, then :data:`_CURVE_FIELDS` (efficiency in %) and whether
    the point lies within the safe speed. Speeds beyond any bound are ``inf``.
    """
    table = display_units(units)
    heads = ["key", "connection"]
    for _, name, q in _CURVE_FIELDS:
        heads.append(f"{name} [{table[q][0] if q else '%'}]")
    heads.append("within safe speed")
    rows = []
    curves = comparison.characteristics() if curves is None else list(curves)
    for (key, cand), c in zip(comparison.candidates.items(), curves):
        cols = []
        for fld, _, q in _CURVE_FIELDS:
            factor = table[q][1] if q else 0.01
            cols.append([float(v) / factor for v in getattr(c, fld)])
        for i, ok in enumerate(c.within_safe_speed):
            rows.append([key, cand.machine.label] + [col[i] for col in cols] + [bool(ok)])
    return heads, rows


def points_table(comparison, units: str = "si"):
    """Headings and rows of every operating point of ``comparison`` (display units)."""
    table = display_units(units)
    heads = ["key", "connection", "settled", "mode", "stable", f"speed [{table['speed'][0]}]",
             f"shaft torque [{table['torque'][0]}]", f"armature current [{table['current'][0]}]",
             f"supply current [{table['current'][0]}]", f"input power [{table['power'][0]}]",
             f"output power [{table['power'][0]}]", "efficiency [%]", f"losses [{table['power'][0]}]"]
    rows = []
    for key, cand in comparison.candidates.items():
        for p in cand.operating.points:
            pw = table["power"][1]
            rows.append([key, cand.machine.label, p is cand.point, p.mode, bool(p.stable), p.speed / table["speed"][1],
                         p.torque / table["torque"][1], p.armature_current, p.supply_current, p.input_power / pw,
                         p.output_power / pw, 100.0 * p.efficiency, p.total_losses / pw])
    return heads, rows


# -------------------------------------------------------------------------------- figures

class _Described:
    """A load seen by the charts with the scenario's own description as its legend text."""

    def __init__(self, load, text):
        self._load, self._text = load, text

    def torque(self, speed):
        return self._load.torque(speed)

    def describe(self):
        return self._text


class _Quiet:
    """An operating result seen by the charts without the note "generating": on a lowering or
    braking study every candidate would repeat it over the plot (the summary table says it)."""

    def __init__(self, result):
        self.points = result.points
        self.reason = None if result.reason == "generating" else result.reason


def report_curves(comparison, points: int = 300) -> list:
    """The characteristics drawn and tabulated by the report, one per candidate: the working range
    up to 2.5 x the rated current, widened to every operating point, those beyond standstill
    included (see :func:`dcchar.studies.comparison.working_currents`). [A]
    """
    return [c.working_characteristic(points, rated_multiple=2.5, every_point=True) for c in comparison.candidates.values()]


def _figures(scenario, load_name, comparison, curves, folder: Path, units, progress, files, clipped):
    from .. import __version__, charts

    title = textwrap.fill(scenario.title, _TITLE_WIDTH)
    load = _Described(comparison.load, scenario.load_description(load_name))
    ops = [_Quiet(r) for r in comparison.operating()]
    for view in FIGURE_VIEWS:
        out = charts.draw_view(view, curves, load, ops, units=units)
        fig = out["figure"]
        charts.title_block(fig, title, f"{scenario.name} · {load_name}", scenario.date, __version__)
        written, bad = charts.export_figure(fig, folder / view, formats=("png", "svg"), dpi=_DPI)
        if bad:
            clipped[f"{load_name}/{view}"] = bad
        files.extend(written)
        progress(f"{load_name}/{view}.png, .svg")


# -------------------------------------------------------------------------------- summary

def _unit_words(units):
    t = display_units(units)
    return (f"{'SI' if units == 'si' else 'US customary'}: speed in {t['speed'][0]}, torque in {t['torque'][0]}, "
            f"power in {t['power'][0]}, current in A")


def _settings_words(s):
    parts = [f"supply {'rated voltage' if s.voltage is None else format_value(s.voltage) + ' V'}"]
    if s.external_resistance:
        parts.append(f"external armature resistance {format_value(s.external_resistance)} ohm")
    if s.field_rheostat:
        parts.append(f"field rheostat {format_value(s.field_rheostat)} ohm")
    if not math.isinf(s.diverter_resistance):
        parts.append(f"series-field diverter {format_value(s.diverter_resistance)} ohm")
    if s.winding_temperature is not None:
        parts.append(f"windings at {format_value(s.winding_temperature)} °C")
    if s.magnet_temperature is not None:
        parts.append(f"magnets at {format_value(s.magnet_temperature)} °C")
    return ", ".join(parts)


def _grouped_cautions(comparison):
    """code -> (text, severity, [(connection label, reason)]) in first-seen order; the deference apart."""
    out = {}
    for cand in comparison.candidates.values():
        for c in cand.cautions:
            if c.code == "defer":
                continue
            entry = out.setdefault(c.code, (c.text, c.severity, []))
            entry[2].append((cand.machine.label, c.reason))
    return out


def _summary(scenario, sections, units, figure_loads, choices=None):
    """(markdown, html) text of the summary; ``choices``: load name -> ChoiceSection."""
    import html as h

    from .. import __version__

    st = scenario.document["study"]
    meta = [("scenario", scenario.name), ("author", st.get("author", "")),
            ("date", str(scenario.date) if scenario.date is not None else ""), ("units", _unit_words(units)),
            ("dcchar", __version__)]
    meta = [(k, v) for k, v in meta if v]
    md = [f"# {scenario.title}", ""] + [f"- **{k}**: {v}" for k, v in meta] + [""]
    ht = ["<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8" />', f"<title>{h.escape(scenario.title)}</title>",
          "<style>body{font-family:sans-serif;max-width:60em;margin:2em auto;padding:0 1em}"
          "table{border-collapse:collapse;font-size:85%}td,th{border:1px solid #999;padding:2px 5px}"
          "td.num{text-align:right}.danger{font-weight:bold}img{max-width:100%}</style></head><body>",
          f"<h1>{h.escape(scenario.title)}</h1>", "<ul>"]
    ht += [f"<li><b>{h.escape(k)}</b>: {h.escape(v)}</li>" for k, v in meta] + ["</ul>"]
    if scenario.notes:
        md += ["## Notes", "", scenario.notes.strip(), ""]
        ht += ["<h2>Notes</h2>"] + [f"<p>{h.escape(p)}</p>" for p in scenario.notes.strip().split("\n\n")]
    md += ["## Candidates", ""]
    ht += ["<h2>Candidates</h2>", "<ul>"]
    for key, m in scenario.machines().items():
        r = m.rating
        rated = (f"rated {format_value(r.voltage)} V, {format_value(r.current)} A, "
                 f"{format_value(r.speed / display_units(units)['speed'][1])} {display_units(units)['speed'][0]}, "
                 f"{format_value(r.output / display_units(units)['power'][1])} {display_units(units)['power'][0]}"
                 if r is not None else "no rating")
        md.append(f"- `{key}`: {m.label} ({rated})")
        ht.append(f"<li><code>{h.escape(key)}</code>: {h.escape(m.label)} ({h.escape(rated)})</li>")
    md.append("")
    ht.append("</ul>")
    if choices:  # the conclusion first: the choice on each load with requirements
        from .report_selection import choice_html, choice_markdown

        for section in choices.values():
            md += choice_markdown(section)
            ht += choice_html(section)
    for name, comparison in sections:
        heads, rows = display_table(comparison, units)
        md += [f"## Load `{name}`", "", scenario.load_description(name), "",
               f"Settings: {_settings_words(comparison.settings)}.", "", table_markdown(heads, rows), "",
               f"Full precision: [`{name}/comparison.csv`]({name}/comparison.csv); every operating point: "
               f"[`{name}/operating_points.csv`]({name}/operating_points.csv); curves: "
               f"[`{name}/curves.csv`]({name}/curves.csv).", ""]
        ht += [f"<h2>Load <code>{h.escape(name)}</code></h2>", f"<p>{h.escape(scenario.load_description(name))}</p>",
               f"<p>Settings: {h.escape(_settings_words(comparison.settings))}.</p>", table_html(heads, rows),
               f'<p>Full precision: <a href="{name}/comparison.csv">{name}/comparison.csv</a>; every operating '
               f'point: <a href="{name}/operating_points.csv">{name}/operating_points.csv</a>; curves: '
               f'<a href="{name}/curves.csv">{name}/curves.csv</a>.</p>']
        grouped = _grouped_cautions(comparison)
        if grouped:
            md += ["### Cautions", ""]
            ht += ["<h3>Cautions</h3>", "<ul>"]
            for code, (text, severity, who) in grouped.items():
                mark = "**DANGER** " if severity == "danger" else ""
                whom = "; ".join(f"{lab}{': ' + why if why else ''}" for lab, why in who)
                md.append(f"- {mark}{text} — *{whom}*")
                cls = ' class="danger"' if severity == "danger" else ""
                ht.append(f"<li><span{cls}>{'DANGER ' if mark else ''}{h.escape(text)}</span> "
                          f"<i>{h.escape(whom)}</i></li>")
            md.append("")
            ht.append("</ul>")
        if name in figure_loads:
            md += ["### Figures", ""]
            ht.append("<h3>Figures</h3>")
            for view in FIGURE_VIEWS:
                label = view.replace("_", "-")
                md.append(f"![{label}]({name}/{view}.png) ([SVG]({name}/{view}.svg))")
                ht.append(f'<p><img src="{name}/{view}.svg" alt="{label} chart, load {h.escape(name)}" /></p>')
            md.append("")
    general = [GENERAL_CAUTIONS[k] for k in ("series_no_load", "field_loss", "starting_current")]
    md += ["## Cautions that always apply", ""] + [f"- {t}" for t in general] + ["", f"**{DEFERENCE}**", ""]
    ht += ["<h2>Cautions that always apply</h2>", "<ul>"] + [f"<li>{h.escape(t)}</li>" for t in general]
    ht += ["</ul>", f"<p><b>{h.escape(DEFERENCE)}</b></p>", "</body></html>"]
    return "\n".join(md), "\n".join(ht) + "\n"


def _choice(scenario, name, with_tolerance, folder, units, step, progress, done, total, files, clipped):
    """The choice of connection on one load: matrix, optional tolerance study, files and figures."""
    from .report_selection import ChoiceSection, choice_files

    matrix = scenario.selection(name)
    step(f"{name}: choice of connection")
    tol = None
    if with_tolerance:
        def within(f):
            if progress is not None:
                progress(done[0], total, f"{name}: tolerance study {100 * f:3.0f} %")

        tol = scenario.tolerance(name, progress=within, matrix=matrix)
        step(f"{name}: tolerance study")
    section = ChoiceSection(name, scenario.requirements_path(name), matrix, tol, scenario.load_description(name))
    choice_files(scenario, section, folder, units, step, files, clipped)
    return section


# -------------------------------------------------------------------------------- the bundle

def _sha256(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def _is_empty_dir(p: Path) -> bool:
    return p.is_dir() and not any(p.iterdir())


def _check_target(out: Path, force: bool):
    if out.exists() and not out.is_dir():
        raise ScenarioError(str(out), "the report folder is a file; choose a folder")
    if out.is_dir() and not _is_empty_dir(out) and not force:
        raise ScenarioError(str(out), "the report folder exists and is not empty; choose another folder or "
                                      "pass force=True (--force) to write over the report in it")
    if not out.parent.is_dir():
        raise ScenarioError(str(out), f"the folder {str(out.parent)!r} that should hold the report does not exist")


def _commit(tmp: Path, out: Path, names: list):
    """Move the finished bundle from ``tmp`` into ``out`` (see the module notes)."""
    if not out.exists():
        os.rename(tmp, out)
        return
    if _is_empty_dir(out):
        out.rmdir()
        os.rename(tmp, out)
        return
    old_manifest = out / MANIFEST
    stale = []
    if old_manifest.is_file():
        try:
            stale = list(json.loads(old_manifest.read_text(encoding="utf-8")).get("files", {}))
        except (ValueError, OSError, AttributeError):
            stale = []
        old_manifest.unlink()
    for rel in names:
        if rel == MANIFEST:
            continue
        (out / rel).parent.mkdir(parents=True, exist_ok=True)
        os.replace(tmp / rel, out / rel)
    keep = set(names)
    for rel in stale:
        p = out / rel
        if isinstance(rel, str) and rel not in keep and ".." not in Path(rel).parts and p.is_file():
            p.unlink()
    os.replace(tmp / MANIFEST, out / MANIFEST)
    shutil.rmtree(tmp, ignore_errors=True)


def write_report(scenario, out_dir, *, units: str | None = None, force: bool = False, progress=None,
                 figure_loads=None, points: int = 300, selection: bool = True,
                 tolerance: bool | None = None) -> ReportResult:
    """Write the report bundle of a scenario (see the module notes for the files and how).

    Parameters
    ----------
    scenario : dcchar.files.scenario.Scenario
    out_dir : str or os.PathLike
        The report folder. Its parent must exist; nothing outside it is left changed.
    units : {"si", "us"}, optional
        Default: the scenario's own.
    force : bool, default False
        Write over a folder that already has files in it (files the report did not write stay).
    progress : callable, optional
        Called as ``progress(done, total, what)`` after each step.
    figure_loads : "all", sequence of str or None
        Loads that get figures. Default: the scenario's default load only (every load gets its
        tables).
    points : int, default 300
        Points of each characteristic sweep.
    selection : bool, default True
        Add the choice of connection for every load with requirements (the scenario's
        ``[loads.<name>.requirements]`` or ``[requirements]`` tables).
    tolerance : bool or None
        Add the tolerance study to each choice (pass shares and curve bands; takes seconds per
        load). None: when the scenario has a ``[tolerance]`` table. Its progress is reported
        as the fraction done within the step.

    Returns
    -------
    ReportResult

    Raises
    ------
    ScenarioError
        The folder is not empty and ``force`` is False, or the folder cannot be made.
    """
    units = scenario.units if units is None else choice("units", units, ("si", "us"))
    names = list(scenario.loads())
    if figure_loads is None:
        fig_loads = (scenario.default_load,)
    elif figure_loads == "all":
        fig_loads = tuple(names)
    else:
        fig_loads = tuple(figure_loads)
        for n in fig_loads:
            if n not in names:
                raise ScenarioError("figure_loads", f"{n!r} is not allowed: expected one of {tuple(names)}")
    out = Path(os.fspath(out_dir))
    _check_target(out, force)
    from .report_selection import figure_steps

    choice_loads = scenario.requirement_loads if selection else ()
    with_tolerance = bool(choice_loads) and (scenario.has_tolerance if tolerance is None else bool(tolerance))
    total = (2 * len(names) + len(FIGURE_VIEWS) * len(fig_loads) + 2
             + len(choice_loads) * (1 + int(with_tolerance) + figure_steps(with_tolerance)))
    done = [0]

    def step(what):
        done[0] += 1
        if progress is not None:
            progress(done[0], total, what)

    tmp = Path(tempfile.mkdtemp(prefix=f".{out.name}.partial-", dir=out.parent))
    try:
        files, clipped, sections, choices = [], {}, [], {}
        from .scenario import dump_scenario

        files.append(atomic_write_text(tmp / "scenario.toml", dump_scenario(scenario)))
        for name in names:
            comparison = scenario.compare(name, points=points)
            sections.append((name, comparison))
            step(f"{name}: comparison")
            sub = tmp / name
            sub.mkdir()
            files.append(write_table_csv(comparison, sub / "comparison.csv", units))
            files.append(atomic_write_text(sub / "operating_points.csv", table_csv(*points_table(comparison, units))))
            curves = report_curves(comparison, points)
            files.append(atomic_write_text(sub / "curves.csv", table_csv(*curve_table(comparison, units, curves))))
            step(f"{name}/comparison.csv, operating_points.csv, curves.csv")
            if name in fig_loads:
                _figures(scenario, name, comparison, curves, sub, units, step, files, clipped)
            if name in choice_loads:
                choices[name] = _choice(scenario, name, with_tolerance, sub, units, step, progress, done, total,
                                        files, clipped)
        md, html_text = _summary(scenario, sections, units, fig_loads, choices)
        files.append(atomic_write_text(tmp / "summary.md", md))
        files.append(atomic_write_text(tmp / "summary.html", html_text))
        step("summary.md, summary.html")
        from .. import __version__

        rel = [p.relative_to(tmp).as_posix() for p in files]
        manifest = {"dcchar": __version__, "title": scenario.title, "units": units, "figure_loads": list(fig_loads),
                    "clipped": clipped,
                    "files": {r: {"bytes": p.stat().st_size, "sha256": _sha256(p)} for r, p in zip(rel, files)}}
        atomic_write_text(tmp / MANIFEST, json.dumps(manifest, indent=1, ensure_ascii=False) + "\n")
        rel.append(MANIFEST)
        _check_target(out, force)  # the folder may have changed while we worked
        _commit(tmp, out, rel)
        step("manifest.json")
    finally:
        if tmp.exists():
            shutil.rmtree(tmp, ignore_errors=True)
    return ReportResult(folder=out, files=tuple(out / r for r in rel), units=units, figure_loads=fig_loads,
                        clipped=clipped)
