"""The choice-of-connection panel: requirements for the load, the judged matrix, the ranking and a tolerance study.

Every figure, margin, verdict and reason comes from
:func:`dcchar.studies.selection.selection_matrix`; the tolerance study is
:func:`dcchar.studies.tolerance.tolerance_study` and its figure
:func:`dcchar.charts.bands.pass_share_chart`. The panel only shows them and lets the user edit
the required numbers.

Works alone (``SelectionPanel(machines, load)``) or hosted by the comparer
(:meth:`dcchar.widgets.comparer.Comparer.attach`), which calls :meth:`SelectionPanel.update` with
the ticked candidates, the load and the control settings after each change.
"""

from __future__ import annotations

import html
import math
import time

import ipywidgets as w

from ..errors import ParameterError
from ..models.units import RPM
from ..studies.selection import LOAD_KINDS, SelectionSettings, default_requirements, selection_matrix
from ..studies.selection.matrix import VERDICTS
from ..studies.selection.requirements import format_value
from .panels import error_html, panel_inputs, status_html

__all__ = ["SelectionPanel", "DISPLAY_UNITS", "figure_png"]

#: SI unit of a requirement -> (unit shown in the editor, factor: shown = SI / factor).
DISPLAY_UNITS = {"rad/s": ("r/min", RPM), "-": ("× (per unit)", 1.0), "%": ("%", 1.0), "A": ("A", 1.0),
                 "s": ("s", 1.0), "N*m": ("N·m", 1.0), "W": ("W", 1.0)}

_CSS = """
<style>
.kit-matrix .widget-html-content, .kit-ranking .widget-html-content, .kit-selection-cautions .widget-html-content
  { line-height: 1.3; }
.kit-matrix table { border-collapse: collapse; font-size: 12px; font-family: 'DejaVu Sans', sans-serif; }
.kit-matrix th, .kit-matrix td { border: 1px solid #c8d2dc; padding: 3px 6px; vertical-align: top; }
.kit-matrix th { background: #eef2f6; font-weight: bold; }
.kit-matrix td.kit-v-pass { background: #e8f4ea; }
.kit-matrix td.kit-v-marginal { background: #fff4d6; }
.kit-matrix td.kit-v-fail { background: #fbe3e0; }
.kit-matrix .kit-why { font-size: 10.5px; color: #333; max-width: 190px; white-space: normal; }
.kit-matrix .kit-nums { font-size: 11px; }
.kit-ranking li { font-size: 12px; margin: 2px 0; }
</style>
"""


def figure_png(fig, dpi: float = 100.0) -> bytes:
    """The PNG bytes of a matplotlib figure (for an ``ipywidgets.Image``)."""
    import io

    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=dpi)
    return buf.getvalue()


def _margin_text(margin) -> str:
    m = float(margin)
    if math.isnan(m):
        return "none"
    if math.isinf(m):
        return "unbounded" if m > 0 else "-unbounded"
    return f"{100 * m:+.1f} %"


