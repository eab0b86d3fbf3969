"""Scenario files: one study (machines, loads, control settings) in a TOML file of our own design.

A scenario says which candidate machines to compare (an equal-rating family built on one
armature and one rated point, explicit machines, or both), on which loads, at which settings.
:func:`load_scenario` reads and checks a file (``tomllib``), builds every machine and load, and
returns a frozen :class:`Scenario`; :func:`dump_scenario` and :func:`save_scenario` write one
back with our own small writer (:mod:`dcchar.files.toml_writer`), atomically, so that
load -> save -> load gives an equal scenario (floats are written with ``repr``).

Errors name the key path, the bad value and what is allowed, as a
:class:`~dcchar.errors.ScenarioError`, e.g.
``machines.family.rating.voltage_v: -5 is not allowed: expected a number > 0``; the models' own
checks (:class:`~dcchar.errors.ParameterError`) come back with the key path prefixed. The keys
and their units are listed in ``examples/README.md`` and in :mod:`dcchar.files.scenario_schema`.

Examples
--------
>>> from dcchar.files.scenario import loads_scenario
>>> s = loads_scenario('''
... schema_version = 1
... [study]
... title = "Fan test"
... [machines.m1]
... connection = "permanent_magnet"
... armature_resistance_ohm = 0.5
... kphi_v_s_per_rad = 1.0
... [loads.fan]
... kind = "fan"
... rated_speed_rpm = 1500.0
... rated_torque_n_m = 20.0
... [supply]
... voltage_v = 180.0
... ''')
>>> round(s.compare().candidates["m1"].point.speed_rpm, 1)
1609.0
"""

from __future__ import annotations

import copy
import math
import os
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

from ..errors import DcCharError, ParameterError, ScenarioError
from ..models.units import RPM
from .scenario_requirements import ChoiceOfConnection
from .scenario_schema import SCHEMA_VERSION, normalize_document
from .toml_writer import dumps

__all__ = ["Scenario", "load_scenario", "loads_scenario", "scenario_from_dict", "dump_scenario", "save_scenario",
           "SCHEMA_VERSION"]

_DEG = math.pi / 180.0


# --------------------------------------------------------------------------------------------
# building models from a normalized document

def _deep(path: str, exc: DcCharError, names: dict | None = None) -> ScenarioError:
    """A model's error as a ScenarioError with the key path prefixed; ``names`` maps model
    field names to scenario keys."""
    if isinstance(exc, ScenarioError):  # e.g. a table file's own error: keep its message whole
        return ScenarioError(path, str(exc))
    if isinstance(exc, ParameterError):
        fld = str(exc.field)
        head, _, rest = fld.partition(".")
        key = (names or {}).get(fld) or (names or {}).get(head)
        if key is not None and key != head and (names or {}).get(fld) is None:
            key = f"{key}.{rest}" if rest else key
        where = f"{path}.{key or fld}" if path else (key or fld)
        from .scenario_schema import bad

        return bad(where, exc.value, exc.allowed)
    return ScenarioError(path, str(exc))


def _guard(path, names, fn, *args, **kwargs):
    """Call a model constructor; re-raise its errors as ScenarioError at ``path``."""
    import numpy as np

    try:
        with np.errstate(all="ignore"):
            return fn(*args, **kwargs)
    except DcCharError as exc:
        raise _deep(path, exc, names) from exc
    except (ArithmeticError, OverflowError) as exc:  # values the model cannot represent
        raise ScenarioError(path, f"the values here are out of the model's numeric range ({exc})") from exc


def _rating(spec, path):
    from ..models.connections import Rating

    names = {"rating.voltage": "voltage_v", "rating.current": "current_a", "rating.speed": "speed_rpm",
             "rating.output": "output_kw"}
    return _guard(path, names, Rating, voltage=spec["voltage_v"], current=spec["current_a"],
                  speed=spec["speed_rpm"] * RPM, output=spec["output_kw"] * 1000.0)


