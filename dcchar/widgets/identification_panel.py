"""The identification panel: a machine from its nameplate, refined by test readings, sent to the comparer.

Every number comes from the identification studies:
:func:`~dcchar.studies.identification.estimate_from_nameplate` (with its assumptions and the
ranges they imply), :func:`~dcchar.studies.identification.magnetization_test` (the Froehlich fit
of pasted open-circuit points) and :func:`~dcchar.studies.identification.swinburne_test` (the
constant loss of a no-load run). The chart is
:func:`dcchar.charts.identification.magnetization_fit_chart`. The panel parses the text boxes,
shows the results and keeps the last good machine when an input is wrong (the error shows under
the inputs, class ``kit-identify-error``).

Tests on live machines involve dangerous voltages and rotating parts; a shunt or series motor run
light with a weak or open field can run away. Follow the maker's instructions, local codes and
licensed practice.
"""

from __future__ import annotations

import html
import re

import ipywidgets as w
import numpy as np

from ..errors import ParameterError
from ..models.connections import CONNECTION_LABELS
from ..models.units import RPM
from .panels import error_html, status_html
from .selection_panel import figure_png

__all__ = ["IdentificationPanel", "parse_two_columns"]

_CSS = """
<style>
.kit-identify-table table { border-collapse: collapse; font-size: 12px; font-family: 'DejaVu Sans', sans-serif; }
.kit-identify-table th, .kit-identify-table td { border-bottom: 1px solid #dde3ea; padding: 2px 7px;
  text-align: right; white-space: nowrap; }
.kit-identify-table td.kit-basis { text-align: left; white-space: normal; max-width: 360px; font-size: 11px;
  color: #444; }
.kit-identify-table th { background: #eef2f6; }
.kit-identify-table td.kit-name { text-align: left; }
</style>
"""

_CAUTION = ("Tests on live machines involve dangerous voltages and rotating parts; a shunt or series motor run "
            "light with a weak or open field can run away. Follow the maker's instructions, local codes and "
            "licensed practice.")


def parse_two_columns(text: str, field: str = "points"):
    """Two columns of numbers pasted as text (spaces, tabs, commas or semicolons between them; a
    header line of words is skipped; blank lines and lines starting with # are ignored).

    Returns
    -------
    (ndarray, ndarray)

    Raises
    ------
    ParameterError
        A line that does not hold exactly two numbers (names the line).
    """
    xs, ys = [], []
    for n, raw in enumerate(str(text).splitlines(), start=1):
        line = raw.strip()
        if not line or line.startswith("#"):
            continue
        parts = [p for p in re.split(r"[\s,;]+", line) if p]
        try:
            nums = [float(p) for p in parts]
        except ValueError:
            if not xs and not any(_is_number(p) for p in parts):
                continue  # a header line
            raise ParameterError(f"{field} line {n}", raw, "two numbers: field current [A] and EMF [V]") from None
        if len(nums) != 2:
            raise ParameterError(f"{field} line {n}", raw, "two numbers: field current [A] and EMF [V]")
        xs.append(nums[0])
        ys.append(nums[1])
    return np.asarray(xs, dtype=float), np.asarray(ys, dtype=float)


def _is_number(text: str) -> bool:
    try:
        float(text)
    except ValueError:
        return False
    return True


def _fmt(v) -> str:
    if isinstance(v, str):
        return v
    v = float(v)
    return f"{v:.4g}"


