"""The shape of a scenario document: which keys each table takes, their types and limits.

:func:`normalize_document` checks a document as read by :mod:`tomllib` (plain dicts, lists,
str, int, float, bool, dates) against the schema of :mod:`dcchar.files.scenario` and returns a
normalized copy: numbers as ``float`` (``schema_version`` as ``int``), absent keys left absent (no
defaults are filled in, so a document writes back as it was read). Every error is a
:class:`~dcchar.errors.ScenarioError` whose ``path`` is the dotted key path at fault, with the bad
value and what is allowed; an unknown key names the nearest valid key (:mod:`difflib`).

Key names carry their unit (see ``examples/README.md``): ``_v`` volt, ``_a`` ampere, ``_ohm``,
``_h`` henry, ``_rpm`` revolutions per minute, ``_rad_s`` radian per second, ``_n_m`` newton
metre, ``_n`` newton, ``_w`` watt, ``_kw`` kilowatt, ``_kg``, ``_m``, ``_kg_m2``, ``_c`` degree
Celsius, ``_at`` ampere-turns per pole, ``_per_a`` per ampere, ``_deg`` degree of angle,
``_m_s2`` metre per second squared, ``_s`` second, ``_percent`` per cent, ``_ratio`` a multiple (of the
quantity the key's documentation names); ``_si`` marks a coefficient in coherent SI units as the model
class documents it; a name without a suffix is a pure number.
"""

from __future__ import annotations

import datetime as _dt
import difflib
import math
import re
from dataclasses import dataclass

from ..errors import ScenarioError

__all__ = ["SCHEMA_VERSION", "NAME_PATTERN", "Key", "check_table", "normalize_document", "bad", "describe_value",
           "FAMILY_CONNECTIONS", "MACHINE_CONNECTIONS", "LOAD_KINDS", "MAGNETIZATION_FORMS", "MAGNET_MATERIALS",
           "REQUIREMENT_FIGURES", "REQUIREMENT_DEFAULTS", "REQUIREMENT_VALUE_KEYS", "REQUIREMENT_DETAILS",
           "REQUIREMENTS", "TOLERANCE"]

#: The schema version this dcchar reads and writes.
SCHEMA_VERSION = 1
#: Names of machines and loads: letters, digits, ``_`` and ``-`` (they become file and folder names).
NAME_PATTERN = re.compile(r"[A-Za-z0-9_-]{1,64}")

FAMILY_CONNECTIONS = ("separately_excited", "shunt", "series", "long_shunt_compound", "short_shunt_compound",
                      "permanent_magnet", "differential_long_shunt_compound", "differential_short_shunt_compound")
MACHINE_CONNECTIONS = ("separately_excited", "shunt", "series", "compound", "permanent_magnet")
LOAD_KINDS = ("hoist", "conveyor", "fan", "pump", "constant_torque", "linear", "constant_power", "breakaway",
              "table", "formula", "sum")
MAGNETIZATION_FORMS = ("linear", "froehlich", "table")
MAGNET_MATERIALS = ("ndfeb", "ferrite", "smco", "alnico")


def describe_value(value, limit: int = 60) -> str:
    """``repr`` of a value, shortened for a message."""
    text = repr(value)
    return text if len(text) <= limit else text[:limit - 3] + "..."


def bad(path: str, value, allowed: str) -> ScenarioError:
    """The error for ``value`` at ``path``: ``"<path>: <value> is not allowed: expected <allowed>"``."""
    return ScenarioError(path, f"{describe_value(value)} is not allowed: expected {allowed}")


def _join(path: str, key) -> str:
    key = str(key)
    if not NAME_PATTERN.fullmatch(key):
        key = '"' + key.replace("\\", "\\\\").replace('"', '\\"') + '"'
    return f"{path}.{key}" if path else key


