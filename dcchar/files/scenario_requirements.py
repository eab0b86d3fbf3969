"""Requirements and tolerance spreads of a scenario: the ``[requirements]`` and ``[tolerance]`` tables.

A ``[loads.<name>.requirements]`` table (or a top-level ``[requirements]`` table, used by every
load without its own) says what the drive on that load must do, with the unit in each key name
(see :data:`dcchar.files.scenario_schema.REQUIREMENTS`): ``defaults = "hoist"`` starts from
:func:`dcchar.studies.selection.default_requirements` for that kind at the candidates' rating,
``leave_out`` drops figures from it, value keys (``starting_torque_ratio``,
``speed_regulation_percent``, ``lowering = true``, ...) add or replace one requirement each,
and ``[...requirements.details.<figure>]`` tables set the finer points (marginal band,
description, basis, torque step, ...). A default requirement whose value or details are changed
loses its default description (which states the old numbers) unless a new one is given.

A ``[tolerance]`` table holds the spreads of :class:`dcchar.studies.tolerance.Spread` (per cent
in the file, shares inside), the samples per candidate and the seed.

Units: speeds in the file in r/min, converted to rad/s; per cent to shares where the model takes
a share (efficiency, marginal band, spreads); the speed regulation and the speed change on a load
step stay in per cent, as the requirements state them.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from ..errors import ScenarioError
from ..models.units import RPM

__all__ = ["ChoiceOfConnection", "build_selection", "build_requirements", "build_settings", "build_spread", "run_tolerance", "tolerance_options", "rating_for_defaults", "ScenarioTolerance",
           "DEFAULT_SAMPLES", "DEFAULT_SEED"]

#: Samples per candidate of a scenario's tolerance study when ``[tolerance]`` does not say (fewer
#: than the library's default, so that a report stays quick; raise it for a final study).
DEFAULT_SAMPLES = 2000
DEFAULT_SEED = 0

def _times(factor):
    return lambda v: v * factor


def _percent(v):
    return v / 100.0


def _same(v):
    return v


# value key -> (requirement field, conversion from the file unit to the model's); None: a flag
_VALUE_KEYS = {
    "speed_regulation_percent": ("value", _same), "top_speed_rpm": ("value", _times(RPM)),
    "low_speed_rpm": ("value", _times(RPM)), "starting_torque_ratio": ("value", _same),
    "starting_current_a": ("value", _same), "acceleration_time_s": ("value", _same),
    "speed_hold_percent": ("value", _same), "lowering": (None, None), "efficiency_percent": ("value", _percent),
    "constant_power_range_ratio": ("value", _same), "lost_load": (None, None),
    "lost_load_rpm": ("value", _times(RPM)), "lost_field": (None, None), "lost_field_rpm": ("value", _times(RPM)),
}
# detail key -> (requirement field, conversion)
_DETAIL_KEYS = {"marginal_percent": ("marginal", _percent), "description": ("description", _same),
                "torque_n_m": ("torque", _same), "min_field_share": ("min_field_share", _same),
                "min_voltage_fraction": ("min_voltage_fraction", _same), "basis": ("basis", _same),
                "target_fraction": ("target_fraction", _same), "step_n_m": ("step", _same)}


def rating_for_defaults(machines: dict):
    """The rating a default requirement set is set from: the first rated candidate's (the family
    comes first), or None."""
    for m in machines.values():
        if m.rating is not None:
            return m.rating
    return None


def _names_for(figure: str, value_key: str | None) -> dict:
    """Model field names (as the requirement classes raise them) -> scenario keys."""
    names = {f"{figure}.value": value_key or "defaults"}
    for key, (fld, _) in _DETAIL_KEYS.items():
        names[f"{figure}.{fld}"] = f"details.{figure}.{key}"
    return names


def build_requirements(spec: dict, path: str, rating):
    """The :class:`~dcchar.studies.selection.Requirements` of one normalized requirements table.

    Parameters
    ----------
    spec : dict
        The normalized table (see :data:`dcchar.files.scenario_schema.REQUIREMENTS`).
    path : str
        Its key path, for messages.
    rating : Rating or None
        The candidates' rating, for a default set.

    Raises
    ------
    ScenarioError
        Naming the key path at fault.
    """
    from ..studies.selection import REQUIREMENT_TYPES, Requirements, default_requirements
    from .scenario import _guard
    from .scenario_schema import REQUIREMENT_VALUE_KEYS

    kind = spec.get("defaults")
    if kind is not None:
        if rating is None:
            raise ScenarioError(f"{path}.defaults", "a default set needs a rated candidate machine (its limits are "
                                                    "set from the rating): give the family or a machine a rating, "
                                                    "or state every requirement")
        reqs = list(_guard(f"{path}.defaults", {}, default_requirements, kind, rating))
    else:
        reqs = []
    leave = set(spec.get("leave_out", ()))
    for i, fig in enumerate(spec.get("leave_out", ())):
        if fig not in {r.figure for r in reqs}:
            raise ScenarioError(f"{path}.leave_out[{i}]", f"{fig!r} is not allowed: expected a figure of the "
                                                          f"default set ({', '.join(r.figure for r in reqs) or 'none'})")
    # value keys, in file order; a false flag drops the figure like leave_out
    changes: dict = {}
    value_key: dict = {}
    for key, v in spec.items():
        if key not in _VALUE_KEYS:
            continue
        fig = REQUIREMENT_VALUE_KEYS[key]
        fld, convert = _VALUE_KEYS[key]
        if v is False:
            leave.add(fig)
            continue
        changes.setdefault(fig, {})
        value_key[fig] = key
        if fld is not None:
            changes[fig][fld] = convert(v)
        elif fig in ("lost_load", "lost_field"):
            changes[fig]["value"] = None  # limit: each machine's safe speed
    details = spec.get("details", {})
    for fig, table in details.items():
        if fig in leave:
            raise ScenarioError(f"{path}.details.{fig}", f"the {fig} requirement is left out here; remove these "
                                                         "details or keep the requirement")
        kw = changes.setdefault(fig, {})
        for key, v in table.items():
            fld, convert = _DETAIL_KEYS[key]
            kw[fld] = convert(v)
    out = []
    present = {r.figure for r in reqs}
    for r in reqs:
        if r.figure in leave:
            continue
        kw = changes.get(r.figure)
        if kw and any(getattr(r, k) != v for k, v in kw.items()):
            kw = dict(kw)
            kw.setdefault("description", "")  # the default's words state the old numbers
            r = _guard(path, _names_for(r.figure, value_key.get(r.figure)), r.replace, **kw)
        out.append(r)
    for fig, kw in changes.items():
        if fig in present or fig in leave:
            continue
        if fig not in value_key:
            raise ScenarioError(f"{path}.details.{fig}", "there is no such requirement to refine: give its value "
                                                         f"key ({_value_key_of(fig)}) or a default set that has it")
        cls = REQUIREMENT_TYPES[fig]
        if fig == "speed_hold" and "step" not in kw:
            raise ScenarioError(f"{path}.details.speed_hold.step_n_m", "missing: expected a number > 0 (the rise "
                                                                       "of the load torque the speed must hold "
                                                                       "against [N*m])")
        out.append(_guard(path, _names_for(fig, value_key[fig]), cls, **kw))
    if not out:
        raise ScenarioError(path, "no requirement is left: keep at least one")
    return Requirements(out)


def _value_key_of(fig: str) -> str:
    from .scenario_schema import REQUIREMENT_VALUE_KEYS

    return " or ".join(k for k, f in REQUIREMENT_VALUE_KEYS.items() if f == fig)


def build_settings(spec: dict, control, path: str):
    """The :class:`~dcchar.studies.selection.SelectionSettings` of a requirements table: the load's
    control settings and the starter (``starter_multiple`` x rated current at standstill, default
    2; or a fixed ``starting_resistance_ohm``, 0 for a direct-on start)."""
    from ..studies.selection import SelectionSettings
    from .scenario import _guard

    kw = {"control": control}
    if "starter_multiple" in spec:
        kw["starter_multiple"] = spec["starter_multiple"]
    if "starting_resistance_ohm" in spec:
        kw["starting_resistance"] = spec["starting_resistance_ohm"]
    return _guard(path, {"starter_multiple": "starter_multiple", "starting_resistance": "starting_resistance_ohm"},
                  SelectionSettings, **kw)


def build_spread(spec: dict, path: str = "tolerance"):
    """The :class:`~dcchar.studies.tolerance.Spread` of a normalized ``[tolerance]`` table (library
    defaults for absent keys)."""
    from ..studies.tolerance import Spread
    from .scenario import _guard

    kw = {}
    for key, fld in (("resistance_percent", "resistance"), ("magnetization_percent", "magnetization"),
                     ("supply_voltage_percent", "supply_voltage")):
        if key in spec:
            kw[fld] = spec[key] / 100.0
    for key in ("winding_temperature_c", "magnet_temperature_c"):
        if key in spec:
            kw[key[:-2]] = tuple(spec[key])
    for key in ("distribution", "sigmas"):
        if key in spec:
            kw[key] = spec[key]
    names = {"resistance": "resistance_percent", "magnetization": "magnetization_percent",
             "supply_voltage": "supply_voltage_percent", "winding_temperature": "winding_temperature_c",
             "winding_temperature[0]": "winding_temperature_c[0]", "winding_temperature[1]": "winding_temperature_c[1]",
             "magnet_temperature": "magnet_temperature_c", "magnet_temperature[0]": "magnet_temperature_c[0]",
             "magnet_temperature[1]": "magnet_temperature_c[1]", "distribution": "distribution", "sigmas": "sigmas"}
    return _guard(path, names, Spread, **kw)


def tolerance_options(spec: dict) -> dict:
    """``samples``, ``seed`` and ``robust_share`` of a normalized ``[tolerance]`` table (defaults filled in)."""
    return {"samples": int(spec.get("samples", DEFAULT_SAMPLES)), "seed": int(spec.get("seed", DEFAULT_SEED)),
            "robust_share": spec.get("robust_share_percent", 90.0) / 100.0}


def build_selection(doc, machines, settings, overrides):
    """load name -> (Requirements, SelectionSettings, key path) for loads with requirements."""
    top = doc.get("requirements")
    if top is None and not any("requirements" in spec for spec in doc["loads"].values()):
        return {}
    rating = rating_for_defaults(machines)
    shared = build_requirements(top, "requirements", rating) if top is not None else None
    out = {}
    for name, spec in doc["loads"].items():
        own = spec.get("requirements")
        if own is None and top is None:
            continue
        path = f"loads.{name}.requirements" if own is not None else "requirements"
        table = own if own is not None else top
        reqs = build_requirements(own, path, rating) if own is not None else shared
        out[name] = (reqs, build_settings(table, overrides.get(name, settings), path), path)
    return out



def run_tolerance(scenario, name: str, progress=None, samples=None, seed=None, matrix=None) -> "ScenarioTolerance":
    """The work of :meth:`dcchar.files.scenario.Scenario.tolerance` (see there)."""
    from ..studies.tolerance import curve_bands, tolerance_study
    from .scenario import _guard

    m = scenario.selection(name) if matrix is None else matrix
    opts = tolerance_options(scenario.document.get("tolerance", {}))
    n = opts["samples"] if samples is None else samples
    sd = opts["seed"] if seed is None else seed
    spread = scenario.spread
    # the pass shares take most of the time (several studies per sample), the bands the rest
    split = 0.85

    def part(lo, hi):
        return None if progress is None else (lambda f: progress(lo + (hi - lo) * f))

    study = _guard("tolerance", {"samples": "samples"}, tolerance_study, m, spread, samples=n, seed=sd,
                   robust_share=opts["robust_share"], progress=part(0.0, split))
    bands = _guard("tolerance", {"samples": "samples"}, curve_bands, m, spread, samples=n, seed=sd,
                   progress=part(split, 1.0))
    return ScenarioTolerance(name, m, study, bands, spread, n, sd)


@dataclass(frozen=True, eq=False)
class ScenarioTolerance:
    """A scenario's tolerance study on one load: the matrix it perturbs, the pass shares and the bands.

    Attributes
    ----------
    load : str
    matrix : SelectionMatrix
    study : ToleranceStudy
        Pass shares of every cell (:func:`dcchar.studies.tolerance.tolerance_study`).
    bands : dict
        key -> CurveBand (:func:`dcchar.studies.tolerance.curve_bands`).
    spread : Spread
    samples : int
        Per candidate.
    seed : int
    """

    load: str
    matrix: object
    study: object
    bands: dict = field(repr=False)
    spread: object = None
    samples: int = DEFAULT_SAMPLES
    seed: int = DEFAULT_SEED

    def describe(self) -> str:
        """The spread and the sampling in one line of plain words."""
        s = self.spread
        parts = [f"winding resistances +/- {100 * s.resistance:g} %", f"magnetization +/- {100 * s.magnetization:g} %",
                 f"supply voltage +/- {100 * s.supply_voltage:g} %"]
        if s.winding_temperature is not None:
            parts.append(f"windings at {s.winding_temperature[0]:g} to {s.winding_temperature[1]:g} °C")
        if s.magnet_temperature is not None:
            parts.append(f"magnets at {s.magnet_temperature[0]:g} to {s.magnet_temperature[1]:g} °C")
        how = "uniform" if s.distribution == "uniform" else f"normal, the band = {s.sigmas:g} standard deviations"
        return (f"{', '.join(parts)} ({how}); {self.samples} samples per candidate, seed {self.seed}; a nominal "
                f"pass with fewer than {100 * self.study.robust_share:g} % of samples passing is fragile")


class ChoiceOfConnection:
    """The methods of :class:`dcchar.files.scenario.Scenario` that judge its candidates against
    the requirements of a load and study their spread (kept here to keep that module short)."""

    @property
    def requirement_loads(self) -> tuple:
        """Names of the loads that have requirements (their own table, or the top-level one), file order."""
        return tuple(self._built[5])

    def has_requirements(self, load_name: str | None = None) -> bool:
        """Whether the load (default: :attr:`default_load`) has requirements to judge the candidates by."""
        return self._load_name(load_name) in self._built[5]

    def _selection_entry(self, load_name):
        name = self._load_name(load_name)
        try:
            return name, self._built[5][name]
        except KeyError:
            raise ScenarioError(f"loads.{name}.requirements", "no requirements for this load: add a "
                                                              f"[loads.{name}.requirements] table (or a top-level "
                                                              "[requirements] table), e.g. defaults = "
                                                              "\"hoist\"") from None

    def requirements(self, load_name: str | None = None):
        """The :class:`~dcchar.studies.selection.Requirements` of one load (default :attr:`default_load`).

        Raises
        ------
        ScenarioError
            The load has no requirements.
        """
        return self._selection_entry(load_name)[1][0]

    def requirements_path(self, load_name: str | None = None) -> str:
        """Key path of the requirements table one load is judged by (its own, or ``"requirements"``)."""
        return self._selection_entry(load_name)[1][2]

    def selection_settings(self, load_name: str | None = None):
        """The :class:`~dcchar.studies.selection.SelectionSettings` of one load: its control
        settings and the starter of its requirements table."""
        return self._selection_entry(load_name)[1][1]

    def selection(self, load_name: str | None = None):
        """The selection matrix of every candidate on one load (default :attr:`default_load`),
        judged against that load's requirements (:func:`dcchar.studies.selection.selection_matrix`).

        Returns
        -------
        SelectionMatrix

        Raises
        ------
        ScenarioError
            The load has no requirements.
        """
        from ..studies.selection import selection_matrix

        name, (reqs, settings, _) = self._selection_entry(load_name)
        return selection_matrix(self._built[0], self._built[1][name], reqs, settings)

    @property
    def has_tolerance(self) -> bool:
        """Whether the scenario asks for a tolerance study (a ``[tolerance]`` table)."""
        return self._built[6] is not None

    @property
    def spread(self):
        """The :class:`~dcchar.studies.tolerance.Spread` of ``[tolerance]`` (the library's defaults without one)."""
        if self._built[6] is not None:
            return self._built[6]
        from ..studies.tolerance import Spread

        return Spread()

    def tolerance(self, load_name: str | None = None, progress=None, *, samples: int | None = None, seed=None,
                  matrix=None):
        """The tolerance study of one load's selection matrix: pass shares of every cell and the
        bands of every candidate's speed-torque curve under :attr:`spread`.

        Parameters
        ----------
        load_name : str, optional
            Default: :attr:`default_load`; it must have requirements.
        progress : callable, optional
            Called with the fraction done (0 to 1] as the samples are drawn.
        samples, seed : int, optional
            Default: the ``[tolerance]`` table's, else
            :data:`~dcchar.files.scenario_requirements.DEFAULT_SAMPLES` per candidate and seed 0.
        matrix : SelectionMatrix, optional
            The load's matrix when already computed (:meth:`selection`).

        Returns
        -------
        dcchar.files.scenario_requirements.ScenarioTolerance
        """
        from .scenario_requirements import run_tolerance

        return run_tolerance(self, self._load_name(load_name), progress, samples, seed, matrix)