def _magnetization(spec, path):
    from ..models import magnetics as mg

    w0 = spec["reference_speed_rpm"] * RPM
    form = spec["form"]
    if form == "linear":
        return _guard(path, {"slope": "slope_v_per_at", "residual_emf": "residual_emf_v"}, mg.LinearMagnetization,
                      spec["slope_v_per_at"], w0, spec.get("residual_emf_v", 0.0))
    if form == "froehlich":
        return _guard(path, {"a": "a_v", "b": "b_at", "residual_emf": "residual_emf_v"}, mg.Froehlich,
                      spec["a_v"], spec["b_at"], w0, spec.get("residual_emf_v", 0.0))
    return _guard(path, {"excitation": "excitation_at", "emf": "emf_v"}, mg.TabulatedMagnetization,
                  spec["excitation_at"], spec["emf_v"], w0)


def _rotational_loss(spec, path):
    from ..models.losses import RotationalLoss

    names = {"friction_torque": "friction_torque_n_m", "viscous": "viscous_n_m_s_per_rad",
             "windage": "windage_n_m_s2_per_rad2", "core_hysteresis": "core_hysteresis_si",
             "core_eddy": "core_eddy_si", "fixed_power": "fixed_power_w", "fade_speed": "fade_speed_rad_s",
             "power": "power_w", "speed": "speed_rpm", "core_share": "core_share", "kphi": "kphi_v_s_per_rad"}
    back = {v: k for k, v in names.items()}
    if spec.get("form", "coefficients") == "coefficients":
        kw = {back[k]: v for k, v in spec.items() if k != "form"}
        return _guard(path, names, RotationalLoss, **kw)
    extra = {back[k]: v for k, v in spec.items()
             if k in ("friction_torque_n_m", "core_hysteresis_si", "fixed_power_w", "fade_speed_rad_s")}
    if spec.get("core_share", 0.0) > 0 and "kphi_v_s_per_rad" not in spec:
        raise ScenarioError(f"{path}.kphi_v_s_per_rad", "missing: expected a number > 0 (the machine constant "
                                                        "at the loss test, needed to split off a core loss)")
    return _guard(path, names, RotationalLoss.from_power_at_speed, spec["power_w"], spec["speed_rpm"] * RPM,
                  core_share=spec.get("core_share", 0.0), kphi=spec.get("kphi_v_s_per_rad"), **extra)


def _armature_reaction(spec, path):
    from ..models import magnetics as mg

    form = spec["form"]
    if form == "none":
        return mg.NoArmatureReaction()
    if form == "quadratic":
        return _guard(path, {"linear": "linear_at_per_a", "quadratic": "quadratic_at_per_a2"},
                      mg.QuadraticArmatureReaction, spec["linear_at_per_a"], spec.get("quadratic_at_per_a2", 0.0))
    return _guard(path, {"current": "current_a", "excitation": "excitation_at"}, mg.TabulatedArmatureReaction,
                  spec["current_a"], spec["excitation_at"])


_ARMATURE_NAMES = {"armature_resistance": "armature_resistance_ohm", "brush_drop": "brush_drop_v",
                   "armature_inductance": "armature_inductance_h", "inertia": "inertia_kg_m2",
                   "safe_speed": "safe_speed_rpm", "reference_temperature": "reference_temperature_c",
                   "winding_temperature": "winding_temperature_c", "stray_load": "stray_load_n_m_per_a2",
                   "external_resistance": "external_resistance_ohm", "name": "name"}


