"""A first machine model from the nameplate alone, with every assumption stated.

A nameplate gives the rated voltage, current, speed and output (and sometimes the field current
or resistance). The total loss at the rated point follows; splitting it needs assumptions - the
brush drop, the share of the loss in the armature circuit, the stray-load allowance, the field
current where it is not given, the temperature. Each is a named input with a default, a
plausible range and the basis of the default; the estimate carries a low/high range for every
parameter, found by moving each assumption across its range in turn.

The estimate is a starting point for a selection study, not a substitute for test data or the
maker's figures: replace it with the results of the tests in this package when you have them.
"""

from __future__ import annotations

from dataclasses import dataclass

from ...errors import ModelRangeError, ParameterError
from ...models import units
from ...models.connections import Compound, PermanentMagnet, Rating, SeparatelyExcited, Series, Shunt
from ...models.losses import RotationalLoss, stray_load_coefficient
from ...models.magnetics import Froehlich, LinearMagnetization
from ...models.temperature import copper_resistance
from ...models.validation import choice, in_range, nonnegative, positive

__all__ = ["NameplateEstimate", "estimate_from_nameplate", "output_from_hp", "NAMEPLATE_ASSUMPTIONS"]

_CONNECTIONS = ("separately_excited", "shunt", "series", "long_shunt_compound", "short_shunt_compound",
                "permanent_magnet")

#: The assumptions of a nameplate estimate: default, unit, basis, default range (low, high).
NAMEPLATE_ASSUMPTIONS = {
    "brush_drop": (2.0, "V", "total drop of carbon brushes, 1 V a brush (Hawkins Electrical Guide vol. 2: "
                   "1.6 to 2 V for carbon; common practice)", (1.6, 2.0)),
    "armature_loss_share": (0.5, "-", "share of the total rated loss in armature-circuit copper (common practice, "
                            "no source)", (0.35, 0.65)),
    "stray_load_fraction": (0.01, "-", "stray-load loss as a fraction of rated output (Kimberly, Electrical "
                            "Engineering, sec. 14.5: 1 % for DC machines)", (0.005, 0.015)),
    "field_current_share": (0.02, "-", "shunt field current as a fraction of rated line current, used only when "
                            "the field is not on the nameplate (common practice, no source)", (0.01, 0.04)),
    "series_resistance_share": (0.3, "-", "share of the armature-circuit copper loss in the series field "
                                "(common practice, no source)", (0.2, 0.4)),
    "compound_series_share": (0.2, "-", "share of the rated excitation from the series field of a compound "
                              "machine (common practice, no source)", (0.1, 0.3)),
    "core_loss_share": (0.5, "-", "share of the rotational loss that is core loss, the rest friction and windage "
                        "(common practice, no source)", (0.3, 0.7)),
    "winding_temperature": (75.0, "degC", "winding temperature at the rated point (common practice; IEEE Std 113 "
                            "refers efficiency to 75 degC for class A and B, from memory, unverified)", (60.0, 95.0)),
    "rated_saturation": (0.75, "-", "rated EMF over the Froehlich asymptote a, used with magnetization='froehlich' "
                         "(common practice, no source)", (0.65, 0.85)),
}


def output_from_hp(power_hp, kind: str = "mechanical") -> float:
    """Rated output from horsepower to watts, for :func:`estimate_from_nameplate`. [W]

    Parameters
    ----------
    power_hp : float
        [hp]
    kind : {"mechanical", "electric", "metric"}, default "mechanical"
        550 ft*lbf/s = 745.70 W; 746 W exactly; 75 kgf*m/s = 735.50 W (NIST SP 811, App. B.8).

    Examples
    --------
    >>> round(output_from_hp(10.0), 3)
    7456.999
    """
    factor = {"mechanical": units.HP, "electric": units.HP_ELECTRIC, "metric": units.HP_METRIC}[
        choice("kind", kind, ("mechanical", "electric", "metric"))]
    return positive("power_hp", power_hp) * factor