@dataclass(frozen=True)
class Key:
    """One key of a table.

    Parameters
    ----------
    kind : str
        ``"number"``, ``"integer"``, ``"string"``, ``"text"`` (a non-empty string), ``"bool"``,
        ``"date"`` (a TOML date or a string), ``"choice"``, ``"numbers"`` (array of numbers),
        ``"strings"`` (array of choices), ``"name"`` (a machine or load name) or ``"table"``.
    required : bool
    low, high : float
        Limits of a number (``None``: none).
    low_open, high_open : bool
        Whether the limits are excluded.
    allow_inf : bool
        ``inf`` is accepted (a number otherwise must be finite).
    choices : tuple of str
    sub : callable or None
        For tables: ``sub(value, path) -> dict`` that checks and normalizes the sub-table.
    length : int or None
        For ``"numbers"``: the number of items required (e.g. 2 for a low, high pair).
    """

    kind: str
    required: bool = False
    low: float | None = None
    high: float | None = None
    low_open: bool = False
    high_open: bool = False
    allow_inf: bool = False
    choices: tuple = ()
    sub: object = None
    length: int | None = None

    def allowed(self) -> str:
        if self.kind == "number":
            parts = []
            if self.low is not None:
                parts.append(f"{'>' if self.low_open else '>='} {self.low:g}")
            if self.high is not None:
                parts.append(f"{'<' if self.high_open else '<='} {self.high:g}")
            text = "a number" + (" " + " and ".join(parts) if parts else "")
            return text + (" (inf allowed)" if self.allow_inf else "")
        if self.kind == "integer" and (self.low is not None or self.high is not None):
            parts = ([f">= {self.low:g}"] if self.low is not None else []) + \
                ([f"<= {self.high:g}"] if self.high is not None else [])
            return "an integer " + " and ".join(parts)
        if self.kind == "choice":
            return f"one of {self.choices}"
        if self.kind == "strings":
            return f"an array of distinct names from {self.choices}"
        if self.kind == "numbers" and self.length is not None:
            lim = (f" (each >= {self.low:g} and <= {self.high:g})" if self.low is not None and self.high is not None
                   else "")
            return f"an array of {self.length} finite numbers{lim}"
        return {"integer": "an integer", "string": "a string", "text": "a non-empty string", "bool": "true or false",
                "date": "a date (1970-01-31) or a string", "numbers": "an array of finite numbers",
                "name": "a name of letters, digits, '_' or '-' (at most 64)", "table": "a table",
                "names": "a non-empty array of names"}[self.kind]

    def check(self, value, path: str):
        """The normalized value, or raise :class:`ScenarioError` naming ``path``."""
        k = self.kind
        if k == "number":
            return self._number(value, path)
        if k == "integer":
            if isinstance(value, bool) or not isinstance(value, int):
                raise bad(path, value, self.allowed())
            if (self.low is not None and value < self.low) or (self.high is not None and value > self.high):
                raise bad(path, value, self.allowed())
            return value
        if k in ("string", "text", "name"):
            if not isinstance(value, str) or (k == "text" and not value.strip()):
                raise bad(path, value, self.allowed())
            if k == "name" and not NAME_PATTERN.fullmatch(value):
                raise bad(path, value, self.allowed())
            return value
        if k == "bool":
            if not isinstance(value, bool):
                raise bad(path, value, self.allowed())
            return value
        if k == "date":
            if isinstance(value, str) or (isinstance(value, _dt.date) and not isinstance(value, _dt.datetime)):
                return value
            raise bad(path, value, self.allowed())
        if k == "choice":
            if not isinstance(value, str) or value not in self.choices:
                raise bad(path, value, self.allowed())
            return value
        if k == "numbers":
            if not isinstance(value, list) or not value:
                raise bad(path, value, "a non-empty array of finite numbers")
            if self.length is not None and len(value) != self.length:
                raise bad(path, value, self.allowed())
            return [self._number(v, f"{path}[{i}]") for i, v in enumerate(value)]
        if k == "strings":
            if not isinstance(value, list) or not value:
                raise bad(path, value, self.allowed())
            seen = []
            for i, v in enumerate(value):
                if not isinstance(v, str) or v not in self.choices:
                    raise bad(f"{path}[{i}]", v, f"one of {self.choices}")
                if v in seen:
                    raise bad(f"{path}[{i}]", v, "each name once")
                seen.append(v)
            return seen
        if k == "names":
            if not isinstance(value, list) or not value:
                raise bad(path, value, self.allowed())
            return [Key("name").check(v, f"{path}[{i}]") for i, v in enumerate(value)]
        if k == "table":
            if not isinstance(value, dict):
                raise bad(path, value, "a table")
            return self.sub(value, path)
        raise AssertionError(k)  # pragma: no cover - schema error

    def _number(self, value, path):
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise bad(path, value, self.allowed())
        try:
            x = float(value)
        except OverflowError:  # an integer beyond the float range
            raise bad(path, value, self.allowed()) from None
        if math.isnan(x) or (math.isinf(x) and not (self.allow_inf and x > 0)):
            raise bad(path, value, self.allowed())
        if self.low is not None and not (x > self.low if self.low_open else x >= self.low):
            raise bad(path, value, self.allowed())
        if self.high is not None and not (x < self.high if self.high_open else x <= self.high):
            raise bad(path, value, self.allowed())
        return x


