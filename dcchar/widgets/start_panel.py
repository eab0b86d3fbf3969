"""The start-up and duty panel: each connection started through a stepped starter, and its duty cycle.

Every number comes from the studies: the starter steps from
:func:`dcchar.studies.starter_steps.starter_steps`, the start from
:func:`dcchar.studies.transients.simulate_start`, the cycle from
:func:`dcchar.studies.duty_machine.duty_summary` (rms current and torque, energy drawn and
returned, IEC 60034-1 duty type with its cyclic duration factor). The chart is
:func:`dcchar.charts.transient.transient_chart`, exported with
:func:`dcchar.charts.export.save_figure`.

A start takes a tenth of a second or so per connection, too slow to follow a dragged slider: the
comparer's updates mark the results out of date and the button runs them again.
"""

from __future__ import annotations

import html
import math
import time
from pathlib import Path

import ipywidgets as w

from ..errors import ParameterError
from ..studies.comparison import apply_settings
from .panels import error_html, panel_inputs, status_html
from .selection_panel import figure_png

__all__ = ["StartPanel"]

_CSS = """
<style>
.kit-start table, .kit-duty table { border-collapse: collapse; font-size: 12px;
  font-family: 'DejaVu Sans', sans-serif; }
.kit-start th, .kit-start td, .kit-duty th, .kit-duty td { border-bottom: 1px solid #dde3ea; padding: 2px 8px;
  text-align: right; white-space: nowrap; }
.kit-start th, .kit-duty th { background: #eef2f6; }
.kit-start td.kit-note, .kit-duty td.kit-note { text-align: left; white-space: normal; max-width: 380px;
  font-size: 11px; }
</style>
"""

_CAUTION = ("Starting currents and torques are estimates: size the starter, its resistors and the protection "
            "to the maker's data, and follow local codes and licensed practice. A hoist needs a mechanical "
            "holding brake.")


def _f(v, fmt=".4g") -> str:
    v = float(v)
    return "none" if math.isnan(v) else format(v, fmt)


