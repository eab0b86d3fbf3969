"""The load editor: pick a kind of driven machine, type its parameters, or bring a formula or a table.

Every load is built by the classes of :mod:`dcchar.models.loads` from the values typed; the
editor only converts the display units of the boxes to SI. A value those classes refuse, a
formula the parser refuses, or a CSV table that cannot be read leaves the last good load in
place and shows the message (for a formula, with the pointer to the offending character) under
the box that caused it.
"""

from __future__ import annotations

import dataclasses
import html
import os
import tempfile

import ipywidgets as w

from ..errors import DcCharError
from ..models import units as U
from ..models.loads import (ConstantPower, ConstantTorque, Conveyor, Fan, FormulaLoad, Gearing, Hoist,
                            LoweringHoist, Pump, TableLoad)
from .controls import from_front_end

__all__ = ["LoadEditor", "LOAD_KINDS"]

#: Kinds of load the editor builds: key -> label in the menu.
LOAD_KINDS = {
    "hoist": "hoist",
    "fan": "fan",
    "pump": "pump",
    "conveyor": "conveyor",
    "constant_torque": "constant torque",
    "constant_power": "constant power",
    "formula": "formula",
    "table": "table from a CSV file",
    "given": "as given",
}

_WIDTH = "150px"


# field, label, quantity (for display units)
_PARAMS = {
    "hoist": (("load_mass", "payload", "mass"), ("hook_mass", "hook block", "mass"),
              ("rope_mass", "hanging rope", "mass"), ("drum_diameter", "drum diameter", "length"),
              ("reeving", "parts of line", None), ("gear_ratio", "gear ratio, motor/drum", None),
              ("gear_efficiency", "gear efficiency", None)),
    "fan": (("rated_speed", "duty speed", "speed"), ("rated_torque", "duty torque", "torque"),
            ("static_torque", "torque at rest", "torque")),
    "pump": (("rated_speed", "duty speed", "speed"), ("rated_torque", "duty torque", "torque"),
             ("static_torque", "static-head torque", "torque")),
    "conveyor": (("friction_pull", "friction pull", "force"), ("lift_pull", "lift pull", "force"),
                 ("pulley_diameter", "pulley diameter", "length"), ("moving_mass", "moving mass", "mass"),
                 ("gear_ratio", "gear ratio, motor/pulley", None), ("gear_efficiency", "gear efficiency", None)),
    "constant_torque": (("load_torque", "torque", "torque"),),
    "constant_power": (("power", "power", "power"), ("min_speed", "constant torque below", "speed")),
}

_CLASSES = {"hoist": Hoist, "fan": Fan, "pump": Pump, "conveyor": Conveyor, "constant_torque": ConstantTorque,
            "constant_power": ConstantPower}


def _unit_table(units: str) -> dict:
    t = U.display_units(units)
    force = ("lbf", U.LBF) if units == "us" else ("N", 1.0)
    return {**t, "force": force}


def _defaults(reference) -> dict:
    """Default loads of each kind; the motor-shaft ones sized from ``reference`` (speed, torque)."""
    w_r, t_r = reference if reference else (1150.0 * U.RPM, 90.0)
    return {
        # an invented 1.5 t hoist: 2 parts of line on a 0.4 m drum behind a 20:1 reducer
        "hoist": Hoist(load_mass=1500.0, hook_mass=80.0, rope_mass=40.0, drum_diameter=0.4, reeving=2.0,
                       gearing=Gearing(20.0, 0.92)),
        "fan": Fan(rated_speed=w_r, rated_torque=0.8 * t_r, static_torque=0.04 * t_r),
        "pump": Pump(rated_speed=w_r, rated_torque=0.8 * t_r, static_torque=0.25 * t_r),
        "conveyor": Conveyor(friction_pull=2000.0, lift_pull=1000.0, pulley_diameter=0.5, moving_mass=3000.0,
                             gearing=Gearing(15.0, 0.95)),
        "constant_torque": ConstantTorque(0.8 * t_r),
        "constant_power": ConstantPower(power=0.8 * t_r * w_r, min_speed=0.3 * w_r),
    }


def _kind_of(load) -> str:
    for kind, cls in (("hoist", LoweringHoist), ("hoist", Hoist), ("fan", Fan), ("pump", Pump),
                      ("conveyor", Conveyor), ("constant_torque", ConstantTorque),
                      ("constant_power", ConstantPower), ("formula", FormulaLoad), ("table", TableLoad)):
        if type(load) is cls:
            return kind
    return "given"


def _message_html(text: str, css: str) -> str:
    if not text:
        return ""
    return f'<pre class="{css}" style="color:#9b1c0c;font-size:11px;margin:2px 0;white-space:pre-wrap">' \
           f'{html.escape(text)}</pre>'


