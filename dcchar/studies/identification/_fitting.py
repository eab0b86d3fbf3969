"""Helpers shared by the identification fits: reading arrays of test data, and the covariance of
least-squares parameters from the Jacobian at the solution."""

from __future__ import annotations

import math

import numpy as np

from ...errors import ParameterError, SolverError

__all__ = ["readings", "broadcast_readings", "covariance_from_jacobian", "FitResultMixin"]


def readings(name: str, values, *, min_length: int = 1) -> np.ndarray:
    """A 1-D array of finite test readings, or a :class:`ParameterError` naming the field."""
    try:
        a = np.atleast_1d(np.asarray(values, dtype=float))
    except (TypeError, ValueError):
        raise ParameterError(name, values, "a sequence of numbers") from None
    if a.ndim != 1:
        raise ParameterError(name, values, "a 1-D sequence of numbers")
    if not np.all(np.isfinite(a)):
        i = int(np.argmax(~np.isfinite(a)))
        raise ParameterError(f"{name}[{i}]", float(a[i]), "a finite reading (no NaN or inf)")
    if a.size < min_length:
        raise ParameterError(name, a.tolist(), f"at least {min_length} readings")
    return a


def broadcast_readings(name: str, values, size: int) -> np.ndarray:
    """A scalar or a 1-D array of ``size`` finite readings, returned with ``size`` elements."""
    a = readings(name, values)
    if a.size == 1:
        return np.full(size, float(a[0]))
    if a.size != size:
        raise ParameterError(name, a.tolist(), f"one value, or one per reading ({size})")
    return a


def covariance_from_jacobian(jacobian, residuals, names, *, absolute_sigma: bool = False) -> np.ndarray:
    """Covariance of least-squares parameters, C = s^2 (J^T J)^-1.

    Parameters
    ----------
    jacobian : array_like, shape (n, p)
        Jacobian of the (weighted) residuals with respect to the parameters at the solution.
    residuals : array_like, shape (n,)
        (Weighted) residuals at the solution.
    names : sequence of str
        Parameter names, for the error message when they cannot be told apart.
    absolute_sigma : bool, default False
        If True the residuals are already divided by known standard uncertainties and s^2 = 1;
        otherwise s^2 = sum(r^2)/(n - p), the residual variance.

    Returns
    -------
    ndarray, shape (p, p)

    Raises
    ------
    SolverError
        When J is rank-deficient: the data cannot separate the parameters.

    Notes
    -----
    The usual linearized estimate, as in Sec. 15.4 of [1]_; the same as ``scipy.optimize.curve_fit``
    with ``absolute_sigma=False``. It is computed from the singular values of J, which is more
    accurate than inverting J^T J.

    References
    ----------
    .. [1] W. H. Press, S. A. Teukolsky, W. T. Vetterling and B. P. Flannery, Numerical Recipes,
       3rd ed. Cambridge, U.K.: Cambridge Univ. Press, 2007, sec. 15.4-15.5.
    """
    J = np.asarray(jacobian, dtype=float)
    r = np.asarray(residuals, dtype=float)
    n, p = J.shape
    if n <= p:
        raise ParameterError("readings", n, f"more readings than fitted parameters ({p}: {', '.join(names)})")
    _, s, vt = np.linalg.svd(J, full_matrices=False)
    tol = np.finfo(float).eps * max(n, p) * (s[0] if s.size else 0.0)
    if s.size < p or not np.all(s > tol):
        raise SolverError(f"the readings cannot tell the parameters {', '.join(names)} apart "
                          "(the Jacobian is singular): take readings over a wider range", report=s)
    s2 = 1.0 if absolute_sigma else float(r @ r) / (n - p)
    return (vt.T / s**2) @ vt * s2


class FitResultMixin:
    """Common views of a fit result: ``parameters``, ``standard_errors``, ``units`` dicts."""

    parameters: dict
    standard_errors: dict
    units: dict
    residuals: np.ndarray

    @property
    def rms_residual(self) -> float:
        """Root-mean-square of the residuals (in the unit of the residuals)."""
        r = np.asarray(self.residuals, dtype=float)
        return float(math.sqrt(np.mean(r * r))) if r.size else 0.0

    def to_rows(self) -> list[dict]:
        """One row a parameter: name, value, standard error, unit."""
        return [{"name": k, "value": float(v), "standard_error": float(self.standard_errors.get(k, math.nan)),
                 "unit": self.units.get(k, "")} for k, v in self.parameters.items()]
