"""The comparer: candidate field connections on one load, with live controls, chart, table and cautions.

Every number comes from :func:`dcchar.studies.comparison.compare` (the study the report and the
command line ask too), every line from :class:`dcchar.charts.live.LiveChart`, every table cell
from :func:`dcchar.files.tables.display_table`. The comparer only wires widgets to them:

- a control change (slider, candidate tick box, load box) asks for one new comparison; bursts of
  changes from the browser are coalesced (:class:`~dcchar.widgets.controls.Coalescer`), so a
  dragged slider shows the newest value and never a queue of stale ones;
- the chart's artists are made once; an update changes their data and blits;
- a change of view or of units redraws the chart and the table from the last comparison
  without solving again;
- an error inside any callback is shown in the status line (``kit-status``) and the last good
  state stays on screen.

Examples
--------
In a notebook::

    from dcchar.widgets import Comparer
    comparer = Comparer(title="Hoist drive")
    comparer                      # shows comparer.widget
    comparer.controls["voltage"].value = 200.0
    comparer.comparison.rows()[0]["speed"]
"""

from __future__ import annotations

import contextlib
import math
import re
import time
import warnings
from pathlib import Path

import ipywidgets as w

from ..charts.live import LiveChart
from ..charts.style import styles_for
from ..errors import ParameterError
from ..studies.comparison import ControlSettings, compare
from .controls import Coalescer, _running_loop, chart_canvas_class, from_front_end, labelled_slider
from .load_editor import LoadEditor
from .panels import cautions_html, error_html, results_html, status_html, swatch_html

__all__ = ["Comparer", "VIEW_CHOICES", "CONTROL_KEYS"]

#: Views offered in the chart menu: label -> view name of :data:`dcchar.charts.curves.VIEWS`.
VIEW_CHOICES = (("speed against torque", "torque_speed"), ("torque against current", "current_torque"),
                ("efficiency against torque", "efficiency_torque"), ("efficiency against output", "efficiency_power"),
                ("speed against current", "speed_current"))

#: Keys of :attr:`Comparer.controls` (the sliders, and the diverter's on/off box).
CONTROL_KEYS = ("voltage", "field_rheostat", "diverter_on", "diverter", "external_resistance", "series_share",
                "winding_temperature", "magnet_temperature")

_FIGSIZE_IN = (6.6, 4.5)  # 660 x 450 px at 100 dpi


def _demo_spec() -> dict:
    from ..studies.demo import DEMO_RATING, demo_armature, demo_magnetization
    from ..studies.rating import DEFAULT_CONNECTIONS

    return dict(armature=demo_armature(), rating=DEMO_RATING, magnetization=demo_magnetization(),
                connections=DEFAULT_CONNECTIONS, series_share=0.3, name="demo frame")


def _free_key(machine, taken) -> str:
    """The machine's connection name as a key, numbered when ``taken`` has it already."""
    from ..charts.style import style_key

    base = key = style_key(machine).replace("/", "_")
    n = 1
    while key in taken:
        n += 1
        key = f"{base}_{n}"
    return key


def _as_dict(machines) -> dict:
    if hasattr(machines, "items"):
        return dict(machines.items())
    out = {}
    for m in machines:
        out[_free_key(m, out)] = m
    return out


def _section(text: str) -> w.HTML:
    return w.HTML(f'<div style="font-weight:bold;color:#1f3b57;border-bottom:1px solid #9fb3c8;'
                  f'margin:8px 0 3px 0;font-size:13px">{text}</div>')


def _slug(text: str) -> str:
    return re.sub(r"[^A-Za-z0-9]+", "-", text).strip("-").lower()[:40]


