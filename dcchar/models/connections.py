"""The field connections of a DC machine, each a frozen dataclass with a characteristic sweep.

Every machine shares an armature (resistance, brush drop, external resistance, inductance,
inertia, armature reaction, rotational and stray losses, safe speed, temperatures) and adds its
field circuit. Resistances of copper windings are given at ``reference_temperature`` and used at
``winding_temperature`` (234.5 constant); external resistors, rheostats and diverters are not
corrected.

Examples
--------
>>> from dcchar.models.magnetics import LinearMagnetization
>>> m = Shunt(armature_resistance=0.5, magnetization=LinearMagnetization(2.0, 100.0),
...           field_resistance=250.0)
>>> c = m.characteristic(voltage=250.0, current=[10.0])
>>> round(float(c.speed[0]), 3)
49.0
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field

import numpy as np

from ..errors import ParameterError
from . import symbolic
from .characteristic import Characteristic, per_machine
from .losses import RotationalLoss
from .magnetics import (ArmatureReaction, Magnetization, NoArmatureReaction, _check_armature_reaction,
                        _check_magnetization)
from .temperature import copper_resistance, magnet_flux_factor
from .validation import choice, in_range, nonnegative, positive, real

__all__ = ["Rating", "Machine", "SeparatelyExcited", "Shunt", "Series", "Compound", "PermanentMagnet",
           "CONNECTION_LABELS"]

#: Plain names of the connections, for tables and legends.
CONNECTION_LABELS = {
    "separately_excited": "separately excited",
    "shunt": "shunt",
    "series": "series",
    "long_shunt_compound": "compound (long shunt)",
    "short_shunt_compound": "compound (short shunt)",
    "permanent_magnet": "permanent magnet",
}


@dataclass(frozen=True)
class Rating:
    """A rated point: the nameplate figures a machine is held to.

    Parameters
    ----------
    voltage : float
        Rated armature (supply) voltage. [V]
    current : float
        Rated armature current. [A]
    speed : float
        Rated speed. [rad/s]
    output : float
        Rated shaft output. [W]
    """

    voltage: float
    current: float
    speed: float
    output: float

    def __post_init__(self):
        positive("rating.voltage", self.voltage)
        positive("rating.current", self.current)
        positive("rating.speed", self.speed)
        positive("rating.output", self.output)
        if self.output > self.voltage * self.current:
            raise ParameterError("rating.output", self.output,
                                 f"at most voltage*current = {self.voltage * self.current:g} W "
                                 "(an output above the electrical input is impossible)")

    @property
    def torque(self) -> float:
        """Rated shaft torque, output/speed. [N*m]"""
        return self.output / self.speed


@dataclass(frozen=True, kw_only=True)
class Machine:
    """Fields shared by every connection (the armature and its mechanics). Use a subclass.

    Parameters
    ----------
    armature_resistance : float
        Armature circuit resistance R_a, interpoles and compensating winding included, at
        ``reference_temperature``. [ohm]
    brush_drop : float, default 0
        Total brush contact drop V_b (both polarities), acting with the sign of I_a. Carbon
        brushes: about 2 V (common practice). [V]
    external_resistance : float, default 0
        Resistance R_x in series with the armature: a starter or speed-control resistor. [ohm]
    armature_inductance : float, default 0
        [H] (used by transient studies)
    inertia : float, default 0
        Rotor moment of inertia. [kg*m^2]
    armature_reaction : ArmatureReaction or None
        Demagnetizing excitation against armature current; None for a compensated machine.
    rotational_loss : RotationalLoss
    stray_load : float, default 0
        Stray-load coefficient c_s, drag torque c_s*I_a^2. [N*m/A^2]
    safe_speed : float, default inf
        Highest speed the rotor may safely reach (mechanical limit). Speeds above it are flagged
        as runaway and never plotted. [rad/s]
    reference_temperature, winding_temperature : float, default 25
        Temperature at which resistances are given, and the working temperature. [degC]
    rating : Rating or None
    name : str
    """

    armature_resistance: float
    brush_drop: float = 0.0
    external_resistance: float = 0.0
    armature_inductance: float = 0.0
    inertia: float = 0.0
    armature_reaction: ArmatureReaction | None = None
    rotational_loss: RotationalLoss = field(default_factory=RotationalLoss)
    stray_load: float = 0.0
    safe_speed: float = math.inf
    reference_temperature: float = 25.0
    winding_temperature: float = 25.0
    rating: Rating | None = None
    name: str = ""

    connection = "machine"  # class attribute, overridden

    def __post_init__(self):
        positive("armature_resistance", self.armature_resistance)
        nonnegative("brush_drop", self.brush_drop)
        nonnegative("external_resistance", self.external_resistance)
        nonnegative("armature_inductance", self.armature_inductance)
        nonnegative("inertia", self.inertia)
        nonnegative("stray_load", self.stray_load)
        positive("safe_speed", self.safe_speed, allow_inf=True)
        in_range("reference_temperature", self.reference_temperature, -60.0, 250.0)
        in_range("winding_temperature", self.winding_temperature, -60.0, 250.0)
        object.__setattr__(self, "armature_reaction",
                           _check_armature_reaction("armature_reaction", self.armature_reaction))
        if not isinstance(self.rotational_loss, RotationalLoss):
            raise ParameterError("rotational_loss", self.rotational_loss, "a RotationalLoss")
        if self.rating is not None and not isinstance(self.rating, Rating):
            raise ParameterError("rating", self.rating, "a Rating or None")
        if not isinstance(self.name, str):
            raise ParameterError("name", self.name, "a str")

    # ---- derived, hot values
    def _hot(self, resistance: float) -> float:
        return copper_resistance(resistance, self.reference_temperature, self.winding_temperature)

    @property
    def label(self) -> str:
        """Plain name of the connection."""
        return CONNECTION_LABELS[self.connection]

    @property
    def hot_armature_resistance(self) -> float:
        """R_a at the winding temperature. [ohm]"""
        return self._hot(self.armature_resistance)

    def with_(self, **changes) -> "Machine":
        """A copy with some parameters changed (validated again)."""
        return dataclasses.replace(self, **changes)

    def circuit_parameters(self) -> tuple:
        """Circuit values (hot resistances) in the order of :data:`dcchar.models.symbolic.CIRCUIT_PARAMETERS`.

        Computed once per machine object (machines are immutable) and cached.
        """
        try:
            return self.__dict__["_circuit_cache"]
        except KeyError:
            value = tuple(float(v) for v in self._circuit())
            object.__setattr__(self, "_circuit_cache", value)
            return value

    def _circuit(self) -> tuple:
        raise NotImplementedError

    def loop_resistance(self) -> float:
        """Resistance of the armature loop seen by I_a at standstill (for locked-rotor current). [ohm]"""
        return self.hot_armature_resistance + self.external_resistance

    def _kphi(self, excitation, armature_current):
        return self.magnetization.kphi(excitation)

    def default_voltage(self) -> float:
        if self.rating is None:
            raise ParameterError("voltage", None, "a supply voltage [V] (the machine has no rating to default to)")
        return self.rating.voltage

    # ---- the sweep
    def characteristic(self, voltage=None, current=None, *, points: int = 400, safe_speed=None) -> Characteristic:
        """Steady-state characteristic for armature currents ``current`` at supply ``voltage``.

        Parameters
        ----------
        voltage : float, optional
            Supply voltage. [V] Default: the rated voltage.
        current : array_like, optional
            Armature currents I_a (negative for generating). [A] Default: ``points`` values from 0
            to the locked-rotor current.
        points : int, default 400
        safe_speed : float, optional
            Overrides the machine's safe speed for this sweep. [rad/s]

        Returns
        -------
        Characteristic
        """
        V = self.default_voltage() if voltage is None else real("voltage", voltage)
        if current is None:
            n = int(points)
            if n < 2:
                raise ParameterError("points", points, "an integer >= 2")
            current = np.linspace(0.0, self.locked_rotor_current(V), n)
        Ia = np.asarray(current, dtype=float)
        if not np.all(np.isfinite(Ia)):
            raise ParameterError("current", "array with NaN or inf", "finite armature currents [A]")
        ws = self.safe_speed if safe_speed is None else positive("safe_speed", safe_speed, allow_inf=True)
        return Characteristic.from_state(self, V, Ia, ws, self.state_arrays(V, Ia))

    def state_arrays(self, voltage: float, current) -> dict:
        """Every quantity at armature currents ``current`` [A] and supply ``voltage`` [V], as arrays.

        This is the numeric core behind :meth:`characteristic`: the excitation kernel, the
        magnetization curve, then the output kernel, all generated from the sympy equations.
        """
        conn = self.connection
        circuit = self.circuit_parameters()
        Ia = np.asarray(current, dtype=float)
        if conn == "permanent_magnet":
            F = np.zeros_like(Ia)
            If = Is = F
            IL = Ia
        else:
            Far = self.armature_reaction.excitation(Ia)
            F, If, Is, IL = symbolic.excitation_kernel(conn)(Ia, voltage, *circuit, Far)
        kphi = self._kphi(F, Ia)
        with np.errstate(all="ignore"):
            values = symbolic.output_kernel(conn)(Ia, kphi, voltage, *circuit, *self._loss_parameters())
        shape = Ia.shape

        def full(v):  # constants (e.g. a zero loss term) come back as scalars
            return v if np.shape(v) == shape else np.full(shape, v, dtype=float)

        out = dict(zip(symbolic.OUTPUTS, map(full, values)))
        out.update(excitation=full(F), field_current=full(If), series_field_current=full(Is),
                   supply_current=full(IL), kphi=full(kphi))
        return out

    def speed_torque_arrays(self, voltage: float, current) -> tuple:
        """(speed [rad/s], shaft torque [N*m]) at armature currents ``current`` [A] and supply
        ``voltage`` [V]: the two outputs of :meth:`state_arrays` that a search along the
        characteristic needs, for less work (inf/nan where kphi = 0, without warnings)."""
        conn = self.connection
        circuit = self.circuit_parameters()
        Ia = np.asarray(current, dtype=float)
        if conn == "permanent_magnet":
            F = np.zeros_like(Ia)
        else:
            F = symbolic.excitation_kernel(conn)(Ia, voltage, *circuit, self.armature_reaction.excitation(Ia))[0]
        with np.errstate(all="ignore"):
            w, t = symbolic.speed_torque_kernel(conn)(Ia, self._kphi(F, Ia), voltage, *circuit,
                                                      *self._loss_parameters())
        return np.broadcast_to(w, Ia.shape), np.broadcast_to(t, Ia.shape)

    def scalar_functions(self, voltage: float):
        """Pure-Python ``speed_torque(I_a) -> (speed, shaft torque)`` and ``full(I_a) -> dict`` at
        supply ``voltage`` [V], with the circuit bound once (built per machine and voltage, cached).

        Used inside root finders, where a numpy call per iteration would cost ten times more.
        """
        V = float(voltage)
        return per_machine(self, ("scalar functions", V), lambda: self._scalar_functions(V))

    def _scalar_functions(self, V):
        conn = self.connection
        circuit = self.circuit_parameters()
        loss = self._loss_parameters()
        out_k = symbolic.output_kernel(conn, True)
        kphi_of = self._kphi
        if conn == "permanent_magnet":
            def excite(i):
                return 0.0, 0.0, 0.0, i
        else:
            ex_k = symbolic.excitation_kernel(conn, True)
            ar = self.armature_reaction
            none = isinstance(ar, NoArmatureReaction)

            def excite(i):
                return ex_k(i, V, *circuit, 0.0 if none else float(ar.excitation(i)))

        def speed_torque(i):
            F = excite(i)[0]
            k = float(kphi_of(F, i))
            if k == 0.0:
                return math.inf, 0.0
            o = out_k(i, k, V, *circuit, *loss)
            return o[1], o[3]

        def full(i):
            F, If, Is, IL = excite(i)
            k = float(kphi_of(F, i))
            o = dict(zip(symbolic.OUTPUTS, out_k(i, k, V, *circuit, *loss)))
            o.update(excitation=F, field_current=If, series_field_current=Is, supply_current=IL, kphi=k)
            return o

        return speed_torque, full

    def scalar_state(self, voltage: float, current: float) -> tuple[float, float]:
        """(speed [rad/s], shaft torque [N*m]) at one armature current, with pure-Python kernels
        (see :meth:`scalar_functions`)."""
        return self.scalar_functions(voltage)[0](current)

    def _loss_parameters(self) -> tuple:
        return (*self.rotational_loss.kernel_parameters(), self.stray_load)

    def locked_rotor_current(self, voltage=None) -> float:
        """Armature current at standstill (E = 0). [A]"""
        V = self.default_voltage() if voltage is None else real("voltage", voltage)
        return max(V - self.brush_drop, 0.0) / self.loop_resistance()

    def equations(self):
        """The equations of this connection, shown as LaTeX in a notebook."""
        return Equations(self.connection, tuple(symbolic.equations_latex(self.connection)))


@dataclass(frozen=True)
class Equations:
    """LaTeX lines of a connection's equations; displays itself in a notebook."""

    connection: str
    lines: tuple

    def _repr_latex_(self):
        return "$$\\begin{aligned}" + r"\\ ".join(line.replace("=", "&=", 1) for line in self.lines) + \
            "\\end{aligned}$$"

    def __str__(self):
        return "\n".join(self.lines)


