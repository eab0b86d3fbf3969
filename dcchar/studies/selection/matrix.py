"""The selection matrix: every candidate against every requirement, judged, ranked and explained.

:func:`selection_matrix` runs, for each candidate connection (the equal-rating family by
default), the studies each requirement names, takes the figure from the study result, holds it
against the required value and gives a verdict (pass, marginal or fail) with a one-line reason.
Then it ranks the candidates (:mod:`dcchar.studies.selection.ranking`) and collects the
cautions that come with the leading candidate (:func:`dcchar.studies.cautions.all_cautions`).

Examples
--------
>>> from dcchar.studies.demo import demo_family, DEMO_RATING
>>> from dcchar.models.loads import Fan
>>> from dcchar.studies.selection import selection_matrix, default_requirements
>>> fan = Fan(rated_speed=DEMO_RATING.speed, rated_torque=0.9 * DEMO_RATING.torque)
>>> m = selection_matrix(demo_family(), fan, default_requirements("fan", DEMO_RATING))
>>> m.cell("series", "speed_regulation").verdict
'fail'
"""

from __future__ import annotations

import csv
import html
import io
import math
from dataclasses import dataclass

from ...errors import ParameterError

from ..cautions import all_cautions
from .case import Case, SelectionSettings
from .defaults import Requirements
from .ranking import RANKING_RULE, Ranking, rank
from .requirements import Requirement, format_value, judge

__all__ = ["Cell", "SelectionMatrix", "selection_matrix", "VERDICTS"]

#: The verdicts, best first, with the symbol used in tables and charts.
VERDICTS = {"pass": "+", "marginal": "~", "fail": "x"}


@dataclass(frozen=True)
class Cell:
    """One candidate against one requirement.

    Attributes
    ----------
    key, figure : str
        Candidate key and requirement figure name.
    value : float or bool
        The figure the study returned, in the requirement's unit (SI).
    required : float or bool
        The required value for this candidate (SI).
    margin : float
        Share by which the figure meets (> 0) or misses (< 0) the limit. [-]
    verdict : str
        "pass", "marginal" or "fail".
    reason : str
        One line in plain words.
    detail : str
        What the study said (may be empty).
    """

    key: str
    figure: str
    value: object
    required: object
    margin: float
    verdict: str
    reason: str
    detail: str = ""


def _reason(req: Requirement, value, required, verdict, margin, detail) -> str:
    fig = format_value(value, req.unit)
    lim = format_value(required, req.unit)
    if req.comparison == "yes/no":
        head = f"{req.title}: {'yes' if verdict == 'pass' else 'no'}"
    elif isinstance(value, float) and math.isnan(value):
        head = f"{req.title}: no figure"
    elif verdict == "fail":
        side = "above the" if req.comparison == "at most" else "below the"
        word = "allowed" if req.comparison == "at most" else "required"
        head = f"{req.title} {fig} is {side} {lim} {word}"
    elif verdict == "marginal":
        head = f"{req.title} {fig} meets {lim} by only {100 * margin:.2g} % (band {100 * req.marginal:g} %)"
    else:
        word = "within" if req.comparison == "at most" else "above"
        head = f"{req.title} {fig} is {word} the {lim} limit"
    return f"{head}; {detail}" if detail and verdict != "pass" else head


