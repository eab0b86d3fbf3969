"""Unit conversions used at the edges (widgets, files, reports). Inside dcchar everything is SI.

Factors and their sources:

- horsepower (550 ft*lbf/s) = 745.69987158227 W: NIST SP 811 (2008), App. B.8, "7.456 999 E+02".
- electric horsepower = 746 W exactly: NIST SP 811, App. B.8.
- metric horsepower = 75 kgf*m/s = 735.49875 W exactly (75 x 9.80665).
- pound-force foot = 1.3558179483314 N*m: NIST SP 811, App. B.8 (0.3048 m x 4.4482216152605 N).
- pound-foot squared (inertia) = 0.0421401100938 kg*m^2 (0.45359237 kg x 0.3048^2 m^2), NIST SP 811 B.8.
- revolution per minute = 2*pi/60 rad/s (definition).
"""

from __future__ import annotations

import math

__all__ = [
    "RPM", "HP", "HP_ELECTRIC", "HP_METRIC", "LBF_FT", "LB_FT2", "LBF", "FOOT", "POUND",
    "rpm_to_rad_s", "rad_s_to_rpm", "hp_to_w", "w_to_hp", "lbf_ft_to_n_m", "n_m_to_lbf_ft",
    "UNIT_SYSTEMS", "display_units",
]

FOOT = 0.3048  # m, exact by definition
POUND = 0.45359237  # kg, exact by definition
LBF = 4.4482216152605  # N, exact by definition (NIST SP 811 B.8)
RPM = 2.0 * math.pi / 60.0  # rad/s per r/min
HP = 550.0 * FOOT * LBF  # W, = 745.69987158227 (NIST SP 811 B.8)
HP_ELECTRIC = 746.0  # W, exact (NIST SP 811 B.8)
HP_METRIC = 75.0 * 9.80665  # W, = 735.49875
LBF_FT = FOOT * LBF  # N*m, = 1.3558179483314 (NIST SP 811 B.8)
LB_FT2 = POUND * FOOT**2  # kg*m^2, = 0.04214011 (NIST SP 811 B.8)


def rpm_to_rad_s(speed_rpm):
    """Speed from [r/min] to [rad/s]."""
    return speed_rpm * RPM


def rad_s_to_rpm(speed):
    """Speed from [rad/s] to [r/min]."""
    return speed / RPM


def hp_to_w(power_hp):
    """Power from mechanical horsepower [hp] to [W]."""
    return power_hp * HP


def w_to_hp(power):
    """Power from [W] to mechanical horsepower [hp]."""
    return power / HP


def lbf_ft_to_n_m(torque_lbf_ft):
    """Torque from [lbf*ft] to [N*m]."""
    return torque_lbf_ft * LBF_FT


def n_m_to_lbf_ft(torque):
    """Torque from [N*m] to [lbf*ft]."""
    return torque / LBF_FT


#: Display unit systems: for each quantity, (label, factor) such that display = SI / factor.
UNIT_SYSTEMS = {
    "si": {"speed": ("r/min", RPM), "torque": ("N·m", 1.0), "power": ("kW", 1000.0),
           "current": ("A", 1.0), "voltage": ("V", 1.0), "inertia": ("kg·m²", 1.0),
           "mass": ("kg", 1.0), "length": ("m", 1.0)},
    "us": {"speed": ("r/min", RPM), "torque": ("lbf·ft", LBF_FT), "power": ("hp", HP),
           "current": ("A", 1.0), "voltage": ("V", 1.0), "inertia": ("lb·ft²", LB_FT2),
           "mass": ("lb", POUND), "length": ("ft", FOOT)},
}


def display_units(system: str) -> dict:
    """The (label, factor) table of a display unit system, ``"si"`` or ``"us"``."""
    from .validation import choice

    return UNIT_SYSTEMS[choice("units", system, tuple(UNIT_SYSTEMS))]