def _armature_kwargs(spec, path, rating):
    """Machine keywords of the armature keys (SI)."""
    kw = {}
    for model, key in _ARMATURE_NAMES.items():
        if key in spec:
            kw[model] = spec[key]
    if "safe_speed" in kw:
        kw["safe_speed"] = kw["safe_speed"] * RPM
    if "stray_load_percent" in spec:
        if "stray_load_n_m_per_a2" in spec:
            raise ScenarioError(f"{path}.stray_load_percent", "give either stray_load_percent or "
                                                              "stray_load_n_m_per_a2, not both")
        if rating is None:
            raise ScenarioError(f"{path}.stray_load_percent", "needs a rating (the allowance is a share of "
                                                              "the rated output); give stray_load_n_m_per_a2 instead")
        from ..models.losses import stray_load_coefficient

        kw["stray_load"] = stray_load_coefficient(spec["stray_load_percent"] / 100.0, rating.output, rating.current,
                                                  rating.speed)
    if "rotational_loss" in spec:
        kw["rotational_loss"] = _rotational_loss(spec["rotational_loss"], f"{path}.rotational_loss")
    if "armature_reaction" in spec:
        kw["armature_reaction"] = _armature_reaction(spec["armature_reaction"], f"{path}.armature_reaction")
    return kw


def _family(spec, path):
    from ..studies.rating import DEFAULT_CONNECTIONS, Armature, equal_rating_family

    rating = _rating(spec["rating"], f"{path}.rating")
    apath = f"{path}.armature"
    arm_kw = _armature_kwargs(spec["armature"], apath, rating)
    arm_kw.pop("external_resistance", None)
    arm_kw.pop("name", None)
    arm = _guard(apath, _ARMATURE_NAMES, Armature, **arm_kw)
    mag = _magnetization(spec["magnetization"], f"{path}.magnetization") if "magnetization" in spec else None
    names = {"series_share": "series_share", "shunt_field_share": "shunt_field_share",
             "series_resistance": "series_resistance_ohm", "compound_series_resistance":
             "compound_series_resistance_ohm", "field_voltage": "field_voltage_v", "magnet_material":
             "magnet_material", "magnet_temperature": "magnet_temperature_c", "demagnetization":
             "demagnetization_per_a", "connections": "connections", "magnetization": "magnetization",
             "name": "name"}
    back = {v: k for k, v in names.items()}
    kw = {back[k]: v for k, v in spec.items() if k in back and k != "magnetization"}
    kw["connections"] = tuple(spec.get("connections", DEFAULT_CONNECTIONS))
    return _guard(path, names, equal_rating_family, arm, rating, magnetization=mag, **kw)


_FIELD_NAMES = {"field_resistance": "field_resistance_ohm", "field_turns": "field_turns",
                "field_rheostat": "field_rheostat_ohm", "field_inductance": "field_inductance_h",
                "field_voltage": "field_voltage_v", "count_field_input": "count_field_input",
                "series_turns": "series_turns", "series_resistance": "series_resistance_ohm",
                "diverter_resistance": "diverter_resistance_ohm", "series_inductance": "series_inductance_h",
                "kind": "kind", "shunt_connection": "shunt_connection", "kphi": "kphi_v_s_per_rad",
                "magnet_material": "magnet_material", "magnet_temperature": "magnet_temperature_c",
                "demagnetization": "demagnetization_per_a", "magnetization": "magnetization", "rating": "rating"}


def _machine(spec, path, key):
    from ..models import connections as cn

    classes = {"separately_excited": cn.SeparatelyExcited, "shunt": cn.Shunt, "series": cn.Series,
               "compound": cn.Compound, "permanent_magnet": cn.PermanentMagnet}
    rating = _rating(spec["rating"], f"{path}.rating") if "rating" in spec else None
    kw = _armature_kwargs(spec, path, rating)
    kw.setdefault("name", key)
    back = {v: k for k, v in _FIELD_NAMES.items()}
    for k, v in spec.items():
        if k in back and k not in ("magnetization", "rating"):
            kw[back[k]] = v
    if "magnetization" in spec:
        kw["magnetization"] = _magnetization(spec["magnetization"], f"{path}.magnetization")
    if rating is not None:
        kw["rating"] = rating
    return _guard(path, {**_ARMATURE_NAMES, **_FIELD_NAMES}, classes[spec["connection"]], **kw)


