"""Requirement sets a user starts from, one per load kind, and the editable collection that holds them.

The numbers are conventions of the trade for each kind of drive, stated so a user can change
them (common practice, no source); they are expressed against the rating of the candidates, so
one set serves every connection of an equal-rating family.
"""

from __future__ import annotations

from collections.abc import Sequence

from ...errors import ParameterError
from ...models.connections import Rating
from ...models.validation import choice
from .requirements import (REQUIREMENT_TYPES, AccelerationTime, ConstantPowerRange, Efficiency, LostLoad,
                           LowSpeed, Lowering, Requirement, SpeedHold, SpeedRegulation, StartingCurrent,
                           StartingTorque, TopSpeed)

__all__ = ["LOAD_KINDS", "Requirements", "default_requirements"]

#: Load kinds with a default requirement set.
LOAD_KINDS = ("hoist", "fan", "pump", "conveyor", "winder")


class Requirements(Sequence):
    """An ordered, immutable set of requirements, at most one per figure name.

    Edit by making new sets: ``reqs.without("lowering")``, ``reqs.replace("speed_regulation",
    value=3.0)``, ``reqs.with_(SpeedHold(value=2, step=10))`` (adds or replaces by figure).
    """

    def __init__(self, requirements=()):
        items = tuple(requirements)
        seen = set()
        for i, r in enumerate(items):
            if not isinstance(r, Requirement):
                raise ParameterError(f"requirements[{i}]", r, "a Requirement")
            if r.figure in seen:
                raise ParameterError(f"requirements[{i}]", r.figure, "at most one requirement per figure")
            seen.add(r.figure)
        self._items = items

    def __getitem__(self, i):
        if isinstance(i, str):
            for r in self._items:
                if r.figure == i:
                    return r
            raise KeyError(i)
        return self._items[i]

    def __len__(self):
        return len(self._items)

    @property
    def figures(self) -> tuple:
        return tuple(r.figure for r in self._items)

    def without(self, *figures) -> "Requirements":
        for f in figures:
            choice("figure", f, tuple(REQUIREMENT_TYPES))
        return Requirements(r for r in self._items if r.figure not in figures)

    def replace(self, figure: str, **changes) -> "Requirements":
        """The set with one requirement's fields changed."""
        self[figure]  # raises KeyError when absent
        return Requirements(r.replace(**changes) if r.figure == figure else r for r in self._items)

    def with_(self, *requirements) -> "Requirements":
        """The set with ``requirements`` added, each replacing one of its figure in place."""
        items = list(self._items)
        for new in requirements:
            idx = next((i for i, r in enumerate(items) if r.figure == new.figure), None)
            if idx is None:
                items.append(new)
            else:
                items[idx] = new
        return Requirements(items)

    def to_rows(self) -> list:
        """One dict per requirement: figure, unit, comparison, value (SI), marginal band, words."""
        return [{"figure": r.figure, "unit": r.unit, "comparison": r.comparison, "value": r.value,
                 "marginal [-]": r.marginal, "description": r.describe()} for r in self._items]

    def __repr__(self):
        return f"Requirements({list(self.figures)})"


def default_requirements(kind: str, rating: Rating) -> Requirements:
    """A sensible starting set of requirements for a load kind (edit it to suit the job).

    Parameters
    ----------
    kind : {"hoist", "fan", "pump", "conveyor", "winder"}
    rating : Rating
        The candidates' rated point; absolute limits (currents, speeds, torque steps) are set
        from it.

    Returns
    -------
    Requirements

    Notes
    -----
    Values are conventions of the trade (common practice, no source): a starter holds the
    starting current to about twice rated, so 2.5 x rated is allowed at the supply; a hoist must
    break away its load with half again in hand and lower it under control; fans and pumps want
    a steady speed and a wide speed range; conveyors must start loaded and hold speed on a load
    step; winders need a constant-power range by field weakening. Every kind must survive a lost
    load without passing the safe speed. A lost field is left out: nearly every wound field
    fails it, and the usual answer is field-loss protection (its caution comes with every
    shunt-type candidate); add ``LostField()`` where the drive must survive without it.
    """
    choice("kind", kind, LOAD_KINDS)
    if not isinstance(rating, Rating):
        raise ParameterError("rating", rating, "a Rating (the candidates' rated point)")
    i_max = 2.5 * rating.current
    w = rating.speed
    safety = (LostLoad(description="must not pass the safe speed if the load falls away (rope, coupling or belt)"),)
    start_i = StartingCurrent(value=i_max, description=f"starting current at the supply at most {i_max:.4g} A "
                                                       "(2.5 x rated)")
    if kind == "hoist":
        return Requirements((
            StartingTorque(value=1.5, basis="breakaway",
                           description="starting torque at least 1.5 x the breakaway torque of the loaded hook"),
            start_i,
            AccelerationTime(value=3.0, description="up to 95 % of hoisting speed within 3 s"),
            Lowering(description="lower the rated load by regeneration without reconnecting the field"),
            Efficiency(value=0.80, description="efficiency at least 80 % while hoisting"),
            *safety))
    if kind in ("fan", "pump"):
        low = 0.3 if kind == "fan" else 0.5
        return Requirements((
            SpeedRegulation(value=8.0, description="speed change from no load to rated load at most 8 %"),
            TopSpeed(value=1.2 * w, description="reach 1.2 x rated speed on the load (field weakening allowed)"),
            LowSpeed(value=low * w, description=f"run steadily at {low:g} x rated speed on the load"),
            start_i,
            Efficiency(value=0.85, description="efficiency at the duty point at least 85 %"),
            *safety))
    if kind == "conveyor":
        return Requirements((
            StartingTorque(value=1.3, basis="breakaway", description="start the loaded belt with 30 % in hand"),
            start_i,
            AccelerationTime(value=10.0, description="up to speed within 10 s"),
            SpeedHold(value=5.0, step=0.25 * rating.torque,
                      description="speed change at most 5 % when a quarter of rated torque is added"),
            Efficiency(value=0.85),
            *safety))
    return Requirements((  # winder
        ConstantPowerRange(value=2.0, description="twice base speed at rated current by field weakening"),
        SpeedRegulation(value=10.0),
        start_i,
        Efficiency(value=0.85),
        *safety))
