"""Armature resistance from a DC voltage-drop (locked-rotor) test, corrected for temperature.

With the rotor held (no EMF) and the field off, a low DC voltage is applied across the armature
terminals and the voltage V and current I are read at several currents. The readings lie on
V = R*I + V_b: the slope is the armature circuit resistance and the intercept the brush contact
drop, which is nearly constant above a few amperes. The resistance is then referred to a
reference temperature with the copper constant 234.5 degC.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ...errors import ParameterError
from ...models.temperature import copper_resistance
from ...models.validation import in_range, nonnegative
from ._fitting import FitResultMixin, covariance_from_jacobian, readings

__all__ = ["ArmatureResistanceResult", "armature_resistance_test"]


@dataclass(frozen=True, eq=False)
class ArmatureResistanceResult(FitResultMixin):
    """Outcome of an armature resistance test.

    Attributes
    ----------
    resistance_at_test : float
        Armature circuit resistance at the test temperature. [ohm]
    resistance : float
        The same referred to ``reference_temperature``. [ohm]
    brush_drop : float
        Total brush contact drop (fitted, given, or 0). [V]
    test_temperature, reference_temperature : float
        [degC]
    method : str
        "slope and intercept" (brush drop fitted), "slope, brush drop given" or "through the origin"
        (brush drop not separated: it is inside the resistance).
    parameters, standard_errors : dict
        ``resistance`` [ohm] at the reference temperature, ``resistance_at_test`` [ohm],
        ``brush_drop`` [V]; a held value has standard error 0.
    residuals : ndarray
        Fitted minus read voltage. [V]
    machine : Machine or None
        ``machine`` (if one was given) with this armature resistance, brush drop and reference
        temperature.
    """

    resistance_at_test: float
    resistance: float
    brush_drop: float
    test_temperature: float
    reference_temperature: float
    method: str
    parameters: dict
    standard_errors: dict
    residuals: np.ndarray
    machine: object = None
    units = {"resistance": "ohm", "resistance_at_test": "ohm", "brush_drop": "V"}

    def apply_to(self, machine):
        """``machine`` with this resistance (at ``reference_temperature``) and brush drop."""
        return machine.with_(armature_resistance=self.resistance, brush_drop=self.brush_drop,
                             reference_temperature=self.reference_temperature)


def armature_resistance_test(voltage, current, *, test_temperature, reference_temperature=None,
                             brush_drop="auto", machine=None) -> ArmatureResistanceResult:
    """Armature resistance (and brush drop) from voltage-drop readings.

    Parameters
    ----------
    voltage : array_like
        Voltage across the armature terminals (brushes included) at each reading. [V]
    current : array_like
        Armature current at each reading, > 0. [A]
    test_temperature : float
        Winding temperature during the test (the room temperature after a long rest). [degC]
    reference_temperature : float, optional
        Temperature to refer the resistance to (e.g. 75 degC). [degC] Default: the test temperature.
    brush_drop : {"auto", "fit", "none"} or float, default "auto"
        "fit": fit the intercept as a constant brush drop (needs 3 readings or more); "none": a line
        through the origin (the brush drop stays inside R); a number: that drop [V] is taken off
        the readings first; "auto": "fit" when there are 3 readings or more and the largest current
        is at least twice the smallest, "none" otherwise.
    machine : Machine, optional
        A machine whose armature resistance and brush drop the result replaces.

    Returns
    -------
    ArmatureResistanceResult

    Raises
    ------
    ParameterError
        NaN or inf readings, a current <= 0, too few readings for the asked fit, a fitted
        resistance <= 0.

    Notes
    -----
    Ordinary least squares on V = R*I + V_b with standard errors from s^2 (J^T J)^-1 [2]_; with
    one reading only R = V/I and its standard error is nan. Temperature correction of copper:
    R2 = R1 (T2 + 234.5)/(T1 + 234.5), the inferred zero-resistance temperature of annealed copper
    [1]_. A real brush drop is not constant at low current (it falls towards zero): read at 10 %
    of rated current or more so the constant-drop line holds.

    References
    ----------
    .. [1] Conductors of insulated cables, IEC 60228, 2004 (copper: alpha20 = 0.00393 1/K, so
       1/alpha20 - 20 = 234.5 degC).
    .. [2] W. H. Press et al., Numerical Recipes, 3rd ed. Cambridge, U.K.: Cambridge Univ. Press,
       2007, sec. 15.2 (fitting data to a straight line).

    Examples
    --------
    >>> r = armature_resistance_test([3.0, 4.0, 5.0], [10.0, 20.0, 30.0], test_temperature=25.0)
    >>> round(r.resistance, 6), round(r.brush_drop, 6)
    (0.1, 2.0)
    """
    V = readings("voltage", voltage)
    I = readings("current", current)
    if V.size != I.size:
        raise ParameterError("voltage", V.tolist(), f"one reading per current ({I.size})")
    if not np.all(I > 0):
        i = int(np.argmax(~(I > 0)))
        raise ParameterError(f"current[{i}]", float(I[i]), "a test current > 0 [A]")
    t_test = in_range("test_temperature", test_temperature, -60.0, 250.0)
    t_ref = t_test if reference_temperature is None else in_range("reference_temperature",
                                                                   reference_temperature, -60.0, 250.0)
    mode = brush_drop
    if isinstance(mode, str):
        if mode not in ("auto", "fit", "none"):
            raise ParameterError("brush_drop", mode, "'auto', 'fit', 'none' or a drop >= 0 [V]")
        if mode == "auto":
            mode = "fit" if (I.size >= 3 and I.max() >= 2.0 * I.min()) else "none"
        if mode == "fit" and I.size < 3:
            raise ParameterError("current", I.tolist(), "at least 3 readings to fit the brush drop as well")
        if mode == "fit" and np.ptp(I) == 0:
            raise ParameterError("current", I.tolist(), "readings at different currents to separate the brush drop")
        vb_given = 0.0
    else:
        vb_given = nonnegative("brush_drop", mode)
        mode = "given"

    if mode == "fit":
        J = np.column_stack([I, np.ones_like(I)])
        x, *_ = np.linalg.lstsq(J, V, rcond=None)
        R, vb = float(x[0]), float(x[1])
        r = J @ x - V
        se = np.sqrt(np.diag(covariance_from_jacobian(J, r, ("resistance", "brush_drop"))))
        se_R, se_vb = float(se[0]), float(se[1])
        method = "slope and intercept"
    else:
        y = V - vb_given
        R = float(I @ y / (I @ I))
        vb = vb_given
        r = R * I - y
        se_R = (float(np.sqrt(covariance_from_jacobian(I[:, None], r, ("resistance",))[0, 0]))
                if I.size > 1 else math.nan)
        se_vb = 0.0
        method = "slope, brush drop given" if mode == "given" else "through the origin"
    if not R > 0:
        raise ParameterError("resistance", R, "a fitted resistance > 0: check the readings and their polarity")
    factor = copper_resistance(1.0, t_test, t_ref)
    R_ref = R * factor
    params = {"resistance": R_ref, "resistance_at_test": R, "brush_drop": vb}
    errors = {"resistance": se_R * factor, "resistance_at_test": se_R, "brush_drop": se_vb}
    result = ArmatureResistanceResult(resistance_at_test=R, resistance=R_ref, brush_drop=vb,
                                      test_temperature=t_test, reference_temperature=t_ref, method=method,
                                      parameters=params, standard_errors=errors, residuals=np.asarray(r))
    if machine is not None:
        object.__setattr__(result, "machine", result.apply_to(machine))
    return result