def check_table(table, schema: dict, path: str, what: str = "") -> dict:
    """Check ``table`` against ``schema`` (key -> :class:`Key`); return the normalized copy.

    Unknown keys are refused with the nearest valid key suggested; missing required keys are
    named with what they need.
    """
    if not isinstance(table, dict):
        raise bad(path or "document", table, "a table")
    out = {}
    for key, value in table.items():
        spec = schema.get(key)
        if spec is None:
            near = difflib.get_close_matches(str(key), list(schema), n=1, cutoff=0.6)
            hint = f"; did you mean {near[0]!r}?" if near else ""
            valid = ", ".join(sorted(schema))
            raise ScenarioError(_join(path, key), f"unknown key{' in ' + what if what else ''}{hint} "
                                                  f"(valid keys here: {valid})")
        out[key] = spec.check(value, _join(path, key))
    for key, spec in schema.items():
        if spec.required and key not in table:
            raise ScenarioError(_join(path, key), f"missing: expected {spec.allowed()}"
                                                  f"{' for ' + what if what else ''}")
    return out


# --------------------------------------------------------------------------------------------
# small constructors of keys

def _num(required=False, **limits) -> Key:
    return Key("number", required=required, **limits)


def _pos(required=False, allow_inf=False) -> Key:
    return Key("number", required=required, low=0.0, low_open=True, allow_inf=allow_inf)


def _nonneg(required=False) -> Key:
    return Key("number", required=required, low=0.0)


def _temperature() -> Key:
    return Key("number", low=-60.0, high=250.0)


def _tab(sub) -> Key:
    return Key("table", sub=sub)


def _named_tables(sub, what):
    """A table of name -> sub-table; names must match :data:`NAME_PATTERN`."""

    def check(value, path):
        if not value:
            raise bad(path, value, f"at least one {what}")
        out = {}
        for name, item in value.items():
            p = _join(path, name)
            if not NAME_PATTERN.fullmatch(str(name)):
                raise ScenarioError(p, f"{name!r} is not allowed as a {what} name: expected letters, digits, "
                                       "'_' or '-' (at most 64)")
            if not isinstance(item, dict):
                raise bad(p, item, f"a table describing the {what}")
            out[name] = sub(item, p, name)
        return out

    return check


def _with_form(forms: dict, path_what: str, default=None):
    """A sub-table whose keys depend on its ``form`` key (``forms``: form -> schema)."""

    def check(value, path):
        form = value.get("form", default)
        if form is None:
            raise ScenarioError(_join(path, "form"), f"missing: expected one of {tuple(forms)}")
        if not isinstance(form, str) or form not in forms:
            raise bad(_join(path, "form"), form, f"one of {tuple(forms)}")
        schema = {"form": Key("choice", choices=tuple(forms)), **forms[form]}
        return check_table(value, schema, path, f"a {form} {path_what}")

    return check


# --------------------------------------------------------------------------------------------
# the parts

RATING = {"voltage_v": _pos(True), "current_a": _pos(True), "speed_rpm": _pos(True), "output_kw": _pos(True)}

MAGNETIZATION = {
    "linear": {"slope_v_per_at": _pos(True), "residual_emf_v": _nonneg(), "reference_speed_rpm": _pos(True)},
    "froehlich": {"a_v": _pos(True), "b_at": _pos(True), "residual_emf_v": _nonneg(),
                  "reference_speed_rpm": _pos(True)},
    "table": {"excitation_at": Key("numbers", required=True), "emf_v": Key("numbers", required=True),
              "reference_speed_rpm": _pos(True)},
}