def _field_circuit(self) -> float:
    r = self._hot(self.field_resistance) + self.field_rheostat
    return r


@dataclass(frozen=True, kw_only=True)
class SeparatelyExcited(Machine):
    """Separately excited machine: the field has its own supply ``field_voltage``.

    Parameters
    ----------
    magnetization : Magnetization
    field_resistance : float
        Field winding resistance at the reference temperature. [ohm]
    field_voltage : float
        Voltage of the separate field supply. [V]
    field_turns : float, default 1
        Turns per pole N_f (1 when the magnetization is in field amperes). [-]
    field_rheostat : float, default 0
        [ohm]
    field_inductance : float, default 0
        [H]
    count_field_input : bool, default False
        Count the field supply's power V_f*I_f in the input (and so in the efficiency).
    """

    magnetization: Magnetization
    field_resistance: float
    field_voltage: float
    field_turns: float = 1.0
    field_rheostat: float = 0.0
    field_inductance: float = 0.0
    count_field_input: bool = False

    connection = "separately_excited"

    def __post_init__(self):
        super().__post_init__()
        _check_magnetization("magnetization", self.magnetization)
        positive("field_resistance", self.field_resistance)
        nonnegative("field_voltage", self.field_voltage)
        positive("field_turns", self.field_turns)
        nonnegative("field_rheostat", self.field_rheostat)
        nonnegative("field_inductance", self.field_inductance)
        if not isinstance(self.count_field_input, bool):
            raise ParameterError("count_field_input", self.count_field_input, "True or False")

    field_circuit_resistance = property(_field_circuit, doc="Field winding (hot) plus rheostat. [ohm]")

    def _circuit(self):
        return (self.hot_armature_resistance, self.external_resistance, self.brush_drop, self.field_turns,
                self.field_circuit_resistance, self.field_voltage, 1.0 if self.count_field_input else 0.0)


