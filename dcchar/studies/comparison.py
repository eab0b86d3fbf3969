"""Compare candidate field connections against one load: the question of a design review.

:func:`compare` takes candidate machines (by default the equal-rating family of one armature), a
load and the control settings, and answers for each candidate: its characteristic, every
operating point and the one it settles at, speed regulation, starting current and torque, and the
cautions that apply. The widget kit, the report and the command line all ask this one function,
so the numbers they show are the same.

Examples
--------
>>> from dcchar.studies.comparison import compare, ControlSettings
>>> from dcchar.studies.demo import demo_family, DEMO_RATING
>>> from dcchar.models.loads import ConstantTorque
>>> c = compare(demo_family(), ConstantTorque(0.8 * DEMO_RATING.torque))
>>> sorted(c.candidates)[:2]
['long_shunt_compound', 'permanent_magnet']
"""

from __future__ import annotations

import dataclasses
import functools
import math
from dataclasses import dataclass, field

from ..models.characteristic import no_load_point, per_machine
from ..models.connections import Compound, Machine, PermanentMagnet, SeparatelyExcited, Series, Shunt
from ..models.units import RPM
from ..models.validation import in_range, nonnegative, positive, real
from .cautions import Thresholds, all_cautions
from .operating import operating_points, speed_regulation, starting

__all__ = ["ControlSettings", "Candidate", "Comparison", "compare", "apply_settings", "working_currents",
           "TABLE_COLUMNS"]


@dataclass(frozen=True)
class ControlSettings:
    """The settings a user moves in a design meeting; each applies where the connection has it.

    Parameters
    ----------
    voltage : float or None
        Supply (armature) voltage; None: each machine's rated voltage. [V]
    field_rheostat : float, default 0
        Resistance added in the shunt or separate field circuit (field weakening). [ohm]
    diverter_resistance : float, default inf
        Resistor across the series field (series and compound). [ohm]
    external_resistance : float, default 0
        Resistance in series with the armature. [ohm]
    winding_temperature : float or None
        Copper temperature; None keeps each machine's own. [degC]
    magnet_temperature : float or None
        Permanent-magnet temperature; None keeps the machine's own. [degC]
    """

    voltage: float | None = None
    field_rheostat: float = 0.0
    diverter_resistance: float = math.inf
    external_resistance: float = 0.0
    winding_temperature: float | None = None
    magnet_temperature: float | None = None

    def __post_init__(self):
        if self.voltage is not None:
            positive("voltage", self.voltage)
        nonnegative("field_rheostat", self.field_rheostat)
        positive("diverter_resistance", self.diverter_resistance, allow_inf=True)
        nonnegative("external_resistance", self.external_resistance)
        if self.winding_temperature is not None:
            in_range("winding_temperature", self.winding_temperature, -60.0, 250.0)
        if self.magnet_temperature is not None:
            in_range("magnet_temperature", self.magnet_temperature, -60.0, 350.0)

    def replace(self, **changes) -> "ControlSettings":
        return dataclasses.replace(self, **changes)


def apply_settings(machine: Machine, settings: ControlSettings) -> Machine:
    """``machine`` with the settings applied where its connection has the part they act on.

    The field rheostat adds to the machine's own rheostat; the diverter replaces the machine's own
    when finite. Returns the same object when nothing changes (cheap for slider updates).
    """
    ch = {}
    if settings.external_resistance:
        ch["external_resistance"] = machine.external_resistance + settings.external_resistance
    if settings.winding_temperature is not None and settings.winding_temperature != machine.winding_temperature:
        ch["winding_temperature"] = settings.winding_temperature
    if settings.field_rheostat and isinstance(machine, (Shunt, SeparatelyExcited, Compound)):
        ch["field_rheostat"] = machine.field_rheostat + settings.field_rheostat
    if not math.isinf(settings.diverter_resistance) and isinstance(machine, (Series, Compound)):
        ch["diverter_resistance"] = settings.diverter_resistance
    if (settings.magnet_temperature is not None and isinstance(machine, PermanentMagnet)
            and settings.magnet_temperature != machine.magnet_temperature):
        ch["magnet_temperature"] = settings.magnet_temperature
    return machine.with_(**ch) if ch else machine