class SelectionPanel:
    """Requirements, matrix, ranking and tolerance study for a set of candidates on one load.

    Parameters
    ----------
    machines : mapping of key -> Machine, optional
        The candidates (default: the invented demo family).
    load : load object, optional
        Default: the load editor's invented 1.5 t hoist.
    settings : ControlSettings, optional
    kind : str, optional
        Load kind whose default requirement set to start from (one of
        :data:`dcchar.studies.selection.LOAD_KINDS`); default the load's own kind when it has a
        set, else "conveyor".
    starter_multiple : float or None, default 2.0
        See :class:`dcchar.studies.selection.SelectionSettings`.
    samples : int, default 2000
        Samples of the tolerance study (the box can change it).
    seed : int, default 0

    Attributes
    ----------
    widget : ipywidgets.VBox (class ``kit-selection``)
    matrix : SelectionMatrix or None
        The last good matrix.
    requirements : Requirements
        The set in force (defaults of the kind, with the user's edits).
    editors : dict
        figure -> (use check box, value box or None).
    kind : Dropdown of load kinds
    matrix_panel, ranking_panel, cautions_panel : HTML (``kit-matrix``, ``kit-ranking``, ``kit-selection-cautions``)
    tolerance_button, progress, samples_box, tolerance_image, tolerance_study
    error_line, status_line : HTML
    """

    def __init__(self, machines=None, load=None, settings=None, *, kind=None, starter_multiple=2.0,
                 samples: int = 2000, seed: int = 0):
        self.machines, self.load, self.settings = panel_inputs(machines, load, settings)
        self.starter_multiple = starter_multiple
        self.seed = seed
        self.matrix = None
        self.tolerance_study = None
        self.last_error = None
        self.timings = {}
        self._building = False

        start = kind if kind is not None else self._kind_of(load)
        self.kind = w.Dropdown(options=list(LOAD_KINDS), value=start, description="requirements for",
                               style={"description_width": "120px"}, layout=w.Layout(width="300px"))
        self.kind.add_class("kit-selection-kind")
        self.kind.observe(lambda ch: self._guard("requirement set", self._on_kind), names="value")
        self.requirements_box = w.VBox([])
        self.requirements_box.add_class("kit-requirements")
        self.error_line = w.HTML("")
        self.error_line.add_class("kit-selection-error")
        self.matrix_panel = w.HTML("", layout=w.Layout(overflow="auto"))
        self.matrix_panel.add_class("kit-matrix")
        self.ranking_panel = w.HTML("")
        self.ranking_panel.add_class("kit-ranking")
        self.cautions_panel = w.HTML("")
        self.cautions_panel.add_class("kit-selection-cautions")
        self.status_line = w.HTML("")
        self.samples_box = w.BoundedIntText(value=int(samples), min=50, max=100_000, step=500,
                                            description="samples", style={"description_width": "60px"},
                                            layout=w.Layout(width="170px"))
        self.tolerance_button = w.Button(description="run the tolerance study", icon="random",
                                         layout=w.Layout(width="220px"),
                                         tooltip="sample resistances, magnetization and supply voltage within "
                                                 "their tolerances and count how often each cell passes")
        self.tolerance_button.add_class("kit-tolerance")
        self.tolerance_button.on_click(lambda _: self._guard("tolerance study", self.run_tolerance))
        self.progress = w.FloatProgress(value=0.0, min=0.0, max=1.0, description="progress",
                                        layout=w.Layout(width="300px"))
        self.progress.add_class("kit-tolerance-progress")
        self.tolerance_image = w.Image(format="png", layout=w.Layout(max_width="900px"))
        self.tolerance_image.add_class("kit-pass-share")

        self._set_requirements(default_requirements(start, self._rating()))
        self.widget = w.VBox([
            self.kind, self.requirements_box, self.error_line,
            w.HTML("<b>Requirements against candidates</b> (ranked; speeds in r/min)"), self.matrix_panel,
            w.HTML("<b>Ranking</b>"), self.ranking_panel,
            w.HTML("<b>Cautions for the leader</b>"), self.cautions_panel,
            w.HTML("<b>Tolerance study</b>"), w.HBox([self.samples_box, self.tolerance_button, self.progress]),
            self.tolerance_image, self.status_line,
        ])
        self.widget.add_class("kit-selection")
        self.refresh()

    # ------------------------------------------------------------------ state
    @staticmethod
    def _kind_of(load) -> str:
        kind = getattr(load, "kind", None)
        return kind if kind in LOAD_KINDS else "conveyor"

    def _rating(self):
        rated = next((m.rating for m in self.machines.values() if getattr(m, "rating", None) is not None), None)
        if rated is None:
            raise ParameterError("machines", tuple(self.machines), "candidates with a rating (the requirement "
                                                                   "limits are set from the rated point)")
        return rated

    def selection_settings(self) -> SelectionSettings:
        """The SelectionSettings the matrix is run with: the control settings and the starter."""
        return SelectionSettings(control=self.settings, starter_multiple=self.starter_multiple)

    def _set_requirements(self, reqs):
        self._defaults = reqs
        self.requirements = reqs
        self.editors = {}
        rows = []
        self._building = True
        try:
            for r in reqs:
                use = w.Checkbox(value=True, indent=False, layout=w.Layout(width="24px"),
                                 tooltip="judge the candidates on this requirement")
                use.add_class("kit-req-use")
                use.observe(lambda ch: self._guard("requirements", self._on_edit), names="value")
                label = w.HTML(f'<span style="font-size:12px">{html.escape(r.title)} '
                               f'<i>{html.escape(r.comparison)}</i></span>', layout=w.Layout(width="360px"))
                if r.comparison == "yes/no" or r.value is None:
                    box = None
                    what = "required" if r.comparison == "yes/no" else "the machine's safe speed"
                    unit = w.HTML(f'<span style="font-size:12px">{what}</span>')
                    row = [use, label, unit]
                else:
                    shown, factor = DISPLAY_UNITS.get(r.unit, (r.unit, 1.0))
                    box = w.FloatText(value=float(r.value) / factor, layout=w.Layout(width="110px"))
                    box.add_class("kit-req-value")
                    box.add_class("kit-req-" + r.figure.replace("_", "-"))
                    box.observe(lambda ch: self._guard("requirements", self._on_edit), names="value")
                    row = [use, label, box, w.HTML(f'<span style="font-size:12px">{html.escape(shown)}</span>')]
                self.editors[r.figure] = (use, box)
                rows.append(w.HBox(row, layout=w.Layout(height="28px")))
        finally:
            self._building = False
        self.requirements_box.children = rows

    def edited_requirements(self):
        """The default set with the editors' values (SI) and without the unticked requirements."""
        reqs = self._defaults
        for r in self._defaults:
            use, box = self.editors[r.figure]
            if not use.value:
                reqs = reqs.without(r.figure)
            elif box is not None:
                factor = DISPLAY_UNITS.get(r.unit, (r.unit, 1.0))[1]
                value = float(box.value) * factor
                if value != r.value:
                    reqs = reqs.replace(r.figure, value=value)
        if not len(reqs):
            raise ParameterError("requirements", (), "at least one requirement ticked")
        return reqs

    # ------------------------------------------------------------------ actions
    def update(self, machines=None, load=None, settings=None):
        """New candidates, load and/or control settings (None keeps each): judge again.

        A load of another kind with a default set switches the requirement set to it (edits
        are lost, as the limits mean other things)."""
        if machines is not None:
            self.machines = dict(machines)
        if settings is not None:
            self.settings = settings
        if load is not None:
            kind = getattr(load, "kind", None)
            changed = kind != getattr(self.load, "kind", None)
            self.load = load
            if changed and kind in LOAD_KINDS and kind != self.kind.value:
                self.kind.value = kind  # rebuilds the set and refreshes
                return self.matrix
        return self.refresh()

    def refresh(self):
        """Judge the candidates again; errors go under the requirements, the last good matrix stays."""
        try:
            t0 = time.perf_counter()
            reqs = self.edited_requirements()
            if not self.machines:
                raise ParameterError("machines", {}, "at least one candidate ticked")
            matrix = selection_matrix(self.machines, self.load, reqs, self.selection_settings())
            t1 = time.perf_counter()
        except Exception as exc:
            self.last_error = exc
            self.error_line.value = error_html("the matrix was not judged again; the last good one stays", exc)
            return self.matrix
        self.requirements = reqs
        self.matrix = matrix
        self.last_error = None
        self.tolerance_study = None
        self.error_line.value = ""
        self.matrix_panel.value = self.matrix_html(matrix)
        self.ranking_panel.value = self.ranking_html(matrix)
        self.cautions_panel.value = self.cautions_html(matrix)
        t2 = time.perf_counter()
        self.timings = {"matrix": t1 - t0, "panel": t2 - t1}
        self.status_line.value = status_html(f"{len(matrix.keys)} candidates × {len(reqs)} requirements judged in "
                                             f"{1e3 * (t1 - t0):.0f} ms; {matrix.settings.describe()}")
        return matrix

    def run_tolerance(self, spread=None):
        """Run :func:`dcchar.studies.tolerance.tolerance_study` on the last good matrix (default
        spreads of :class:`~dcchar.studies.tolerance.Spread`), progress in the bar, and show the
        pass-share figure. Returns the study."""
        from ..charts.bands import pass_share_chart
        from ..studies.tolerance import Spread, tolerance_study

        if self.matrix is None:
            raise ParameterError("matrix", None, "a judged matrix (fix the requirements first)")
        spread = Spread() if spread is None else spread
        self.progress.value = 0.0
        self.progress.bar_style = ""
        self.tolerance_button.disabled = True
        try:
            t0 = time.perf_counter()

            def step(fraction):
                self.progress.value = float(fraction)

            study = tolerance_study(self.matrix, spread, samples=int(self.samples_box.value), seed=self.seed,
                                    progress=step)
            art = pass_share_chart(self.matrix, study)
            self.tolerance_image.value = figure_png(art["figure"], dpi=150)
            self.tolerance_figure = art["figure"]
        finally:
            self.tolerance_button.disabled = False
        self.progress.bar_style = "success"
        self.tolerance_study = study
        fragile = [(c.key, c.figure) for c in study.fragile]
        text = f"{study.samples} samples in {time.perf_counter() - t0:.1f} s"
        if fragile:
            text += "; fragile cells: " + ", ".join(f"{self.matrix.label(k)} / {f.replace('_', ' ')}"
                                                    for k, f in fragile)
        self.status_line.value = status_html(text)
        return study

    # ------------------------------------------------------------------ callbacks
    def _on_kind(self):
        self._set_requirements(default_requirements(self.kind.value, self._rating()))
        self.refresh()

    def _on_edit(self):
        if not self._building:
            self.refresh()

    def _guard(self, what, fn):
        try:
            return fn()
        except Exception as exc:
            self.last_error = exc
            self.error_line.value = error_html(f"{what} failed; the last good matrix stays", exc)

    # ------------------------------------------------------------------ HTML
    @staticmethod
    def matrix_html(matrix) -> str:
        """The matrix as a table: a row per candidate (ranked), a column per requirement; each cell
        names the verdict, the figure, the required figure, the margin and the reason."""
        e = html.escape
        reqs = list(matrix.requirements)
        head = "".join(f"<th>{e(r.title)}<br><span style='font-weight:normal;font-size:10.5px'>"
                       f"{e(r.comparison)}</span></th>" for r in reqs)
        rows = []
        for key in matrix.ranking.order:
            tds = [f"<th>{matrix.ranking[key].position}. {e(matrix.label(key))}</th>"]
            for r in reqs:
                c = matrix.cell(key, r.figure)
                nums = (f"{e(format_value(c.value, r.unit))} / {e(format_value(c.required, r.unit))}"
                        if r.comparison != "yes/no" else e(format_value(c.value, r.unit)))
                tds.append(f'<td class="kit-v-{c.verdict}" data-key="{e(key)}" data-figure="{e(r.figure)}" '
                           f'data-verdict="{c.verdict}" data-margin="{c.margin!r}">'
                           f'<b>{e(VERDICTS[c.verdict])} {e(c.verdict)}</b>'
                           f'<div class="kit-nums">figure / required: {nums}</div>'
                           f'<div class="kit-nums">margin {e(_margin_text(c.margin))}</div>'
                           f'<div class="kit-why">{e(c.reason)}</div></td>')
            rows.append(f'<tr data-key="{e(key)}">' + "".join(tds) + "</tr>")
        return (f'{_CSS}<div style="line-height:1.3"><table><thead><tr><th>candidate</th>{head}</tr></thead>'
                f'<tbody>{"".join(rows)}</tbody></table></div>')

    @staticmethod
    def ranking_html(matrix) -> str:
        """The ranking summary, the rule and one line per candidate with its reason."""
        from ..studies.selection import RANKING_RULE

        e = html.escape
        items = "".join(f'<li data-key="{e(x.key)}">{e(x.label)}: {e(x.reason)}</li>' for x in matrix.ranking.entries)
        return (f"{_CSS}<div style='line-height:1.3'><div style='font-size:12px'><b>{e(matrix.ranking.summary)}</b>"
                f"</div><ol>{items}</ol><div style='font-size:11px;color:#555'>{e(RANKING_RULE)}</div></div>")

    @staticmethod
    def cautions_html(matrix) -> str:
        """The cautions of the leading (or first ranked) candidate, and the deference."""
        from ..models.cautions import DEFERENCE

        e = html.escape
        who = matrix.label(matrix.leader) if matrix.leader else "the first ranked candidate (none meets every " \
                                                                "requirement)"
        items = "".join(f'<div class="kit-selection-caution{" kit-danger" if c.severity == "danger" else ""}" '
                        f'data-code="{e(c.code)}" style="font-size:12px;margin:3px 0;padding:3px 8px;'
                        f'border-left:4px solid {"#b42318" if c.severity == "danger" else "#c98a00"}">'
                        f'{e(c.text)}<div style="font-size:11px;color:#4a4a4a">{e(c.reason)}</div></div>'
                        for c in matrix.cautions)
        return (f"<div style='line-height:1.3'><div style='font-size:12px'>For {e(who)}:</div>{items}"
                f"<div style='font-size:12px;margin-top:4px'>{e(DEFERENCE)}</div></div>")

    def _repr_mimebundle_(self, **kwargs):
        return self.widget._repr_mimebundle_(**kwargs)
