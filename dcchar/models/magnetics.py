"""Magnetization curves and armature reaction.

A magnetization curve gives the open-circuit EMF ``E0(F)`` at a stated reference speed ``w0`` as a
function of the net field excitation ``F`` (ampere-turns per pole, or equivalent field amperes when
the winding turns are set to 1). The machine constant is then ``kphi(F) = E0(F)/w0`` [V*s/rad], the
same number as the torque constant [N*m/A].

Every curve is odd about its residual: ``E0(F) = E_r + f(F)`` with ``f`` odd and increasing, so a
reversed excitation reverses the EMF (less the residual), and the curve is continuous and monotone
over the whole real line. Armature reaction is a demagnetizing excitation ``F_ar(Ia)`` subtracted
from the field's, even in ``Ia``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import ParameterError
from .validation import increasing_array, nonnegative, positive

__all__ = [
    "Magnetization", "LinearMagnetization", "Froehlich", "TabulatedMagnetization",
    "ArmatureReaction", "NoArmatureReaction", "QuadraticArmatureReaction", "TabulatedArmatureReaction",
]


class Magnetization:
    """Base of the magnetization curves. Subclasses define ``_f`` (odd part, F >= 0) and ``_f_inverse``."""

    residual_emf: float
    reference_speed: float
    _scalar_ok = False  # True where _f is plain arithmetic that also works on a float

    def emf(self, excitation):
        """Open-circuit EMF at the reference speed, E0(F). [V]

        Parameters
        ----------
        excitation : array_like
            Net field excitation F. [A-turns per pole]
        """
        if isinstance(excitation, float) and self._scalar_ok:  # fast path for root finders
            odd = math.copysign(self._f(abs(excitation)), excitation) if excitation else 0.0
            return float(self.residual_emf) + odd
        F = np.asarray(excitation, dtype=float)
        return self.residual_emf + np.sign(F) * self._f(np.abs(F))

    def kphi(self, excitation):
        """Machine constant kphi(F) = E0(F)/w0. [V*s/rad] (= [N*m/A])"""
        return self.emf(excitation) / self.reference_speed

    def excitation_for_emf(self, emf):
        """Inverse of :meth:`emf`: the excitation that gives ``emf`` at the reference speed. [A-turns]

        Values beyond the curve's range (e.g. above a Froehlich asymptote) are ``nan``.
        """
        e = np.asarray(emf, dtype=float) - self.residual_emf
        with np.errstate(invalid="ignore", divide="ignore"):
            return np.sign(e) * self._f_inverse(np.abs(e))

    def excitation_for_kphi(self, kphi):
        """Excitation that gives machine constant ``kphi`` [V*s/rad]. [A-turns]"""
        return self.excitation_for_emf(np.asarray(kphi, dtype=float) * self.reference_speed)


@dataclass(frozen=True)
class LinearMagnetization(Magnetization):
    """Unsaturated magnetics: E0 = E_r + slope*F.

    Parameters
    ----------
    slope : float
        Open-circuit EMF per unit excitation at the reference speed. [V per A-turn]
    reference_speed : float
        Speed at which the curve holds. [rad/s]
    residual_emf : float, default 0
        EMF at zero excitation (residual magnetism). [V]
    """

    slope: float
    reference_speed: float
    residual_emf: float = 0.0

    def __post_init__(self):
        positive("slope", self.slope)
        positive("reference_speed", self.reference_speed)
        nonnegative("residual_emf", self.residual_emf)

    _scalar_ok = True

    def _f(self, F):
        return self.slope * F

    def _f_inverse(self, e):
        return e / self.slope


@dataclass(frozen=True)
class Froehlich(Magnetization):
    """Froehlich magnetization law, E0 = E_r + a*F/(b + |F|).

    Parameters
    ----------
    a : float
        Saturation asymptote of the odd part (E0 - E_r -> a as F -> inf). [V]
    b : float
        Excitation at which the odd part reaches a/2. [A-turns]
    reference_speed : float
        [rad/s]
    residual_emf : float, default 0
        [V]

    Notes
    -----
    The Froehlich (Frölich) law B = a*H/(b + H), i.e. reluctivity linear in H, applied to the
    open-circuit characteristic (from memory, unverified as to the original wording; the tests
    use only its self-consistency: E(b) = a/2, E(inf) = a). The inverse is F = b*e/(a - e) for
    0 <= e < a and ``nan`` at or above the asymptote.

    Examples
    --------
    >>> m = Froehlich(a=300.0, b=2.0, reference_speed=100.0)
    >>> float(m.emf(2.0))
    150.0
    """

    a: float
    b: float
    reference_speed: float
    residual_emf: float = 0.0

    def __post_init__(self):
        positive("a", self.a)
        positive("b", self.b)
        positive("reference_speed", self.reference_speed)
        nonnegative("residual_emf", self.residual_emf)

    _scalar_ok = True

    def _f(self, F):
        return self.a * F / (self.b + F)

    def _f_inverse(self, e):
        out = self.b * e / (self.a - e)
        return np.where(e < self.a, out, np.nan)


class TabulatedMagnetization(Magnetization):
    """A magnetization curve from test points, through a monotone (PCHIP) interpolant.

    Parameters
    ----------
    excitation : array_like
        Field excitation of the test points, strictly increasing, the first one >= 0. [A-turns]
    emf : array_like
        Open-circuit EMF of each point at ``reference_speed``, strictly increasing. [V]
    reference_speed : float
        Speed at which the points were taken. [rad/s]

    Notes
    -----
    If the first point is not at zero excitation, a point (0, 0) is prepended when the first EMF
    is positive (no residual given): the test usually starts above zero. The EMF at zero
    excitation is the residual EMF. Beyond the last point the curve continues as a straight
    line with the slope of the last chord (the saturated, nearly air-gap-like slope), so it stays
    monotone and never bends back. Below zero excitation the curve is the odd extension about the
    residual. PCHIP (Fritsch-Carlson) keeps the interpolant monotone between points:
    F. N. Fritsch and R. E. Carlson, "Monotone piecewise cubic interpolation," SIAM J. Numer.
    Anal., vol. 17, no. 2, pp. 238-246, 1980.
    """

    def __init__(self, excitation, emf, reference_speed: float):
        F = increasing_array("excitation", excitation)
        E = increasing_array("emf", emf)
        if F.size != E.size:
            raise ParameterError("emf", list(np.asarray(emf).tolist()),
                                 f"as many points as excitation ({F.size})")
        if F[0] < 0:
            raise ParameterError("excitation[0]", float(F[0]), "a value >= 0 (tabulate the positive branch)")
        if E[0] < 0:
            raise ParameterError("emf[0]", float(E[0]), "a value >= 0")
        if F[0] > 0:
            F = np.concatenate([[0.0], F])
            E = np.concatenate([[0.0], E])
        self.reference_speed = positive("reference_speed", reference_speed)
        self.points_excitation = F
        self.points_emf = E
        self.residual_emf = float(E[0])
        from scipy.interpolate import PchipInterpolator

        self._pchip = PchipInterpolator(F, E - E[0], extrapolate=False)
        self._last_slope = (E[-1] - E[-2]) / (F[-1] - F[-2])
        self._F_end = F[-1]
        self._e_end = E[-1] - E[0]

    def _f(self, F):
        inside = F <= self._F_end
        y = self._pchip(np.where(inside, F, self._F_end))
        return np.where(inside, y, self._e_end + self._last_slope * (F - self._F_end))

    def _f_inverse(self, e):
        # exact inverse of the forward interpolant: bisection within the bracketing segment
        # (55 halvings reach the float resolution of the segment width); used off the hot path
        inside = e <= self._e_end
        target = np.where(inside, e, self._e_end)
        E0 = self.points_emf - self.points_emf[0]
        k = np.clip(np.searchsorted(E0, target, side="right") - 1, 0, E0.size - 2)
        lo = self.points_excitation[k].astype(float)
        hi = self.points_excitation[k + 1].astype(float)
        for _ in range(55):
            mid = 0.5 * (lo + hi)
            below = self._pchip(mid) < target
            lo = np.where(below, mid, lo)
            hi = np.where(below, hi, mid)
        x = 0.5 * (lo + hi)
        return np.where(inside, x, self._F_end + (e - self._e_end) / self._last_slope)

    def __eq__(self, other):
        return (type(other) is type(self) and self.reference_speed == other.reference_speed
                and np.array_equal(self.points_excitation, other.points_excitation)
                and np.array_equal(self.points_emf, other.points_emf))

    def __hash__(self):
        return hash((self.reference_speed, self.points_excitation.tobytes(), self.points_emf.tobytes()))

    def __repr__(self):
        return (f"TabulatedMagnetization(excitation={self.points_excitation.tolist()}, "
                f"emf={self.points_emf.tolist()}, reference_speed={self.reference_speed})")


# --------------------------------------------------------------------------------------------
# Armature reaction


class ArmatureReaction:
    """Base: a demagnetizing excitation F_ar(Ia) >= 0, even in Ia. [A-turns per pole]"""

    def excitation(self, armature_current):
        raise NotImplementedError


@dataclass(frozen=True)
class NoArmatureReaction(ArmatureReaction):
    """No armature reaction: a compensated machine, or one where it is neglected."""

    def excitation(self, armature_current):
        return np.zeros_like(np.asarray(armature_current, dtype=float))


@dataclass(frozen=True)
class QuadraticArmatureReaction(ArmatureReaction):
    """F_ar = linear*|Ia| + quadratic*Ia^2.

    Parameters
    ----------
    linear : float
        [A-turns per A]
    quadratic : float, default 0
        [A-turns per A^2]

    Notes
    -----
    A simple current-dependent law for the net demagnetizing effect of brush shift and of
    cross-magnetization in saturated pole tips; it grows faster than linearly as the tips
    saturate. Common practice, no source: fit it to load-test points where you have them.
    """

    linear: float
    quadratic: float = 0.0

    def __post_init__(self):
        nonnegative("linear", self.linear)
        nonnegative("quadratic", self.quadratic)

    def excitation(self, armature_current):
        if isinstance(armature_current, float):  # fast path for root finders
            i = abs(armature_current)
            return self.linear * i + self.quadratic * i * i
        i = np.abs(np.asarray(armature_current, dtype=float))
        return self.linear * i + self.quadratic * i * i


class TabulatedArmatureReaction(ArmatureReaction):
    """F_ar from a table of (|Ia|, F_ar), linear between points, last slope beyond.

    Parameters
    ----------
    current : array_like
        Armature current magnitudes, strictly increasing, from >= 0. [A]
    excitation : array_like
        Demagnetizing excitation at each current, >= 0, non-decreasing. [A-turns]
    """

    def __init__(self, current, excitation):
        i = increasing_array("current", current)
        f = increasing_array("excitation", excitation, strictly=False)
        if i.size != f.size:
            raise ParameterError("excitation", f.tolist(), f"as many points as current ({i.size})")
        if i[0] < 0:
            raise ParameterError("current[0]", float(i[0]), "a value >= 0")
        if f[0] < 0:
            raise ParameterError("excitation[0]", float(f[0]), "a value >= 0")
        if i[0] > 0:
            i = np.concatenate([[0.0], i])
            f = np.concatenate([[0.0], f])
        self.current = i
        self.values = f
        self._slope = (f[-1] - f[-2]) / (i[-1] - i[-2])

    def excitation(self, armature_current):
        a = np.abs(np.asarray(armature_current, dtype=float))
        y = np.interp(a, self.current, self.values)
        return np.where(a > self.current[-1], self.values[-1] + self._slope * (a - self.current[-1]), y)

    def __repr__(self):
        return f"TabulatedArmatureReaction(current={self.current.tolist()}, excitation={self.values.tolist()})"


def _check_magnetization(name: str, value) -> Magnetization:
    if not isinstance(value, Magnetization):
        raise ParameterError(name, value, "a Magnetization (LinearMagnetization, Froehlich or TabulatedMagnetization)")
    return value


def _check_armature_reaction(name: str, value) -> ArmatureReaction:
    if value is None:
        return NoArmatureReaction()
    if not isinstance(value, ArmatureReaction):
        raise ParameterError(name, value, "an ArmatureReaction or None")
    return value

