"""dcchar: choose the field connection of a DC motor for a real load."""
__version__ = "0.1.0"
from .errors import DcCharError, ParameterError, ModelRangeError, SolverError, FormulaError, ScenarioError