@dataclass(frozen=True, kw_only=True)
class Shunt(Machine):
    """Shunt machine: the field circuit (winding plus rheostat) across the supply.

    Parameters
    ----------
    magnetization : Magnetization
    field_resistance : float
        Shunt winding resistance at the reference temperature. [ohm]
    field_turns : float, default 1
        [-]
    field_rheostat : float, default 0
        [ohm]
    field_inductance : float, default 0
        [H]
    """

    magnetization: Magnetization
    field_resistance: float
    field_turns: float = 1.0
    field_rheostat: float = 0.0
    field_inductance: float = 0.0

    connection = "shunt"

    def __post_init__(self):
        super().__post_init__()
        _check_magnetization("magnetization", self.magnetization)
        positive("field_resistance", self.field_resistance)
        positive("field_turns", self.field_turns)
        nonnegative("field_rheostat", self.field_rheostat)
        nonnegative("field_inductance", self.field_inductance)

    field_circuit_resistance = property(_field_circuit, doc="Field winding (hot) plus rheostat. [ohm]")

    def _circuit(self):
        return (self.hot_armature_resistance, self.external_resistance, self.brush_drop, self.field_turns,
                self.field_circuit_resistance)


def _diverter_share(self) -> float:
    if math.isinf(self.diverter_resistance):
        return 1.0
    rs = self._hot(self.series_resistance)
    return self.diverter_resistance / (rs + self.diverter_resistance)


