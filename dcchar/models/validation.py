"""Small checks shared by the model constructors. Each raises :class:`ParameterError` naming
the field, the value and what is allowed; nothing is clipped."""

from __future__ import annotations

import math

import numpy as np

from ..errors import ParameterError

__all__ = ["real", "positive", "nonnegative", "in_range", "choice", "increasing_array"]


def real(name: str, value) -> float:
    """Return ``value`` as a finite float, or raise naming ``name``."""
    if isinstance(value, bool):
        raise ParameterError(name, value, "a finite real number (not a bool)")
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise ParameterError(name, value, "a finite real number") from None
    if not math.isfinite(x):
        raise ParameterError(name, value, "a finite real number")
    return x


def positive(name: str, value, *, allow_inf: bool = False) -> float:
    """A real number > 0 (optionally +inf)."""
    if allow_inf and isinstance(value, (int, float)) and not isinstance(value, bool) and value == math.inf:
        return math.inf
    x = real(name, value)
    if not x > 0:
        raise ParameterError(name, value, "a number > 0" + (" (inf allowed)" if allow_inf else ""))
    return x


def nonnegative(name: str, value) -> float:
    """A real number >= 0."""
    x = real(name, value)
    if x < 0:
        raise ParameterError(name, value, "a number >= 0")
    return x


def in_range(name: str, value, low: float, high: float, *, low_open=False, high_open=False) -> float:
    """A real number in [low, high] (ends open when asked)."""
    x = real(name, value)
    ok_low = x > low if low_open else x >= low
    ok_high = x < high if high_open else x <= high
    if not (ok_low and ok_high):
        lb = "(" if low_open else "["
        hb = ")" if high_open else "]"
        raise ParameterError(name, value, f"a number in {lb}{low}, {high}{hb}")
    return x


def choice(name: str, value, choices) -> str:
    """One of a fixed set of strings."""
    if value not in choices:
        raise ParameterError(name, value, f"one of {tuple(choices)}")
    return value


def increasing_array(name: str, values, *, min_length: int = 2, strictly: bool = True) -> np.ndarray:
    """A 1-D finite float array, increasing (strictly by default)."""
    try:
        a = np.asarray(values, dtype=float)
    except (TypeError, ValueError):
        raise ParameterError(name, values, "a 1-D sequence of numbers") from None
    if a.ndim != 1 or a.size < min_length:
        raise ParameterError(name, values, f"a 1-D sequence of at least {min_length} numbers")
    if not np.all(np.isfinite(a)):
        raise ParameterError(name, values, "finite numbers only (no NaN or inf)")
    d = np.diff(a)
    if strictly and not np.all(d > 0):
        i = int(np.argmax(~(d > 0)))
        raise ParameterError(f"{name}[{i + 1}]", float(a[i + 1]),
                             f"a value greater than {name}[{i}]={a[i]!r} (strictly increasing)")
    if not strictly and not np.all(d >= 0):
        i = int(np.argmax(~(d >= 0)))
        raise ParameterError(f"{name}[{i + 1}]", float(a[i + 1]), f"a value >= {name}[{i}]={a[i]!r} (non-decreasing)")
    return a
