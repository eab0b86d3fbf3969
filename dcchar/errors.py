"""The one family of errors dcchar raises.

Every error a user can cause derives from :class:`DcCharError`, which is also a
:class:`ValueError`, so ``except dcchar.DcCharError`` catches them all in one place.
"""

from __future__ import annotations

__all__ = ["DcCharError", "ParameterError", "ModelRangeError", "SolverError", "FormulaError", "ScenarioError"]


class DcCharError(ValueError):
    """Base class of every error raised by dcchar."""


class ParameterError(DcCharError):
    """A parameter has a value the model cannot accept.

    Attributes
    ----------
    field : str
        Name of the parameter (or key path) at fault.
    value : object
        The value that was given.
    allowed : str
        What would have been accepted, in words.
    """

    def __init__(self, field: str, value: object, allowed: str):
        self.field = field
        self.value = value
        self.allowed = allowed
        super().__init__(f"{field}={value!r} is not allowed: expected {allowed}")


class ModelRangeError(DcCharError):
    """A request falls outside what the model can answer (e.g. an impossible rating)."""


class SolverError(DcCharError):
    """A numerical solver failed; ``report`` carries the solver's own result object."""

    def __init__(self, message: str, report: object = None):
        self.report = report
        super().__init__(message)


class FormulaError(DcCharError):
    """A user formula could not be accepted; ``position`` is the 0-based offending character."""

    def __init__(self, message: str, text: str = "", position: int | None = None):
        self.text = text
        self.position = position
        pointer = ""
        if text and position is not None:
            pointer = f"\n  {text}\n  {' ' * position}^"
        super().__init__(f"{message}{pointer}")


class ScenarioError(DcCharError):
    """A scenario file or document is invalid; ``path`` is the dotted key path at fault."""

    def __init__(self, path: str, message: str):
        self.path = path
        super().__init__(f"{path}: {message}" if path else message)