#: Columns of the comparison table: key -> (heading, SI unit, quantity for display conversion).
TABLE_COLUMNS = {
    "connection": ("connection", "", None),
    "speed": ("operating speed", "rad/s", "speed"),
    "torque": ("shaft torque", "N*m", "torque"),
    "armature_current": ("armature current", "A", "current"),
    "supply_current": ("supply current", "A", "current"),
    "output_power": ("output", "W", "power"),
    "efficiency": ("efficiency", "%", None),
    "stable": ("stable", "", None),
    "current_ratio": ("current / rated", "-", None),
    "speed_margin": ("margin to safe speed", "rad/s", "speed"),
    "starting_margin": ("starting torque margin", "N*m", "torque"),
    "no_load_speed": ("no-load speed", "rad/s", "speed"),
    "regulation": ("speed regulation", "%", None),
    "starting_current": ("starting current, direct", "A", "current"),
    "starting_torque": ("starting torque, direct", "N*m", "torque"),
    "note": ("note", "", None),
}


@dataclass(frozen=True, eq=False)
class Candidate:
    """One connection's answers (see :func:`compare`)."""

    key: str
    machine: Machine
    voltage: float
    operating: object  # OperatingResult
    regulation: object  # SpeedRegulation or None
    starting: object  # StartingResult
    cautions: tuple
    points: int = 300  # of the characteristic

    @functools.cached_property
    def characteristic(self):
        """The characteristic from standstill to no load (``points`` currents), swept on first use."""
        return self.machine.characteristic(self.voltage, points=self.points)

    def working_characteristic(self, points: int = 300, *, rated_multiple: float = 2.0, every_point: bool = False):
        """The characteristic over the working range (:func:`working_currents`), for the curves
        people read."""
        currents = working_currents(self, points, rated_multiple=rated_multiple, every_point=every_point)
        return self.machine.characteristic(self.voltage, current=currents)

    @property
    def point(self):
        """The operating point the drive settles at when started from rest, or None."""
        return self.operating.point

    def row(self) -> dict:
        """The table row (SI; see :data:`TABLE_COLUMNS`). Missing figures are nan."""
        p = self.point
        nan = math.nan
        reg = self.regulation
        st = self.starting.direct
        note = self.operating.reason or ""
        if p is not None and not p.stable:
            note = (note + "; " if note else "") + "unstable point"
        return {
            "connection": self.machine.label,
            "speed": p.speed if p else nan,
            "torque": p.torque if p else nan,
            "armature_current": p.armature_current if p else nan,
            "supply_current": p.supply_current if p else nan,
            "output_power": p.output_power if p else nan,
            "efficiency": 100.0 * p.efficiency if p else nan,
            "stable": bool(p.stable) if p else False,
            "current_ratio": p.margins.current_ratio if p else nan,
            "speed_margin": p.margins.speed if p else nan,
            "starting_margin": self.operating.locked_rotor_torque - self.operating.breakaway_torque,
            "no_load_speed": no_load_point(self.machine, self.voltage).speed,
            "regulation": reg.percent if reg else nan,
            "starting_current": st.armature_current,
            "starting_torque": st.torque,
            "note": note,
        }


@dataclass(frozen=True, eq=False)
class Comparison:
    """Every candidate's answers for one load and one set of control settings."""

    candidates: dict
    load: object
    settings: ControlSettings
    thresholds: Thresholds = field(default_factory=Thresholds)

    def rows(self) -> list:
        """One row per candidate, SI units (see :data:`TABLE_COLUMNS`)."""
        return [c.row() for c in self.candidates.values()]

    def characteristics(self) -> list:
        return [c.characteristic for c in self.candidates.values()]

    def operating(self) -> list:
        return [c.operating for c in self.candidates.values()]

    def cautions(self) -> dict:
        """key -> tuple of Caution."""
        return {k: c.cautions for k, c in self.candidates.items()}

    def _repr_html_(self):
        cols = [k for k in TABLE_COLUMNS if k != "note"]
        head = "".join(f"<th>{TABLE_COLUMNS[k][0]}</th>" for k in cols)
        body = ""
        for r in self.rows():
            cells = []
            for k in cols:
                v = r[k]
                if k in ("speed", "speed_margin", "no_load_speed") and isinstance(v, float):
                    v = v / RPM
                cells.append(f"<td>{v:.4g}</td>" if isinstance(v, float) else f"<td>{v}</td>")
            body += "<tr>" + "".join(cells) + "</tr>"
        return f"<table><tr>{head}</tr>{body}</table><p>speeds in r/min</p>"


