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
from .models.loads import (Breakaway, ConstantPower, ConstantTorque, Conveyor, Fan, FormulaLoad, Gearing, Hoist,
                           Linear, Pump, SumLoad, TableLoad)
from .models.magnetics import (Froehlich, LinearMagnetization, NoArmatureReaction, QuadraticArmatureReaction,
                               TabulatedArmatureReaction, TabulatedMagnetization)
from .studies.comparison import Comparison, ControlSettings, compare
from .studies.demo import demo_family, demo_machine
from .studies.operating import OperatingPoint, OperatingResult, operating_points, speed_regulation, starting
from .studies.rating import Armature, equal_rating_family

__all__ = [
    "__version__", "DcCharError", "ParameterError", "ModelRangeError", "SolverError", "FormulaError",
    "ScenarioError", "units", "Characteristic", "CONNECTION_LABELS", "Rating", "SeparatelyExcited", "Shunt",
    "Series", "Compound", "PermanentMagnet", "RotationalLoss", "stray_load_coefficient", "LinearMagnetization",
    "Froehlich", "TabulatedMagnetization", "NoArmatureReaction", "QuadraticArmatureReaction",
    "TabulatedArmatureReaction", "Gearing", "ConstantTorque", "Conveyor", "Hoist", "Fan", "Pump", "Linear",
    "ConstantPower", "Breakaway", "SumLoad", "TableLoad", "FormulaLoad", "Armature", "equal_rating_family",
    "demo_family", "demo_machine", "OperatingPoint", "OperatingResult", "operating_points", "speed_regulation",
    "starting", "ControlSettings", "Comparison", "compare",
]
