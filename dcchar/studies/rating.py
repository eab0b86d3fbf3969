"""Equal-rating comparison: one armature, one rated point, every field connection.

A fair comparison of connections holds the armature (resistance, brush drop, losses, inertia,
safe speed) and the rated point (voltage, speed, shaft torque) fixed and derives each
connection's field so that its characteristic passes through that point. For each connection:

1. the armature current I_r and machine constant kphi_r at the rated point solve together

       w_r = E(I_r)/kphi_r,   T_shaft(I_r, kphi_r, w_r) = T_r,

   where E(I) is the EMF the circuit leaves at that current (supply less the armature, series
   and brush drops) and T_shaft the developed torque kphi*I less the rotational and stray torques
   (which depend on speed and on kphi). Substituting kphi = E(I)/w_r leaves one equation in I,
   bracketed between zero and the current of largest shaft torque and solved with scipy's brentq.
   The equations are those of :mod:`dcchar.models.symbolic` (its scalar output kernel), so the
   machine built afterwards meets them exactly;
2. the net excitation F_r follows from the magnetization curve (kphi(F_r) = kphi_r, solved on
   the curve itself), plus the armature reaction at I_r;
3. the field is sized to give it: shunt and compound shunt fields from a chosen field current
   (a share of the rated current), series turns for a chosen series resistance, the compound's
   series share of the excitation at rated load, the separate field's voltage, the magnets' kphi.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field, fields

from ..errors import ModelRangeError, ParameterError
from ..models import symbolic
from ..models.connections import (CONNECTION_LABELS, Compound, PermanentMagnet, Rating, SeparatelyExcited, Series,
                                  Shunt)
from ..models.losses import RotationalLoss
from ..models.magnetics import Magnetization, NoArmatureReaction
from ..models.temperature import copper_resistance, magnet_flux_factor
from ..models.validation import in_range, nonnegative, positive

__all__ = ["Armature", "RatedDesign", "EqualRatingFamily", "equal_rating_family", "FAMILY_KEYS", "DEFAULT_CONNECTIONS"]

#: Keys of an equal-rating family; the compound keys without a prefix are cumulative.
FAMILY_KEYS = ("separately_excited", "shunt", "series", "long_shunt_compound", "short_shunt_compound",
               "permanent_magnet", "differential_long_shunt_compound", "differential_short_shunt_compound")
#: The six connections compared by default.
DEFAULT_CONNECTIONS = FAMILY_KEYS[:6]


@dataclass(frozen=True, kw_only=True)
class Armature:
    """The parts every member of an equal-rating family shares (see :class:`Machine` for units).

    Parameters
    ----------
    armature_resistance : float
        [ohm] at ``reference_temperature``.
    brush_drop : float
        [V]
    rotational_loss : RotationalLoss
    stray_load : float
        [N*m/A^2]
    inertia : float
        [kg*m^2]
    safe_speed : float
        [rad/s]
    armature_reaction : ArmatureReaction or None
    armature_inductance : float
        [H]
    reference_temperature, winding_temperature : float
        [degC]
    """

    armature_resistance: float
    brush_drop: float = 0.0
    rotational_loss: RotationalLoss = field(default_factory=RotationalLoss)
    stray_load: float = 0.0
    inertia: float = 0.0
    safe_speed: float = math.inf
    armature_reaction: object = None
    armature_inductance: float = 0.0
    reference_temperature: float = 25.0
    winding_temperature: float = 25.0

    def __post_init__(self):
        positive("armature_resistance", self.armature_resistance)
        nonnegative("brush_drop", self.brush_drop)
        if not isinstance(self.rotational_loss, RotationalLoss):
            raise ParameterError("rotational_loss", self.rotational_loss, "a RotationalLoss")

    @classmethod
    def coerce(cls, value) -> "Armature":
        """An Armature from itself or from a dict of its fields (unknown keys are an error)."""
        if isinstance(value, cls):
            return value
        if isinstance(value, Mapping):
            names = {f.name for f in fields(cls)}
            extra = sorted(set(value) - names)
            if extra:
                raise ParameterError(f"armature.{extra[0]}", value[extra[0]], f"one of the fields {sorted(names)}")
            return cls(**value)
        raise ParameterError("armature", value, "an Armature or a dict of its fields")

    def common(self) -> dict:
        """The fields as Machine keywords."""
        return {f.name: getattr(self, f.name) for f in fields(self)}

    def hot(self, resistance: float) -> float:
        return copper_resistance(resistance, self.reference_temperature, self.winding_temperature)

    def cold(self, resistance: float) -> float:
        """Resistance at the reference temperature that is ``resistance`` at the winding temperature."""
        return copper_resistance(resistance, self.winding_temperature, self.reference_temperature)


@dataclass(frozen=True)
class RatedDesign:
    """How one family member meets the rated point.

    Attributes
    ----------
    key : str
    armature_current : float
        At the rated point. [A]
    kphi : float
        [V*s/rad]
    excitation : float
        Net excitation needed (0 for magnets). [A-turns]
    field_excitation : float
        Excitation the field windings supply (net plus armature reaction). [A-turns]
    field_current : float
        Shunt or separate field current at rated load (0 if none). [A]
    series_current : float
        Current in the series turns at rated load (0 if none). [A]
    notes : tuple of str
    """

    key: str
    armature_current: float
    kphi: float
    excitation: float
    field_excitation: float
    field_current: float
    series_current: float
    notes: tuple = ()


class EqualRatingFamily(Mapping):
    """Machines that share one armature and pass through one rated point, by family key.

    A read-only mapping ``key -> Machine`` (keys from :data:`FAMILY_KEYS`), with ``designs``
    (``key -> RatedDesign``), ``rating`` and ``armature``.
    """

    def __init__(self, machines: dict, designs: dict, rating: Rating, armature: Armature):
        self._machines = dict(machines)
        self.designs = dict(designs)
        self.rating = rating
        self.armature = armature

    def __getitem__(self, key):
        return self._machines[key]

    def __iter__(self):
        return iter(self._machines)

    def __len__(self):
        return len(self._machines)

    def _repr_html_(self):
        rows = "".join(f"<tr><td>{k}</td><td>{self[k].label}</td><td>{d.armature_current:.2f}</td>"
                       f"<td>{d.kphi:.4f}</td><td>{d.field_excitation:.0f}</td></tr>" for k, d in self.designs.items())
        return ("<p>Equal rating: {:.0f} V, {:.0f} r/min, {:.1f} N*m</p><table><tr><th>key</th><th>connection</th>"
                "<th>I_a [A]</th><th>kphi [V*s/rad]</th><th>field A-turns</th></tr>{}</table>").format(
                    self.rating.voltage, self.rating.speed * 60 / (2 * math.pi), self.rating.torque, rows)

    def __repr__(self):
        return f"EqualRatingFamily({list(self)}, rated {self.rating})"


def _rated_current(conn, circuit, loss, V, w_r, T_r, key):
    """Solve T_shaft = T_r at speed w_r for the armature current; ``circuit`` may depend on I (callable)."""
    from scipy.optimize import brentq, minimize_scalar

    out = symbolic.output_kernel(conn, True)

    def state(i):
        c = circuit(i)
        e = out(i, 1.0, V, *c, *loss)[0]  # the EMF does not depend on kphi
        k = e / w_r
        if not k > 0:
            return -math.inf, k
        o = out(i, k, V, *c, *loss)
        return o[3], k

    c0 = circuit(0.0)
    if not V > c0[2]:
        raise ModelRangeError(f"{CONNECTION_LABELS.get(conn, conn)} ({key}): the rated voltage {V:g} V does not "
                              f"exceed the brush drop {c0[2]:g} V, so no armature current flows")
    i_stop = (V - c0[2]) / (c0[0] + c0[1] + _series_drop(conn, c0))
    opt = minimize_scalar(lambda i: -state(i)[0], bounds=(0.0, i_stop), method="bounded",
                          options={"xatol": 1e-10 * i_stop})
    t_max = state(opt.x)[0]
    if not t_max > T_r:
        raise ModelRangeError(f"{CONNECTION_LABELS.get(conn, conn)} ({key}): the rated torque {T_r:.4g} N*m at "
                              f"{w_r * 60 / (2 * math.pi):.1f} r/min and {V:g} V is more than this armature can give "
                              f"(at most {t_max:.4g} N*m at that speed)")
    i_r = brentq(lambda i: state(i)[0] - T_r, 0.0, opt.x, xtol=1e-14 * i_stop, rtol=8.9e-16, maxiter=200)
    return i_r, state(i_r)[1]


def _series_drop(conn, c):
    names = symbolic.CIRCUIT_PARAMETERS[conn]
    if "R_s" in names:
        return c[names.index("R_s")] * c[names.index("d")]
    return 0.0


def _excitation_for(mag: Magnetization, kphi: float, key: str) -> float:
    """F with mag.kphi(F) == kphi, solved on the forward curve (exact to rounding)."""
    from scipy.optimize import brentq

    f0 = float(mag.excitation_for_kphi(kphi))
    if not math.isfinite(f0):
        raise ModelRangeError(f"{key}: kphi {kphi:.5g} V*s/rad is beyond the magnetization curve's saturation "
                              f"(its EMF {kphi * mag.reference_speed:.4g} V at the reference speed is out of reach)")
    if f0 <= 0:
        raise ModelRangeError(f"{key}: kphi {kphi:.5g} V*s/rad needs no more flux than the residual magnetism "
                              "gives; lower the rated speed or raise the voltage")
    g = lambda F: float(mag.kphi(F)) - kphi  # noqa: E731
    lo, hi = 0.5 * f0, 2.0 * f0
    while g(hi) < 0:
        hi *= 2.0
    return brentq(g, max(lo if g(lo) < 0 else 0.0, 0.0), hi, xtol=1e-15 * f0, rtol=8.9e-16, maxiter=200)


def equal_rating_family(armature, rating: Rating, *, magnetization: Magnetization | None = None,
                        series_share: float = 0.3, connections=DEFAULT_CONNECTIONS, shunt_field_share: float = 0.02,
                        series_resistance: float | None = None, compound_series_resistance: float | None = None,
                        field_voltage: float | None = None, magnet_material="ferrite",
                        magnet_temperature: float = 20.0, demagnetization: float = 0.0,
                        name: str = "") -> EqualRatingFamily:
    """Build each connection on one armature so that it passes through one rated point.

    Parameters
    ----------
    armature : Armature or dict
        The shared armature (fields of :class:`Armature`).
    rating : Rating
        Rated voltage [V], current [A], speed [rad/s] and output [W]; the rated shaft torque is
        output/speed [N*m]. Set on every machine built.
    magnetization : Magnetization, optional
        The frame's magnetization curve, E0 against A-turns per pole (needed for every wound field).
    series_share : float, default 0.3
        Compounds: series winding's excitation at rated load as a share of the net field
        excitation, in (0, 1). Cumulative: shunt gives (1 - share), differential (1 + share). [-]
    connections : sequence of str
        Keys of :data:`FAMILY_KEYS`; default the six connections (compounds cumulative).
    shunt_field_share : float, default 0.02
        Shunt (and separate) field current at rated load as a share of the rated current (1 to
        5 % is usual for industrial machines: common practice, no source). [-]
    series_resistance : float, optional
        Series machine's series-field resistance at the reference temperature. [ohm] Default:
        half the armature resistance (a stated default of our own).
    compound_series_resistance : float, optional
        [ohm] Default: ``series_resistance * series_share`` (fewer turns of the same section).
    field_voltage : float, optional
        Separate field supply. [V] Default: the rated voltage.
    magnet_material, magnet_temperature, demagnetization
        Permanent magnet: as for :class:`PermanentMagnet`.
    name : str
        Prefix of the machines' names.

    Returns
    -------
    EqualRatingFamily

    Raises
    ------
    ModelRangeError
        The rating is out of this armature's or curve's reach (the message says why).
    ParameterError
        Bad keys or parameters.
    """
    arm = Armature.coerce(armature)
    if not isinstance(rating, Rating):
        raise ParameterError("rating", rating, "a Rating(voltage, current, speed, output)")
    keys = tuple(connections)
    for k in keys:
        if k not in FAMILY_KEYS:
            raise ParameterError("connections", k, f"keys from {FAMILY_KEYS}")
    s = in_range("series_share", series_share, 0.0, 1.0, low_open=True, high_open=True)
    share = in_range("shunt_field_share", shunt_field_share, 0.0, 0.5, low_open=True)
    wound = [k for k in keys if k != "permanent_magnet"]
    if wound and not isinstance(magnetization, Magnetization):
        raise ParameterError("magnetization", magnetization, f"a Magnetization (needed for {wound[0]})")
    rs_series = arm.armature_resistance * 0.5 if series_resistance is None else positive(
        "series_resistance", series_resistance)
    rs_comp = rs_series * s if compound_series_resistance is None else positive(
        "compound_series_resistance", compound_series_resistance)
    V, w_r, T_r = rating.voltage, rating.speed, rating.torque
    vf = V if field_voltage is None else positive("field_voltage", field_voltage)
    loss = (*arm.rotational_loss.kernel_parameters(), arm.stray_load)
    Ra, Vb = arm.hot(arm.armature_resistance), arm.brush_drop
    If_r = share * rating.current
    ar = arm.armature_reaction if arm.armature_reaction is not None else NoArmatureReaction()
    common = arm.common()
    machines, designs = {}, {}
    label = (name + ": ") if name else ""

    def far(i):
        return float(ar.excitation(i))

    for key in keys:
        notes = []
        if key == "permanent_magnet":
            i_r, k_r = _rated_current("permanent_magnet", lambda i: (Ra, 0.0, Vb), loss, V, w_r, T_r, key)
            factor = magnet_flux_factor(magnet_material, magnet_temperature, 20.0)
            delta = nonnegative("demagnetization", demagnetization)
            if delta * i_r >= 1:
                raise ModelRangeError(f"{key}: demagnetization {delta:g} 1/A removes all flux at {i_r:.4g} A")
            m = PermanentMagnet(kphi=k_r / (factor * (1.0 - delta * i_r)), magnet_material=magnet_material,
                                magnet_temperature=magnet_temperature, demagnetization=delta, rating=rating,
                                name=label + "permanent magnet", **common)
            designs[key] = RatedDesign(key, i_r, k_r, 0.0, 0.0, 0.0, 0.0, ())
            machines[key] = m
            continue
        if key in ("separately_excited", "shunt"):
            conn = key
            circ = (lambda i: (Ra, 0.0, Vb, 1.0, V / If_r)) if key == "shunt" else \
                (lambda i: (Ra, 0.0, Vb, 1.0, vf / If_r, vf, 0.0))
            i_r, k_r = _rated_current(conn, circ, loss, V, w_r, T_r, key)
            F = _excitation_for(magnetization, k_r, key)
            Ff = F + far(i_r)
            nf = Ff / If_r
            if key == "shunt":
                m = Shunt(magnetization=magnetization, field_resistance=arm.cold(V / If_r), field_turns=nf,
                          rating=rating, name=label + "shunt", **common)
            else:
                m = SeparatelyExcited(magnetization=magnetization, field_resistance=arm.cold(vf / If_r),
                                      field_voltage=vf, field_turns=nf, rating=rating,
                                      name=label + "separately excited", **common)
            designs[key] = RatedDesign(key, i_r, k_r, F, Ff, If_r, 0.0, tuple(notes))
            machines[key] = m
            continue
        if key == "series":
            rsh = arm.hot(rs_series)
            i_r, k_r = _rated_current("series", lambda i: (Ra, 0.0, Vb, 1.0, rsh, 1.0), loss, V, w_r, T_r, key)
            F = _excitation_for(magnetization, k_r, key)
            Ff = F + far(i_r)
            m = Series(magnetization=magnetization, series_turns=Ff / i_r, series_resistance=rs_series,
                       rating=rating, name=label + "series", **common)
            designs[key] = RatedDesign(key, i_r, k_r, F, Ff, 0.0, i_r, ())
            machines[key] = m
            continue
        # compounds
        kind = "differential" if key.startswith("differential") else "cumulative"
        sigma = 1.0 if kind == "cumulative" else -1.0
        shunt_conn = "long" if "long" in key else "short"
        conn = f"{shunt_conn}_shunt_compound"
        rsh = arm.hot(rs_comp)
        if shunt_conn == "long":
            def circ(i, rsh=rsh, sigma=sigma):
                return (Ra, 0.0, Vb, 1.0, V / If_r, 1.0, rsh, 1.0, sigma)
        else:
            def circ(i, rsh=rsh, sigma=sigma):
                return (Ra, 0.0, Vb, 1.0, max((V - i * rsh) / If_r - rsh, 1e-300), 1.0, rsh, 1.0, sigma)
        i_r, k_r = _rated_current(conn, circ, loss, V, w_r, T_r, key)
        F = _excitation_for(magnetization, k_r, key)
        Ff = F + far(i_r)
        f_series = s * Ff
        f_shunt = Ff - sigma * f_series
        i_s = i_r if shunt_conn == "long" else i_r + If_r
        rf_hot = circ(i_r)[4]
        if not rf_hot > 0:
            raise ModelRangeError(f"{key}: the short-shunt field cannot carry {If_r:.4g} A at this rating")
        m = Compound(magnetization=magnetization, field_resistance=arm.cold(rf_hot), field_turns=f_shunt / If_r,
                     series_turns=f_series / i_s, series_resistance=rs_comp, kind=kind, shunt_connection=shunt_conn,
                     rating=rating, name=label + f"{kind} compound ({shunt_conn} shunt)", **common)
        designs[key] = RatedDesign(key, i_r, k_r, F, Ff, If_r, i_s, ())
        machines[key] = m
    return EqualRatingFamily(machines, designs, rating, arm)