@dataclass(frozen=True, eq=False)
class NameplateEstimate:
    """A machine estimated from its nameplate.

    Attributes
    ----------
    machine : Machine
        The estimated machine, of the nameplate's connection, with a :class:`Rating` (whose current
        is the rated armature current).
    assumptions : dict
        name -> (value, unit, basis) of every assumption used.
    assumption_ranges : dict
        name -> (low, high) over which each assumption was moved.
    parameters : dict
        name -> (value, unit) of every estimated quantity.
    ranges : dict
        name -> (low, high) of each estimated quantity over the assumption ranges.
    rated_line_current : float
        The nameplate current (line current of shunt and compound machines). [A]
    """

    machine: object
    assumptions: dict
    assumption_ranges: dict
    parameters: dict
    ranges: dict
    rated_line_current: float

    def to_rows(self) -> list[dict]:
        """Assumptions then estimates, one dict a row: kind, name, value, unit, low, high, basis."""
        rows = [{"kind": "assumption", "name": k, "value": v, "unit": u, "low": self.assumption_ranges[k][0],
                 "high": self.assumption_ranges[k][1], "basis": b} for k, (v, u, b) in self.assumptions.items()]
        rows += [{"kind": "estimate", "name": k, "value": v, "unit": u, "low": self.ranges[k][0],
                  "high": self.ranges[k][1], "basis": "estimated from the nameplate and the assumptions"}
                 for k, (v, u) in self.parameters.items()]
        return rows


