"""One candidate on one load under one set of settings: the studies a matrix asks, each run once.

A :class:`Case` computes lazily and keeps what several requirements share (the settled
operating point, the no-load speed, the starter, the starting figures), so a matrix of ten
requirements runs each study once per candidate.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass, field

from ...errors import ParameterError
from ...models.characteristic import no_load_point
from ...models.validation import in_range, nonnegative, positive
from ..comparison import ControlSettings, apply_settings
from ..operating import operating_points, speed_regulation, starting

__all__ = ["SelectionSettings", "Case", "OPEN_FIELD_RESISTANCE"]

#: Field circuit resistance that stands for an open shunt field (the model needs a finite value). [ohm]
OPEN_FIELD_RESISTANCE = 1e12


@dataclass(frozen=True)
class SelectionSettings:
    """How the candidates are run for the matrix.

    Parameters
    ----------
    control : ControlSettings
        Running settings (voltage, field rheostat, diverter, external resistance, temperatures),
        applied to every candidate where it has the part.
    starter_multiple : float or None, default 2.0
        Size a single starting resistor per candidate so that the armature current at standstill
        is this multiple of the rated current (a common starter setting: common practice, no
        source). None: no starter, unless ``starting_resistance`` is given.
    starting_resistance : float or None
        A fixed external starting resistance [ohm] instead (overrides ``starter_multiple``).
    """

    control: ControlSettings = field(default_factory=ControlSettings)
    starter_multiple: float | None = 2.0
    starting_resistance: float | None = None

    def __post_init__(self):
        if not isinstance(self.control, ControlSettings):
            raise ParameterError("control", self.control, "a ControlSettings")
        if self.starter_multiple is not None:
            in_range("starter_multiple", self.starter_multiple, 0.0, 100.0, low_open=True)
        if self.starting_resistance is not None:
            nonnegative("starting_resistance", self.starting_resistance)

    def describe(self) -> str:
        """The starter setting in words."""
        if self.starting_resistance is not None:
            return f"starting resistance {self.starting_resistance:.4g} ohm"
        if self.starter_multiple is not None:
            return f"starter limiting the standstill armature current to {self.starter_multiple:g} x rated"
        return "direct-on start (no starter)"


class Case:
    """The studies of one candidate ``machine`` on ``load`` (results computed on first use)."""

    def __init__(self, key, machine, load, settings: SelectionSettings):
        self.key = key
        self.machine = apply_settings(machine, settings.control)
        self.load = load
        self.settings = settings
        v = settings.control.voltage
        self.voltage = self.machine.default_voltage() if v is None else positive("voltage", v)
        self._memo = {}

    # ---- shared results
    @functools.cached_property
    def operating(self):
        """OperatingResult on the load (running settings)."""
        return operating_points(self.machine, self.load, self.voltage)

    @functools.cached_property
    def no_load_speed(self) -> float:
        """No-load speed of the running machine [rad/s] (inf: unbounded)."""
        return float(no_load_point(self.machine, self.voltage).speed)

    @functools.cached_property
    def starter_resistance(self) -> float:
        """External resistance in circuit while starting, beyond the running settings. [ohm]"""
        s = self.settings
        if s.starting_resistance is not None:
            return float(s.starting_resistance)
        if s.starter_multiple is None or self.machine.rating is None:
            return 0.0
        from ..starter_steps import single_starting_resistor

        r = single_starting_resistor(self.voltage, self.machine.loop_resistance(),
                                     s.starter_multiple * self.machine.rating.current, self.machine.brush_drop)
        return float(r.external_resistance)

    @functools.cached_property
    def starting(self):
        """StartingResult: direct, and with the starter resistance added to the loop."""
        m = self.machine
        return starting(m, self.voltage, m.external_resistance + self.starter_resistance)

    def memo(self, key, compute):
        """A result kept under ``key`` (computed by ``compute()`` the first time)."""
        if key not in self._memo:
            self._memo[key] = compute()
        return self._memo[key]

    def regulation(self, torque=None):
        """SpeedRegulation from no load to ``torque`` [N*m] (default the rated torque)."""
        return self.memo(("regulation", torque), lambda: speed_regulation(self.machine, torque, self.voltage))

    def point_on(self, load, voltage=None, machine=None, tag=None):
        """OperatingResult of (a variant of) the machine on another load, kept under ``tag``."""
        def run():
            return operating_points(self.machine if machine is None else machine, load,
                                    self.voltage if voltage is None else voltage)
        return run() if tag is None else self.memo(("point", tag), run)

    @property
    def safe_speed(self) -> float:
        return float(self.machine.safe_speed)

    @property
    def total_inertia(self) -> float:
        """Motor plus load inertia at the motor shaft. [kg*m^2]"""
        return float(self.machine.inertia) + float(getattr(self.load, "inertia", 0.0))

    # ---- variants of the machine
    def weakened(self, min_field_share: float):
        """The machine with its field weakened to ``min_field_share`` of its own field current
        at the same armature current (shunt or separate field by a fixed rheostat, series by a
        diverter), or None for a permanent magnet machine."""
        m = self.machine
        share = float(min_field_share)
        conn = m.connection
        if conn == "permanent_magnet":
            return None
        if conn == "series":
            rs = m._hot(m.series_resistance)
            return m.with_(diverter_resistance=rs * share / (1.0 - share))
        extra = m.field_circuit_resistance * (1.0 / share - 1.0)
        return m.with_(field_rheostat=m.field_rheostat + extra)

    def low_speed_control(self, fraction: float) -> dict:
        """How the speed is lowered for the low-speed requirement: ``{"voltage_fraction": f}``
        where the field does not share the armature supply (separately excited, series, magnets);
        ``{"extra_rx": R}`` (armature resistance dropping (1 - f) of the supply at rated current)
        where it does (shunt and compound: a lowered supply would weaken the field too)."""
        m = self.machine
        if m.connection in ("shunt", "long_shunt_compound", "short_shunt_compound") and m.rating is not None:
            return {"extra_rx": (1.0 - fraction) * self.voltage / m.rating.current}
        return {"voltage_fraction": fraction}

    def field_lost(self):
        """The machine with its shunt (or separate) field circuit open, or None where there is no
        separate field circuit to lose (series: the field is in the armature loop; magnets)."""
        m = self.machine
        conn = m.connection
        if conn == "separately_excited":
            return m.with_(field_voltage=0.0)
        if conn in ("shunt", "long_shunt_compound", "short_shunt_compound"):
            return m.with_(field_rheostat=OPEN_FIELD_RESISTANCE)
        return None
