"""Load test: fit the parameters the other tests leave open from points on load.

With the armature resistance, brush drop, field and magnetization known (from the resistance and
magnetization tests), readings on load of current, speed and shaft torque (a brake or a
dynamometer) fix what is left: the speed readings fix the armature reaction (how much the flux
falls with current), the torque readings the rotational and stray-load loss coefficients. The
fit is nonlinear least squares through the machine's own equations.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ...errors import ParameterError, SolverError
from ...models.connections import Machine
from ...models.magnetics import QuadraticArmatureReaction
from ...models.validation import choice, positive
from ._fitting import FitResultMixin, broadcast_readings, covariance_from_jacobian, readings

__all__ = ["LoadTestResult", "load_test", "LOAD_TEST_PARAMETERS"]

#: Parameters a load test can fit, with their units and where they go in the machine.
LOAD_TEST_PARAMETERS = {
    "armature_reaction_linear": "A-turns/A",
    "armature_reaction_quadratic": "A-turns/A^2",
    "demagnetization": "1/A",
    "friction_torque": "N*m",
    "viscous": "N*m*s/rad",
    "windage": "N*m*s^2/rad^2",
    "stray_load": "N*m/A^2",
}
_ROTATIONAL = ("friction_torque", "viscous", "windage")


@dataclass(frozen=True, eq=False)
class LoadTestResult(FitResultMixin):
    """Outcome of a load-test fit.

    Attributes
    ----------
    parameters, standard_errors : dict
        Fitted values and standard errors, units in :data:`LOAD_TEST_PARAMETERS`.
    covariance : ndarray
        In the order of ``fitted``.
    fitted : tuple of str
    armature_current : ndarray
        Armature current of each reading. [A]
    speed_residuals : ndarray
        Model minus read speed. [rad/s]
    torque_residuals : ndarray or None
        Model minus read shaft torque (None without torque readings). [N*m]
    residuals : ndarray
        The weighted residuals the fit minimized (speed, then torque, each divided by its
        standard uncertainty). [-]
    speed_uncertainty, torque_uncertainty : float
        Standard uncertainty of one reading, given or estimated from the residuals. [rad/s], [N*m]
    machine : Machine
        The given machine with the fitted parameters.
    report : object
        The ``scipy.optimize.least_squares`` result.
    """

    parameters: dict
    standard_errors: dict
    covariance: np.ndarray
    fitted: tuple
    armature_current: np.ndarray
    speed_residuals: np.ndarray
    torque_residuals: np.ndarray | None
    residuals: np.ndarray
    speed_uncertainty: float
    torque_uncertainty: float
    machine: Machine
    report: object = field(default=None, repr=False)
    units = LOAD_TEST_PARAMETERS


def _armature_current(machine, voltage, current, current_kind):
    """Armature current from a read supply current (explicit for every connection)."""
    if current_kind == "armature" or machine.connection in ("separately_excited", "series", "permanent_magnet"):
        return current
    if machine.connection in ("shunt", "long_shunt_compound"):
        return current - voltage / machine.field_circuit_resistance
    rse = machine._hot(machine.series_resistance) * machine.diverter_share  # short-shunt compound
    i_f = (voltage - current * rse) / machine.field_circuit_resistance
    return current - i_f


def _with(machine, names, x):
    """``machine`` with parameters ``names`` set to ``x``."""
    values = dict(zip(names, (float(v) for v in x)))
    changes = {}
    if "armature_reaction_linear" in values or "armature_reaction_quadratic" in values:
        ar = machine.armature_reaction
        lin = getattr(ar, "linear", 0.0)
        quad = getattr(ar, "quadratic", 0.0)
        changes["armature_reaction"] = QuadraticArmatureReaction(
            linear=values.get("armature_reaction_linear", lin),
            quadratic=values.get("armature_reaction_quadratic", quad))
    rot = {k: values[k] for k in _ROTATIONAL if k in values}
    if rot:
        import dataclasses

        changes["rotational_loss"] = dataclasses.replace(machine.rotational_loss, **rot)
    for k in ("demagnetization", "stray_load"):
        if k in values:
            changes[k] = values[k]
    return machine.with_(**changes)


def load_test(machine, voltage, current, speed, torque=None, *, parameters=None, current_kind: str = "armature",
              speed_uncertainty=None, torque_uncertainty=None, x0=None) -> LoadTestResult:
    """Fit armature reaction and loss coefficients of ``machine`` to load-test readings.

    Parameters
    ----------
    machine : Machine
        The machine as known from the other tests (resistances, field, magnetization). Its values
        of the fitted parameters are the start values (zeros are fine).
    voltage : float or array_like
        Supply voltage at each reading. [V]
    current : array_like
        Current at each reading: armature current, or supply (line) current when
        ``current_kind="supply"``. [A]
    speed : array_like
        Speed at each reading. [rad/s]
    torque : array_like, optional
        Shaft torque at each reading. [N*m] Without it only armature-reaction terms can be fitted.
    parameters : sequence of str, optional
        Names from :data:`LOAD_TEST_PARAMETERS` to fit. Default: ``("armature_reaction_linear",
        "friction_torque", "stray_load")`` with torque readings, ``("armature_reaction_linear",)``
        without (``("demagnetization", ...)`` in place of the armature reaction for a permanent
        magnet machine).
    current_kind : {"armature", "supply"}, default "armature"
    speed_uncertainty, torque_uncertainty : float, optional
        Standard uncertainty of one reading. [rad/s], [N*m] Default: estimated from the residuals
        of a first fit (two passes, each kind of reading weighted by its own scatter).
    x0 : sequence of float, optional
        Start values in the order of ``parameters``.

    Returns
    -------
    LoadTestResult

    Raises
    ------
    ParameterError
        Unknown parameter names, NaN readings, mismatched lengths, too few readings, a parameter
        that does not fit the connection (armature reaction of a permanent magnet machine).
    SolverError
        The fit failed, or the readings cannot separate the parameters (e.g. friction and
        viscous terms from readings all at one speed).

    Notes
    -----
    Each reading gives w_model(I_a) and T_model(I_a) from the machine's steady-state equations
    (:meth:`~dcchar.models.connections.Machine.scalar_state`). The weighted residuals
    (w_model - w)/sigma_w and (T_model - T)/sigma_T are minimized by
    ``scipy.optimize.least_squares`` with every parameter >= 0; the covariance is
    s^2 (J^T J)^-1 [1]_. A parameter that ends on its bound of 0 has an unreliable standard error
    (the data would rather have it negative): drop it from ``parameters``.

    References
    ----------
    .. [1] W. H. Press et al., Numerical Recipes, 3rd ed. Cambridge, U.K.: Cambridge Univ. Press,
       2007, sec. 15.5 (nonlinear models).
    """
    if not isinstance(machine, Machine):
        raise ParameterError("machine", machine, "a dcchar machine (Shunt, Series, ...)")
    choice("current_kind", current_kind, ("armature", "supply"))
    I = readings("current", current)
    n = I.size
    w = broadcast_readings("speed", speed, n)
    V = broadcast_readings("voltage", voltage, n)
    T = None if torque is None else broadcast_readings("torque", torque, n)
    pm = machine.connection == "permanent_magnet"
    if parameters is None:
        first = "demagnetization" if pm else "armature_reaction_linear"
        parameters = (first, "friction_torque", "stray_load") if T is not None else (first,)
    names = tuple(parameters)
    for k in names:
        if k not in LOAD_TEST_PARAMETERS:
            raise ParameterError("parameters", k, f"one of {tuple(LOAD_TEST_PARAMETERS)}")
    if len(set(names)) != len(names) or not names:
        raise ParameterError("parameters", names, "one or more distinct names")
    if pm and any(k.startswith("armature_reaction") for k in names):
        raise ParameterError("parameters", names, "'demagnetization' for a permanent-magnet machine, "
                             "not armature reaction terms")
    if not pm and "demagnetization" in names:
        raise ParameterError("parameters", names,
                             "armature reaction terms ('demagnetization' is for permanent magnets)")
    if T is None and any(k in _ROTATIONAL or k == "stray_load" for k in names):
        raise ParameterError("torque", None, "shaft torque readings [N*m] to fit loss coefficients")
    m_obs = n * (1 if T is None else 2)
    if m_obs <= len(names):
        raise ParameterError("current", I.tolist(), f"more readings than fitted parameters ({len(names)})")
    Ia = np.array([_armature_current(machine, V[k], I[k], current_kind) for k in range(n)])
    if not np.all(Ia > 0):
        j = int(np.argmax(~(Ia > 0)))
        raise ParameterError(f"current[{j}]", float(I[j]), "a motoring reading (armature current > 0)")
    if x0 is None:
        start = np.array([_current_value(machine, k) for k in names])
    else:
        start = readings("x0", x0)
        if start.size != len(names) or np.any(start < 0):
            raise ParameterError("x0", start.tolist(), f"{len(names)} start values >= 0")

    def model(x):
        m = _with(machine, names, x)
        out = np.array([m.scalar_state(V[k], Ia[k]) for k in range(n)])
        return out[:, 0], out[:, 1]

    def raw(x):
        ws, ts = model(x)
        return ws - w, (None if T is None else ts - T)

    # first pass: relative weights by the size of the readings; then each kind by its own scatter
    sw = positive("speed_uncertainty", speed_uncertainty) if speed_uncertainty is not None else None
    st = positive("torque_uncertainty", torque_uncertainty) if torque_uncertainty is not None else None
    scale_w = sw or float(np.max(np.abs(w))) * 1e-3
    scale_t = st or (float(np.max(np.abs(T))) * 1e-3 if T is not None else 1.0)
    res = _solve(raw, start, scale_w, scale_t)
    if sw is None or (T is not None and st is None):
        rw, rt = raw(res.x)
        if sw is None:
            scale_w = _scatter(rw, n, len(names), T is not None) or scale_w
        if T is not None and st is None:
            scale_t = _scatter(rt, n, len(names), True) or scale_t
        res = _solve(raw, res.x, scale_w, scale_t)
    absolute = sw is not None and (T is None or st is not None)
    cov = covariance_from_jacobian(res.jac, res.fun, names, absolute_sigma=absolute)
    se = np.sqrt(np.diag(cov))
    rw, rt = raw(res.x)
    return LoadTestResult(parameters=dict(zip(names, map(float, res.x))),
                          standard_errors=dict(zip(names, map(float, se))),
                          covariance=cov, fitted=names, armature_current=Ia, speed_residuals=rw,
                          torque_residuals=rt, residuals=np.asarray(res.fun), speed_uncertainty=float(scale_w),
                          torque_uncertainty=float(scale_t) if T is not None else float("nan"),
                          machine=_with(machine, names, res.x), report=res)


def _scatter(r, n, p, two_kinds):
    """Standard deviation of one kind of residual, sharing the degrees of freedom in proportion."""
    dof = n - p * (0.5 if two_kinds else 1.0)
    if dof <= 0:
        return None
    s = float(np.sqrt(r @ r / dof))
    return s if s > 0 else None


def _solve(raw, start, scale_w, scale_t):
    from scipy.optimize import least_squares

    def fun(x):
        rw, rt = raw(x)
        parts = [rw / scale_w] + ([] if rt is None else [rt / scale_t])
        return np.concatenate(parts)

    try:
        res = least_squares(fun, start, bounds=(0.0, np.inf), x_scale="jac", method="trf", xtol=1e-12,
                            ftol=1e-12, gtol=1e-12, max_nfev=500 * (start.size + 1))
    except ValueError as exc:  # a trial point the machine rejects
        raise SolverError(f"load-test fit failed: {exc}") from exc
    if not res.success or not np.all(np.isfinite(res.fun)):
        raise SolverError(f"load-test fit did not converge: {res.message}", report=res)
    return res


def _current_value(machine, name):
    if name.startswith("armature_reaction"):
        return float(getattr(machine.armature_reaction, name.removeprefix("armature_reaction_"), 0.0))
    if name in _ROTATIONAL:
        return float(getattr(machine.rotational_loss, name))
    return float(getattr(machine, name))
