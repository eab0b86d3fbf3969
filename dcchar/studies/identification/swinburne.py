"""Swinburne's test (no-load running test): constant losses and the efficiency at any load.

A shunt or separately excited machine runs light as a motor at rated voltage and rated speed.
Its input is then the constant (stray) losses - friction, windage, core loss and, for a shunt
machine, the shunt field copper - plus the small armature copper loss of the no-load current.
With the hot armature resistance known, the constant losses follow, and the efficiency at any
load is predicted by adding the armature copper (and brush) loss of that load. The method holds
where the flux is nearly constant (shunt, separately excited, lightly compounded machines), not
for series machines.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ...errors import ParameterError
from ...models.connections import SeparatelyExcited, Shunt
from ...models.losses import RotationalLoss
from ...models.magnetics import LinearMagnetization
from ...models.validation import choice, nonnegative, positive
from ._fitting import FitResultMixin

__all__ = ["SwinburneResult", "swinburne_test"]


@dataclass(frozen=True, eq=False)
class SwinburneResult(FitResultMixin):
    """Outcome of Swinburne's test.

    Attributes
    ----------
    voltage : float
        Test (and working) voltage. [V]
    no_load_current : float
        Current read at no load (line current for a shunt machine, armature current for a
        separately excited one). [A]
    armature_resistance : float
        Hot armature circuit resistance used. [ohm]
    brush_drop : float
        Total brush drop used. [V]
    field_current : float
        [A]
    no_load_armature_current : float
        [A]
    no_load_emf : float
        [V]
    constant_loss : float
        Input at no load less the armature copper and brush loss of the no-load current: the
        rotational losses plus (shunt machine) the shunt field copper. [W]
    rotational_loss : float
        Constant loss less the field copper: friction, windage and core loss. [W]
    field_copper : float
        Shunt field copper (0 for a separately excited machine, whose field supply is apart). [W]
    connection : str
        "shunt" or "separately_excited".
    speed : float or None
        No-load speed of the test. [rad/s]
    parameters, standard_errors : dict
        ``constant_loss`` [W], ``rotational_loss`` [W]; the standard errors propagate the stated
        reading uncertainties (zero when none were stated).
    residuals : ndarray
        Empty: one reading determines the losses exactly.
    machine : Shunt or SeparatelyExcited or None
        The machine the test implies: linear magnetization through the test point, the
        rotational loss lumped as a constant power. None when no ``speed`` was given.
    """

    voltage: float
    no_load_current: float
    armature_resistance: float
    brush_drop: float
    field_current: float
    no_load_armature_current: float
    no_load_emf: float
    constant_loss: float
    rotational_loss: float
    field_copper: float
    connection: str
    speed: float | None
    parameters: dict
    standard_errors: dict
    residuals: np.ndarray = field(default_factory=lambda: np.zeros(0))
    machine: object = None
    units = {"constant_loss": "W", "rotational_loss": "W"}

    def armature_current(self, current, mode: str = "motor"):
        """Armature current for a line (supply) current ``current`` [A]: I - I_f motoring,
        I + I_f generating (shunt); the same current for a separately excited machine. [A]"""
        i = np.asarray(current, dtype=float)
        choice("mode", mode, ("motor", "generator"))
        if self.connection == "separately_excited":
            return i
        return i - self.field_current if mode == "motor" else i + self.field_current

    def variable_loss(self, current, mode: str = "motor"):
        """Armature copper and brush loss at line current ``current`` [A]. [W]"""
        ia = self.armature_current(current, mode)
        return ia * ia * self.armature_resistance + self.brush_drop * np.abs(ia)

    def efficiency(self, current, mode: str = "motor"):
        """Predicted efficiency at line current ``current`` [A] and the test voltage. [-]

        Motor: (V*I - losses)/(V*I); generator: V*I/(V*I + losses), with losses = constant loss
        + I_a^2*R_a + V_b*|I_a|. Stray-load loss is not included (Swinburne's test cannot see it).
        """
        i = np.asarray(current, dtype=float)
        if np.any(i <= 0):
            raise ParameterError("current", current, "line currents > 0 [A]")
        losses = self.constant_loss + self.variable_loss(i, mode)
        p = self.voltage * i
        return (p - losses) / p if mode == "motor" else p / (p + losses)

    def output(self, current, mode: str = "motor"):
        """Predicted shaft output (motor) or electrical output (generator) at line current ``current``. [W]"""
        i = np.asarray(current, dtype=float)
        p = self.voltage * i
        return p - self.constant_loss - self.variable_loss(i, mode) if mode == "motor" else p

    def speed_at(self, current, flux_ratio=1.0):
        """Motor speed at line current ``current`` [A] from the no-load speed, [rad/s].

        w = w0 * (E/E0) / flux_ratio, with E = V - I_a*R_a - V_b; ``flux_ratio`` is the flux at
        this load over that at no load (e.g. 0.97 for a field weakened 3 % by armature reaction).
        """
        if self.speed is None:
            raise ParameterError("speed", None, "the no-load speed of the test [rad/s], to predict speeds")
        ia = self.armature_current(current, "motor")
        e = self.voltage - ia * self.armature_resistance - self.brush_drop * np.sign(ia)
        return self.speed * e / self.no_load_emf / positive("flux_ratio", flux_ratio)

    @property
    def maximum_efficiency_armature_current(self) -> float:
        """Armature current at which the variable copper loss equals the constant loss (no brush
        drop), where the efficiency is highest: sqrt(W_c/R_a). [A]"""
        return math.sqrt(self.constant_loss / self.armature_resistance)


def swinburne_test(voltage, no_load_current, *, armature_resistance, field_resistance=None, field_current=None,
                   connection: str = "shunt", brush_drop=0.0, speed=None, voltage_uncertainty=0.0,
                   current_uncertainty=0.0, resistance_uncertainty=0.0) -> SwinburneResult:
    """Constant losses of a shunt or separately excited machine from Swinburne's test.

    Parameters
    ----------
    voltage : float
        Supply voltage at the test, normally the rated voltage. [V]
    no_load_current : float
        Current taken running light: the line current (armature plus shunt field) for a shunt
        machine, the armature current for a separately excited one. [A]
    armature_resistance : float
        Armature circuit resistance at the working temperature (the "hot" value). [ohm]
    field_resistance : float, optional
        Shunt field circuit resistance (winding plus rheostat as set). [ohm]
    field_current : float, optional
        Field current read at the test (instead of ``field_resistance``). [A]
    connection : {"shunt", "separately_excited"}, default "shunt"
    brush_drop : float, default 0
        Total brush drop to treat as a variable loss V_b*I_a (0: inside R_a, as the textbooks do). [V]
    speed : float, optional
        Speed of the no-load run. [rad/s] Needed for the implied machine and for speeds.
    voltage_uncertainty, current_uncertainty, resistance_uncertainty : float, default 0
        Standard uncertainties of the readings [V], [A] (both currents) and [ohm], propagated to
        first order into the standard errors of the losses.

    Returns
    -------
    SwinburneResult

    Raises
    ------
    ParameterError
        Missing field data for a shunt machine; a field current not below the no-load current;
        a negative constant loss or EMF (inconsistent readings).

    Notes
    -----
    Constant loss W_c = V*I_0 - I_a0^2*R_a - V_b*I_a0 with I_a0 = I_0 - I_sh (shunt) [1]_, [2]_.
    Then at any line current I: losses = W_c + I_a^2*R_a + V_b*|I_a| and eta = 1 - losses/(V*I).
    Assumed: constant flux and speed (so the rotational loss stays at its no-load value),
    resistances at working temperature, no stray-load loss. The implied machine puts the
    rotational loss W_c - V*I_sh as ``RotationalLoss(fixed_power=...)``, faded in below 1 rad/s.

    References
    ----------
    .. [1] B. L. Theraja and A. K. Theraja, A Textbook of Electrical Technology, vol. II. New
       Delhi, India: S. Chand, ch. 31 ("Testing of D.C. Machines"), Swinburne's test.
    .. [2] E. E. Kimberly, Electrical Engineering, sec. 14 (losses and efficiency of DC machines).
    """
    V = positive("voltage", voltage)
    I0 = positive("no_load_current", no_load_current)
    Ra = positive("armature_resistance", armature_resistance)
    Vb = nonnegative("brush_drop", brush_drop)
    choice("connection", connection, ("shunt", "separately_excited"))
    if field_current is not None:
        If = positive("field_current", field_current)
        Rf = V / If if field_resistance is None else positive("field_resistance", field_resistance)
    elif field_resistance is not None:
        Rf = positive("field_resistance", field_resistance)
        If = V / Rf
    elif connection == "shunt":
        raise ParameterError("field_resistance", None, "the shunt field resistance [ohm] or field_current [A]")
    else:
        If, Rf = math.nan, math.nan
    if connection == "shunt" and not I0 > If:
        raise ParameterError("no_load_current", I0, f"a line current above the field current {If:g} A")
    read_field = field_current is not None

    def losses(v, i0, ra, i_f):
        if connection == "shunt":
            i_f = i_f if read_field else v / Rf
            ia0 = i0 - i_f
            p_f = v * i_f
        else:
            ia0, p_f = i0, 0.0
        wc = v * i0 - ia0 * ia0 * ra - Vb * ia0
        return np.array([wc, wc - p_f, ia0, p_f, v - ia0 * ra - Vb])

    Wc, P_rot, Ia0, p_field, E0 = (float(x) for x in losses(V, I0, Ra, If))
    if not E0 > 0:
        raise ParameterError("armature_resistance", Ra,
                             f"a resistance leaving a positive EMF at no load (E0 = {E0:g} V)")
    if not Wc > 0:
        raise ParameterError("no_load_current", I0, "readings giving a positive constant loss")
    if P_rot < 0:
        raise ParameterError("field_current", If, f"a field loss below the constant loss {Wc:g} W")
    # first-order propagation of the reading uncertainties (the losses are polynomials in the
    # readings, so central differences with a small step are exact to rounding)
    sigmas = [nonnegative("voltage_uncertainty", voltage_uncertainty),
              nonnegative("current_uncertainty", current_uncertainty),
              nonnegative("resistance_uncertainty", resistance_uncertainty),
              nonnegative("current_uncertainty", current_uncertainty) if read_field else 0.0]
    x0 = [V, I0, Ra, If]
    var = np.zeros(2)
    for k, sk in enumerate(sigmas):
        if sk > 0:
            h = 1e-6 * abs(x0[k])
            up, dn = list(x0), list(x0)
            up[k] += h
            dn[k] -= h
            var += ((losses(*up)[:2] - losses(*dn)[:2]) / (2 * h) * sk) ** 2
    w0 = None if speed is None else positive("speed", speed)
    machine = None
    if w0 is not None:
        machine = _implied_machine(connection, V, Ra, Vb, If, Rf, E0, w0, P_rot)
    return SwinburneResult(voltage=V, no_load_current=I0, armature_resistance=Ra, brush_drop=Vb, field_current=If,
                           no_load_armature_current=Ia0, no_load_emf=E0, constant_loss=Wc, rotational_loss=P_rot,
                           field_copper=p_field, connection=connection, speed=w0,
                           parameters={"constant_loss": Wc, "rotational_loss": P_rot},
                           standard_errors={"constant_loss": float(np.sqrt(var[0])),
                                            "rotational_loss": float(np.sqrt(var[1]))},
                           machine=machine)


def _implied_machine(connection, V, Ra, Vb, If, Rf, E0, w0, P_rot):
    loss = RotationalLoss(fixed_power=P_rot)
    common = dict(armature_resistance=Ra, brush_drop=Vb, rotational_loss=loss, reference_temperature=25.0,
                  winding_temperature=25.0, name="from Swinburne's test")
    if connection == "shunt":
        mag = LinearMagnetization(slope=E0 / If, reference_speed=w0)
        return Shunt(magnetization=mag, field_resistance=Rf, **common)
    if math.isnan(If):  # separately excited, field unknown: one field ampere stands for the test field
        If, Rf = 1.0, V
    mag = LinearMagnetization(slope=E0 / If, reference_speed=w0)
    return SeparatelyExcited(magnetization=mag, field_resistance=Rf, field_voltage=If * Rf, **common)