ROTATIONAL_LOSS = {
    "coefficients": {"friction_torque_n_m": _nonneg(), "viscous_n_m_s_per_rad": _nonneg(),
                     "windage_n_m_s2_per_rad2": _nonneg(), "core_hysteresis_si": _nonneg(),
                     "core_eddy_si": _nonneg(), "fixed_power_w": _nonneg(), "fade_speed_rad_s": _pos()},
    "measured": {"power_w": _nonneg(True), "speed_rpm": _pos(True), "core_share": _num(low=0.0, high=1.0),
                 "kphi_v_s_per_rad": _pos(), "friction_torque_n_m": _nonneg(), "core_hysteresis_si": _nonneg(),
                 "fixed_power_w": _nonneg(), "fade_speed_rad_s": _pos()},
}

ARMATURE_REACTION = {
    "none": {},
    "quadratic": {"linear_at_per_a": _nonneg(True), "quadratic_at_per_a2": _nonneg()},
    "table": {"current_a": Key("numbers", required=True), "excitation_at": Key("numbers", required=True)},
}

ARMATURE = {
    "armature_resistance_ohm": _pos(True), "brush_drop_v": _nonneg(), "armature_inductance_h": _nonneg(),
    "inertia_kg_m2": _nonneg(), "safe_speed_rpm": _pos(allow_inf=True), "reference_temperature_c": _temperature(),
    "winding_temperature_c": _temperature(), "stray_load_n_m_per_a2": _nonneg(),
    "stray_load_percent": _num(low=0.0, high=20.0),
    "rotational_loss": _tab(_with_form(ROTATIONAL_LOSS, "rotational loss", default="coefficients")),
    "armature_reaction": _tab(_with_form(ARMATURE_REACTION, "armature reaction")),
}

_MAGNETIZATION_KEY = _tab(_with_form(MAGNETIZATION, "magnetization curve"))

FAMILY = {
    "rating": _tab(lambda v, p: check_table(v, RATING, p, "a rating")),
    "armature": _tab(lambda v, p: check_table(v, ARMATURE, p, "an armature")),
    "magnetization": _MAGNETIZATION_KEY,
    "connections": Key("strings", choices=FAMILY_CONNECTIONS),
    "series_share": _num(low=0.0, high=1.0, low_open=True, high_open=True),
    "shunt_field_share": _num(low=0.0, high=0.5, low_open=True),
    "series_resistance_ohm": _pos(), "compound_series_resistance_ohm": _pos(), "field_voltage_v": _pos(),
    "magnet_material": Key("choice", choices=MAGNET_MATERIALS), "magnet_temperature_c": _num(low=-60.0, high=350.0),
    "demagnetization_per_a": _nonneg(), "name": Key("string"),
}
_FAMILY_REQUIRED = ("rating", "armature")

_SHUNT_FIELD = {"field_resistance_ohm": _pos(True), "field_turns": _pos(), "field_rheostat_ohm": _nonneg(),
                "field_inductance_h": _nonneg()}
_SERIES_FIELD = {"series_turns": _pos(True), "series_resistance_ohm": _pos(True),
                 "diverter_resistance_ohm": _pos(allow_inf=True), "series_inductance_h": _nonneg()}
MACHINE_FIELDS = {
    "separately_excited": {**_SHUNT_FIELD, "field_voltage_v": _nonneg(True), "count_field_input": Key("bool"),
                           "magnetization": Key("table", required=True, sub=_MAGNETIZATION_KEY.sub)},
    "shunt": {**_SHUNT_FIELD, "magnetization": Key("table", required=True, sub=_MAGNETIZATION_KEY.sub)},
    "series": {**_SERIES_FIELD, "magnetization": Key("table", required=True, sub=_MAGNETIZATION_KEY.sub)},
    "compound": {**_SHUNT_FIELD, **_SERIES_FIELD, "kind": Key("choice", choices=("cumulative", "differential")),
                 "shunt_connection": Key("choice", choices=("long", "short")),
                 "magnetization": Key("table", required=True, sub=_MAGNETIZATION_KEY.sub)},
    "permanent_magnet": {"kphi_v_s_per_rad": _pos(True), "magnet_material": Key("choice", choices=MAGNET_MATERIALS),
                         "magnet_temperature_c": _num(low=-60.0, high=350.0), "demagnetization_per_a": _nonneg()},
}
_MACHINE_COMMON = {**{k: v for k, v in ARMATURE.items()}, "external_resistance_ohm": _nonneg(),
                   "name": Key("string"), "rating": _tab(lambda v, p: check_table(v, RATING, p, "a rating"))}