def _check_series(self):
    _check_magnetization("magnetization", self.magnetization)
    positive("series_turns", self.series_turns)
    positive("series_resistance", self.series_resistance)
    positive("diverter_resistance", self.diverter_resistance, allow_inf=True)
    nonnegative("series_inductance", self.series_inductance)


@dataclass(frozen=True, kw_only=True)
class Series(Machine):
    """Series machine: the field in series with the armature, with an optional diverter.

    Parameters
    ----------
    magnetization : Magnetization
    series_turns : float
        Series turns per pole N_s. [-]
    series_resistance : float
        Series field resistance at the reference temperature. [ohm]
    diverter_resistance : float, default inf
        Resistor in parallel with the series field (inf: none). [ohm]
    series_inductance : float, default 0
        [H]
    """

    magnetization: Magnetization
    series_turns: float
    series_resistance: float
    diverter_resistance: float = math.inf
    series_inductance: float = 0.0

    connection = "series"

    def __post_init__(self):
        super().__post_init__()
        _check_series(self)

    diverter_share = property(_diverter_share, doc="Share d of the branch current in the series turns. [-]")

    def _circuit(self):
        return (self.hot_armature_resistance, self.external_resistance, self.brush_drop, self.series_turns,
                self._hot(self.series_resistance), self.diverter_share)

    def loop_resistance(self):
        return super().loop_resistance() + self._hot(self.series_resistance) * self.diverter_share