class StartPanel:
    """Start each candidate through a stepped starter, then run a repeating duty cycle.

    Parameters
    ----------
    machines : mapping of key -> Machine, optional (default: the invented demo family)
    load : load object, optional (default: the load editor's invented hoist)
    settings : ControlSettings, optional
    sections : int, default 4
        Starter sections (studs less one).
    limit : float, default 2.0
        Peak armature current on every stud, as a multiple of the rated current (common
        practice, no source). [-]
    run_time, rest_time : float, default 20, 40
        Running and resting time of one cycle after the start. [s]

    Attributes
    ----------
    widget : ipywidgets.VBox (class ``kit-start-panel``)
    start_table : HTML (class ``kit-start``); duty_table : HTML (class ``kit-duty``)
    transients : dict key -> Transient; duties : dict key -> MachineDuty; starters : key -> StarterDesign
    image : Image of the transient chart; figure : its matplotlib figure; chart : the artists of
        :func:`~dcchar.charts.transient.transient_chart`
    run_button, export_button, export_folder, error_line, status_line
    """

    def __init__(self, machines=None, load=None, settings=None, *, sections: int = 4, limit: float = 2.0,
                 run_time: float = 20.0, rest_time: float = 40.0, export_folder: str = "dcchar-export"):
        self.machines, self.load, self.settings = panel_inputs(machines, load, settings)
        self.transients, self.duties, self.starters = {}, {}, {}
        self.figure = self.chart = None
        self.last_error = None
        self.stale = True
        st = {"description_width": "170px"}
        lay = w.Layout(width="290px")
        self.sections = w.BoundedIntText(value=sections, min=1, max=12, description="starter sections",
                                         style=st, layout=lay)
        self.limit = w.BoundedFloatText(value=limit, min=1.05, max=10.0, step=0.1,
                                        description="peak current [× rated]", style=st, layout=lay)
        self.brake = w.Checkbox(value=getattr(self.load, "kind", "") == "hoist", indent=False,
                                description="holding brake until the motor takes the load")
        self.run_time = w.BoundedFloatText(value=run_time, min=0.0, max=1e5, description="running time [s]",
                                           style=st, layout=lay)
        self.rest_time = w.BoundedFloatText(value=rest_time, min=0.0, max=1e5, description="rest time [s]",
                                            style=st, layout=lay)
        for name in ("sections", "limit", "brake", "run_time", "rest_time"):
            getattr(self, name).add_class("kit-start-" + name.replace("_", "-"))
        self.run_button = w.Button(description="simulate the starts", icon="play", layout=w.Layout(width="200px"))
        self.run_button.add_class("kit-start-run")
        self.run_button.on_click(lambda _: self.run())
        self.export_folder = w.Text(value=export_folder, description="folder", style={"description_width": "45px"},
                                    layout=w.Layout(width="320px"))
        self.export_button = w.Button(description="export the chart", icon="download", layout=w.Layout(width="170px"),
                                      tooltip="PNG and SVG at 300 dpi into the folder")
        self.export_button.add_class("kit-start-export")
        self.export_button.on_click(lambda _: self._guard("export", self.export))
        self.error_line = w.HTML("")
        self.error_line.add_class("kit-start-error")
        self.status_line = w.HTML("")
        self.start_table = w.HTML("", layout=w.Layout(overflow="auto"))
        self.start_table.add_class("kit-start")
        self.duty_table = w.HTML("", layout=w.Layout(overflow="auto"))
        self.duty_table.add_class("kit-duty")
        self.image = w.Image(format="png", layout=w.Layout(max_width="900px"))
        self.image.add_class("kit-start-figure")
        self.widget = w.VBox([
            w.HBox([w.VBox([self.sections, self.limit, self.brake]), w.VBox([self.run_time, self.rest_time])]),
            w.HBox([self.run_button, self.export_folder, self.export_button]),
            self.error_line, self.status_line,
            w.HTML(f'<div style="font-size:11px;color:#6b3b00">{html.escape(_CAUTION)}</div>'),
            w.HTML("<b>Starts</b> (each connection from rest through its starter)"), self.start_table, self.image,
            w.HTML("<b>Duty cycle</b> (start, run on the load, rest; repeating)"), self.duty_table,
        ])
        self.widget.add_class("kit-start-panel")

    # ------------------------------------------------------------------ studies
    def starter_for(self, machine):
        """The stepped starter of one machine: peak ``limit`` x rated current on every stud (see
        :func:`dcchar.studies.series_starter.stepped_starter`)."""
        from ..studies.series_starter import stepped_starter

        if machine.rating is None:
            raise ParameterError("machine.rating", None, f"a rating for {machine.label} (the starter is set from it)")
        return stepped_starter(machine, float(self.limit.value) * machine.rating.current,
                               sections=int(self.sections.value), voltage=self.settings.voltage)

    def compute(self):
        """(starters, transients, duties), key -> result, for the current machines and inputs."""
        from ..studies.duty_machine import MachineSegment, duty_summary
        from ..studies.transients import simulate_start

        if not self.machines:
            raise ParameterError("machines", {}, "at least one candidate ticked")
        starters, transients, duties = {}, {}, {}
        for key, m0 in self.machines.items():
            m = apply_settings(m0, self.settings)
            design = self.starter_for(m)
            voltage = m.default_voltage() if self.settings.voltage is None else self.settings.voltage
            tr = simulate_start(m, self.load, voltage, starter=design if design.needed else None,
                                holding_brake=bool(self.brake.value))
            segments = [MachineSegment(kind="start", transient=tr, label="start")]
            if float(self.run_time.value) > 0:
                segments.append(MachineSegment(duration=float(self.run_time.value), load=self.load, kind="run",
                                               label="run"))
            if float(self.rest_time.value) > 0:
                segments.append(MachineSegment(duration=float(self.rest_time.value), kind="rest", label="rest"))
            starters[key], transients[key] = design, tr
            duties[key] = duty_summary(m, segments, voltage=voltage)
        return starters, transients, duties

    def run(self):
        """Simulate; on error show it under the inputs and keep the last good results."""
        from ..charts.transient import transient_chart

        t0 = time.perf_counter()
        try:
            starters, transients, duties = self.compute()
            art = transient_chart(transients, self.machines)
            start_table = self.start_html(self.machines, starters, transients)
            duty_table = self.duty_html(self.machines, duties)
        except Exception as exc:
            self.last_error = exc
            self.error_line.value = error_html("not simulated; the last good results stay", exc)
            return self.transients
        self.starters, self.transients, self.duties = starters, transients, duties
        self.chart, self.figure = art, art["figure"]
        self.image.value = figure_png(self.figure, dpi=130)
        self.start_table.value = start_table
        self.duty_table.value = duty_table
        self.last_error = None
        self.stale = False
        self.error_line.value = ""
        self.status_line.value = status_html(f"{len(transients)} starts simulated in {time.perf_counter() - t0:.1f} s")
        return transients

    def update(self, machines=None, load=None, settings=None):
        """New candidates, load or settings from the comparer: the results are marked out of date
        (press the button to simulate again)."""
        if machines is not None:
            self.machines = dict(machines)
        if load is not None:
            if getattr(load, "kind", "") != getattr(self.load, "kind", ""):  # a new kind of load: its default
                self.brake.value = getattr(load, "kind", "") == "hoist"
            self.load = load
        if settings is not None:
            self.settings = settings
        self.stale = True
        if self.transients:
            self.status_line.value = status_html("the settings changed: simulate again to update the starts")

    def export(self, folder=None) -> list:
        """Write the transient chart as PNG and SVG (300 dpi) into ``folder`` (default: the box)."""
        from ..charts.export import save_figure

        if self.figure is None:
            raise ParameterError("figure", None, "a simulated start to export (press simulate first)")
        out = Path(str(self.export_folder.value if folder is None else folder)).expanduser()
        out.mkdir(parents=True, exist_ok=True)
        written = list(save_figure(self.figure, out / "start-transients", formats=("png", "svg"), dpi=300))
        self.status_line.value = status_html("wrote " + ", ".join(p.name for p in written) + f" to {out}")
        return written

    def _guard(self, what, fn):
        try:
            return fn()
        except Exception as exc:
            self.last_error = exc
            self.error_line.value = error_html(f"{what} failed", exc)

    # ------------------------------------------------------------------ HTML
    @staticmethod
    def start_html(machines, starters, transients) -> str:
        e = html.escape
        rows = []
        for key, tr in transients.items():
            d = starters[key]
            studs = ", ".join(_f(x, ".0f") for x in tr.stud_peak_currents)
            cuts = ", ".join(_f(x, ".2f") for x in tr.switch_times)
            note = tr.reason if not tr.completed else "; ".join(tr.notes)
            rows.append(f'<tr data-key="{e(key)}"><td style="text-align:left">{e(machines[key].label)}</td>'
                        f'<td data-col="peak_current">{_f(tr.peak_current)}</td><td>{e(studs)}</td>'
                        f'<td>{e(cuts)}</td><td>{_f(tr.time_to_95, ".3g")}</td>'
                        f'<td>{_f(tr.peak_torque)}</td><td>{"yes" if tr.completed else "no"}</td>'
                        f'<td>{d.sections if d.needed else "none needed"}</td>'
                        f'<td class="kit-note">{e(note)}</td></tr>')
        return (f"{_CSS}<div style='line-height:1.3'><table><thead><tr><th>connection</th><th>peak current [A]</th>"
                "<th>peak on each stud [A]</th><th>sections cut out at [s]</th><th>to 95 % speed [s]</th>"
                "<th>peak torque [N·m]</th><th>completed</th><th>sections</th><th>notes</th></tr></thead>"
                f"<tbody>{''.join(rows)}</tbody></table></div>")

    @staticmethod
    def duty_html(machines, duties) -> str:
        e = html.escape
        rows = []
        for key, d in duties.items():
            notes = "; ".join(list(d.reasons) + list(d.notes))
            rows.append(f'<tr data-key="{e(key)}"><td style="text-align:left">{e(machines[key].label)}</td>'
                        f'<td data-col="rms_current">{_f(d.rms_current)}</td>'
                        f'<td data-col="rms_torque">{_f(d.rms_torque)}</td>'
                        f'<td>{_f(d.rated_current_ratio, ".3g")}</td>'
                        f'<td data-col="energy_drawn">{_f(d.energy_drawn / 1e3)}</td>'
                        f'<td data-col="energy_returned">{_f(d.energy_returned / 1e3)}</td>'
                        f'<td data-col="duty">{e(d.duty.designation)}</td>'
                        f'<td data-col="cdf">{_f(100 * d.duty.cdf, ".3g")}</td>'
                        f'<td>{"yes" if d.within_rating else "no"}</td><td class="kit-note">{e(notes)}</td></tr>')
        return (f"{_CSS}<div style='line-height:1.3'><table><thead><tr><th>connection</th><th>rms current [A]</th>"
                "<th>rms torque [N·m]</th><th>rms / rated current</th><th>energy drawn [kJ]</th>"
                "<th>energy returned [kJ]</th><th>duty type</th><th>CDF [%]</th><th>within rating</th>"
                f"<th>notes</th></tr></thead><tbody>{''.join(rows)}</tbody></table></div>")

    def _repr_mimebundle_(self, **kwargs):
        return self.widget._repr_mimebundle_(**kwargs)
