"""Temperature corrections: copper winding resistance and permanent-magnet remanence."""

from __future__ import annotations

from .validation import choice, in_range, positive, real

__all__ = ["COPPER_INFERRED_ZERO", "copper_resistance", "MAGNET_TEMPERATURE_COEFFICIENTS", "magnet_flux_factor"]

#: Inferred zero-resistance temperature of annealed copper [degC], R2/R1 = (T2 + k)/(T1 + k).
#: IEC 60228 parameters (alpha20 = 0.00393 1/K, 1/alpha20 - 20 = 234.45); the trade rounds to 234.5.
COPPER_INFERRED_ZERO = 234.5

#: Reversible temperature coefficient of remanence by magnet material [1/K], typical values:
#: sintered NdFeB -0.12 %/K (range -0.09 ... -0.12), hard ferrite -0.20 %/K (-0.19 ... -0.20),
#: SmCo (Sm2Co17) -0.035 %/K (-0.03 ... -0.05), AlNiCo -0.02 %/K. Sources: magnet makers' data
#: sheets as gathered in the project's reference notes (two sources agree for each range).
MAGNET_TEMPERATURE_COEFFICIENTS = {
    "ndfeb": -0.0012,
    "ferrite": -0.0020,
    "smco": -0.00035,
    "alnico": -0.0002,
}


def copper_resistance(resistance, reference_temperature, temperature):
    """Copper winding resistance corrected to ``temperature``.

    R(T) = R(T_ref) * (T + 234.5)/(T_ref + 234.5).

    Parameters
    ----------
    resistance : float
        Resistance at ``reference_temperature``. [ohm]
    reference_temperature, temperature : float
        [degC]; must be above -234.5.

    Returns
    -------
    float
        [ohm]

    Examples
    --------
    >>> round(copper_resistance(1.0, 25.0, 75.0), 5)
    1.19268
    """
    r = real("resistance", resistance)
    t0 = in_range("reference_temperature", reference_temperature, -COPPER_INFERRED_ZERO, 1000.0, low_open=True)
    t1 = in_range("temperature", temperature, -COPPER_INFERRED_ZERO, 1000.0, low_open=True)
    return r * (t1 + COPPER_INFERRED_ZERO) / (t0 + COPPER_INFERRED_ZERO)


def magnet_flux_factor(material_or_coefficient, temperature, reference_temperature=20.0):
    """Ratio of magnet flux at ``temperature`` to that at ``reference_temperature`` (reversible part).

    factor = 1 + alpha*(T - T_ref), with alpha from :data:`MAGNET_TEMPERATURE_COEFFICIENTS` or
    given directly [1/K]. Irreversible demagnetization at high temperature is not modelled.
    """
    if isinstance(material_or_coefficient, str):
        alpha = MAGNET_TEMPERATURE_COEFFICIENTS[choice("magnet_material", material_or_coefficient,
                                                       tuple(MAGNET_TEMPERATURE_COEFFICIENTS))]
    else:
        alpha = in_range("magnet_temperature_coefficient", material_or_coefficient, -0.01, 0.0)
    t = in_range("magnet_temperature", temperature, -60.0, 350.0)
    factor = 1.0 + alpha * (t - real("reference_temperature", reference_temperature))
    return positive("magnet flux factor", factor)
