"""dcchar: choose the field connection of a DC motor for a real load.

The public names are re-exported here; heavy libraries (sympy, matplotlib, scipy, ipywidgets) are
imported only where they are used, so ``import dcchar`` stays light.
"""

__version__ = "0.1.0"

from .errors import DcCharError, FormulaError, ModelRangeError, ParameterError, ScenarioError, SolverError
from .models import units
from .models.characteristic import Characteristic
from .models.connections import (CONNECTION_LABELS, Compound, PermanentMagnet, Rating, SeparatelyExcited, Series,
                                 Shunt)
from .models.losses import RotationalLoss, stray_load_coefficient
from .models.magnetics import (Froehlich, LinearMagnetization, NoArmatureReaction, QuadraticArmatureReaction,
                               TabulatedArmatureReaction, TabulatedMagnetization)

__all__ = [
    "__version__", "DcCharError", "ParameterError", "ModelRangeError", "SolverError", "FormulaError",
    "ScenarioError", "units", "Characteristic", "CONNECTION_LABELS", "Rating", "SeparatelyExcited", "Shunt",
    "Series", "Compound", "PermanentMagnet", "RotationalLoss", "stray_load_coefficient", "LinearMagnetization",
    "Froehlich", "TabulatedMagnetization", "NoArmatureReaction", "QuadraticArmatureReaction",
    "TabulatedArmatureReaction",
]