def _gearing(spec, path):
    from ..models.loads import Gearing

    if "gearing" not in spec:
        return None
    g = spec["gearing"]
    return _guard(f"{path}.gearing", {}, Gearing, g["ratio"], g["efficiency"])


def _load(spec, path, base_dir):
    from ..models import loads as ld

    kind = spec["kind"]
    common = {}
    if kind not in ("breakaway", "sum"):
        common["gearing"] = _gearing(spec, path)
    if kind != "sum" and "load_inertia_kg_m2" in spec:
        common["load_inertia"] = spec["load_inertia_kg_m2"]
    names = {"load_inertia": "load_inertia_kg_m2", "gearing": "gearing"}
    g = spec.get
    if kind == "hoist":
        common.pop("load_inertia", None)
        if "load_inertia_kg_m2" in spec:
            raise ScenarioError(f"{path}.load_inertia_kg_m2", "a hoist takes drum_inertia_kg_m2 instead")
        names.update(load_mass="load_mass_kg", hook_mass="hook_mass_kg", rope_mass="rope_mass_kg",
                     drum_diameter="drum_diameter_m", reeving="reeving", drum_inertia="drum_inertia_kg_m2",
                     g="gravity_m_s2")
        extra = {"g": spec["gravity_m_s2"]} if "gravity_m_s2" in spec else {}
        return _guard(path, names, ld.Hoist, load_mass=spec["load_mass_kg"], hook_mass=g("hook_mass_kg", 0.0),
                      rope_mass=g("rope_mass_kg", 0.0), drum_diameter=spec["drum_diameter_m"],
                      reeving=g("reeving", 1.0), drum_inertia=g("drum_inertia_kg_m2", 0.0), **common, **extra)
    if kind == "conveyor":
        by_mass = [k for k in ("mass_kg", "friction_coefficient", "incline_deg") if k in spec]
        direct = [k for k in ("friction_pull_n", "lift_pull_n", "moving_mass_kg") if k in spec]
        if by_mass and direct:
            raise ScenarioError(f"{path}.{by_mass[0]}", f"give the belt pulls ({', '.join(direct)}) or the mass "
                                                        f"and friction coefficient ({', '.join(by_mass)}), not both")
        if by_mass:
            for need in ("mass_kg", "friction_coefficient"):
                if need not in spec:
                    raise ScenarioError(f"{path}.{need}", "missing: expected a number >= 0")
            names.update(mass="mass_kg", friction_coefficient="friction_coefficient", incline="incline_deg",
                         pulley_diameter="pulley_diameter_m")
            return _guard(path, names, ld.Conveyor.from_mass, spec["mass_kg"], spec["friction_coefficient"],
                          spec["pulley_diameter_m"], incline=g("incline_deg", 0.0) * _DEG, **common)
        if "friction_pull_n" not in spec:
            raise ScenarioError(f"{path}.friction_pull_n", "missing: expected a number >= 0 (or give mass_kg and "
                                                           "friction_coefficient)")
        names.update(friction_pull="friction_pull_n", pulley_diameter="pulley_diameter_m", lift_pull="lift_pull_n",
                     moving_mass="moving_mass_kg")
        return _guard(path, names, ld.Conveyor, spec["friction_pull_n"], spec["pulley_diameter_m"],
                      lift_pull=g("lift_pull_n", 0.0), moving_mass=g("moving_mass_kg", 0.0), **common)
    if kind in ("fan", "pump"):
        cls = ld.Fan if kind == "fan" else ld.Pump
        has_t, has_p = "rated_torque_n_m" in spec, "rated_power_kw" in spec
        if has_t == has_p:
            raise ScenarioError(f"{path}.rated_torque_n_m", "give exactly one of rated_torque_n_m or rated_power_kw")
        w = spec["rated_speed_rpm"] * RPM
        t = spec["rated_torque_n_m"] if has_t else spec["rated_power_kw"] * 1000.0 / w
        if "static_head_fraction" in spec and "static_torque_n_m" in spec:
            raise ScenarioError(f"{path}.static_head_fraction", "give static_head_fraction or static_torque_n_m, "
                                                                "not both")
        static = g("static_head_fraction", 0.0) * t if "static_head_fraction" in spec else g("static_torque_n_m", 0.0)
        names.update(rated_speed="rated_speed_rpm", rated_torque="rated_torque_n_m" if has_t else "rated_power_kw",
                     static_torque="static_torque_n_m" if "static_torque_n_m" in spec else "static_head_fraction")
        return _guard(path, names, cls, rated_speed=w, rated_torque=t, static_torque=static, **common)
    if kind == "constant_torque":
        names.update(load_torque="torque_n_m")
        return _guard(path, names, ld.ConstantTorque, spec["torque_n_m"], active=g("active", False), **common)
    if kind == "linear":
        names.update(coefficient="coefficient_n_m_s_per_rad", offset="offset_n_m")
        return _guard(path, names, ld.Linear, spec["coefficient_n_m_s_per_rad"], g("offset_n_m", 0.0), **common)
    if kind == "constant_power":
        names.update(power="power_kw", min_speed="min_speed_rpm")
        return _guard(path, names, ld.ConstantPower, spec["power_kw"] * 1000.0, spec["min_speed_rpm"] * RPM,
                      **common)
    if kind == "breakaway":
        names.update(running_torque="running_torque_n_m", breakaway_torque="breakaway_torque_n_m",
                     release_speed="release_speed_rpm")
        return _guard(path, names, ld.Breakaway, spec["running_torque_n_m"], spec["breakaway_torque_n_m"],
                      spec["release_speed_rpm"] * RPM, **common)
    if kind == "table":
        file = Path(spec["file"])
        full = file if file.is_absolute() or base_dir is None else Path(base_dir) / file
        return _guard(f"{path}.file", names, ld.TableLoad.from_csv, full, **common)
    if kind == "formula":
        from ..errors import FormulaError

        names.update(text="torque_n_m", speed_unit="speed_unit", variable="variable")
        try:
            return _guard(path, names, ld.FormulaLoad, spec["torque_n_m"], speed_unit=g("speed_unit", "rpm"),
                          variable=g("variable"), **common)
        except ScenarioError as exc:
            if isinstance(exc.__cause__, FormulaError):  # it points at the text
                raise ScenarioError(f"{path}.torque_n_m", str(exc.__cause__)) from exc.__cause__
            raise
    raise AssertionError(kind)  # pragma: no cover - sums are built by _build