class Comparer:
    """Compare candidate connections on one load, live.

    Parameters
    ----------
    machines : mapping of key -> Machine, or sequence of Machine, optional
        The candidates. Default: the invented demo frame in six connections
        (:func:`dcchar.studies.demo.demo_family`).
    load : load object, optional
        See :class:`~dcchar.widgets.load_editor.LoadEditor`; default an invented 1.5 t hoist.
    settings : ControlSettings, optional
        The scenario's control settings; the sliders start there and the reset button returns
        there.
    title : str
        Shown above the kit and on exported charts.
    family_spec : dict, optional
        Keywords of :func:`dcchar.studies.rating.equal_rating_family` (``armature``, ``rating``,
        ``magnetization``, ``connections``, ``series_share``, ...) that built ``machines``; with
        it the compound series-share slider re-derives the family. Default: the demo frame's
        when ``machines`` is None, else none (the slider is then disabled).
    units : {"si", "us"}
    view : str
        Starting view (see :data:`VIEW_CHOICES`).
    export_folder : str
        Starting text of the export folder box.
    thresholds : dcchar.studies.cautions.Thresholds, optional
        Limits of the caution rules (default: the stated defaults).
    debounce : float, default 0.012
        Quiet time [s] after an update within which browser events are coalesced.

    Attributes
    ----------
    widget : ipywidgets.VBox
        The whole kit (class ``kit-comparer``); a cell ending with the comparer shows it.
    comparison : dcchar.studies.comparison.Comparison
        The last good comparison.
    controls : dict
        Slider (or check box) per key of :data:`CONTROL_KEYS`.
    candidates : dict
        Check box per candidate key.
    view, units : the chart's view menu and the units switch.
    load_editor : LoadEditor
    chart : LiveChart
    canvas : the ipympl canvas widget (class ``kit-figure``)
    results_panel, cautions_panel, status_line : HTML widgets (``kit-results``, ``kit-cautions``,
        ``kit-status``)
    export_folder, export_button, reset_button
    panels : dict
        title -> hosted panel (see :meth:`attach` and :meth:`add_panels`), shown in
        ``panel_tabs`` (class ``kit-panel-tabs``) under the export row.
    """

    def __init__(self, machines=None, load=None, settings=None, *, title: str = "", family_spec=None,
                 units: str = "si", view: str = "torque_speed", export_folder: str = "dcchar-export",
                 thresholds=None, debounce: float = 0.012):
        if settings is not None and not isinstance(settings, ControlSettings):
            raise ParameterError("settings", settings, "a ControlSettings or None")
        if machines is None:
            from ..studies.demo import demo_family

            machines = demo_family()
            if family_spec is None:
                family_spec = _demo_spec()
        self.title = str(title)
        self._base = _as_dict(machines)
        if not self._base:
            raise ParameterError("machines", machines, "one or more machines")
        self._spec = dict(family_spec) if family_spec is not None else None
        self._share0 = float(self._spec.get("series_share", 0.3)) if self._spec else 0.3
        self._families = {}
        self._scenario = settings if settings is not None else ControlSettings()
        self.thresholds = thresholds
        self.comparison = None
        self.last_error = None
        self.timings = {}
        self._held = False
        self._chart_signature = None
        self._coalescer = Coalescer(self._recompute, delay=debounce, report=self._report)
        self._from_front = False  # the change being processed came from the browser
        self._panel_handle = None  # a scheduled panel update (trailing, after a drag settles)

        first = next(iter(self._base.values()))
        rated = next((m.rating for m in self._base.values() if m.rating is not None), None)
        reference = (rated.speed, rated.torque) if rated is not None else None

        # candidates
        styles = dict(zip(self._base, styles_for(list(self._base.values()))))
        self._styles = styles
        self.candidates = {}
        rows = []
        for key, m in self._base.items():
            rows.append(self._candidate_row(key, m, styles[key]))
        self._candidate_box = w.VBox(rows)
        self._candidate_box.add_class("kit-candidates")

        # sliders
        sc = self._scenario
        v_r = rated.voltage if rated is not None else (sc.voltage or 230.0)
        fields = [m.field_resistance for m in self._base.values() if hasattr(m, "field_rheostat")]
        series = [m.series_resistance for m in self._base.values() if hasattr(m, "diverter_resistance")]
        r_a = max(m.armature_resistance for m in self._base.values())
        magnets = [m for m in self._base.values() if hasattr(m, "magnet_temperature")]
        self._initial = {
            "voltage": sc.voltage if sc.voltage is not None else v_r,
            "field_rheostat": sc.field_rheostat,
            "diverter_on": not math.isinf(sc.diverter_resistance),
            "diverter": sc.diverter_resistance if not math.isinf(sc.diverter_resistance) else
            (max(series) if series else 0.1),
            "external_resistance": sc.external_resistance,
            "series_share": self._share0,
            "winding_temperature": sc.winding_temperature if sc.winding_temperature is not None else
            first.winding_temperature,
            "magnet_temperature": sc.magnet_temperature if sc.magnet_temperature is not None else
            (magnets[0].magnet_temperature if magnets else 20.0),
        }
        ini = self._initial
        rs = max(series) if series else 0.1
        rf = max(fields) if fields else 100.0
        c = {}
        c["voltage"] = labelled_slider("voltage", "supply voltage [V]", ini["voltage"], 0.2 * v_r, 1.2 * v_r)
        c["field_rheostat"] = labelled_slider("field_rheostat", "field rheostat [Ω]", ini["field_rheostat"], 0.0,
                                              1.5 * rf, tooltip="resistance added in the shunt or separate field")
        c["diverter_on"] = w.Checkbox(value=ini["diverter_on"], description="series-field diverter fitted",
                                      indent=False)
        c["diverter_on"].add_class("kit-diverter-on")
        c["diverter"] = labelled_slider("diverter", "series diverter [Ω]", ini["diverter"], 0.05 * rs, 10.0 * rs,
                                        tooltip="resistor across the series field (series and compound)")
        c["external_resistance"] = labelled_slider("external_resistance", "armature resistor [Ω]",
                                                   ini["external_resistance"], 0.0, max(20.0 * r_a, 1.0),
                                                   tooltip="resistance in series with the armature")
        c["series_share"] = labelled_slider("series_share", "compound series share [-]", ini["series_share"], 0.05,
                                            0.95, step=0.01,
                                            tooltip="series winding's share of the excitation at rated load")
        c["winding_temperature"] = labelled_slider("winding_temperature", "winding temperature [°C]",
                                                   ini["winding_temperature"], -20.0, 180.0, step=1.0)
        c["magnet_temperature"] = labelled_slider("magnet_temperature", "magnet temperature [°C]",
                                                  ini["magnet_temperature"], -20.0, 150.0, step=1.0)
        c["field_rheostat"].disabled = not fields
        c["diverter"].disabled = not series or not ini["diverter_on"]
        c["diverter_on"].disabled = not series
        c["series_share"].disabled = self._spec is None or not any(
            getattr(m, "kind", None) for m in self._base.values() if hasattr(m, "series_turns")
            and hasattr(m, "field_turns"))
        c["magnet_temperature"].disabled = not magnets
        self.controls = c
        for key, ctl in c.items():
            ctl.observe(self._on_control, names="value")
        self.reset_button = w.Button(description="reset to the scenario", icon="undo",
                                     layout=w.Layout(width="210px"),
                                     tooltip="reset every setting and tick box to the scenario's values")
        self.reset_button.add_class("kit-reset")
        self.reset_button.on_click(lambda _: self._guard("reset", self.reset))

        # load
        self.load_editor = LoadEditor(load, reference=reference, units=units)
        self.load_editor.on_change(lambda load, browser: self._coalescer.request(defer=browser))

        # chart
        self.view = w.Dropdown(options=VIEW_CHOICES, value=view, description="chart",
                               style={"description_width": "45px"}, layout=w.Layout(width="300px"))
        self.view.add_class("kit-view")
        self.units = w.ToggleButtons(options=[("SI", "si"), ("US customary", "us")], value=units,
                                     style={"button_width": "110px"})
        self.units.add_class("kit-units")
        self.canvas, figure = self._make_canvas()
        self.chart = LiveChart(figure, view=view, units=units)
        self.view.observe(lambda ch: self._guard("view", lambda: self._on_view(ch)), names="value")
        self.units.observe(lambda ch: self._guard("units", lambda: self._on_units(ch)), names="value")

        # panels
        self.results_panel = w.HTML("", layout=w.Layout(overflow="auto"))
        self.results_panel.add_class("kit-results")
        self.cautions_panel = w.HTML("")
        self.cautions_panel.add_class("kit-cautions")
        self.status_line = w.HTML("")
        self.status_line.add_class("kit-status")
        self.export_folder = w.Text(value=export_folder, description="folder",
                                    style={"description_width": "45px"}, layout=w.Layout(width="360px"))
        self.export_folder.add_class("kit-export-folder")
        self.export_button = w.Button(description="export chart and table", icon="download",
                                      layout=w.Layout(width="230px"),
                                      tooltip="PNG and SVG at 300 dpi, and the table as CSV, into the folder")
        self.export_button.add_class("kit-export")
        self.export_button.on_click(lambda _: self._guard("export", self.export))

        self.panels = {}
        self.panel_tabs = w.Tab(children=())
        self.panel_tabs.add_class("kit-panel-tabs")
        self.widget = self._layout()
        self.widget.add_class("kit-comparer")
        self._recompute()

    # ------------------------------------------------------------------ construction
    def _make_canvas(self):
        import matplotlib.pyplot as plt
        from ipympl.backend_nbagg import FigureManager
        from matplotlib.figure import Figure

        # Made without pyplot's figure registry (so nothing else displays it) and given an
        # ipympl canvas whatever backend the notebook uses.
        with plt.ioff(), warnings.catch_warnings():
            # ipympl's toolbar passes its canvas on to traitlets, which warns about it
            warnings.filterwarnings("ignore", "Passing unrecognized arguments", DeprecationWarning)
            fig = Figure(figsize=_FIGSIZE_IN, dpi=100)
            canvas = chart_canvas_class()(fig)
            FigureManager(canvas, 0)
        canvas.header_visible = False
        canvas.footer_visible = False
        canvas.toolbar_visible = False
        canvas.resizable = False
        canvas.add_class("kit-figure")
        return canvas, fig

    def _layout(self):
        head = w.HTML(f'<div style="font-size:17px;font-weight:bold;color:#16324f">'
                      f'{self.title or "Field connections compared on one load"}</div>'
                      '<div style="font-size:11px;color:#555">engineering estimates; see the cautions below</div>')
        c = self.controls
        left = w.VBox([
            _section("Connections"), self._candidate_box,
            _section("Settings"), c["voltage"], c["field_rheostat"], c["external_resistance"], c["diverter_on"],
            c["diverter"], c["series_share"], c["winding_temperature"], c["magnet_temperature"], self.reset_button,
            _section("Load"), self.load_editor.widget,
        ], layout=w.Layout(width="420px", padding="0 12px 0 0"))
        right = w.VBox([w.HBox([self.view, self.units]), self.canvas, self.status_line],
                       layout=w.Layout(width="690px"))
        bottom = w.VBox([
            _section("Operating points and figures"), self.results_panel,
            _section("Cautions"), self.cautions_panel,
            _section("Export"), w.HBox([self.export_folder, self.export_button]),
        ])
        return w.VBox([head, w.HBox([left, right]), bottom], layout=w.Layout(width="1120px"))

    @classmethod
    def from_scenario(cls, scenario, load_name=None, **kwargs) -> "Comparer":
        """A comparer on a scenario (see :mod:`dcchar.files.scenario`): its machines, one of its
        loads (default: the scenario's default load), that load's control settings, the caution
        thresholds, the display units and the title. Keywords go to :class:`Comparer`."""
        machines = scenario.machines()
        loads = dict(scenario.loads())
        if not loads:
            raise ParameterError("scenario.loads", loads, "a scenario with at least one load")
        name = load_name if load_name is not None else getattr(scenario, "default_load", None)
        if name is None:
            name = next(iter(loads))
        if name not in loads:
            raise ParameterError("load_name", name, f"one of {tuple(loads)}")
        if hasattr(scenario, "settings_for"):
            settings = scenario.settings_for(name)
        else:
            settings = scenario.settings() if callable(scenario.settings) else scenario.settings
        spec = getattr(scenario, "family_spec", None)
        spec = spec() if callable(spec) else spec
        if spec is not None:
            kwargs.setdefault("family_spec", spec)
        kwargs.setdefault("title", getattr(scenario, "title", "") or "")
        kwargs.setdefault("thresholds", getattr(scenario, "thresholds", None))
        kwargs.setdefault("units", getattr(scenario, "units", "si"))
        return cls(machines, loads[name], settings, **kwargs)

    # ------------------------------------------------------------------ state
    def machines(self) -> dict:
        """The candidate machines at the current series share (all of them, ticked or not)."""
        share = float(self.controls["series_share"].value)
        if self._spec is None or share == self._share0:
            return self._base
        key = round(share, 9)
        if key not in self._families:
            from ..studies.rating import equal_rating_family

            fam = equal_rating_family(**{**self._spec, "series_share": share})
            # candidates the family does not hold (added later) stay as they are
            self._families[key] = {k: fam.get(k, m) for k, m in self._base.items()}
        return self._families[key]

    def selected(self) -> dict:
        """The ticked candidates at the current series share."""
        return {k: m for k, m in self.machines().items() if self.candidates[k].value}

    def current_settings(self) -> ControlSettings:
        """The ControlSettings the sliders stand for now.

        A voltage or temperature slider that still shows its starting value stands for the
        scenario's own value (None: each machine's rated voltage or own temperature).
        """
        c, sc, ini = self.controls, self._scenario, self._initial

        def same_or(name, field):
            v = float(c[name].value)
            return None if (getattr(sc, field) is None and v == ini[name]) else v

        return ControlSettings(
            voltage=same_or("voltage", "voltage"),
            field_rheostat=float(c["field_rheostat"].value) if not c["field_rheostat"].disabled else 0.0,
            diverter_resistance=float(c["diverter"].value) if c["diverter_on"].value and not c["diverter_on"].disabled
            else math.inf,
            external_resistance=float(c["external_resistance"].value),
            winding_temperature=same_or("winding_temperature", "winding_temperature"),
            magnet_temperature=same_or("magnet_temperature", "magnet_temperature"),
        )

    @property
    def load(self):
        """The load in use (the load editor's last good load)."""
        return self.load_editor.load

    # ------------------------------------------------------------------ actions
    def reset(self):
        """Every slider, tick box and the diverter back to the scenario's values; one update."""
        with self._hold():
            for key, value in self._initial.items():
                self.controls[key].value = value
            for cb in self.candidates.values():
                cb.value = True
        self._coalescer.request()

    def add_candidate(self, machine, key=None) -> str:
        """Add a machine to the candidates (ticked) and compare again; returns its key (the
        connection name, numbered when taken, unless ``key`` is given)."""
        if not hasattr(machine, "characteristic"):
            raise ParameterError("machine", machine, "a machine of dcchar.models.connections")
        if key is None:
            key = _free_key(machine, self._base)
        elif key in self._base:
            raise ParameterError("key", key, f"a key not taken by {tuple(self._base)}")
        self._base = {**self._base, key: machine}
        self._families = {}
        self._styles = dict(zip(self._base, styles_for(list(self._base.values()))))
        row = self._candidate_row(key, machine, self._styles[key])
        self._candidate_box.children = tuple(self._candidate_box.children) + (row,)
        self._coalescer.request()
        return key

    def _candidate_row(self, key, machine, style):
        """Swatch and tick box of one candidate (kept in :attr:`candidates`)."""
        name = machine.name or ""
        text = machine.label + (f" ({name})" if name and machine.label not in name else "")
        cb = w.Checkbox(value=True, description=text, indent=False, layout=w.Layout(width="auto"))
        cb.add_class("kit-candidate")
        cb.add_class("kit-candidate-" + key.replace("_", "-"))
        cb.observe(self._on_control, names="value")
        self.candidates[key] = cb
        return w.HBox([w.HTML(swatch_html(style.color, style.linestyle), layout=w.Layout(width="30px")), cb],
                      layout=w.Layout(height="24px"))

    def attach(self, panel, title: str):
        """Host a panel (e.g. :class:`~dcchar.widgets.selection_panel.SelectionPanel`) in a tab
        under the comparer. After each comparison the comparer calls ``panel.update(machines,
        load, settings)`` with the ticked candidates, the load and the control settings, when the
        panel has an ``update``; a panel with an ``on_use`` attribute of None gets
        :meth:`add_candidate`. Returns the panel."""
        if title in self.panels:
            raise ParameterError("title", title, f"a title not taken by {tuple(self.panels)}")
        if hasattr(panel, "on_use") and panel.on_use is None:
            panel.on_use = self.add_candidate
            if hasattr(panel, "use_button") and getattr(panel, "machine", None) is not None:
                panel.use_button.disabled = False
        self.panels[title] = panel
        self.panel_tabs.children = tuple(self.panel_tabs.children) + (panel.widget,)
        self.panel_tabs.set_title(len(self.panels) - 1, title)
        if self.panel_tabs not in self.widget.children:
            head = _section("Choice of connection, machine data, start-up and duty")
            self.widget.children = tuple(self.widget.children) + (head, self.panel_tabs)
        if hasattr(panel, "update") and self.comparison is not None:
            self._guard(title, lambda: panel.update(self.selected(), self.load, self.current_settings()))
        return panel

    def add_panels(self, selection: bool = True, identification: bool = True, start: bool = True) -> dict:
        """Attach the choice-of-connection panel, the identification panel and the start-up and
        duty panel, started on the comparer's current candidates, load and settings. Returns
        :attr:`panels`."""
        if selection:
            from .selection_panel import SelectionPanel

            self.attach(SelectionPanel(self.selected(), self.load, self.current_settings()), "choice of connection")
        if identification:
            from .identification_panel import IdentificationPanel

            self.attach(IdentificationPanel(), "nameplate and tests")
        if start:
            from .start_panel import StartPanel

            folder = self.export_folder.value
            self.attach(StartPanel(self.selected(), self.load, self.current_settings(), export_folder=folder),
                        "start-up and duty")
        return self.panels

    #: Quiet time after the last browser change before the panels are brought up to date. [s]
    PANEL_DELAY = 0.3

    def _update_panels(self, machines, load, settings):
        """Bring the hosted panels up to date: at once for a change made from code, and for a
        change from the browser once the slider has been quiet for :attr:`PANEL_DELAY`, so that a
        drag redraws the chart and table without waiting for the panels' own studies."""
        if self._panel_handle is not None:
            self._panel_handle.cancel()
            self._panel_handle = None
        from_front, self._from_front = self._from_front, False
        loop = _running_loop() if (from_front and self.panels) else None
        if loop is None:
            self._run_panels(machines, load, settings)
        else:
            self._panel_handle = loop.call_later(self.PANEL_DELAY, self._run_panels, machines, load, settings)

    def _run_panels(self, machines, load, settings):
        self._panel_handle = None
        for title, panel in self.panels.items():
            if hasattr(panel, "update"):
                t0 = time.perf_counter()
                self._guard(title, lambda: panel.update(machines, load, settings))
                self.timings[f"panel {title}"] = time.perf_counter() - t0

    def refresh(self):
        """Compare again now (also runs any update still waiting for its quiet time)."""
        self._coalescer.request()

    def export(self, folder=None) -> list:
        """Write the current chart (PNG and SVG at 300 dpi, one page column wide, with a title
        block) and the results table (CSV) into ``folder`` (default: the folder box), created if
        missing. Returns the paths written and reports them in the status line."""
        from ..charts.curves import draw_view
        from ..charts.export import export_figure
        from ..charts.style import title_block
        from ..files.tables import write_table_csv

        comp = self.comparison
        if comp is None:
            raise ParameterError("comparison", None, "a comparison to export (the first update failed)")
        text = self.export_folder.value if folder is None else folder
        if not str(text).strip():
            raise ParameterError("export folder", text, "a folder name")
        out = Path(str(text)).expanduser()
        out.mkdir(parents=True, exist_ok=True)
        view, units = self.chart.view, self.units.value
        stem = (_slug(self.title) + "-" if self.title and _slug(self.title) else "") + view
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)  # a table load asked beyond its range
            chars, ops, _ = self.chart_data(comp)
            art = draw_view(view, chars, comp.load, ops, units=units)
        title_block(art["figure"], self.title or "Field connections compared", self._scenario_line(comp))
        written = list(export_figure(art["figure"], out / stem, formats=("png", "svg"), dpi=300)[0])
        written.append(Path(write_table_csv(comp, out / f"{stem}-table.csv", units=units)))
        self.status_line.value = status_html("wrote " + ", ".join(p.name for p in written) + f" to {out}")
        return written

    # ------------------------------------------------------------------ callbacks
    def _on_control(self, change):
        if change["owner"] is self.controls["diverter_on"]:
            self.controls["diverter"].disabled = not change["new"] or self.controls["diverter_on"].disabled
        if self._held:
            return
        self._from_front = from_front_end(change)
        self._coalescer.request(defer=self._from_front)

    def _on_view(self, change):
        self.chart.set_view(change["new"])

    def _on_units(self, change):
        units = change["new"]
        self.load_editor.set_units(units)
        self.chart.set_units(units)
        if self.comparison is not None:
            self.results_panel.value = results_html(self.comparison, units, self._styles_now(self.comparison))

    @contextlib.contextmanager
    def _hold(self):
        self._held = True
        try:
            yield
        finally:
            self._held = False

    def _guard(self, what, fn):
        try:
            return fn()
        except Exception as exc:
            self._report(exc, what)

    def _report(self, exc, what="update"):
        self.last_error = exc
        self.status_line.value = error_html(f"{what} failed; the last good results stay on screen", exc)

    def _styles_now(self, comp):
        return dict(zip(comp.candidates, styles_for([c.machine for c in comp.candidates.values()])))

    def _scenario_line(self, comp) -> str:
        volts = sorted({c.voltage for c in comp.candidates.values()})
        v = f"{volts[0]:g} V" if len(volts) == 1 else f"{volts[0]:g}-{volts[-1]:g} V"
        kind = getattr(comp.load, "kind", "load")
        return f"{kind} load, {v} supply"

    def _recompute(self):
        t0 = time.perf_counter()
        machines = self.selected()
        if not machines:
            self.status_line.value = status_html("tick at least one connection to compare")
            return
        settings = self.current_settings()
        load = self.load_editor.load
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            comp = compare(machines, load, settings, thresholds=self.thresholds)
            t1 = time.perf_counter()
            chars, ops, hidden = self.chart_data(comp)
            # a new kind of load or another set of connections: fit the axes to it (a slider
            # only ever grows them, so that dragging never makes the chart jump)
            signature = (type(load), tuple(machines))
            refit = self._chart_signature is not None and signature != self._chart_signature
            self._chart_signature = signature
            self.chart.update(chars, load=comp.load, operating=ops, refit=refit)
        t2 = time.perf_counter()
        self.comparison = comp
        self.last_error = None
        units = self.units.value
        self.results_panel.value = results_html(comp, units, self._styles_now(comp))
        self.cautions_panel.value = cautions_html(comp)
        t3 = time.perf_counter()
        self.timings = {"compare": t1 - t0, "chart": t2 - t1, "panels": t3 - t2, "total": t3 - t0}
        notes = sorted({str(m.message) for m in caught})
        text = (f"{len(machines)} connection{'s' if len(machines) != 1 else ''} on {getattr(load, 'kind', 'load')}"
                f" load; updated in {1e3 * (t3 - t0):.0f} ms")
        if hidden:
            text += " — beyond the drawn range, not marked: " + ", ".join(hidden)
        if notes:
            text += " — note: " + "; ".join(notes)
        self.status_line.value = status_html(text)
        self._update_panels(machines, load, settings)

    # ------------------------------------------------------------------ chart data
    def chart_data(self, comparison):
        """(characteristics, operating results, hidden) as drawn: each candidate's characteristic
        over its working range (:meth:`Candidate.working_characteristic`), its operating points
        within that range, and a list naming the points left out."""
        import dataclasses

        chars, ops, hidden = [], [], []
        for cand in comparison.candidates.values():
            c = cand.working_characteristic()
            chars.append(c)
            lo, hi = c.armature_current[0], c.armature_current[-1]
            op = cand.operating
            keep = tuple(p for p in op.points if lo <= p.armature_current <= hi)
            for p in op.points:
                if p not in keep:
                    hidden.append(f"{cand.machine.label} {p.speed_rpm:.0f} r/min")
            ops.append(op if len(keep) == len(op.points) else dataclasses.replace(op, points=keep))
        return chars, ops, hidden

    # ------------------------------------------------------------------ display
    def _repr_mimebundle_(self, **kwargs):
        return self.widget._repr_mimebundle_(**kwargs)