@dataclass(frozen=True, kw_only=True)
class Compound(Machine):
    """Compound machine: shunt and series fields, cumulative or differential, long or short shunt.

    Parameters
    ----------
    magnetization : Magnetization
    field_resistance, field_turns, field_rheostat, field_inductance
        The shunt field, as for :class:`Shunt`.
    series_turns, series_resistance, diverter_resistance, series_inductance
        The series field, as for :class:`Series`; series turns must be > 0.
    kind : {"cumulative", "differential"}
    shunt_connection : {"long", "short"}
        Long: shunt field across the supply; short: across the armature only.
    """

    magnetization: Magnetization
    field_resistance: float
    series_turns: float
    series_resistance: float
    field_turns: float = 1.0
    field_rheostat: float = 0.0
    field_inductance: float = 0.0
    diverter_resistance: float = math.inf
    series_inductance: float = 0.0
    kind: str = "cumulative"
    shunt_connection: str = "long"

    def __post_init__(self):
        super().__post_init__()
        _check_series(self)
        positive("field_resistance", self.field_resistance)
        positive("field_turns", self.field_turns)
        nonnegative("field_rheostat", self.field_rheostat)
        nonnegative("field_inductance", self.field_inductance)
        choice("kind", self.kind, ("cumulative", "differential"))
        choice("shunt_connection", self.shunt_connection, ("long", "short"))

    @property
    def connection(self):  # noqa: D401 - instance-dependent connection name
        return "long_shunt_compound" if self.shunt_connection == "long" else "short_shunt_compound"

    @property
    def label(self):
        return f"{self.kind} compound ({self.shunt_connection} shunt)"

    field_circuit_resistance = property(_field_circuit, doc="Field winding (hot) plus rheostat. [ohm]")
    diverter_share = property(_diverter_share, doc="Share d of the branch current in the series turns. [-]")

    def _circuit(self):
        return (self.hot_armature_resistance, self.external_resistance, self.brush_drop, self.field_turns,
                self.field_circuit_resistance, self.series_turns, self._hot(self.series_resistance),
                self.diverter_share, 1.0 if self.kind == "cumulative" else -1.0)

    def loop_resistance(self):
        return super().loop_resistance() + self._hot(self.series_resistance) * self.diverter_share

    def locked_rotor_current(self, voltage=None) -> float:
        """Armature current at standstill (E = 0). [A]

        Short shunt: the shunt field current also flows in the series field, so with
        R_se = R_s*d, R_f the shunt circuit and I_f = (V - I_a*R_se)/(R_f + R_se), E = 0 gives
        I_a = (V - V_b - R_se*V/(R_f + R_se)) / (R_a + R_x + R_se*R_f/(R_f + R_se)).
        """
        if self.shunt_connection == "long":
            return super().locked_rotor_current(voltage)
        V = self.default_voltage() if voltage is None else real("voltage", voltage)
        rse = self._hot(self.series_resistance) * self.diverter_share
        rf = self.field_circuit_resistance
        num = V - self.brush_drop - rse * V / (rf + rse)
        return max(num, 0.0) / (self.hot_armature_resistance + self.external_resistance + rse * rf / (rf + rse))