class SelectionMatrix:
    """The judged matrix of candidates x requirements, its ranking and the leader's cautions.

    Attributes
    ----------
    cases : dict
        key -> :class:`Case` (the candidates as run, with their study results).
    requirements : Requirements
    cells : dict
        (key, figure) -> :class:`Cell`.
    ranking : Ranking
    leader : str or None
    cautions : tuple of Caution
        For the leading candidate (or, with no leader, the first ranked).
    """

    def __init__(self, cases: dict, load, requirements: Requirements, settings: SelectionSettings, cells: dict,
                 ranking: Ranking, cautions: tuple):
        self.cases = cases
        self.load = load
        self.requirements = requirements
        self.settings = settings
        self.cells = cells
        self.ranking = ranking
        self.cautions = cautions

    @property
    def keys(self) -> tuple:
        return tuple(self.cases)

    @property
    def leader(self):
        return self.ranking.leader

    def cell(self, key: str, figure: str) -> Cell:
        try:
            return self.cells[(key, figure)]
        except KeyError:
            raise ParameterError("cell", (key, figure), f"a candidate of {self.keys} and a figure of "
                                                        f"{self.requirements.figures}") from None

    def verdicts(self, key: str) -> dict:
        """figure -> verdict for one candidate."""
        return {f: self.cells[(key, f)].verdict for f in self.requirements.figures}

    def label(self, key: str) -> str:
        return self.cases[key].machine.label

    # ---- tables
    def to_rows(self) -> list:
        """One dict per cell, SI (the unit of each figure in its own key), ranked candidates first."""
        rows = []
        for key in self.ranking.order:
            for req in self.requirements:
                c = self.cells[(key, req.figure)]
                u = req.unit
                rows.append({"rank": self.ranking[key].position, "candidate": key, "connection": self.label(key),
                             "requirement": req.figure, "comparison": req.comparison, "unit": u,
                             f"figure [{u}]": _plain(c.value), f"required [{u}]": _plain(c.required),
                             "margin [-]": c.margin, "verdict": c.verdict, "reason": c.reason})
        return rows

    def to_csv(self) -> str:
        """The cells as CSV text (columns: rank, candidate, connection, requirement, comparison,
        unit, figure, required, margin [-], verdict, reason; SI units)."""
        buf = io.StringIO()
        cols = ["rank", "candidate", "connection", "requirement", "comparison", "unit", "figure", "required",
                "margin [-]", "verdict", "reason"]
        w = csv.writer(buf, lineterminator="\n")
        w.writerow(cols)
        for r in self.to_rows():
            u = r["unit"]
            w.writerow([r["rank"], r["candidate"], r["connection"], r["requirement"], r["comparison"], u,
                        _csv_num(r[f"figure [{u}]"]), _csv_num(r[f"required [{u}]"]), _csv_num(r["margin [-]"]),
                        r["verdict"], r["reason"]])
        return buf.getvalue()

    def _grid(self):
        """Header and body of the summary table: a row per candidate, a column per requirement."""
        head = ["rank", "connection"] + [r.figure.replace("_", " ") for r in self.requirements]
        body = []
        for key in self.ranking.order:
            row = [str(self.ranking[key].position), self.label(key)]
            for req in self.requirements:
                c = self.cells[(key, req.figure)]
                row.append(f"{VERDICTS[c.verdict]} {c.verdict} ({format_value(c.value, req.unit)})")
            body.append(row)
        return head, body

    def to_markdown(self) -> str:
        """The matrix, the requirements, the ranking with reasons and the leader's cautions, as Markdown."""
        head, body = self._grid()
        out = ["| " + " | ".join(head) + " |", "|" + "---|" * len(head)]
        out += ["| " + " | ".join(r) + " |" for r in body]
        out += ["", "Requirements:", ""]
        out += [f"- {r.figure.replace('_', ' ')}: {r.describe()} (marginal within {100 * r.marginal:g} %)"
                for r in self.requirements]
        out += ["", f"Ranking: {self.ranking.summary}.", f"Rule: {RANKING_RULE}", ""]
        out += [f"{e.position}. {e.label}: {e.reason}" for e in self.ranking.entries]
        failing = [c for c in self.cells.values() if c.verdict != "pass"]
        if failing:
            out += ["", "Cells that do not pass:", ""]
            out += [f"- {self.label(c.key)}: {c.reason}" for c in failing]
        if self.cautions:
            who = self.label(self.leader) if self.leader else "the first ranked candidate"
            out += ["", f"Cautions for {who}:", ""] + [f"- {c}" for c in self.cautions]
        out += ["", f"Starting: {self.settings.describe()}. Speeds in r/min in the table, SI in the data."]
        return "\n".join(out) + "\n"

    def to_html(self) -> str:
        """The same content as :meth:`to_markdown`, as an HTML fragment."""
        e = html.escape
        head, body = self._grid()
        th = "".join(f"<th>{e(h)}</th>" for h in head)
        rows = "".join("<tr>" + "".join(f"<td>{e(v)}</td>" for v in r) + "</tr>" for r in body)
        reqs = "".join(f"<li>{e(r.describe())}</li>" for r in self.requirements)
        ranks = "".join(f"<li>{e(x.label)}: {e(x.reason)}</li>" for x in self.ranking.entries)
        cells = "".join(f"<li>{e(self.label(c.key))}: {e(c.reason)}</li>" for c in self.cells.values()
                        if c.verdict != "pass")
        cau = "".join(f"<li>{e(str(c))}</li>" for c in self.cautions)
        return (f"<table class='dcchar-selection'><tr>{th}</tr>{rows}</table>"
                f"<p>Requirements:</p><ul>{reqs}</ul><p>Ranking: {e(self.ranking.summary)}. {e(RANKING_RULE)}</p>"
                f"<ol>{ranks}</ol>" + (f"<p>Cells that do not pass:</p><ul>{cells}</ul>" if cells else "")
                + (f"<p>Cautions:</p><ul>{cau}</ul>" if cau else ""))

    def _repr_html_(self):
        head, body = self._grid()
        th = "".join(f"<th>{html.escape(h)}</th>" for h in head)
        rows = "".join("<tr>" + "".join(f"<td>{html.escape(v)}</td>" for v in r) + "</tr>" for r in body)
        return f"<p><b>{html.escape(self.ranking.summary)}</b></p><table><tr>{th}</tr>{rows}</table>"

    def __repr__(self):
        return (f"SelectionMatrix({len(self.cases)} candidates x {len(self.requirements)} requirements, "
                f"leader={self.leader!r})")


