"""Magnetization test (no-load saturation test, open-circuit characteristic).

The machine is driven at a steady speed with the armature open (or the armature voltage read
with negligible current) while the field current is raised in steps; each step gives a point of
EMF against field current. Points read at a speed other than the reference are referred to it by
Faraday's law, E_ref = E * w_ref / w (the flux, hence E/w, depends on the excitation alone).
The points give a :class:`~dcchar.models.magnetics.TabulatedMagnetization` and a least-squares
Froehlich fit with its residuals and parameter standard errors.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ...errors import ParameterError, SolverError
from ...models.magnetics import Froehlich, TabulatedMagnetization
from ...models.validation import positive
from ._fitting import FitResultMixin, broadcast_readings, covariance_from_jacobian, readings

__all__ = ["MagnetizationTestResult", "magnetization_test", "refer_to_speed"]


def refer_to_speed(emf, speed, reference_speed):
    """EMF read at ``speed`` referred to ``reference_speed`` by Faraday's law, E*w_ref/w. [V]

    Parameters
    ----------
    emf : array_like
        EMF readings. [V]
    speed : array_like
        Speed of each reading (or one speed for all). [rad/s]
    reference_speed : float
        [rad/s]

    Examples
    --------
    >>> float(refer_to_speed(200.0, 100.0, 150.0)[0])
    300.0
    """
    e = readings("emf", emf)
    w = broadcast_readings("speed", speed, e.size)
    if not np.all(w > 0):
        i = int(np.argmax(~(w > 0)))
        raise ParameterError(f"speed[{i}]", float(w[i]), "a speed > 0 [rad/s]")
    return e * positive("reference_speed", reference_speed) / w


@dataclass(frozen=True, eq=False)
class MagnetizationTestResult(FitResultMixin):
    """Outcome of a magnetization test.

    Attributes
    ----------
    excitation : ndarray
        Excitation of the points, sorted increasing. [A-turns per pole] (field amperes when
        ``field_turns`` = 1)
    emf : ndarray
        EMF of the points referred to ``reference_speed``. [V]
    reference_speed : float
        [rad/s]
    tabulated : TabulatedMagnetization
        The curve through the points (PCHIP).
    froehlich : Froehlich
        The least-squares Froehlich curve.
    parameters, standard_errors : dict
        ``a`` [V], ``b`` [A-turns], ``residual_emf`` [V] and their standard errors (the
        residual EMF's is 0 when it was held, not fitted).
    covariance : ndarray
        Covariance of the fitted parameters, in the order of ``fitted``.
    fitted : tuple of str
        Names of the parameters that were fitted.
    residuals : ndarray
        Froehlich EMF minus the point's EMF, at the reference speed. [V]
    machine : Machine or None
        ``machine`` (if one was given) with the Froehlich curve (or the tabulated one, as asked).
    report : object
        The ``scipy.optimize.least_squares`` result.
    """

    excitation: np.ndarray
    emf: np.ndarray
    reference_speed: float
    tabulated: TabulatedMagnetization
    froehlich: Froehlich
    parameters: dict
    standard_errors: dict
    covariance: np.ndarray
    fitted: tuple
    residuals: np.ndarray
    machine: object = None
    report: object = field(default=None, repr=False)
    units = {"a": "V", "b": "A-turns", "residual_emf": "V"}

    def apply_to(self, machine, curve: str = "froehlich"):
        """``machine`` with this test's magnetization: ``curve`` is "froehlich" or "tabulated"."""
        if curve not in ("froehlich", "tabulated"):
            raise ParameterError("curve", curve, "one of ('froehlich', 'tabulated')")
        return machine.with_(magnetization=self.froehlich if curve == "froehlich" else self.tabulated)


def magnetization_test(field_current, emf, speed, *, reference_speed=None, field_turns=1.0, fit_residual=None,
                       machine=None, curve: str = "froehlich") -> MagnetizationTestResult:
    """Magnetization curve from the points of a magnetization (open-circuit) test.

    Parameters
    ----------
    field_current : array_like
        Field current of each point. [A] (Points may come in any order; they are sorted.)
    emf : array_like
        Armature EMF read at each point. [V]
    speed : float or array_like
        Speed at which each point was read. [rad/s]
    reference_speed : float, optional
        Speed the curve is referred to. [rad/s] Default: the test speed when all points share one;
        required otherwise.
    field_turns : float, default 1
        Turns per pole of the tested field winding, so that excitation = field_turns*I_f. Keep 1
        to express the curve in field amperes. [-]
    fit_residual : bool, optional
        Fit a residual EMF E_r as a third parameter. Default: True when a point at zero field
        current is present (the residual was read), False otherwise (E_r held at 0).
    machine : Machine, optional
        A machine whose magnetization the result replaces (see ``MagnetizationTestResult.machine``).
    curve : {"froehlich", "tabulated"}, default "froehlich"
        Which curve goes into ``machine``.

    Returns
    -------
    MagnetizationTestResult

    Raises
    ------
    ParameterError
        NaN or inf readings; fewer points than fitted parameters plus one; negative field current;
        two points at the same field current; an EMF that does not rise with the field current
        (a descending hysteresis branch mixed in, or a misread point).
    SolverError
        The least-squares fit did not converge or cannot separate the parameters.

    Notes
    -----
    Model: E0(F) = E_r + a*F/(b + F), the Froehlich law (see
    :class:`~dcchar.models.magnetics.Froehlich`). Start values come from the linear form
    F/(E - E_r) = b/a + F/a. The fit minimizes the sum of squared EMF residuals with
    ``scipy.optimize.least_squares`` (a, b > 0, E_r >= 0); standard errors are the square roots of
    the diagonal of s^2 (J^T J)^-1, the linearized estimate of [1]_. Speed referral by Faraday's
    law: E is proportional to the flux and the speed, so at one excitation E/w is constant.

    References
    ----------
    .. [1] W. H. Press, S. A. Teukolsky, W. T. Vetterling and B. P. Flannery, Numerical Recipes,
       3rd ed. Cambridge, U.K.: Cambridge Univ. Press, 2007, sec. 15.4-15.5.
    .. [2] A. E. Fitzgerald, C. Kingsley Jr. and S. D. Umans, Electric Machinery, 6th ed. New York,
       NY, USA: McGraw-Hill, 2003, sec. 7.2 (the open-circuit characteristic at a stated speed).

    Examples
    --------
    >>> r = magnetization_test([0.5, 1.0, 2.0, 4.0, 8.0], [100.0, 166.7, 250.0, 333.3, 400.0], 150.0)
    >>> round(r.parameters["a"]), round(r.parameters["b"], 2)
    (500, 2.0)
    """
    If = readings("field_current", field_current)
    E_raw = readings("emf", emf)
    if If.size != E_raw.size:
        raise ParameterError("emf", E_raw.tolist(), f"one reading per field current ({If.size})")
    w = broadcast_readings("speed", speed, If.size)
    if reference_speed is None:
        if not np.all(w == w[0]):
            raise ParameterError("reference_speed", None,
                                 "a reference speed [rad/s]: the points were read at different speeds")
        reference_speed = float(w[0])
    w_ref = positive("reference_speed", reference_speed)
    E = refer_to_speed(E_raw, w, w_ref)
    F = If * positive("field_turns", field_turns)
    if np.any(F < 0):
        i = int(np.argmax(F < 0))
        raise ParameterError(f"field_current[{i}]", float(If[i]), "a field current >= 0 (test the positive branch)")
    order = np.argsort(F, kind="stable")
    F, E = F[order], E[order]
    dup = np.nonzero(np.diff(F) == 0)[0]
    if dup.size:
        raise ParameterError("field_current", float(F[dup[0]] / field_turns),
                             "distinct field currents (two points at the same current: average them first)")
    falls = np.nonzero(np.diff(E) <= 0)[0]
    if falls.size:
        j = int(falls[0]) + 1
        raise ParameterError("emf", float(E[j]),
                             f"an EMF rising with field current (the point at {F[j] / field_turns:g} A is not above "
                             f"the one at {F[j - 1] / field_turns:g} A, {E[j - 1]:g} V): non-monotone data, "
                             "perhaps a descending branch mixed in")
    if E[0] < 0:
        raise ParameterError("emf", float(E[0]), "EMF readings >= 0")
    if fit_residual is None:
        fit_residual = bool(F[0] == 0)
    names = ("a", "b", "residual_emf") if fit_residual else ("a", "b")
    if F.size < len(names) + 1:
        raise ParameterError("field_current", (F / field_turns).tolist(),
                             f"at least {len(names) + 1} points for a Froehlich fit of {', '.join(names)}")
    tab = TabulatedMagnetization(F, E, w_ref)

    x0 = _start_values(F, E, fit_residual)
    from scipy.optimize import least_squares

    def resid(x):
        er = x[2] if fit_residual else 0.0
        return er + x[0] * F / (x[1] + F) - E

    lower = [0.0, 0.0] + ([0.0] if fit_residual else [])
    res = least_squares(resid, x0, bounds=(lower, np.inf), x_scale="jac", method="trf",
                        xtol=1e-14, ftol=1e-14, gtol=1e-14, max_nfev=2000)
    if not res.success or not np.all(np.isfinite(res.x)) or res.x[0] <= 0 or res.x[1] <= 0:
        raise SolverError(f"Froehlich fit did not converge: {res.message}", report=res)
    cov = covariance_from_jacobian(_froehlich_jacobian(res.x, F, fit_residual), res.fun, names)
    se = np.sqrt(np.diag(cov))
    params = {"a": float(res.x[0]), "b": float(res.x[1]), "residual_emf": float(res.x[2]) if fit_residual else 0.0}
    errors = {"a": float(se[0]), "b": float(se[1]), "residual_emf": float(se[2]) if fit_residual else 0.0}
    fro = Froehlich(a=params["a"], b=params["b"], reference_speed=w_ref, residual_emf=params["residual_emf"])
    result = MagnetizationTestResult(excitation=F, emf=E, reference_speed=w_ref, tabulated=tab, froehlich=fro,
                                     parameters=params, standard_errors=errors, covariance=cov, fitted=names,
                                     residuals=np.asarray(res.fun, dtype=float), report=res)
    if machine is not None:
        object.__setattr__(result, "machine", result.apply_to(machine, curve))
    return result


def _froehlich_jacobian(x, F, fit_residual):
    a, b = x[0], x[1]
    cols = [F / (b + F), -a * F / (b + F) ** 2]
    if fit_residual:
        cols.append(np.ones_like(F))
    return np.column_stack(cols)


def _start_values(F, E, fit_residual):
    er = float(E[0]) if (fit_residual and F[0] == 0) else 0.0
    m = (F > 0) & (E - er > 0)
    Fp, e = F[m], E[m] - er
    # reluctivity form F/e = b/a + F/a, a straight line in F
    slope, intercept = np.polyfit(Fp, Fp / e, 1) if Fp.size >= 2 else (0.0, 0.0)
    if slope > 0 and intercept > 0:
        a = 1.0 / slope
        b = intercept * a
    else:  # nearly linear data: put the knee well beyond the last point
        a = 2.0 * float(e.max()) if e.size else 1.0
        b = float(F.max())
    x = [a, b] + ([max(er, 0.0)] if fit_residual else [])
    return np.asarray(x, dtype=float)

