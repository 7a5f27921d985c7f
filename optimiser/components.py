"""The purchasable components: accumulators, pumps, motors and drives, and the catalogue.

Rows in SI (m³, Pa **absolute**, m, m³/s, m³/rev, rev/s, W).  :mod:`stowflow.catalogue` reads
them from TOML and re-exports every name here.  Each pump, motor and drive row gives its loss
model (:mod:`stowflow.physics.machines`) through ``losses``.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from stowflow.physics.machines import (
    PUMP_DRAG_SHARE,
    DriveLosses,
    MotorLosses,
    PumpLosses,
)
from stowflow.units import BAR, LPM, P_AMBIENT

__all__ = [
    "ACCUMULATOR_TYPES",
    "CONTROL_FLOW",
    "LOAD_SENSING_MARGIN",
    "MIN_SPEED_SHARE",
    "PISTON_TYPES",
    "PUMP_CONTROLS",
    "VARIABLE_CONTROLS",
    "AccumulatorOption",
    "Catalogue",
    "DriveOption",
    "MotorOption",
    "PumpOption",
]

#: Accumulator types the catalogue may list.
ACCUMULATOR_TYPES: tuple[str, ...] = (
    "gas-over-oil",
    "bladder",
    "diaphragm",
    "piston",
    "piston-bottles",
)

#: Types with a piston: they need ``bore_mm`` and may give ``swept_volume_l``.
PISTON_TYPES: tuple[str, ...] = ("piston", "piston-bottles")

#: Pump control kinds.
PUMP_CONTROLS: tuple[str, ...] = ("fixed", "pressure-compensated", "load-sensing")

#: Controls with a variable displacement.
VARIABLE_CONTROLS: tuple[str, ...] = ("pressure-compensated", "load-sensing")

#: Default control flow of a variable pump's compensator or load-sensing control, [m³/s]:
#: 1 L/min (from memory: the pilot flow of a compensator is of the order of 1 L/min).
CONTROL_FLOW = 1.0 * LPM

#: Default margin of a load-sensing pump above the load's pressure, [Pa]: 15 bar (from
#: memory: load-sensing margins of 10–20 bar are usual).
LOAD_SENSING_MARGIN = 15.0 * BAR

#: Default lowest speed of a pump on a variable-speed drive, as a share of its rated speed
#: (common practice, no published source).
MIN_SPEED_SHARE = 0.2


@dataclass(frozen=True)
class AccumulatorOption:
    """One purchasable accumulator size.

    Attributes
    ----------
    type : str
        One of :data:`ACCUMULATOR_TYPES`.
    nominal_volume : float
        Gas volume at precharge (for ``piston-bottles`` including the bottles); for
        ``gas-over-oil`` the vessel's volume, of which the gas fills
        :func:`stowflow.physics.accumulator.gas_share`, [m³].
    max_pressure : float
        Maximum allowable pressure PS, **absolute**, [Pa].
    bore : float
        Piston bore for the piston-speed limit; 0 for types without a piston, [m].
    price : float
        Unit price in the catalogue's currency, [-].
    name : str
        Identifier, unique among the accumulators.
    max_flow : float or None
        Largest discharge flow of one unit (port or valve limit), [m³/s].
    swept_volume : float or None
        Oil volume of the full piston stroke (piston types); for ``piston-bottles`` the oil
        exchange is limited to it, [m³].
    """

    type: str
    nominal_volume: float
    max_pressure: float
    bore: float
    price: float
    name: str
    max_flow: float | None = None
    swept_volume: float | None = None

    @property
    def has_piston(self) -> bool:
        """True for the piston types, [-]."""
        return self.type in PISTON_TYPES


@dataclass(frozen=True)
class PumpOption:
    """One purchasable pump.

    Attributes
    ----------
    displacement : float
        Geometric displacement, [m³/rev].
    speed : float
        Shaft speed, [rev/s].
    max_pressure : float
        Maximum continuous pressure, **absolute**, [Pa].
    volumetric_efficiency : float
        Effective over theoretical flow, [-].
    overall_efficiency : float
        Hydraulic output over shaft input power, [-].
    price : float
        Unit price in the catalogue's currency, [-].
    name : str
        Identifier, unique among the pumps.
    control : str
        ``"fixed"``, ``"pressure-compensated"`` or ``"load-sensing"``.
    rated_pressure : float or None
        Pressure at which the efficiencies hold, **absolute**, [Pa]; None: ``max_pressure``.
    efficiency_points : tuple of (float, float, float)
        Measured points (pressure **absolute** [Pa], volumetric [-], overall efficiency [-])
        at full stroke and rated speed; when given, the loss model is fitted to them.
    drag_share : float
        Share of the torque loss at rated pressure that does not depend on pressure, [-].
    min_speed : float or None
        Lowest speed on a variable-speed drive, [rev/s]; None: :data:`MIN_SPEED_SHARE` of
        ``speed``.
    control_flow : float
        Control flow of a variable pump's compensator, [m³/s].
    load_sensing_margin : float
        Margin of a load-sensing pump above the load's pressure, [Pa].
    """

    displacement: float
    speed: float
    max_pressure: float
    volumetric_efficiency: float
    overall_efficiency: float
    price: float
    name: str
    control: str = "fixed"
    rated_pressure: float | None = None
    efficiency_points: tuple[tuple[float, float, float], ...] = ()
    drag_share: float = PUMP_DRAG_SHARE
    min_speed: float | None = None
    control_flow: float = CONTROL_FLOW
    load_sensing_margin: float = LOAD_SENSING_MARGIN

    @property
    def flow(self) -> float:
        """Effective delivery, displacement × speed × volumetric efficiency, [m³/s]."""
        return self.displacement * self.speed * self.volumetric_efficiency

    @property
    def variable(self) -> bool:
        """True for a variable-displacement pump, [-]."""
        return self.control in VARIABLE_CONTROLS

    @property
    def lowest_speed(self) -> float:
        """Lowest speed on a variable-speed drive, [rev/s]."""
        return self.min_speed if self.min_speed is not None else MIN_SPEED_SHARE * self.speed

    @property
    def losses(self) -> PumpLosses:
        """The pump's loss model (:class:`stowflow.physics.machines.PumpLosses`)."""
        if self.efficiency_points:
            points = [(p - P_AMBIENT, ev, eo) for p, ev, eo in self.efficiency_points]
            return PumpLosses.fit(self.displacement, self.speed, points)
        rated = self.rated_pressure if self.rated_pressure is not None else self.max_pressure
        return PumpLosses.from_rated(
            self.displacement,
            self.speed,
            rated - P_AMBIENT,
            self.volumetric_efficiency,
            self.overall_efficiency,
            self.drag_share,
        )


