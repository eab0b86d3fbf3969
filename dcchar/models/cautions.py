"""The usual cautions that come with a machine's own characteristic.

Load-dependent rules (hoists, unstable points, heating) live in :mod:`dcchar.studies.cautions`;
this module holds the texts and the rules that need only the machine and its sweep. Every caution
defers to local electrical and machinery codes and licensed practice.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["Caution", "DEFERENCE", "GENERAL_CAUTIONS", "characteristic_cautions"]

#: Said with every caution.
DEFERENCE = ("dcchar gives engineering estimates only; follow local electrical and machinery codes and "
             "have the installation designed and checked by licensed practitioners.")


@dataclass(frozen=True)
class Caution:
    """One caution: a short code, the text a user reads, and why it applies here."""

    code: str
    text: str
    reason: str = ""
    severity: str = "warning"  # "warning" or "danger"

    def __str__(self):
        return f"{self.text} ({self.reason})" if self.reason else self.text


#: The cautions every study shows, whatever the connection (texts used by README and reports too).
GENERAL_CAUTIONS = {
    "series_no_load": "A series motor must never run without load or drive through a belt: "
                      "with the load gone its speed rises without bound.",
    "field_loss": "If the shunt field circuit opens or weakens, the motor can run away: provide "
                  "field-loss protection and never put a switch or fuse in the shunt field alone.",
    "starting_current": "Starting across the line draws the locked-rotor current: limit it with a "
                        "starter or a current-limited supply.",
    "defer": DEFERENCE,
}


def characteristic_cautions(c, *, starting_multiple: float = 2.0) -> list[Caution]:
    """Cautions that apply to characteristic ``c`` of its machine.

    ``starting_multiple``: a locked-rotor current above this multiple of the rated current (or,
    without a rating, above this multiple of the no-load-to-standstill average) calls for a starter.
    """
    out: list[Caution] = []
    m = c.machine
    conn = m.connection
    if conn == "series" or (conn.endswith("compound") and getattr(m, "kind", "") == "cumulative"
                            and c.runs_away):
        out.append(Caution("series_no_load", GENERAL_CAUTIONS["series_no_load"],
                           c.runaway.reason if c.runaway else "series characteristic", "danger"))
    elif c.runs_away:
        out.append(Caution("runaway", "Light-load speed exceeds the safe speed: the motor must not be "
                                      "unloaded at this setting.", c.runaway.reason, "danger"))
    if conn in ("shunt", "long_shunt_compound", "short_shunt_compound"):
        out.append(Caution("field_loss", GENERAL_CAUTIONS["field_loss"], f"{m.label} field across the supply",
                           "danger"))
    rated = m.rating.current if m.rating is not None else None
    i_lr = c.locked_rotor_current
    if rated is not None and i_lr > starting_multiple * rated:
        out.append(Caution("starting_current", GENERAL_CAUTIONS["starting_current"],
                           f"locked-rotor current {i_lr:.0f} A is {i_lr / rated:.1f} x rated {rated:.0f} A"))
    if out:
        out.append(Caution("defer", DEFERENCE, "", "info"))
    return out