def estimate_from_nameplate(voltage, current, speed, output, connection: str = "shunt", *, field_current=None,
                            field_resistance=None, field_voltage=None, magnetization: str = "linear",
                            kind: str = "cumulative", reference_temperature=25.0, assumption_ranges=None,
                            name: str = "", **assumptions) -> NameplateEstimate:
    """Estimate a machine's parameters from its nameplate.

    Parameters
    ----------
    voltage : float
        Rated armature voltage. [V]
    current : float
        Rated current: the line current of a shunt or compound machine, the armature current
        otherwise. [A]
    speed : float
        Rated speed. [rad/s] (``units.rpm_to_rad_s`` converts r/min)
    output : float
        Rated shaft output. [W] (:func:`output_from_hp` converts hp)
    connection : str, default "shunt"
        One of "separately_excited", "shunt", "series", "long_shunt_compound",
        "short_shunt_compound", "permanent_magnet".
    field_current : float, optional
        Rated field current, where the nameplate gives it. [A]
    field_resistance : float, optional
        Field winding resistance at ``reference_temperature``, where known. [ohm] With
        ``field_current`` as well, the difference is a field rheostat setting.
    field_voltage : float, optional
        Separate field supply voltage (separately excited). [V] Default: ``voltage``.
    magnetization : {"linear", "froehlich"}, default "linear"
        Form of the magnetization curve through the rated point: a straight line (no saturation
        data on a nameplate), or a Froehlich curve at ``rated_saturation`` of its asymptote.
    kind : {"cumulative", "differential"}, default "cumulative"
        Compound machines only.
    reference_temperature : float, default 25
        Temperature the estimated resistances are stated at. [degC]
    assumption_ranges : dict, optional
        name -> (low, high) to replace the default ranges of :data:`NAMEPLATE_ASSUMPTIONS`.
    name : str
    **assumptions
        Any of :data:`NAMEPLATE_ASSUMPTIONS` (brush_drop [V], armature_loss_share,
        stray_load_fraction, field_current_share, series_resistance_share, compound_series_share,
        core_loss_share, winding_temperature [degC], rated_saturation), to replace a default.

    Returns
    -------
    NameplateEstimate

    Raises
    ------
    ParameterError
        Bad nameplate figures or assumptions, unknown assumption names.
    ModelRangeError
        Assumptions that cannot hold together at the rated point (e.g. copper, brush, field and
        stray losses above the total loss, or no EMF left).

    Notes
    -----
    Total loss P_L = V*I - P (the separate field's input is apart). Armature-circuit copper
    = share*P_L (split with the series field by ``series_resistance_share``), brush loss V_b*I_a,
    stray load = fraction*P [2]_, field copper V*I_f; the rest is rotational loss, split into
    core loss and friction/windage (:meth:`RotationalLoss.from_power_at_speed`). Then
    E = V - I_a*R_a - V_b (- I_s*R_s) and kphi = E/w at the rated point, and the magnetization
    passes through (F_rated, E). Resistances are hot at ``winding_temperature`` and stated at
    ``reference_temperature`` by the 234.5 constant. By construction the machine runs at rated
    speed and output at rated voltage and current. Brush drop: [1]_.

    References
    ----------
    .. [1] N. Hawkins, Hawkins Electrical Guide, vol. 2. New York, NY, USA: Theo. Audel, 1914
       (brush contact drop 1.6 to 2 V for carbon brushes).
    .. [2] E. E. Kimberly, Electrical Engineering, sec. 14.5, "Stray Load Loss".
    """
    V = positive("voltage", voltage)
    I_line = positive("current", current)
    w = positive("speed", speed)
    P = positive("output", output)
    choice("connection", connection, _CONNECTIONS)
    choice("magnetization", magnetization, ("linear", "froehlich"))
    choice("kind", kind, ("cumulative", "differential"))
    t_ref = in_range("reference_temperature", reference_temperature, -60.0, 250.0)
    if P >= V * I_line:
        raise ParameterError("output", P, f"less than voltage*current = {V * I_line:g} W")
    for k in assumptions:
        if k not in NAMEPLATE_ASSUMPTIONS:
            raise ParameterError(k, assumptions[k], f"a known assumption, one of {tuple(NAMEPLATE_ASSUMPTIONS)}")
    used = _used_assumptions(connection, field_current, field_resistance, magnetization)
    values = {k: float(assumptions.get(k, NAMEPLATE_ASSUMPTIONS[k][0])) for k in used}
    ranges_in = dict(assumption_ranges or {})
    for k in ranges_in:
        if k not in used:
            raise ParameterError("assumption_ranges", k, f"an assumption this estimate uses, one of {used}")
    a_ranges = {}
    for k in used:
        lo, hi = ranges_in.get(k, NAMEPLATE_ASSUMPTIONS[k][3])
        lo, hi = float(lo), float(hi)
        if not lo <= hi:
            raise ParameterError(f"assumption_ranges[{k!r}]", (lo, hi), "a pair (low, high) with low <= high")
        a_ranges[k] = (min(lo, values[k]), max(hi, values[k]))
    fixed = dict(V=V, I=I_line, w=w, P=P, connection=connection, If=field_current, Rf=field_resistance,
                 Vf=field_voltage, magnetization=magnetization, kind=kind, t_ref=t_ref, name=name)
    machine, params = _estimate(fixed, values)
    lows = {k: v for k, (v, _) in params.items()}
    highs = dict(lows)
    for k, (lo, hi) in a_ranges.items():
        for x in (lo, hi):
            trial = dict(values, **{k: x})
            try:
                _, p = _estimate(fixed, trial)
            except (ModelRangeError, ParameterError):
                continue  # this corner of the assumptions cannot hold: it bounds nothing
            for q, (v, _) in p.items():
                lows[q] = min(lows[q], v)
                highs[q] = max(highs[q], v)
    stated = {k: (values[k], NAMEPLATE_ASSUMPTIONS[k][1], NAMEPLATE_ASSUMPTIONS[k][2]) for k in used}
    return NameplateEstimate(machine=machine, assumptions=stated, assumption_ranges=a_ranges, parameters=params,
                             ranges={k: (lows[k], highs[k]) for k in params}, rated_line_current=I_line)