def working_currents(candidate, points: int = 300, *, rated_multiple: float = 2.0,
                     every_point: bool = False):
    """Armature currents [A] of the working range of one candidate, for curves people read.

    From 0 up to ``rated_multiple`` times the rated current (half the standstill current without
    a rating), capped at the standstill current, and widened by a quarter past the operating
    points it shows: by default the motoring points up to standstill and, on the generating
    side, the stable points and the one the drive settles at; with ``every_point`` all of them
    (unstable ones and a load driving the rotor backward beyond standstill included). The
    study's own sweep runs to standstill, where the torques are many times rated and crowd the
    working region into a corner of a chart.
    """
    import numpy as np

    m = candidate.machine
    i0 = m.locked_rotor_current(candidate.voltage)
    pts = candidate.operating.points
    hi = rated_multiple * m.rating.current if m.rating is not None else 0.5 * i0
    if i0 > 0:
        hi = min(hi, i0)
    hi = max([hi] + [1.25 * p.armature_current for p in pts
                     if p.armature_current > 0 and (every_point or p.armature_current <= i0)])
    lo = min([0.0] + [1.25 * p.armature_current for p in pts
                      if p.armature_current < 0 and (every_point or p.stable or p is candidate.point)])
    return np.linspace(lo, hi, int(points))


def _regulation(machine, V, solver):
    """Speed regulation at the rated torque: it does not depend on the load, so it is kept per
    machine and voltage (with the default solver)."""
    if machine.rating is None:
        return None
    if solver:
        return speed_regulation(machine, None, V, **solver)
    return per_machine(machine, ("rated regulation", V), lambda: speed_regulation(machine, None, V))


def _candidate(key, machine, load, settings, thresholds, points, solver):
    V = machine.default_voltage() if settings.voltage is None else real("voltage", settings.voltage)
    op = operating_points(machine, load, V, **solver)
    return Candidate(key=key, machine=machine, voltage=V, operating=op, regulation=_regulation(machine, V, solver),
                     starting=starting(machine, V), cautions=all_cautions(machine, load, op, thresholds=thresholds),
                     points=points)


def compare(machines, load, settings: ControlSettings | None = None, *, thresholds: Thresholds | None = None,
            points: int = 300, **solver) -> Comparison:
    """Answer the design-review questions for each candidate machine on ``load``.

    Parameters
    ----------
    machines : mapping of key -> Machine
        The candidates, e.g. :func:`dcchar.studies.rating.equal_rating_family` or
        :func:`dcchar.studies.demo.demo_family`.
    load : load object
        See :mod:`dcchar.models.loads`.
    settings : ControlSettings, optional
        Applied to every candidate where it has the part (see :func:`apply_settings`).
    thresholds : Thresholds, optional
        Limits of the caution rules.
    points : int, default 300
        Points of each characteristic sweep (for the curves).
    **solver
        Passed to :func:`dcchar.studies.operating.operating_points` (``method``, ``grid``, ...).

    Returns
    -------
    Comparison
        Speed regulation is taken from no load to the machine's rated torque (it needs a rating);
        starting figures are with the armature's own external resistance (plus the setting's).
    """
    settings = ControlSettings() if settings is None else settings
    thresholds = Thresholds() if thresholds is None else thresholds
    out = {}
    for key, m in dict(machines).items():
        out[key] = _candidate(key, apply_settings(m, settings), load, settings, thresholds, points, solver)
    return Comparison(candidates=out, load=load, settings=settings, thresholds=thresholds)