def _family(value, path):
    out = check_table(value, FAMILY, path, "the equal-rating family")
    for key in _FAMILY_REQUIRED:
        if key not in out:
            raise ScenarioError(_join(path, key), "missing: expected a table (the family's "
                                                  f"{'rated point' if key == 'rating' else 'shared armature'})")
    return out


def _machine(value, path, name):
    if name == "family":
        return _family(value, path)
    conn = value.get("connection")
    if conn is None:
        near = difflib.get_close_matches(name, ["family"], n=1, cutoff=0.6)
        hint = " (or did you mean 'family', the equal-rating family?)" if near else ""
        raise ScenarioError(_join(path, "connection"), f"missing: expected one of {MACHINE_CONNECTIONS}{hint}")
    if not isinstance(conn, str) or conn not in MACHINE_CONNECTIONS:
        raise bad(_join(path, "connection"), conn, f"one of {MACHINE_CONNECTIONS}")
    schema = {"connection": Key("choice", choices=MACHINE_CONNECTIONS), **_MACHINE_COMMON, **MACHINE_FIELDS[conn]}
    return check_table(value, schema, path, f"a {conn.replace('_', ' ')} machine")


CONTROL = {"field_rheostat_ohm": _nonneg(), "diverter_resistance_ohm": _pos(allow_inf=True),
           "external_resistance_ohm": _nonneg(), "winding_temperature_c": _temperature(),
           "magnet_temperature_c": _num(low=-60.0, high=350.0)}
THRESHOLDS = {"starting_multiple": _pos(), "light_load_fraction": _nonneg(), "current_multiple": _pos(),
              "speed_fraction": _pos()}
GEARING = {"ratio": _pos(True), "efficiency": _num(True, low=0.0, high=1.0, low_open=True)}

# --------------------------------------------------------------------------------------------
# requirements of the selection matrix, and the tolerance study

#: Figure names of the requirements (``dcchar.studies.selection.REQUIREMENT_TYPES``) and the load
#: kinds with a default set (``dcchar.studies.selection.LOAD_KINDS``); written out here so that
#: reading a file imports no study.
REQUIREMENT_FIGURES = ("speed_regulation", "top_speed", "low_speed", "starting_torque", "starting_current",
                       "acceleration_time", "speed_hold", "lowering", "efficiency", "constant_power_range",
                       "lost_load", "lost_field")
REQUIREMENT_DEFAULTS = ("hoist", "fan", "pump", "conveyor", "winder")
#: The key that sets each figure's required value, with its unit in the name.
REQUIREMENT_VALUE_KEYS = {
    "speed_regulation_percent": "speed_regulation", "top_speed_rpm": "top_speed", "low_speed_rpm": "low_speed",
    "starting_torque_ratio": "starting_torque", "starting_current_a": "starting_current",
    "acceleration_time_s": "acceleration_time", "speed_hold_percent": "speed_hold", "lowering": "lowering",
    "efficiency_percent": "efficiency", "constant_power_range_ratio": "constant_power_range", "lost_load": "lost_load",
    "lost_load_rpm": "lost_load", "lost_field": "lost_field", "lost_field_rpm": "lost_field"}

_SHARE = _num(low=0.0, high=1.0, low_open=True, high_open=True)
REQUIREMENT_DETAILS = {
    "speed_regulation": {"torque_n_m": _pos()}, "top_speed": {"min_field_share": _SHARE},
    "low_speed": {"min_voltage_fraction": _num(low=0.0, high=1.0, low_open=True)},
    "starting_torque": {"basis": Key("choice", choices=("breakaway", "running"))}, "starting_current": {},
    "acceleration_time": {"target_fraction": _SHARE}, "speed_hold": {"step_n_m": _pos()},
    "lowering": {"torque_n_m": _pos()}, "efficiency": {}, "constant_power_range": {"min_field_share": _SHARE},
    "lost_load": {}, "lost_field": {},
}
_DETAIL_COMMON = {"marginal_percent": _num(low=0.0, high=100.0), "description": Key("string")}


def _details(value, path):
    schema = {f: _tab(lambda v, p, f=f: check_table(v, {**_DETAIL_COMMON, **REQUIREMENT_DETAILS[f]}, p,
                                                    f"the details of the {f.replace('_', ' ')} requirement"))
              for f in REQUIREMENT_FIGURES}
    return check_table(value, schema, path, "requirement details (one table per figure)")