@dataclass(frozen=True)
class MotorOption:
    """One purchasable electric motor.

    Attributes
    ----------
    rated_power : float
        Rated mechanical output, [W].
    efficiency : float
        Efficiency at rated load, [-].
    price : float
        Unit price in the catalogue's currency, [-].
    name : str
        Identifier, unique among the motors.
    efficiency_class : str or None
        Efficiency class, e.g. ``"IE3"``.
    part_load : tuple of (float, float)
        Points (load fraction [-], efficiency [-]) at rated speed; when given, the loss
        model is fitted to them.
    """

    rated_power: float
    efficiency: float
    price: float
    name: str
    efficiency_class: str | None = None
    part_load: tuple[tuple[float, float], ...] = ()

    @property
    def losses(self) -> MotorLosses:
        """The motor's loss model (:class:`stowflow.physics.machines.MotorLosses`)."""
        if self.part_load:
            return MotorLosses.fit(self.rated_power, self.part_load)
        return MotorLosses.from_rated(self.rated_power, self.efficiency)


@dataclass(frozen=True)
class DriveOption:
    """One purchasable variable-frequency drive.

    Attributes
    ----------
    rated_power : float
        Rated output (the largest motor it drives), [W].
    efficiency : float
        Efficiency at rated output, [-].
    price : float
        Unit price in the catalogue's currency, [-].
    name : str
        Identifier, unique among the drives.
    part_load : tuple of (float, float)
        Points (load fraction [-], efficiency [-]); when given, the loss model is fitted.
    """

    rated_power: float
    efficiency: float
    price: float
    name: str
    part_load: tuple[tuple[float, float], ...] = ()

    @property
    def losses(self) -> DriveLosses:
        """The drive's loss model (:class:`stowflow.physics.machines.DriveLosses`)."""
        if self.part_load:
            return DriveLosses.fit(self.rated_power, self.part_load)
        return DriveLosses.from_rated(self.rated_power, self.efficiency)


@dataclass(frozen=True)
class Catalogue:
    """The components a design may be bought from.

    Attributes
    ----------
    accumulators : tuple of AccumulatorOption
        May be empty (then only pump-only supplies are possible).
    pumps : tuple of PumpOption
        At least one.
    motors : tuple of MotorOption
        At least one.
    currency : str
        Currency of every price ("" when the file does not say).
    source : str
        File the catalogue was read from.
    notes : tuple of str
        Free notes from the file's top-level ``notes`` key.
    limits : dict of str to dict of str to float
        Per accumulator type, overrides of the type rules (read by
        :mod:`stowflow.physics.accumulator`; units as that module documents them).  Treat as
        read-only.
    drives : tuple of DriveOption
        Variable-frequency drives (may be empty: then no variable-speed supply is priced).
    """

    accumulators: tuple[AccumulatorOption, ...]
    pumps: tuple[PumpOption, ...]
    motors: tuple[MotorOption, ...]
    currency: str = ""
    source: str = "<memory>"
    notes: tuple[str, ...] = ()
    limits: dict[str, dict[str, float]] = field(default_factory=dict, hash=False)
    drives: tuple[DriveOption, ...] = ()

    @property
    def accumulator_types(self) -> tuple[str, ...]:
        """Accumulator types present, in :data:`ACCUMULATOR_TYPES` order."""
        present = {a.type for a in self.accumulators}
        return tuple(t for t in ACCUMULATOR_TYPES if t in present)