def _plain(v):
    if isinstance(v, bool):
        return v
    return float(v)


def _csv_num(v):
    if isinstance(v, bool):
        return "yes" if v else "no"
    return repr(float(v))


def selection_matrix(candidates, load, requirements, settings: SelectionSettings | None = None) -> SelectionMatrix:
    """Judge every candidate against every requirement on ``load``, rank them and explain.

    Parameters
    ----------
    candidates : mapping of key -> Machine
        E.g. :func:`dcchar.studies.rating.equal_rating_family` (the default view) or
        :func:`dcchar.studies.demo.demo_family`.
    load : load object
        See :mod:`dcchar.models.loads`.
    requirements : Requirements or sequence of Requirement
        E.g. :func:`dcchar.studies.selection.default_requirements`.
    settings : SelectionSettings, optional
        Running control settings and the starter in force.

    Returns
    -------
    SelectionMatrix
    """
    settings = SelectionSettings() if settings is None else settings
    if not isinstance(settings, SelectionSettings):
        raise ParameterError("settings", settings, "a SelectionSettings or None")
    reqs = requirements if isinstance(requirements, Requirements) else Requirements(requirements)
    if not len(reqs):
        raise ParameterError("requirements", requirements, "at least one Requirement")
    machines = dict(candidates)
    if not machines:
        raise ParameterError("candidates", candidates, "at least one machine")
    cases = {k: Case(k, m, load, settings) for k, m in machines.items()}
    cells = {}
    for k, case in cases.items():
        for req in reqs:
            fig = req.compute(case)
            required = req.required_for(case)
            verdict, margin = judge(req.comparison, fig.value, required, req.marginal)
            cells[(k, req.figure)] = Cell(k, req.figure, fig.value, required, margin, verdict,
                                          _reason(req, fig.value, required, verdict, margin, fig.detail), fig.detail)
    titles = {r.figure: r.title for r in reqs}
    verdicts = {k: {r.figure: cells[(k, r.figure)].verdict for r in reqs} for k in cases}
    effs = {}
    for k, case in cases.items():
        p = case.operating.point
        effs[k] = p.efficiency if p is not None else math.nan
    ranking = rank(list(cases), {k: c.machine.label for k, c in cases.items()}, verdicts, titles, effs)
    first = ranking.leader or ranking.entries[0].key
    c = cases[first]
    cautions = all_cautions(c.machine, load, c.operating)
    return SelectionMatrix(cases, load, reqs, settings, cells, ranking, cautions)