REQUIREMENTS = {
    "defaults": Key("choice", choices=REQUIREMENT_DEFAULTS),
    "leave_out": Key("strings", choices=REQUIREMENT_FIGURES),
    "starter_multiple": _num(low=0.0, high=100.0, low_open=True), "starting_resistance_ohm": _nonneg(),
    "speed_regulation_percent": _nonneg(), "top_speed_rpm": _pos(), "low_speed_rpm": _pos(),
    "starting_torque_ratio": _pos(), "starting_current_a": _pos(), "acceleration_time_s": _pos(),
    "speed_hold_percent": _nonneg(), "lowering": Key("bool"), "efficiency_percent": _num(low=0.0, high=100.0),
    "constant_power_range_ratio": _pos(), "lost_load": Key("bool"), "lost_load_rpm": _pos(),
    "lost_field": Key("bool"), "lost_field_rpm": _pos(), "details": _tab(_details),
}


def _requirements(value, path):
    out = check_table(value, REQUIREMENTS, path, "requirements")
    for flag in ("lost_load", "lost_field"):
        if f"{flag}_rpm" in out and flag in out:
            raise ScenarioError(_join(path, flag), f"give {flag} = true (limit: the safe speed) or {flag}_rpm "
                                                   "(limit in r/min), not both")
    if "starter_multiple" in out and "starting_resistance_ohm" in out:
        raise ScenarioError(_join(path, "starting_resistance_ohm"), "give starter_multiple or "
                                                                    "starting_resistance_ohm, not both")
    given = {}
    for key, fig in REQUIREMENT_VALUE_KEYS.items():
        if key in out and out[key] is not False:
            given.setdefault(fig, key)
    for i, fig in enumerate(out.get("leave_out", ())):
        if fig in given:
            raise bad(_join(path, "leave_out") + f"[{i}]", fig, f"a figure not also required here (remove "
                                                                f"{given[fig]} or this entry)")
    if not out.get("defaults") and not given:
        raise ScenarioError(path, "no requirement given: name a default set (defaults = "
                                  f"{' | '.join(repr(k) for k in REQUIREMENT_DEFAULTS)}) or give at least one "
                                  f"requirement ({', '.join(REQUIREMENT_VALUE_KEYS)})")
    return out


_PERCENT90 = _num(low=0.0, high=90.0)
_PAIR_C = Key("numbers", low=-60.0, high=250.0, length=2)
TOLERANCE = {"resistance_percent": _PERCENT90, "winding_temperature_c": _PAIR_C, "magnetization_percent": _PERCENT90,
             "magnet_temperature_c": _PAIR_C, "supply_voltage_percent": _PERCENT90,
             "distribution": Key("choice", choices=("uniform", "normal")), "sigmas": _pos(),
             "samples": Key("integer", low=1, high=1_000_000), "seed": Key("integer", low=0),
             "robust_share_percent": _num(low=0.0, high=100.0)}

_LOAD_COMMON = {"kind": Key("choice", choices=LOAD_KINDS), "description": Key("string"),
                "control": _tab(lambda v, p: check_table(v, CONTROL, p, "control settings")),
                "gearing": _tab(lambda v, p: check_table(v, GEARING, p, "a gearing")),
                "load_inertia_kg_m2": _nonneg(), "requirements": _tab(_requirements)}
_QUADRATIC = {"rated_speed_rpm": _pos(True), "rated_torque_n_m": _pos(), "rated_power_kw": _pos(),
              "static_torque_n_m": _nonneg()}
LOAD_FIELDS = {
    "hoist": {"load_mass_kg": _nonneg(True), "hook_mass_kg": _nonneg(), "rope_mass_kg": _nonneg(),
              "drum_diameter_m": _pos(True), "reeving": _num(low=1.0), "drum_inertia_kg_m2": _nonneg(),
              "gravity_m_s2": _pos()},
    "conveyor": {"friction_pull_n": _nonneg(), "pulley_diameter_m": _pos(True), "lift_pull_n": _num(),
                 "moving_mass_kg": _nonneg(), "mass_kg": _nonneg(), "friction_coefficient": _nonneg(),
                 "incline_deg": _num(low=-90.0, high=90.0)},
    "fan": dict(_QUADRATIC),
    "pump": {**_QUADRATIC, "static_head_fraction": _num(low=0.0, high=1.0, high_open=True)},
    "constant_torque": {"torque_n_m": _num(True), "active": Key("bool")},
    "linear": {"coefficient_n_m_s_per_rad": _nonneg(True), "offset_n_m": _num()},
    "constant_power": {"power_kw": _pos(True), "min_speed_rpm": _pos(True)},
    "breakaway": {"running_torque_n_m": _nonneg(True), "breakaway_torque_n_m": _num(True),
                  "release_speed_rpm": _pos(True)},
    "table": {"file": Key("text", required=True)},
    "formula": {"torque_n_m": Key("text", required=True), "speed_unit": Key("choice", choices=("rpm", "rad/s")),
                "variable": Key("text")},
    "sum": {"parts": Key("names", required=True)},
}
_NO_GEARING = ("breakaway", "sum")