@dataclass(frozen=True, kw_only=True)
class PermanentMagnet(Machine):
    """Permanent-magnet machine: kphi fixed by the magnets.

    Parameters
    ----------
    kphi : float
        Machine constant at ``magnet_reference_temperature``, at no load. [V*s/rad]
    magnet_material : {"ndfeb", "ferrite", "smco", "alnico"} or float, default "ferrite"
        Sets the reversible temperature coefficient of remanence, or give it directly [1/K].
    magnet_temperature : float, default 20
        [degC]
    magnet_reference_temperature : float, default 20
        [degC]
    demagnetization : float, default 0
        Armature reaction as a fractional loss of flux per ampere, kphi*(1 - delta*|I_a|). [1/A]
    """

    kphi: float
    magnet_material: str | float = "ferrite"
    magnet_temperature: float = 20.0
    magnet_reference_temperature: float = 20.0
    demagnetization: float = 0.0

    connection = "permanent_magnet"

    def __post_init__(self):
        super().__post_init__()
        positive("kphi", self.kphi)
        nonnegative("demagnetization", self.demagnetization)
        object.__setattr__(self, "_flux_factor", magnet_flux_factor(
            self.magnet_material, self.magnet_temperature, self.magnet_reference_temperature))

    @property
    def hot_kphi(self) -> float:
        """kphi at the magnet temperature, at no load. [V*s/rad]"""
        return self.kphi * self._flux_factor

    def _kphi(self, excitation, armature_current):
        i = np.abs(np.asarray(armature_current, dtype=float))
        k = self.hot_kphi * (1.0 - self.demagnetization * i)
        return np.where(k > 0, k, np.nan) if np.ndim(k) else (float(k) if k > 0 else math.nan)

    def _circuit(self):
        return (self.hot_armature_resistance, self.external_resistance, self.brush_drop)