def _settings(control, supply, path):
    from ..studies.comparison import ControlSettings

    names = {"voltage": "voltage_v", "field_rheostat": "field_rheostat_ohm", "diverter_resistance":
             "diverter_resistance_ohm", "external_resistance": "external_resistance_ohm", "winding_temperature":
             "winding_temperature_c", "magnet_temperature": "magnet_temperature_c"}
    back = {v: k for k, v in names.items()}
    kw = {back[k]: v for k, v in control.items()}
    if supply is not None and "voltage_v" in supply:
        kw["voltage"] = supply["voltage_v"]
    return _guard(path, names, ControlSettings, **kw)


def _build(doc, base_dir):
    machines = {}
    for key, spec in doc["machines"].items():
        path = f"machines.{key}"
        if key == "family":
            fam = _family(spec, path)
            for k in fam:
                if k in doc["machines"]:
                    raise ScenarioError(f"machines.{k}", f"the name {k!r} is taken by a member of the family; "
                                                         "rename this machine")
                machines[k] = fam[k]
        else:
            machines[key] = _machine(spec, path, key)
    loads = {}
    for name, spec in doc["loads"].items():
        if spec["kind"] != "sum":
            loads[name] = _load(spec, f"loads.{name}", base_dir)
    for name, spec in doc["loads"].items():
        if spec["kind"] == "sum":
            from ..models.loads import SumLoad

            loads[name] = _guard(f"loads.{name}", {}, SumLoad, tuple(loads[p] for p in spec["parts"]))
    loads = {name: loads[name] for name in doc["loads"]}  # file order
    settings = _settings(doc.get("control", {}), doc.get("supply"), "control")
    overrides = {}
    for name, spec in doc["loads"].items():
        if "control" in spec:
            merged = {**doc.get("control", {}), **spec["control"]}
            overrides[name] = _settings(merged, doc.get("supply"), f"loads.{name}.control")
    from ..studies.cautions import Thresholds

    thresholds = _guard("thresholds", {}, Thresholds, **doc.get("thresholds", {}))
    from .scenario_requirements import build_selection

    selection = build_selection(doc, machines, settings, overrides)
    spread = None
    if "tolerance" in doc:
        from .scenario_requirements import build_spread

        spread = build_spread(doc["tolerance"], "tolerance")
    return machines, loads, settings, overrides, thresholds, selection, spread