def _used_assumptions(connection, field_current, field_resistance, magnetization):
    used = ["brush_drop", "armature_loss_share", "stray_load_fraction", "core_loss_share", "winding_temperature"]
    if connection in ("separately_excited", "shunt", "long_shunt_compound", "short_shunt_compound") and \
            field_current is None and field_resistance is None:
        used.append("field_current_share")
    if connection in ("series", "long_shunt_compound", "short_shunt_compound"):
        used.append("series_resistance_share")
    if connection in ("long_shunt_compound", "short_shunt_compound"):
        used.append("compound_series_share")
    if magnetization == "froehlich" and connection != "permanent_magnet":
        used.append("rated_saturation")
    return tuple(used)


def _estimate(f, a):
    """The estimate for one set of assumption values ``a``: (machine, parameters)."""
    V, I, w, P, conn = f["V"], f["I"], f["w"], f["P"], f["connection"]
    vb = nonnegative("brush_drop", a["brush_drop"])
    share = in_range("armature_loss_share", a["armature_loss_share"], 0.0, 1.0, low_open=True, high_open=True)
    stray_f = in_range("stray_load_fraction", a["stray_load_fraction"], 0.0, 0.2)
    core_share = in_range("core_loss_share", a["core_loss_share"], 0.0, 1.0)
    T = in_range("winding_temperature", a["winding_temperature"], -60.0, 250.0)
    t_ref = f["t_ref"]
    hot = copper_resistance(1.0, t_ref, T)  # hot/cold ratio
    has_shunt = conn in ("shunt", "long_shunt_compound", "short_shunt_compound")
    has_series = conn in ("series", "long_shunt_compound", "short_shunt_compound")
    has_field = has_shunt or conn == "separately_excited"
    p_loss = V * I - P
    ss = in_range("series_resistance_share", a["series_resistance_share"], 0.0, 1.0, high_open=True) \
        if has_series else 0.0
    if has_series and conn == "series":
        ss = positive("series_resistance_share", ss)
    p_cu = share * p_loss
    # a short-shunt series field carries the line current, so its resistance is known first
    Rs_short = ss * p_cu / (I * I) if conn == "short_shunt_compound" else 0.0
    If = 0.0
    if has_field:
        if f["If"] is not None:
            If = positive("field_current", f["If"])
        elif f["Rf"] is not None:
            Vf = V if conn != "separately_excited" else positive("field_voltage", f["Vf"] if f["Vf"] is not None else V)
            If = (Vf - I * Rs_short) / (positive("field_resistance", f["Rf"]) * hot)
        else:
            If = in_range("field_current_share", a["field_current_share"], 0.0, 0.5, low_open=True) * I
    Ia = I - If if has_shunt else I
    if not Ia > 0:
        raise ModelRangeError(f"field current {If:g} A leaves no armature current of the rated {I:g} A")
    Is = I if conn == "short_shunt_compound" else Ia
    Ra_hot = (1.0 - ss) * p_cu / (Ia * Ia)
    Rs_hot = ss * p_cu / (Is * Is) if has_series else 0.0
    p_brush = vb * Ia
    p_stray = stray_f * P
    if conn == "short_shunt_compound":
        v_field = V - I * Rs_hot
    else:
        v_field = V
    p_field = v_field * If if has_shunt else 0.0
    p_rot = p_loss - p_cu - p_brush - p_stray - p_field
    if p_rot < 0:
        raise ModelRangeError(
            f"the assumed losses (armature circuit {p_cu:.0f} W, brushes {p_brush:.0f} W, stray {p_stray:.0f} W, "
            f"shunt field {p_field:.0f} W) exceed the total rated loss {p_loss:.0f} W: lower armature_loss_share, "
            "brush_drop or field_current_share")
    E = V - Ia * Ra_hot - vb - (Is * Rs_hot if conn != "short_shunt_compound" else I * Rs_hot)
    if not E > 0:
        raise ModelRangeError(f"no EMF left at the rated point (E = {E:g} V): the assumed drops are too large")
    kphi = E / w
    loss = RotationalLoss.from_power_at_speed(p_rot, w, core_share=core_share, kphi=kphi) if p_rot > 0 \
        else RotationalLoss()
    cs = stray_load_coefficient(stray_f, P, Ia, w)
    common = dict(armature_resistance=Ra_hot / hot, brush_drop=vb, rotational_loss=loss, stray_load=cs,
                  reference_temperature=t_ref, winding_temperature=T,
                  rating=Rating(voltage=V, current=Ia, speed=w, output=P),
                  name=f["name"] or "estimated from the nameplate")
    params = {"hot_armature_resistance": (Ra_hot, "ohm"), "armature_resistance": (Ra_hot / hot, "ohm"),
              "armature_current": (Ia, "A"), "emf": (E, "V"), "kphi": (kphi, "V*s/rad")}
    F = None
    ns = 0.0
    if has_field:
        if conn == "separately_excited":
            Vf = positive("field_voltage", f["Vf"]) if f["Vf"] is not None else V
        else:
            Vf = v_field
        Rf_circuit_hot = Vf / If
        if f["Rf"] is not None:
            Rf_hot = positive("field_resistance", f["Rf"]) * hot
            rheostat = Rf_circuit_hot - Rf_hot
            if rheostat < -1e-9 * Rf_hot:
                raise ParameterError("field_resistance", f["Rf"],
                                     f"a field resistance at most {Vf / If / hot:g} ohm (at {t_ref:g} degC) "
                                     f"for {If:g} A at {Vf:g} V")
            rheostat = max(rheostat, 0.0)
        else:
            Rf_hot, rheostat = Rf_circuit_hot, 0.0
        if conn == "short_shunt_compound":  # If = (V - Ia*Rs)/(Rf + Rs) in the model
            Rf_hot = (V - Ia * Rs_hot) / If - Rs_hot - rheostat
        params.update(field_current=(If, "A"), field_resistance=(Rf_hot / hot, "ohm"),
                      field_rheostat=(rheostat, "ohm"), field_copper_loss=(p_field, "W"))
        F = If
    if has_series:
        if conn == "series":
            ns = 1.0
            F = Is
        else:
            cshare = in_range("compound_series_share", a["compound_series_share"], 0.0, 1.0, low_open=True,
                              high_open=True)
            ns = cshare / (1.0 - cshare) * If / Is
            F = If + ns * Is if f["kind"] == "cumulative" else If - ns * Is
            if not F > 0:
                raise ModelRangeError("a differential compound with this series share has no net excitation")
        params.update(series_resistance=(Rs_hot / hot, "ohm"), series_turns=(ns, "-"))
    params.update(rotational_loss=(p_rot, "W"), stray_load_loss=(p_stray, "W"),
                  armature_circuit_copper_loss=(p_cu, "W"), brush_loss=(p_brush, "W"), total_loss=(p_loss, "W"),
                  efficiency=(P / (V * I), "-"))
    if conn == "permanent_magnet":
        machine = PermanentMagnet(kphi=kphi, magnet_temperature=20.0, magnet_reference_temperature=20.0, **common)
        return machine, params
    if f["magnetization"] == "linear":
        mag = LinearMagnetization(slope=E / F, reference_speed=w)
    else:
        s = in_range("rated_saturation", a["rated_saturation"], 0.0, 1.0, low_open=True, high_open=True)
        mag = Froehlich(a=E / s, b=F * (1.0 - s) / s, reference_speed=w)
    if conn == "separately_excited":
        machine = SeparatelyExcited(magnetization=mag, field_resistance=Rf_hot / hot, field_rheostat=rheostat,
                                    field_voltage=Vf, **common)
    elif conn == "shunt":
        machine = Shunt(magnetization=mag, field_resistance=Rf_hot / hot, field_rheostat=rheostat, **common)
    elif conn == "series":
        machine = Series(magnetization=mag, series_turns=ns, series_resistance=Rs_hot / hot, **common)
    else:
        machine = Compound(magnetization=mag, field_resistance=Rf_hot / hot, field_rheostat=rheostat,
                           series_turns=ns, series_resistance=Rs_hot / hot, kind=f["kind"],
                           shunt_connection="long" if conn == "long_shunt_compound" else "short", **common)
    return machine, params
