"""The "choice of connection" part of a report: the selection matrix, its ranking and its spread.

For every load with requirements (see :mod:`dcchar.files.scenario_requirements`) the report
gets, beside the load's other files::

    <load>/selection.csv          every cell of the matrix (SI; :meth:`SelectionMatrix.to_csv`)
    <load>/pass_share.png, .svg   the matrix as a figure (verdict by shade, hatch and symbol)

and, when a tolerance study is asked for (the scenario's ``[tolerance]`` table, or
``tolerance=True``)::

    <load>/tolerance.csv          pass, marginal and fail shares of every cell over the samples
    <load>/bands.csv              percentiles of speed against shaft torque, display units
    <load>/bands.png, .svg        the band of every candidate's speed-torque curve

and a section of the summary (:func:`choice_markdown`, :func:`choice_html`) with the
requirements, the matrix with figure, required figure, margin, verdict and reason of every cell,
the ranking and its reasons, the cautions of the leading candidate and the deference to local
codes and licensed practice.
"""

from __future__ import annotations

import html as _html
import math
import textwrap

from ..models.cautions import DEFERENCE
from ..models.units import display_units
from .atomic import atomic_write_text
from .tables import table_csv, table_html, table_markdown

__all__ = ["ChoiceSection", "cell_table", "grid_table", "choice_files", "choice_markdown", "choice_html",
           "bands_table", "shares_table", "CHOICE_FIGURES"]

#: Figures of the choice section, in order: (file stem, needs a tolerance study).
CHOICE_FIGURES = (("pass_share", False), ("bands", True))
_DPI = 300
_TITLE_WIDTH = 46  # characters per title line at column width (as the report's other figures)


class ChoiceSection:
    """What the report shows about the choice on one load: the matrix and, if run, the tolerance study.

    Attributes
    ----------
    load : str
    path : str
        Key path of the requirements table used.
    matrix : SelectionMatrix
    tolerance : ScenarioTolerance or None
    description : str
        The load in words (default: the load model's own description).
    """

    def __init__(self, load, path, matrix, tolerance=None, description=""):
        self.load, self.path, self.matrix, self.tolerance = load, path, matrix, tolerance
        self.description = description or matrix.load.describe()


# -------------------------------------------------------------------------------- tables

def _fmt(value, unit):
    from ..studies.selection.requirements import format_value as figure_text

    if value is None:
        return "–"
    return figure_text(value, unit)


def _margin_text(margin, comparison):
    if comparison == "yes/no" or margin is None or (isinstance(margin, float) and math.isnan(margin)):
        return "–"
    if math.isinf(margin):
        return "unbounded" if margin > 0 else "-unbounded"
    return f"{100.0 * margin:+.3g} %"


def cell_table(matrix):
    """Headings and rows of every cell, ranked candidates first (the order of :meth:`SelectionMatrix.to_rows`).

    Figures in words with their display unit (speeds in r/min), the margin in per cent of the
    limit (positive: met), the verdict and the one-line reason.
    """
    heads = ["rank", "connection", "requirement", "figure", "required", "margin", "verdict", "reason"]
    reqs = {r.figure: r for r in matrix.requirements}
    rows = []
    for key in matrix.ranking.order:
        for fig, req in reqs.items():
            c = matrix.cell(key, fig)
            rows.append([str(matrix.ranking[key].position), matrix.label(key), fig.replace("_", " "),
                         _fmt(c.value, req.unit), _fmt(c.required, req.unit), _margin_text(c.margin, req.comparison),
                         c.verdict, c.reason])
    return heads, rows


def grid_table(matrix, study=None):
    """Headings and rows of the matrix at a glance: a row per ranked candidate, a column per
    requirement, each cell the verdict's symbol and word with the figure (and the pass share of
    the samples when a tolerance ``study`` is given)."""
    from ..studies.selection import VERDICTS

    reqs = list(matrix.requirements)
    heads = ["rank", "connection"] + [r.figure.replace("_", " ") for r in reqs]
    rows = []
    for key in matrix.ranking.order:
        row = [str(matrix.ranking[key].position), matrix.label(key)]
        for r in reqs:
            c = matrix.cell(key, r.figure)
            text = f"{VERDICTS[c.verdict]} {c.verdict} ({_fmt(c.value, r.unit)})"
            if study is not None:
                s = study.share(key, r.figure)
                text += f"; {100 * s.passed:.0f} % pass" + (" (fragile)" if s.fragile else "")
            row.append(text)
        rows.append(row)
    return heads, rows