# --------------------------------------------------------------------------------------------
# the scenario


@dataclass(frozen=True, eq=False)
class Scenario(ChoiceOfConnection):
    """A checked scenario: the normalized document and the machines and loads built from it.

    Two scenarios are equal when their documents are equal (the folder they came from does not
    count). Build one with :func:`load_scenario`, :func:`loads_scenario` or
    :func:`scenario_from_dict`.

    Attributes
    ----------
    document : dict
        The normalized document (numbers as float; absent keys absent). Do not change it.
    source : pathlib.Path or None
        The file read, if any; relative table paths are resolved from its folder.
    """

    document: dict
    source: Path | None = None
    base_dir: Path | None = None
    _built: tuple = field(default=(), repr=False)

    def __eq__(self, other):
        return isinstance(other, Scenario) and self.document == other.document

    def __hash__(self):  # documents hold dicts; equal scenarios hash alike by title
        return hash(self.title)

    # --- the study
    @property
    def title(self) -> str:
        return self.document["study"]["title"]

    @property
    def author(self) -> str:
        return self.document["study"].get("author", "")

    @property
    def date(self):
        """The study date (``datetime.date`` or the string given), or None."""
        return self.document["study"].get("date")

    @property
    def units(self) -> str:
        """Display unit system, ``"si"`` or ``"us"``."""
        return self.document["study"].get("units", "si")

    @property
    def notes(self) -> str:
        return self.document["study"].get("notes", "")

    @property
    def name(self) -> str:
        """The file stem, or the title when not read from a file."""
        return self.source.stem if self.source is not None else self.title

    @property
    def default_load(self) -> str:
        """Name of the load :meth:`compare` uses by default (``study.load``, else the first)."""
        return self.document["study"].get("load") or next(iter(self.document["loads"]))

    # --- models
    def machines(self) -> dict:
        """Candidate machines, key -> Machine (family members first, in file order)."""
        return dict(self._built[0])

    def loads(self) -> dict:
        """Loads, name -> load object (file order)."""
        return dict(self._built[1])

    @property
    def settings(self):
        """The scenario's :class:`~dcchar.studies.comparison.ControlSettings` (supply voltage included)."""
        return self._built[2]

    @property
    def thresholds(self):
        """The :class:`~dcchar.studies.cautions.Thresholds` of the caution rules."""
        return self._built[4]

    def settings_for(self, load_name: str | None = None):
        """Settings for one load: the scenario's, changed by the load's own ``control`` table."""
        name = self._load_name(load_name)
        return self._built[3].get(name, self.settings)

    def load_description(self, load_name: str | None = None) -> str:
        """The load's ``description`` key, or the model's own one-line description."""
        name = self._load_name(load_name)
        return self.document["loads"][name].get("description") or self._built[1][name].describe()

    def _load_name(self, load_name):
        if load_name is None:
            return self.default_load
        if load_name not in self._built[1]:
            raise ScenarioError("loads", f"{load_name!r} is not allowed: expected one of {tuple(self._built[1])}")
        return load_name

    def compare(self, load_name: str | None = None, **kwargs):
        """Compare every machine on one load (:func:`dcchar.studies.comparison.compare`).

        Parameters
        ----------
        load_name : str, optional
            Default: :attr:`default_load`.
        **kwargs
            Passed to :func:`~dcchar.studies.comparison.compare` (``points``, ``method``, ...).
        """
        from ..studies.comparison import compare

        name = self._load_name(load_name)
        return compare(self._built[0], self._built[1][name], self.settings_for(name), thresholds=self.thresholds,
                       **kwargs)


