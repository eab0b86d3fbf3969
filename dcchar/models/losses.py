"""Rotational and stray-load losses of a DC machine.

The copper and brush losses follow from the circuit (see :mod:`dcchar.models.symbolic`); this module
holds the speed- and flux-dependent losses that act as torques on the shaft.
"""

from __future__ import annotations

from dataclasses import dataclass

from .validation import nonnegative, positive

__all__ = ["RotationalLoss", "stray_load_coefficient"]


@dataclass(frozen=True)
class RotationalLoss:
    """Friction, windage and core loss, as torques opposing rotation.

    Loss torque (sign of w) = T_f + B*|w| + K_w*w^2 + kphi^2*(k_h + k_e*|w|), plus a fixed loss
    P_0 faded in with speed.

    Parameters
    ----------
    friction_torque : float, default 0
        Coulomb (bearing and brush) friction T_f. [N*m]
    viscous : float, default 0
        Viscous coefficient B. [N*m*s/rad]
    windage : float, default 0
        Windage coefficient K_w, torque ~ w^2. [N*m*s^2/rad^2]
    core_hysteresis : float, default 0
        k_h: hysteresis core loss P_h = k_h*kphi^2*|w|. [W*s/rad per (V*s/rad)^2]
    core_eddy : float, default 0
        k_e: eddy-current core loss P_e = k_e*kphi^2*w^2. [W*s^2/rad^2 per (V*s/rad)^2]
    fixed_power : float, default 0
        A rotational loss taken as constant, as textbooks often lump it. [W]
    fade_speed : float, default 1.0
        The fixed loss is P_0*w^2/(w^2 + w_s^2), so it vanishes at standstill instead of asking an
        infinite torque there; at 100 rad/s and w_s = 1 rad/s it is within 1e-4 of P_0. Near
        standstill it asks a drag torque of up to P_0/(2*w_s) (at w = w_s): keep w_s well below the
        running speed but not so small that this peak exceeds the starting torque, or the model
        will report that the motor cannot start. [rad/s]
    """

    friction_torque: float = 0.0
    viscous: float = 0.0
    windage: float = 0.0
    core_hysteresis: float = 0.0
    core_eddy: float = 0.0
    fixed_power: float = 0.0
    fade_speed: float = 1.0

    def __post_init__(self):
        for name in ("friction_torque", "viscous", "windage", "core_hysteresis", "core_eddy", "fixed_power"):
            nonnegative(name, getattr(self, name))
        positive("fade_speed", self.fade_speed)

    def kernel_parameters(self) -> tuple:
        """(T_f, B, K_w, k_h, k_e, P_0, w_s) in the order of the symbolic kernels."""
        return (self.friction_torque, self.viscous, self.windage, self.core_hysteresis, self.core_eddy,
                self.fixed_power, self.fade_speed)

    @classmethod
    def from_power_at_speed(cls, power, speed, *, core_share=0.0, kphi=None, **kwargs):
        """Split a measured rotational loss [W] at ``speed`` [rad/s] into friction and core parts.

        ``core_share`` in [0, 1] of the loss goes to eddy-current core loss (needs ``kphi``
        [V*s/rad] at that test), the rest to viscous friction and windage in equal parts. The split
        is an assumption (common practice, no source): state it in the study.
        """
        p = nonnegative("power", power)
        w = positive("speed", speed)
        share = nonnegative("core_share", core_share)
        if share > 1:
            from ..errors import ParameterError

            raise ParameterError("core_share", core_share, "a number in [0, 1]")
        p_core = p * share
        p_mech = p - p_core
        k_e = 0.0
        if p_core > 0:
            k = positive("kphi", kphi)
            k_e = p_core / (k * k * w * w)
        return cls(viscous=0.5 * p_mech / (w * w), windage=0.5 * p_mech / (w**3), core_eddy=k_e, **kwargs)


def stray_load_coefficient(fraction, rated_output, rated_current, rated_speed):
    """Coefficient c_s [N*m/A^2] of a stray-load loss that is ``fraction`` of the rated output at rated load.

    The loss is modelled as a drag torque c_s*I_a^2 (so its power c_s*I_a^2*|w| scales with current
    squared and with speed). The conventional allowance for DC machines is 1 % of output (US
    practice, machines of 30 hp and more): Kimberly, *Electrical Engineering*, sec. 14.5.
    """
    f = nonnegative("fraction", fraction)
    p = positive("rated_output", rated_output)
    i = positive("rated_current", rated_current)
    w = positive("rated_speed", rated_speed)
    return f * p / (i * i * w)