def shares_table(tolerance):
    """Headings and rows of the pass shares of every cell (shares as fractions, full precision)."""
    rows = tolerance.study.to_rows()
    heads = list(rows[0]) if rows else ["candidate", "requirement"]
    return heads, [list(r.values()) for r in rows]


def bands_table(tolerance, units: str = "si"):
    """Headings and rows of every candidate's speed band, long format, display units."""
    t = display_units(units)
    (sp_label, sp_f), (tq_label, tq_f) = t["speed"], t["torque"]
    heads, rows = None, []
    for key, b in tolerance.bands.items():
        if heads is None:
            heads = (["key", f"shaft torque [{tq_label}]"] + [f"speed p{p:g} [{sp_label}]" for p in b.percentiles]
                     + [f"nominal speed [{sp_label}]", "coverage [-]"])
        for j, torque in enumerate(b.torque):
            rows.append([key, float(torque) / tq_f] + [float(s[j]) / sp_f for s in b.speed]
                        + [float(b.nominal_speed[j]) / sp_f, float(b.coverage[j])])
    return heads or ["key"], rows


# -------------------------------------------------------------------------------- files

def choice_files(scenario, section: ChoiceSection, folder, units, step, files, clipped):
    """Write the CSV files and figures of one load's choice section into ``folder``; append the
    paths to ``files``; ``step(what)`` after each part."""
    files.append(atomic_write_text(folder / "selection.csv", section.matrix.to_csv()))
    tol = section.tolerance
    if tol is not None:
        files.append(atomic_write_text(folder / "tolerance.csv", table_csv(*shares_table(tol))))
        files.append(atomic_write_text(folder / "bands.csv", table_csv(*bands_table(tol, units))))
    step(f"{section.load}/selection.csv" + (", tolerance.csv, bands.csv" if tol is not None else ""))
    _choice_figures(scenario, section, folder, units, step, files, clipped)


def _choice_figures(scenario, section, folder, units, step, files, clipped):
    from .. import __version__, charts
    from ..charts.bands import band_chart, pass_share_chart

    tol = section.tolerance
    for stem, needs_tolerance in CHOICE_FIGURES:
        if needs_tolerance and tol is None:
            continue
        if stem == "pass_share":  # two columns wide
            out = pass_share_chart(section.matrix, tol.study if tol is not None else None)
            title = textwrap.fill(scenario.title, 2 * _TITLE_WIDTH)
        else:
            out = band_chart(tol.bands, units=units)
            title = textwrap.fill(scenario.title, _TITLE_WIDTH)
        fig = out["figure"]
        charts.title_block(fig, title, f"{scenario.name} · {section.load}", scenario.date, __version__)
        written, bad = charts.export_figure(fig, folder / stem, formats=("png", "svg"), dpi=_DPI)
        if bad:
            clipped[f"{section.load}/{stem}"] = bad
        files.extend(written)
        step(f"{section.load}/{stem}.png, .svg")


def figure_steps(section_has_tolerance: bool) -> int:
    """Progress steps of one load's choice files (files, then each figure)."""
    return 1 + sum(1 for _, needs in CHOICE_FIGURES if section_has_tolerance or not needs)


# -------------------------------------------------------------------------------- summary

def _lead_words(matrix):
    if matrix.leader is not None:
        return f"the leading candidate, {matrix.label(matrix.leader)}"
    first = matrix.ranking.entries[0]
    return f"the closest candidate, {first.label} (no candidate meets every requirement)"


def _cautions(matrix):
    return [c for c in matrix.cautions if c.code != "defer"]


def _fragile(tol):
    return [s for s in tol.study.shares.values() if s.fragile or (s.nominal != "pass" and s.passed > 0)]


