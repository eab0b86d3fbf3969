"""Machine parameters from the nameplate and from the published tests of DC machines.

- :func:`estimate_from_nameplate`: a first model from rated figures, every assumption stated.
- :func:`magnetization_test`: the open-circuit characteristic, tabulated and Froehlich-fitted.
- :func:`armature_resistance_test`: the DC voltage-drop (locked-rotor) test, brush drop
  separated, referred to a reference temperature.
- :func:`swinburne_test`: constant losses from the no-load running test; efficiency at any load.
- :func:`load_test`: armature reaction and loss coefficients from points on load.

Each fit returns a frozen result with its parameters, their standard errors, the residuals and
the machine it implies. Tests on live machines involve dangerous voltages, rotating parts and,
in a no-load run of a shunt or series motor with a weak or open field, a runaway: follow the
maker's instructions, local codes and licensed practice.
"""

from .load_test import LOAD_TEST_PARAMETERS, LoadTestResult, load_test
from .magnetization_test import MagnetizationTestResult, magnetization_test, refer_to_speed
from .nameplate import NAMEPLATE_ASSUMPTIONS, NameplateEstimate, estimate_from_nameplate, output_from_hp
from .resistance_test import ArmatureResistanceResult, armature_resistance_test
from .swinburne import SwinburneResult, swinburne_test

__all__ = [
    "NameplateEstimate", "estimate_from_nameplate", "output_from_hp", "NAMEPLATE_ASSUMPTIONS",
    "MagnetizationTestResult", "magnetization_test", "refer_to_speed",
    "ArmatureResistanceResult", "armature_resistance_test",
    "SwinburneResult", "swinburne_test",
    "LoadTestResult", "load_test", "LOAD_TEST_PARAMETERS",
]