def _load(value, path, name):
    kind = value.get("kind")
    if kind is None:
        raise ScenarioError(_join(path, "kind"), f"missing: expected one of {LOAD_KINDS}")
    if not isinstance(kind, str) or kind not in LOAD_KINDS:
        raise bad(_join(path, "kind"), kind, f"one of {LOAD_KINDS}")
    common = dict(_LOAD_COMMON)
    if kind in _NO_GEARING:
        common.pop("gearing")
    if kind == "sum":
        common.pop("load_inertia_kg_m2")
    return check_table(value, {**common, **LOAD_FIELDS[kind]}, path, f"a {kind.replace('_', ' ')} load")


STUDY = {"title": Key("text", required=True), "author": Key("string"), "date": Key("date"),
         "units": Key("choice", choices=("si", "us")), "notes": Key("string"), "load": Key("name")}
SUPPLY = {"voltage_v": _pos()}

DOCUMENT = {
    "schema_version": Key("integer", required=True),
    "study": Key("table", required=True, sub=lambda v, p: check_table(v, STUDY, p, "the study")),
    "supply": _tab(lambda v, p: check_table(v, SUPPLY, p, "the supply")),
    "machines": Key("table", required=True, sub=_named_tables(_machine, "machine")),
    "loads": Key("table", required=True, sub=_named_tables(_load, "load")),
    "control": _tab(lambda v, p: check_table(v, CONTROL, p, "control settings")),
    "thresholds": _tab(lambda v, p: check_table(v, THRESHOLDS, p, "caution thresholds")),
    "requirements": _tab(_requirements),
    "tolerance": _tab(lambda v, p: check_table(v, TOLERANCE, p, "the tolerance study")),
}


def normalize_document(doc) -> dict:
    """Check a scenario document (as parsed from TOML) and return its normalized copy.

    Raises
    ------
    ScenarioError
        With the key path, the bad value and what is allowed. A ``schema_version`` above
        :data:`SCHEMA_VERSION` is refused before anything else is read.
    """
    if not isinstance(doc, dict):
        raise bad("document", doc, "a table of keys")
    version = doc.get("schema_version")
    if version is None:
        raise ScenarioError("schema_version", f"missing: expected schema_version = {SCHEMA_VERSION} "
                                              "as the first line of the file")
    if isinstance(version, bool) or not isinstance(version, int) or version < 1:
        raise bad("schema_version", version, f"the integer {SCHEMA_VERSION}")
    if version > SCHEMA_VERSION:
        raise ScenarioError("schema_version", f"this file is written for scenario schema version {version}, "
                                              f"newer than this dcchar reads (version {SCHEMA_VERSION}); "
                                              "update dcchar to read it")
    out = check_table(doc, DOCUMENT, "", "a scenario")
    loads = out["loads"]
    default = out["study"].get("load")
    if default is not None and default not in loads:
        near = difflib.get_close_matches(default, list(loads), n=1, cutoff=0.6)
        hint = f"; did you mean {near[0]!r}?" if near else ""
        raise ScenarioError("study.load", f"{default!r} is not allowed: expected the name of a load in "
                                          f"[loads] ({', '.join(loads)}){hint}")
    for name, spec in loads.items():
        for i, part in enumerate(spec.get("parts", ())):
            p = f"loads.{name}.parts[{i}]"
            if part not in loads:
                raise bad(p, part, f"the name of a load in [loads] ({', '.join(loads)})")
            if part == name or loads[part]["kind"] == "sum":
                raise bad(p, part, "a load that is not itself a sum")
    return out