class LoadEditor:
    """Widgets that build a load (see the module notes).

    Parameters
    ----------
    load : load object, optional
        The starting load; a hoist, fan, pump, conveyor, constant torque or power, formula or
        table load fills the boxes of its kind (its other fields are kept); any other load is
        used "as given". Default: an invented 1.5 t hoist.
    reference : (speed [rad/s], torque [N*m]), optional
        The motor's rated point, to size the default fan, pump, constant-torque and -power loads.
    units : {"si", "us"}
        Display units of the boxes.

    Attributes
    ----------
    widget : ipywidgets.VBox
    load : the current (last good) load
    kind : ipywidgets.Dropdown of :data:`LOAD_KINDS`
    params : dict
        ``(kind, field) -> FloatText`` in display units.
    direction : ToggleButtons "raising" / "lowering" (hoist)
    active : Checkbox (constant torque: active, as gravity, or passive, as friction)
    formula, formula_unit, formula_error : the formula box, its speed unit, its message
    upload, upload_error : the CSV upload and its message
    error : message of the parameter boxes
    """

    def __init__(self, load=None, *, reference=None, units: str = "si"):
        self.units = units
        self._listeners = []
        self._quiet = False
        self._templates = _defaults(reference)
        kind = "hoist" if load is None else _kind_of(load)
        self.load = self._templates["hoist"] if load is None else load
        self._given = self.load if kind == "given" else None
        if kind in self._templates:
            self._templates[kind] = self.load.hoist if isinstance(self.load, LoweringHoist) else self.load
        self._formula_load = self.load if kind == "formula" else None
        self._table_load = self.load if kind == "table" else None

        options = [(label, k) for k, label in LOAD_KINDS.items() if k != "given" or self._given is not None]
        self.kind = w.Dropdown(options=options, value=kind, description="load",
                               style={"description_width": "60px"}, layout=w.Layout(width="260px"))
        self.kind.add_class("kit-load-type")
        table = _unit_table(units)
        self.params = {}
        self.boxes = {}
        for k, fields in _PARAMS.items():
            tmpl = self._templates[k]
            rows = []
            for field, label, qty in fields:
                box = w.FloatText(value=self._display(self._si_value(tmpl, field), qty, table),
                                  description=self._label(label, qty, table),
                                  style={"description_width": _WIDTH}, layout=w.Layout(width="300px"))
                box.add_class("kit-load-param")
                box.add_class(f"kit-load-{k.replace('_', '-')}-{field.replace('_', '-')}")
                box._kit_quantity = qty
                box._kit_label = label
                box.observe(self._changed, names="value")
                self.params[(k, field)] = box
                rows.append(box)
            self.boxes[k] = rows
        self.direction = w.ToggleButtons(options=[("raising", "raising"), ("lowering", "lowering")],
                                         value="lowering" if isinstance(self.load, LoweringHoist) else "raising",
                                         tooltips=["hook going up: the motor lifts the load",
                                                   "hook going down with the armature reversed: gravity drives"],
                                         style={"button_width": "90px"})
        self.direction.add_class("kit-load-direction")
        self.direction.observe(self._changed, names="value")
        self.boxes["hoist"] = self.boxes["hoist"] + [self.direction]
        ct = self._templates["constant_torque"]
        self.active = w.Checkbox(value=bool(ct.active), description="active (gravity-like, same sign both ways)",
                                 indent=False)
        self.active.add_class("kit-load-active")
        self.active.observe(self._changed, names="value")
        self.boxes["constant_torque"] = self.boxes["constant_torque"] + [self.active]

        f0 = self._formula_load
        self.formula = w.Text(value=f0.text if f0 is not None else self._default_formula(reference),
                              description="T [N·m] =", continuous_update=True,
                              style={"description_width": "70px"}, layout=w.Layout(width="330px"),
                              tooltip="torque at the driven shaft; + - * / ** ( ), sqrt exp log abs min max sin cos "
                                      "tanh")
        self.formula.add_class("kit-formula")
        self.formula_unit = w.Dropdown(options=[("n in r/min", "rpm"), ("w in rad/s", "rad/s")],
                                       value=f0.speed_unit if f0 is not None else "rpm", description="speed",
                                       style={"description_width": "70px"}, layout=w.Layout(width="200px"))
        self.formula_unit.add_class("kit-formula-unit")
        self.formula_error = w.HTML("")
        self.formula_error.add_class("kit-formula-error")
        self.formula.observe(self._changed, names="value")
        self.formula_unit.observe(self._changed, names="value")
        self.boxes["formula"] = [self.formula, self.formula_unit, self.formula_error]

        self.upload = w.FileUpload(accept=".csv,text/csv", multiple=False, description="CSV table")
        self.upload.add_class("kit-upload")
        self.upload.observe(self._uploaded, names="value")
        self.upload_error = w.HTML("")
        self.upload_error.add_class("kit-upload-error")
        hint = w.HTML('<span style="font-size:11px;color:#555">header: speed_rpm or speed_rad_s, and torque_n_m or '
                      'torque_lbf_ft; # starts a comment</span>')
        self.boxes["table"] = [self.upload, hint, self.upload_error]
        self.boxes["given"] = []

        self.error = w.HTML("")
        self.error.add_class("kit-load-error")
        self.description = w.HTML("")
        self.description.add_class("kit-load-description")
        self._area = w.VBox(self.boxes[kind])
        self.kind.observe(self._kind_changed, names="value")
        self.widget = w.VBox([self.kind, self._area, self.error, self.description])
        self.widget.add_class("kit-load-editor")
        self._describe()

    # ------------------------------------------------------------------ public
    def on_change(self, callback):
        """Call ``callback(load, from_browser)`` whenever a new good load is in place."""
        self._listeners.append(callback)

    def set_units(self, units: str):
        """Show the boxes in other display units (the load itself does not change)."""
        old, new = _unit_table(self.units), _unit_table(units)
        self._quiet = True
        try:
            for box in self.params.values():
                q = box._kit_quantity
                if q is not None:
                    si = box.value * old[q][1]
                    box.value = si / new[q][1]
                box.description = self._label(box._kit_label, q, new)
        finally:
            self._quiet = False
        self.units = units

    def take_upload(self, name: str, content: bytes, from_browser: bool = False) -> bool:
        """Read a CSV table given as bytes (what the upload delivers); True when it was taken."""
        name = os.path.basename(str(name)) or "table.csv"
        with tempfile.TemporaryDirectory(prefix="dcchar-upload-") as tmp:
            path = os.path.join(tmp, name)
            with open(path, "wb") as fh:
                fh.write(bytes(content))
            try:
                table = TableLoad.from_csv(path)
            except DcCharError as exc:
                self.upload_error.value = _message_html(str(exc).replace(path, name), "kit-upload-message")
                return False
        self.upload_error.value = ""
        self._table_load = table
        if self.kind.value == "table":
            self._set(table, from_browser)
        else:
            self.kind.value = "table"
        return True

    # ------------------------------------------------------------------ internals
    @staticmethod
    def _default_formula(reference) -> str:
        w_r, t_r = reference if reference else (1150.0 * U.RPM, 90.0)
        return f"{0.1 * t_r:.3g} + {0.7 * t_r:.3g}*(n/{w_r / U.RPM:.0f})**2"

    @staticmethod
    def _label(label, qty, table) -> str:
        return f"{label} [{table[qty][0]}]" if qty is not None else label

    @staticmethod
    def _display(value, qty, table):
        return value / table[qty][1] if qty is not None else value

    @staticmethod
    def _si_value(tmpl, field):
        g = getattr(tmpl, "gearing", None)
        if field == "gear_ratio":
            return g.ratio if g is not None else 1.0
        if field == "gear_efficiency":
            return g.efficiency if g is not None else 1.0
        return getattr(tmpl, field)

    def _values(self, kind) -> dict:
        table = _unit_table(self.units)
        out = {}
        for field, _, qty in _PARAMS[kind]:
            v = float(self.params[(kind, field)].value)
            out[field] = v * table[qty][1] if qty is not None else v
        return out

    def _build(self, kind):
        """The load of ``kind`` from the boxes; raises DcCharError when the values are refused."""
        if kind == "given":
            return self._given
        if kind == "formula":
            return FormulaLoad(self.formula.value, speed_unit=self.formula_unit.value)
        if kind == "table":
            if self._table_load is None:
                raise _NoTable()
            return self._table_load
        tmpl = self._templates[kind]
        vals = self._values(kind)
        if "gear_ratio" in vals:
            ratio, eff = vals.pop("gear_ratio"), vals.pop("gear_efficiency")
            if tmpl.gearing is None and ratio == 1.0 and eff == 1.0:
                vals["gearing"] = None
            else:
                vals["gearing"] = Gearing(ratio, eff)
        if kind == "constant_torque":
            vals["active"] = bool(self.active.value)
        load = dataclasses.replace(tmpl, **vals)
        if kind == "hoist" and self.direction.value == "lowering":
            return LoweringHoist.of(load)
        return load

    def _kind_changed(self, change):
        kind = change["new"]
        self._area.children = self.boxes[kind]
        self._rebuild(change)

    def _changed(self, change):
        if self._quiet:
            return
        self._rebuild(change)

    def _rebuild(self, change):
        kind = self.kind.value
        try:
            load = self._build(kind)
        except _NoTable:
            self.error.value = _message_html("no table yet: upload a CSV file; the last good load stays in use",
                                             "kit-load-message")
            return
        except DcCharError as exc:
            target = self.formula_error if kind == "formula" else self.error
            target.value = _message_html(f"{exc}\n(the last good load stays in use)",
                                         "kit-formula-message" if kind == "formula" else "kit-load-message")
            return
        self.error.value = ""
        self.formula_error.value = ""
        if kind == "formula":
            self._formula_load = load
        self._set(load, from_front_end(change))

    def _set(self, load, from_browser: bool):
        self.load = load
        self._describe()
        for cb in self._listeners:
            cb(load, from_browser)

    def _uploaded(self, change):
        files = change["new"]
        if not files:
            return
        f = files[0] if isinstance(files, (tuple, list)) else next(iter(files.values()))
        self.take_upload(f.get("name", "table.csv"), f["content"], from_front_end(change))

    def _describe(self):
        text = self.load.describe() if hasattr(self.load, "describe") else str(self.load)
        self.description.value = f'<span style="font-size:11px;color:#444">{html.escape(text)}</span>'


class _NoTable(Exception):
    pass