class IdentificationPanel:
    """Nameplate and test readings in, an estimated (and fitted) machine out.

    Parameters
    ----------
    on_use : callable, optional
        Called with ``(machine)`` when "use in the comparer" is pressed (the comparer sets this
        when it hosts the panel, see :meth:`dcchar.widgets.comparer.Comparer.attach`).
    voltage, current, speed_rpm, output_kw, connection : starting nameplate figures
        (invented demo values by default).

    Attributes
    ----------
    widget : ipywidgets.VBox (class ``kit-identify``)
    inputs : dict of the input widgets: voltage, current, speed, output, output_unit, connection,
        name, points (Textarea), test_speed, no_load_current, hot_armature_resistance,
        test_field_current
    estimate : NameplateEstimate or None (last good)
    magnetization : MagnetizationTestResult or None (last good, with the estimate)
    swinburne : SwinburneResult or None
    machine : the last good machine (the estimate with the fitted curve and Swinburne's loss)
    table : HTML (class ``kit-identify-table``); error_line : HTML (class ``kit-identify-error``)
    image : Image of the fitted curve; estimate_button, use_button
    """

    def __init__(self, on_use=None, *, voltage=220.0, current=40.0, speed_rpm=1500.0, output_kw=7.5,
                 connection="shunt"):
        self.on_use = on_use
        self.estimate = None
        self.magnetization = None
        self.swinburne = None
        self.machine = None
        self.figure = None
        self.last_error = None
        self.used = []
        st = {"description_width": "150px"}
        lay = w.Layout(width="280px")
        i = {}
        i["voltage"] = w.FloatText(value=voltage, description="rated voltage [V]", style=st, layout=lay)
        i["current"] = w.FloatText(value=current, description="rated current [A]", style=st, layout=lay,
                                   tooltip="line current for shunt and compound machines")
        i["speed"] = w.FloatText(value=speed_rpm, description="rated speed [r/min]", style=st, layout=lay)
        i["output"] = w.FloatText(value=output_kw, description="rated output", style=st, layout=lay)
        i["output_unit"] = w.Dropdown(options=[("kW", "kW"), ("hp (550 ft·lbf/s)", "hp")], value="kW",
                                      layout=w.Layout(width="150px"))
        i["connection"] = w.Dropdown(options=[(v, k) for k, v in CONNECTION_LABELS.items()], value=connection,
                                     description="connection", style=st, layout=w.Layout(width="360px"))
        i["name"] = w.Text(value="", description="name", placeholder="optional", style=st, layout=lay)
        i["points"] = w.Textarea(value="", placeholder="field current [A]   EMF [V]\n0.2   62\n0.4   118\n...",
                                 description="magnetization points", style=st,
                                 layout=w.Layout(width="420px", height="120px"))
        i["test_speed"] = w.FloatText(value=speed_rpm, description="test speed [r/min]", style=st, layout=lay)
        i["no_load_current"] = w.FloatText(value=0.0, description="no-load current [A]", style=st, layout=lay,
                                           tooltip="Swinburne's test at rated voltage (0: no test)")
        i["hot_armature_resistance"] = w.FloatText(value=0.0, description="hot armature resistance [Ω]", style=st,
                                                   layout=lay)
        i["test_field_current"] = w.FloatText(value=0.0, description="field current read [A]", style=st,
                                              layout=lay)
        for k, box in i.items():
            box.add_class("kit-identify-" + k.replace("_", "-"))
        self.inputs = i
        self.estimate_button = w.Button(description="estimate and fit", icon="calculator",
                                        layout=w.Layout(width="180px"))
        self.estimate_button.add_class("kit-identify-run")
        self.estimate_button.on_click(lambda _: self.run())
        self.use_button = w.Button(description="use in the comparer", icon="plus", disabled=True,
                                   layout=w.Layout(width="180px"),
                                   tooltip="add the estimated machine to the comparer's candidates")
        self.use_button.add_class("kit-identify-use")
        self.use_button.on_click(lambda _: self._use_guarded())
        self.error_line = w.HTML("")
        self.error_line.add_class("kit-identify-error")
        self.status_line = w.HTML("")
        self.table = w.HTML("", layout=w.Layout(overflow="auto"))
        self.table.add_class("kit-identify-table")
        self.image = w.Image(format="png", layout=w.Layout(max_width="520px"))
        self.image.add_class("kit-identify-figure")

        head = lambda t: w.HTML(f"<b>{t}</b>")  # noqa: E731
        self.widget = w.VBox([
            head("Nameplate"),
            w.HBox([w.VBox([i["voltage"], i["current"], i["speed"], w.HBox([i["output"], i["output_unit"]])]),
                    w.VBox([i["connection"], i["name"]])]),
            head("Magnetization test (optional): two columns pasted"),
            w.HBox([i["points"], i["test_speed"]]),
            head("Swinburne's no-load test (optional; shunt or separately excited)"),
            w.HBox([i["no_load_current"], i["hot_armature_resistance"], i["test_field_current"]]),
            w.HBox([self.estimate_button, self.use_button]),
            self.error_line,
            w.HTML(f'<div style="font-size:11px;color:#6b3b00">{html.escape(_CAUTION)}</div>'),
            head("Estimate, assumptions and ranges"), self.table, self.image, self.status_line,
        ])
        self.widget.add_class("kit-identify")
        self.run()

    # ------------------------------------------------------------------ computing
    def compute(self):
        """Run the studies on the inputs; returns (estimate, magnetization result or None,
        Swinburne result or None, machine). Raises on bad input."""
        from ..studies.identification import (estimate_from_nameplate, magnetization_test, output_from_hp,
                                              swinburne_test)

        i = self.inputs
        out = float(i["output"].value)
        if i["output_unit"].value == "hp":
            output = output_from_hp(out)
        else:
            if not out > 0:
                raise ParameterError("output", out, "a rated output > 0 kW")
            output = 1e3 * out
        conn = i["connection"].value
        est = estimate_from_nameplate(float(i["voltage"].value), float(i["current"].value),
                                      float(i["speed"].value) * RPM, output, conn, name=i["name"].value.strip())
        machine = est.machine
        mt = None
        if i["points"].value.strip():
            if conn == "permanent_magnet":
                raise ParameterError("magnetization points", "(pasted)", "none for a permanent-magnet machine "
                                                                         "(it has no field winding to test)")
            If, E = parse_two_columns(i["points"].value, "magnetization points")
            turns = getattr(machine, "field_turns", None) or getattr(machine, "series_turns", 1.0)
            mt = magnetization_test(If, E, float(i["test_speed"].value) * RPM, field_turns=turns, machine=machine)
            machine = mt.machine
        sw = None
        if float(i["no_load_current"].value) != 0.0:
            if conn not in ("shunt", "separately_excited"):
                raise ParameterError("connection", conn, "shunt or separately excited for Swinburne's test")
            f_i = float(i["test_field_current"].value)
            sw = swinburne_test(float(i["voltage"].value), float(i["no_load_current"].value),
                                armature_resistance=float(i["hot_armature_resistance"].value),
                                field_current=f_i if f_i != 0.0 else None,
                                field_resistance=None if f_i != 0.0 else getattr(machine, "field_resistance", None),
                                connection=conn, speed=float(i["speed"].value) * RPM)
            machine = machine.with_(rotational_loss=sw.machine.rotational_loss)
        return est, mt, sw, machine

    def run(self):
        """Estimate (and fit) from the inputs; on error show it and keep the last good results."""
        try:
            est, mt, sw, machine = self.compute()
        except Exception as exc:
            self.last_error = exc
            self.error_line.value = error_html("not estimated; the last good machine stays", exc)
            return self.machine
        self.estimate, self.magnetization, self.swinburne, self.machine = est, mt, sw, machine
        self.last_error = None
        self.error_line.value = ""
        self.table.value = self.table_html(est, mt, sw)
        if mt is not None:
            from ..charts.identification import magnetization_fit_chart

            turns = getattr(est.machine, "field_turns", None) or getattr(est.machine, "series_turns", 1.0)
            art = magnetization_fit_chart(mt, field_turns=turns)
            self.figure = art["figure"]
            self.image.value = figure_png(self.figure, dpi=130)
            self.image.layout.display = None
        else:
            self.figure = None
            self.image.value = b""
            self.image.layout.display = "none"
        self.use_button.disabled = self.on_use is None
        self.status_line.value = status_html(f"{machine.label} estimated"
                                             + (", magnetization fitted" if mt is not None else "")
                                             + (", Swinburne's constant loss applied" if sw is not None else ""))
        return machine

    def use(self):
        """Send the last good machine to ``on_use`` (the comparer adds it as a candidate)."""
        if self.machine is None:
            raise ParameterError("machine", None, "an estimated machine (fix the inputs first)")
        if self.on_use is None:
            raise ParameterError("on_use", None, "a comparer to send the machine to")
        key = self.on_use(self.machine)
        self.used.append(key)
        self.status_line.value = status_html(f"added to the comparer as {key}")
        return key

    def _use_guarded(self):
        try:
            self.use()
        except Exception as exc:
            self.last_error = exc
            self.error_line.value = error_html("not added to the comparer", exc)

    # ------------------------------------------------------------------ HTML
    @staticmethod
    def table_html(est, mt=None, sw=None) -> str:
        """Rows of the estimate (assumptions then estimated quantities, value, unit, range and
        basis), then the fitted magnetization parameters and Swinburne's figures when present."""
        e = html.escape
        rows = []
        for r in est.to_rows():
            rows.append((r["kind"], r["name"], _fmt(r["value"]), r["unit"], _fmt(r["low"]), _fmt(r["high"]),
                         r["basis"]))
        if mt is not None:
            for k, v in mt.parameters.items():
                se = mt.standard_errors.get(k, float("nan"))
                unit = "V" if k != "b" else "A-turns"
                rows.append(("fit", f"Froehlich {k}", _fmt(v), unit, _fmt(v - se), _fmt(v + se),
                             "least-squares fit of the pasted points (range: one standard error)"))
        if sw is not None:
            for k, unit in (("constant_loss", "W"), ("rotational_loss", "W"), ("field_copper", "W"),
                            ("no_load_armature_current", "A"), ("no_load_emf", "V")):
                v = float(getattr(sw, k))
                se = sw.standard_errors.get(k, 0.0) if hasattr(sw, "standard_errors") else 0.0
                rows.append(("Swinburne", k, _fmt(v), unit, _fmt(v - se), _fmt(v + se),
                             "from the no-load run; the rotational loss replaces the estimate's"))
        body = "".join(
            f'<tr data-kind="{e(k)}" data-name="{e(n)}"><td class="kit-name">{e(k)}</td>'
            f'<td class="kit-name">{e(n.replace("_", " "))}</td><td data-col="value">{e(v)}</td>'
            f'<td>{e(u)}</td><td>{e(lo)}</td><td>{e(hi)}</td>'
            f'<td class="kit-basis">{e(b)}</td></tr>' for k, n, v, u, lo, hi, b in rows)
        return (f"{_CSS}<div style='line-height:1.3'><table><thead><tr><th>kind</th><th>quantity</th><th>value</th>"
                f"<th>unit</th><th>low</th>"
                f"<th>high</th><th>basis</th></tr></thead><tbody>{body}</tbody></table></div>")

    def _repr_mimebundle_(self, **kwargs):
        return self.widget._repr_mimebundle_(**kwargs)