def choice_markdown(section: ChoiceSection) -> list:
    """Lines of the Markdown "choice of connection" section of one load."""
    m, name, tol = section.matrix, section.load, section.tolerance
    md = [f"## Choice of connection: load `{name}`", "", section.description, "",
          f"Requirements (`{section.path}`); {m.settings.describe()}:", ""]
    md += [f"- **{r.figure.replace('_', ' ')}**: {r.describe()} (marginal within {100 * r.marginal:g} %)"
           for r in m.requirements]
    md += ["", "At a glance (+ pass, ~ marginal, x fail):", "",
           table_markdown(*grid_table(m, tol.study if tol is not None else None)),
           f"Every cell (full precision, SI: [`{name}/selection.csv`]({name}/selection.csv)):", "",
           table_markdown(*cell_table(m)),
           f"**Ranking.** {m.ranking.summary}.", "", f"Rule: {m.ranking.rule}", ""]
    md += [f"{e.position}. {e.label}: {e.reason}" for e in m.ranking.entries]
    md += ["", f"**Cautions for {_lead_words(m)}:**", ""]
    for c in _cautions(m):
        mark = "**DANGER** " if c.severity == "danger" else ""
        md.append(f"- {mark}{c.text}" + (f" — *{c.reason}*" if c.reason else ""))
    md += ["", f"**{DEFERENCE}**", "", f"![choice of connection]({name}/pass_share.png) "
                                       f"([SVG]({name}/pass_share.svg))", ""]
    if tol is not None:
        md += ["### Spread of the figures", "", f"Tolerance study: {tol.describe()}.", ""]
        odd = _fragile(tol)
        if odd:
            md += [f"- {m.label(s.key)}, {s.figure.replace('_', ' ')}: {s.note}" for s in odd] + [""]
        else:
            md += ["Every nominal verdict holds across the samples.", ""]
        md += [f"Shares of every cell: [`{name}/tolerance.csv`]({name}/tolerance.csv); speed bands: "
               f"[`{name}/bands.csv`]({name}/bands.csv).", "",
               f"![spread of the curves]({name}/bands.png) ([SVG]({name}/bands.svg))", ""]
    return md


def choice_html(section: ChoiceSection) -> list:
    """Lines of the HTML "choice of connection" section of one load (the content of :func:`choice_markdown`)."""
    h = _html.escape
    m, name, tol = section.matrix, section.load, section.tolerance
    out = [f"<h2>Choice of connection: load <code>{h(name)}</code></h2>", f"<p>{h(section.description)}</p>",
           f"<p>Requirements (<code>{h(section.path)}</code>); {h(m.settings.describe())}:</p>", "<ul>"]
    out += [f"<li><b>{h(r.figure.replace('_', ' '))}</b>: {h(r.describe())} (marginal within "
            f"{100 * r.marginal:g} %)</li>" for r in m.requirements]
    out += ["</ul>", table_html(*grid_table(m, tol.study if tol is not None else None),
                                caption="At a glance (+ pass, ~ marginal, x fail)"),
            f'<p>Every cell (full precision, SI: <a href="{name}/selection.csv">{name}/selection.csv</a>):</p>',
            table_html(*cell_table(m)), f"<p><b>Ranking.</b> {h(m.ranking.summary)}.</p>",
            f"<p>Rule: {h(m.ranking.rule)}</p>", "<ol>"]
    out += [f"<li>{h(e.label)}: {h(e.reason)}</li>" for e in m.ranking.entries]
    out += ["</ol>", f"<p><b>Cautions for {h(_lead_words(m))}:</b></p>", "<ul>"]
    for c in _cautions(m):
        cls = ' class="danger"' if c.severity == "danger" else ""
        out.append(f"<li><span{cls}>{'DANGER ' if c.severity == 'danger' else ''}{h(c.text)}</span>"
                   + (f" <i>{h(c.reason)}</i>" if c.reason else "") + "</li>")
    out += ["</ul>", f"<p><b>{h(DEFERENCE)}</b></p>",
            f'<p><img src="{name}/pass_share.svg" alt="choice of connection, load {h(name)}" /></p>']
    if tol is not None:
        out += ["<h3>Spread of the figures</h3>", f"<p>Tolerance study: {h(tol.describe())}.</p>"]
        odd = _fragile(tol)
        if odd:
            out += ["<ul>"] + [f"<li>{h(m.label(s.key))}, {h(s.figure.replace('_', ' '))}: {h(s.note)}</li>"
                               for s in odd] + ["</ul>"]
        else:
            out.append("<p>Every nominal verdict holds across the samples.</p>")
        out += [f'<p>Shares of every cell: <a href="{name}/tolerance.csv">{name}/tolerance.csv</a>; speed bands: '
                f'<a href="{name}/bands.csv">{name}/bands.csv</a>.</p>',
                f'<p><img src="{name}/bands.svg" alt="spread of the curves, load {h(name)}" /></p>']
    return out
