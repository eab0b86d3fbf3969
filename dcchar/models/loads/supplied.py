"""Loads the user brings: a torque-speed table (from a CSV file) and a typed formula.

Sign and unit conventions are those of :mod:`dcchar.models.loads`.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from ...errors import ParameterError, ScenarioError
from .. import units
from ..validation import choice
from .base import Gearing, Load, _check_gear

__all__ = ["TableLoad", "FormulaLoad"]


_SPEED_COLUMNS = {"speed_rpm": units.RPM, "speed_rad_s": 1.0}
_TORQUE_COLUMNS = {"torque_n_m": 1.0, "torque_lbf_ft": units.LBF_FT}


@dataclass(frozen=True)
class TableLoad(Load):
    """A measured or catalogue torque-speed table, interpolated.

    Parameters
    ----------
    speed : sequence of float
        Driven-shaft speeds, strictly increasing, at least 2. [rad/s]
    torque : sequence of float
        Torque at each speed (sign convention of the module). [N*m]
    gearing : Gearing or None
    load_inertia : float
        [kg*m^2]
    source : str
        Where the table came from (file name), for :meth:`describe`.

    Notes
    -----
    Between points: the monotone piecewise-cubic Hermite interpolant (PCHIP, scipy
    ``PchipInterpolator``), which keeps the shape of the data (no overshoot) and has a
    continuous slope. Outside the table the torque is held at the end values with zero slope,
    and a ``RuntimeWarning`` is emitted the first time a table is asked outside its range. The
    table is used as given for negative speeds (no symmetry is imposed).
    """

    speed: tuple
    torque_values: tuple
    gearing: Gearing | None = None
    load_inertia: float = 0.0
    source: str = ""
    kind: ClassVar[str] = "table"

    def __post_init__(self):
        from ..validation import increasing_array

        w = increasing_array("speed", self.speed)
        try:
            t = np.asarray(self.torque_values, dtype=float)
        except (TypeError, ValueError):
            raise ParameterError("torque", self.torque_values, "a sequence of numbers [N*m]") from None
        if t.shape != w.shape or not np.all(np.isfinite(t)):
            raise ParameterError("torque", self.torque_values,
                                 f"{w.size} finite numbers, one per speed [N*m]")
        object.__setattr__(self, "speed", tuple(float(x) for x in w))
        object.__setattr__(self, "torque_values", tuple(float(x) for x in t))
        _check_gear(self)
        from scipy.interpolate import PchipInterpolator

        interp = PchipInterpolator(w, t, extrapolate=False)
        object.__setattr__(self, "_interp", interp)
        object.__setattr__(self, "_dinterp", interp.derivative())
        object.__setattr__(self, "_warned", [False])

    @classmethod
    def from_csv(cls, path, gearing=None, load_inertia=0.0):
        """Read a table from a CSV file.

        Parameters
        ----------
        path : str or os.PathLike
            File with a header row naming one speed column (``speed_rpm`` or ``speed_rad_s``)
            and one torque column (``torque_n_m`` or ``torque_lbf_ft``); other columns are
            ignored. ``#`` starts a comment (whole line or end of line); blank lines are skipped.
        gearing : Gearing or None
        load_inertia : float
            [kg*m^2]

        Raises
        ------
        ScenarioError
            ``path`` is ``"<file>:<line>"``; the message names the column and the value
            (missing column, non-numeric, NaN or infinite value, speeds not strictly
            increasing, fewer than 2 rows).
        """
        import os

        name = os.fspath(path)
        try:
            with open(name, encoding="utf-8") as fh:
                lines = fh.read().splitlines()
        except OSError as exc:
            raise ScenarioError(name, f"cannot read the table: {exc.strerror or exc}") from None
        header = None
        rows = []
        for lineno, raw in enumerate(lines, start=1):
            text = raw.split("#", 1)[0].strip()
            if not text:
                continue
            cells = [c.strip() for c in text.split(",")]
            if header is None:
                header = [c.lower() for c in cells]
                sp = [c for c in header if c in _SPEED_COLUMNS]
                tq = [c for c in header if c in _TORQUE_COLUMNS]
                for found, allowed, what in ((sp, _SPEED_COLUMNS, "speed"), (tq, _TORQUE_COLUMNS, "torque")):
                    if len(found) != 1:
                        raise ScenarioError(f"{name}:{lineno}",
                                            f"header needs exactly one {what} column, one of "
                                            f"{tuple(allowed)}; found {found or 'none'} in {header}")
                speed_col, torque_col = sp[0], tq[0]
                idx = (header.index(speed_col), header.index(torque_col))
                continue
            values = []
            for col, i in zip((speed_col, torque_col), idx):
                if i >= len(cells) or cells[i] == "":
                    raise ScenarioError(f"{name}:{lineno}", f"column {col!r}: value missing")
                try:
                    v = float(cells[i])
                except ValueError:
                    raise ScenarioError(f"{name}:{lineno}",
                                        f"column {col!r}: value {cells[i]!r} is not a number") from None
                if not math.isfinite(v):
                    raise ScenarioError(f"{name}:{lineno}",
                                        f"column {col!r}: value {cells[i]!r} is not a finite number")
                values.append(v)
            w = values[0] * _SPEED_COLUMNS[speed_col]
            if rows and not w > rows[-1][1]:
                raise ScenarioError(f"{name}:{lineno}",
                                    f"column {speed_col!r}: value {cells[idx[0]]!r} is not greater than "
                                    f"the previous row's (speeds must increase strictly)")
            rows.append((lineno, w, values[1] * _TORQUE_COLUMNS[torque_col]))
        if header is None:
            raise ScenarioError(name, "no header row found")
        if len(rows) < 2:
            raise ScenarioError(name, f"a table needs at least 2 data rows, found {len(rows)}")
        return cls(speed=tuple(r[1] for r in rows), torque_values=tuple(r[2] for r in rows),
                   gearing=gearing, load_inertia=load_inertia, source=os.path.basename(name))

    def _load_side(self, w_l):
        lo, hi = self.speed[0], self.speed[-1]
        wc = np.clip(w_l, lo, hi)
        t = self._interp(wc)
        d = np.where((w_l < lo) | (w_l > hi), 0.0, self._dinterp(wc))
        return np.asarray(t, dtype=float), np.asarray(d, dtype=float)

    def _check_range(self, speed):
        w_l = self._gear.load_speed(speed)
        if not self._warned[0] and np.any((w_l < self.speed[0]) | (w_l > self.speed[-1])):
            self._warned[0] = True
            warnings.warn(f"table load{' ' + self.source if self.source else ''} asked outside its speed "
                          f"range [{self.speed[0]:g}, {self.speed[-1]:g}] rad/s; torque held at the end "
                          "values", RuntimeWarning, stacklevel=3)

    def torque(self, speed):
        self._check_range(speed)
        return super().torque(speed)

    def slope(self, speed):
        self._check_range(speed)
        return super().slope(speed)

    def describe(self):
        src = f" from {self.source}" if self.source else ""
        return self._geared(f"table of {len(self.speed)} points{src}, {self.speed[0]:g} to "
                            f"{self.speed[-1]:g} rad/s, PCHIP")


@dataclass(frozen=True)
class FormulaLoad(Load):
    """Torque given by a formula the user types, e.g. ``"20 + 0.004*n**2"``.

    Parameters
    ----------
    text : str
        Formula of the driven-shaft torque [N*m] in the speed variable; grammar in
        :mod:`dcchar.models.formula` (parsed without evaluating the text).
    speed_unit : {"rpm", "rad/s"}
        Unit of the speed variable in the formula.
    variable : str or None
        Name of the variable; default ``"n"`` for rpm and ``"w"`` for rad/s.
    gearing : Gearing or None
    load_inertia : float
        [kg*m^2]

    Notes
    -----
    The formula is used as typed for negative speeds. Where it has no real value the torque is
    ``nan`` (the caller decides; an operating-point search skips such points). The slope is the
    sympy derivative, converted to per rad/s.
    """

    text: str
    speed_unit: str = "rpm"
    variable: str | None = None
    gearing: Gearing | None = None
    load_inertia: float = 0.0
    kind: ClassVar[str] = "formula"

    def __post_init__(self):
        from ..formula import parse_formula

        choice("speed_unit", self.speed_unit, ("rpm", "rad/s"))
        if self.variable is None:
            object.__setattr__(self, "variable", "n" if self.speed_unit == "rpm" else "w")
        _check_gear(self)
        object.__setattr__(self, "_formula", parse_formula(self.text, variable=self.variable))

    @property
    def formula(self):
        """The parsed :class:`~dcchar.models.formula.Formula`."""
        return self._formula

    def _load_side(self, w_l):
        scale = units.RPM if self.speed_unit == "rpm" else 1.0
        x = w_l / scale
        return self._formula.function(x), self._formula.derivative(x) / scale

    def describe(self):
        return self._geared(f"formula T [N*m] = {self.text} with {self.variable} in {self.speed_unit}")
