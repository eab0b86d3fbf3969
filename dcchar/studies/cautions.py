"""Cautions for a machine on a load: the rules that need the load and the operating point.

The rules that need only the machine and its characteristic live in
:func:`dcchar.models.cautions.characteristic_cautions`; this module adds those that depend on
the load and on where the drive settles. Each rule returns a :class:`Caution` with a short reason
naming the figures; the list ends with the deference to local codes and licensed practice. The
thresholds are parameters (:class:`Thresholds`) with stated defaults, conventions of the trade
rather than published limits (common practice, no source), so a user can set their own.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from ..models.cautions import DEFERENCE, GENERAL_CAUTIONS, Caution
from ..models.units import RPM
from ..models.validation import nonnegative, positive

__all__ = ["Thresholds", "cautions_for", "all_cautions", "BELTED_KINDS"]

#: Load kinds that are taken as belt (or chain-and-clutch) drives that can shed their load.
BELTED_KINDS = ("belt", "belted")


@dataclass(frozen=True)
class Thresholds:
    """Limits the rules use, with their defaults (common practice, no source).

    Parameters
    ----------
    starting_multiple : float, default 2.0
        A direct-on starting current above this multiple of the rated armature current calls for
        a starter. [-]
    light_load_fraction : float, default 0.25
        A series motor whose operating torque is below this share of its rated torque (or, with
        no rating, of its locked-rotor torque / 10) is on light load. [-]
    current_multiple : float, default 1.0
        Operating above this multiple of the rated armature current heats the windings beyond
        their rating. [-]
    speed_fraction : float, default 0.9
        Operating above this share of the safe speed leaves too little margin. [-]
    """

    starting_multiple: float = 2.0
    light_load_fraction: float = 0.25
    current_multiple: float = 1.0
    speed_fraction: float = 0.9

    def __post_init__(self):
        positive("starting_multiple", self.starting_multiple)
        nonnegative("light_load_fraction", self.light_load_fraction)
        positive("current_multiple", self.current_multiple)
        positive("speed_fraction", self.speed_fraction)


def _is_belted(load) -> bool:
    if getattr(load, "belted", False):
        return True
    kind = str(getattr(load, "kind", ""))
    return any(k in kind for k in BELTED_KINDS)


def _has_kind(load, kind) -> bool:
    if getattr(load, "kind", "") == kind:
        return True
    return any(_has_kind(p, kind) for p in getattr(load, "loads", ()))


def cautions_for(machine, load, result, *, thresholds: Thresholds = Thresholds()) -> list:
    """Cautions for ``machine`` driving ``load``, given its :class:`OperatingResult` ``result``.

    Parameters
    ----------
    machine : Machine
    load : load object
    result : OperatingResult
        From :func:`dcchar.studies.operating.operating_points` for this machine and load.
    thresholds : Thresholds
        The limits of the rules (stated defaults).

    Returns
    -------
    list of Caution
        Codes: ``series_light_load``, ``series_belted``, ``field_loss_runaway``,
        ``differential_start``, ``starting_current``, ``hoist_brake``, ``overhauling``,
        ``runaway``, ``cannot_start``, ``unstable``, ``overcurrent``, ``overspeed_margin``, and
        ``defer`` last whenever any other applies.
    """
    th = thresholds
    out = []
    conn = machine.connection
    kind = getattr(machine, "kind", "")
    rating = machine.rating
    p = result.point
    # series motor: light load or belt
    if conn == "series":
        ref = rating.torque if rating else abs(result.locked_rotor_torque) / 10.0
        if p is None or abs(p.torque) < th.light_load_fraction * ref:
            where = "no operating point" if p is None else f"operating torque {p.torque:.4g} N*m"
            out.append(Caution("series_light_load", GENERAL_CAUTIONS["series_no_load"],
                               f"{where} is below {th.light_load_fraction:g} x {ref:.4g} N*m", "danger"))
        if _is_belted(load):
            out.append(Caution("series_belted", "A series motor must be coupled solidly, never through a belt "
                               "or a clutch that can slip off or open.", f"load kind {load.kind!r}", "danger"))
    # field loss: shunt and separate fields, and compounds (worst in the differential compound)
    why = None
    if conn in ("shunt", "separately_excited"):
        why = "with the field circuit open only the residual flux is left and the speed rises far beyond rated"
    elif kind == "differential":
        why = ("a differential compound that loses its shunt field keeps only its series field, which then "
               "drives the flux the other way: the motor can race or reverse")
    elif kind == "cumulative":
        why = "the series field alone is left when the shunt field opens: the light-load speed rises"
    if why:
        out.append(Caution("field_loss_runaway", GENERAL_CAUTIONS["field_loss"], why, "danger"))
    if kind == "differential" and result.locked_rotor_torque <= 0:
        out.append(Caution("differential_start", "This differential compound reverses at standstill: start it "
                           "with the series field shorted or through a starter that limits the current.",
                           f"locked-rotor torque {result.locked_rotor_torque:.4g} N*m", "danger"))
    # starting current
    if machine.external_resistance == 0:
        i_lr = machine.locked_rotor_current(result.voltage)
        ref = rating.current if rating else (abs(p.armature_current) if p is not None else math.nan)
        if ref > 0 and i_lr > th.starting_multiple * ref:
            base = "rated" if rating else "operating"
            out.append(Caution("starting_current", GENERAL_CAUTIONS["starting_current"],
                               f"direct-on current {i_lr:.0f} A is {i_lr / ref:.1f} x the {base} current {ref:.0f} A "
                               f"(limit {th.starting_multiple:g} x)"))
    # hoists and overhauling loads
    if _has_kind(load, "hoist"):
        out.append(Caution("hoist_brake", "A hoist needs an independent mechanical holding brake that sets on "
                           "loss of supply, and overspeed protection; the motor is not a holding device.",
                           "hoisting load", "danger"))
    gen = [q for q in result.points if q.output_power < 0]
    if _has_kind(load, "hoist") or gen or result.reason == "generating":
        why = (f"the load drives the shaft at {gen[0].speed_rpm:.0f} r/min" if gen else
               "a hoist overhauls the drive when lowering")
        out.append(Caution("overhauling", "Lowering or holding back an overhauling load needs braking "
                           "(regenerative, dynamic or counter-current) sized for the energy returned.", why, "danger"))
    if result.reason == "runs away":
        out.append(Caution("runaway", "The drive finds no operating point below the safe speed: it would run "
                           "away.", result.detail, "danger"))
    if result.reason == "cannot start":
        out.append(Caution("cannot_start", "The motor cannot start this load at this setting: a stalled "
                           "armature overheats in seconds.", result.detail))
    if p is not None and not p.stable:
        out.append(Caution("unstable", "The operating point is unstable: the speed will drift away from it.",
                           f"d(T_motor - T_load)/dw = {p.stability_slope:.4g} N*m*s/rad > 0", "danger"))
    if p is not None and rating is not None and abs(p.armature_current) > th.current_multiple * rating.current:
        out.append(Caution("overcurrent", "Above rated current the windings run hotter than their rating: check "
                           "the duty and the insulation class.",
                           f"{abs(p.armature_current):.1f} A is {abs(p.armature_current) / rating.current:.2f} x "
                           f"rated {rating.current:g} A"))
    if p is not None and math.isfinite(result.safe_speed) and abs(p.speed) > th.speed_fraction * result.safe_speed:
        out.append(Caution("overspeed_margin", "The operating speed is close to the safe speed: little margin "
                           "for a load change.", f"{abs(p.speed) / RPM:.0f} r/min against the safe speed "
                           f"{result.safe_speed / RPM:.0f} r/min", "danger"))
    if out:
        out.append(Caution("defer", DEFERENCE, "", "info"))
    return out


# load-dependent codes that already say what a machine-only caution says
_SAME_AS = {"series_no_load": "series_light_load", "field_loss": "field_loss_runaway"}


def all_cautions(machine, load, result, *, thresholds: Thresholds = Thresholds()) -> tuple:
    """Every caution for ``machine`` on ``load`` at ``result`` (its :class:`OperatingResult`): the
    load-dependent rules of :func:`cautions_for`, then the machine's own
    (:func:`dcchar.models.cautions.characteristic_cautions`) not said already; the deference last.
    """
    load_rules = cautions_for(machine, load, result, thresholds=thresholds)
    machine_rules = machine.characteristic(result.voltage, [0.0], safe_speed=result.safe_speed).cautions
    out = [c for c in load_rules if c.code != "defer"]
    codes = {c.code for c in out}
    for c in machine_rules:
        if c.code != "defer" and c.code not in codes and _SAME_AS.get(c.code) not in codes:
            out.append(c)
            codes.add(c.code)
    deference = [c for c in (*load_rules, *machine_rules) if c.code == "defer"][:1]
    return tuple(out + deference)
