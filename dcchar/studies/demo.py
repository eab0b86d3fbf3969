"""A small library of invented machines for demonstrations, all on one invented frame.

The frame is a scenario of our own: a 230 V, 11 kW, 1150 r/min industrial DC frame with a
Froehlich magnetization curve (residual EMF included), carbon brushes (2 V total drop, the usual
allowance), friction, windage and core losses of about 3 % of output at rated speed, the
conventional 1 % stray-load allowance, a mild armature reaction, a mechanical safe speed of
2500 r/min and a rotor inertia of 0.30 kg*m^2. Every connection is derived from it by
:func:`dcchar.studies.rating.equal_rating_family`, so all pass through the same rated point.
None of these numbers describes a real product.

Examples
--------
>>> from dcchar.studies.demo import demo_machine
>>> m = demo_machine("shunt")
>>> m.rating.voltage
230.0
"""

from __future__ import annotations

import functools

from ..models.connections import Rating
from ..models.losses import RotationalLoss, stray_load_coefficient
from ..models.magnetics import Froehlich, QuadraticArmatureReaction
from ..models.units import RPM
from ..models.validation import choice
from .rating import FAMILY_KEYS, Armature, equal_rating_family

__all__ = ["DEMO_RATING", "demo_magnetization", "demo_armature", "demo_family", "demo_machine"]

#: Rated point of the invented frame: 230 V, 56 A, 1150 r/min, 11 kW.
DEMO_RATING = Rating(voltage=230.0, current=56.0, speed=1150.0 * RPM, output=11_000.0)


@functools.lru_cache(maxsize=None)
def demo_magnetization() -> Froehlich:
    """Froehlich curve of the invented frame: E0 = 5 V + 330 V * F/(2200 A-turns + F) at 1150 r/min."""
    return Froehlich(a=330.0, b=2200.0, reference_speed=1150.0 * RPM, residual_emf=5.0)


@functools.lru_cache(maxsize=None)
def demo_armature() -> Armature:
    """The shared armature of the invented frame (resistances given at 25 degC, run at 75 degC)."""
    w_r = DEMO_RATING.speed
    return Armature(
        armature_resistance=0.18,
        brush_drop=2.0,
        rotational_loss=RotationalLoss.from_power_at_speed(330.0, w_r, core_share=0.4, kphi=1.79,
                                                           friction_torque=0.4),
        stray_load=stray_load_coefficient(0.01, DEMO_RATING.output, DEMO_RATING.current, w_r),
        inertia=0.30,
        safe_speed=2500.0 * RPM,
        armature_reaction=QuadraticArmatureReaction(linear=1.5, quadratic=0.0005),
        armature_inductance=0.004,
        reference_temperature=25.0,
        winding_temperature=75.0,
    )


@functools.lru_cache(maxsize=None)
def _family():
    return equal_rating_family(demo_armature(), DEMO_RATING, magnetization=demo_magnetization(),
                               connections=FAMILY_KEYS, name="demo frame")


def demo_family(differential: bool = False) -> dict:
    """The invented frame in every connection, by key (see :data:`dcchar.studies.rating.FAMILY_KEYS`).

    Parameters
    ----------
    differential : bool, default False
        Add the two differential compounds to the six connections.

    Returns
    -------
    dict
        key -> Machine (a new dict each call; the machines are shared, immutable).
    """
    fam = _family()
    keys = FAMILY_KEYS if differential else FAMILY_KEYS[:6]
    return {k: fam[k] for k in keys}


def demo_machine(connection: str):
    """One machine of the demo family by key, e.g. ``"series"`` or ``"differential_long_shunt_compound"``."""
    return _family()[choice("connection", connection, FAMILY_KEYS)]