def scenario_from_dict(document, base_dir=None, source=None) -> Scenario:
    """Check a document (as :func:`tomllib.loads` returns it) and build the scenario.

    Parameters
    ----------
    document : dict
    base_dir : str or os.PathLike, optional
        Folder that relative table paths are taken from. Default: the current folder.
    source : path, optional
        The file the document came from (for names and messages).

    Raises
    ------
    ScenarioError
    """
    doc = normalize_document(document)
    base = Path(base_dir) if base_dir is not None else None
    built = _build(doc, base)
    return Scenario(document=doc, source=Path(source) if source is not None else None, base_dir=base, _built=built)


def loads_scenario(text: str, base_dir=None, source=None) -> Scenario:
    """Read a scenario from TOML text (see :func:`scenario_from_dict`)."""
    if not isinstance(text, str):
        raise ScenarioError(str(source or ""), f"{type(text).__name__} is not allowed: expected TOML text (str)")
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ScenarioError(str(source) if source else "", f"not valid TOML: {exc}") from None
    return scenario_from_dict(doc, base_dir=base_dir, source=source)


def load_scenario(path) -> Scenario:
    """Read and check a scenario file.

    Parameters
    ----------
    path : str or os.PathLike
        A TOML file (UTF-8). Table loads are read relative to its folder.

    Returns
    -------
    Scenario

    Raises
    ------
    ScenarioError
        Unreadable file, TOML syntax error, or an invalid document (the key path, the value and
        what is allowed are named); a newer ``schema_version`` is refused.
    """
    p = Path(os.fspath(path))
    try:
        data = p.read_bytes()
    except OSError as exc:
        raise ScenarioError(str(p), f"cannot read the scenario file: {exc.strerror or exc}") from None
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise ScenarioError(str(p), f"not UTF-8 text ({exc.reason} at byte {exc.start})") from None
    return loads_scenario(text, base_dir=p.parent, source=p)


def _rebased(document: dict, old: Path | None, new: Path) -> dict:
    """The document with relative table paths re-expressed from folder ``new``."""
    doc = copy.deepcopy(document)
    if old is None or Path(os.path.abspath(old)) == Path(os.path.abspath(new)):
        return doc
    for spec in doc["loads"].values():
        if spec["kind"] == "table" and not Path(spec["file"]).is_absolute():
            target = os.path.abspath(os.path.join(old, spec["file"]))
            spec["file"] = Path(os.path.relpath(target, os.path.abspath(new))).as_posix()
    return doc


def dump_scenario(scenario: Scenario) -> str:
    """The scenario as TOML text (``schema_version`` first); reading it back gives an equal scenario."""
    doc = {"schema_version": SCHEMA_VERSION}
    doc.update({k: v for k, v in scenario.document.items() if k != "schema_version"})
    return dumps(doc)


def save_scenario(scenario: Scenario, path) -> Path:
    """Write the scenario to ``path`` atomically (the folder must exist). Returns the path.

    Relative table paths are rewritten so that they still point at the same files from the new
    folder.
    """
    from .atomic import atomic_write_text

    p = Path(os.fspath(path))
    if not p.parent.is_dir():
        raise ScenarioError(str(p), "the folder does not exist")
    doc = _rebased(scenario.document, scenario.base_dir, p.parent)
    moved = Scenario(document=doc, source=p, base_dir=p.parent, _built=scenario._built)
    return atomic_write_text(p, dump_scenario(moved))
