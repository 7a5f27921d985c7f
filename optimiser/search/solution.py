"""Result dataclasses of the design search: what was chosen, how it runs, how sure we are.

Everything here is SI (Pa absolute, m³, m³/s, W, J, s).  The report and the exports convert to
trade units; nothing here computes physics.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import pandas as pd
from stowflow.catalogue import AccumulatorOption, DriveOption, MotorOption, PumpOption
from stowflow.physics.accumulator import TypeRules, nominal_gas_volume
from stowflow.physics.machines import EnergyBreakdown

__all__ = ["Alternative", "Bank", "Baseline", "Design", "SearchStats"]


@dataclass(frozen=True)
class Alternative:
    """A supply the search found besides the chosen one: a point of the power–capex trade-off
    (the cheapest supply at one motor rating) or a runner-up of the objective.

    Attributes
    ----------
    pump, motor : PumpOption, MotorOption
        Catalogue rows.
    option : AccumulatorOption | None
        Accumulator row (None: pump only).
    count : int
        Accumulators in the bank, [-].
    capex : float
        Bank + pump + motor price, [currency].
    energy : float
        Energy per cycle under an ideal pressure switch (quasi-static), [J] (nan: not
        estimated).
    gas_volume : float
        Gas volume at precharge of the bank, [m³] (nan: not computed).
    """

    pump: PumpOption
    motor: MotorOption
    option: AccumulatorOption | None
    count: int
    capex: float
    energy: float = float("nan")
    gas_volume: float = float("nan")

    @property
    def installed_power(self) -> float:
        """Rated motor power, [W]."""
        return self.motor.rated_power


@dataclass(frozen=True)
class Bank:
    """An accumulator bank: ``count`` units of one catalogue size with one precharge.

    Attributes
    ----------
    option : AccumulatorOption
        The catalogue row.
    count : int
        Units in the bank, [-].
    precharge : float
        Nitrogen precharge at 20 °C, absolute, [Pa].
    rules : TypeRules or None
        The type's rules with the catalogue's overrides, for the residual oil of
        gas-over-oil; None: the type's defaults.
    """

    option: AccumulatorOption
    count: int
    precharge: float
    rules: TypeRules | None = None

    @property
    def type(self) -> str:
        """Accumulator type (catalogue ``type``)."""
        return self.option.type

    @property
    def gas_volume(self) -> float:
        """Total gas volume at precharge of the bank, [m³]: the nominal volumes, less the
        residual oil of gas-over-oil (:func:`stowflow.physics.accumulator.nominal_gas_volume`)."""
        return self.count * nominal_gas_volume(self.type, self.option.nominal_volume, self.rules)

    @property
    def price(self) -> float:
        """Price of the bank, [currency]."""
        return self.count * self.option.price


@dataclass(frozen=True)
class Baseline:
    """A pump-only supply sized from the same catalogue.

    Attributes
    ----------
    kind : str
        One of :data:`stowflow.search.baseline.KINDS`: ``"fixed"`` (fixed pump, unloaded in
        the idle stretches, the excess over the relief valve), ``"compensated"``
        (pressure-compensated variable pump), ``"variable-speed"`` (fixed pump on a
        variable-speed drive) or ``"load-sensing"`` (load-sensing variable pump).
    pump, motor : PumpOption, MotorOption
        Chosen rows (None with ``reason`` when no row fits).
    pressure : float
        Pressure the pump works against (relief, compensator or drive setting), absolute,
        [Pa].
    energy_per_cycle : float
        Electrical energy over one cycle, [J] (from the part-load loss models).
    shaft_power_peak : float
        Shaft power the motor is sized for: the largest torque at rated speed, [W].
    reason : str | None
        Why no baseline could be built, else None.
    drive : DriveOption | None
        The variable-frequency drive (``"variable-speed"`` only).
    breakdown : EnergyBreakdown | None
        Where the energy per cycle goes.
    notes : tuple[str, ...]
        How the supply runs, in words.
    """

    kind: str
    pump: PumpOption | None
    motor: MotorOption | None
    pressure: float
    energy_per_cycle: float
    shaft_power_peak: float = 0.0
    reason: str | None = None
    drive: DriveOption | None = None
    breakdown: EnergyBreakdown | None = None
    notes: tuple[str, ...] = ()

    @property
    def installed_power(self) -> float:
        """Rated motor power, [W] (nan when infeasible)."""
        return self.motor.rated_power if self.motor is not None else float("nan")

    @property
    def capex(self) -> float:
        """Pump plus motor (plus drive) price, [currency]."""
        if self.pump is None or self.motor is None:
            return float("nan")
        drive = self.drive.price if self.drive is not None else 0.0
        return self.pump.price + self.motor.price + drive


@dataclass(frozen=True)
class SearchStats:
    """How the search went.

    Attributes
    ----------
    candidates : int
        Component combinations screened, [-].
    screen_time, build_time, solve_time, total_time : float
        Wall-clock times, [s].
    families_solved : int
        Schedule models solved (one per tied component family), [-].
    block : int
        Time steps per block of the schedule model (1 = full resolution), [-].
    notes : tuple[str, ...]
        What the search did that a reader should know.
    ties : int
        Designs that tie with the chosen one on installed power and capex (the chosen one
        included), [-]; the least energy decides among them.
    """

    candidates: int = 0
    screen_time: float = 0.0
    build_time: float = 0.0
    solve_time: float = 0.0
    total_time: float = 0.0
    families_solved: int = 0
    block: int = 1
    notes: tuple[str, ...] = ()
    ties: int = 1


@dataclass(frozen=True)
class Design:
    """The least-installed-power supply for one cycle, or why there is none.

    Attributes
    ----------
    status : str
        ``"optimal"`` (levels proven on the search grid, schedule within ``mip_gap``),
        ``"feasible"`` (best found within the time limit; gap in ``mip_gap``) or
        ``"infeasible"`` (``reason`` names the binding limit).
    reason : str | None
        Why infeasible; None otherwise.
    bank : Bank | None
        The accumulator bank, or None for a pump-only supply.
    pump, motor : PumpOption | None, MotorOption | None
        Chosen catalogue rows.
    p_min, p_max : float
        Working window, absolute, [Pa]: the lowest and the highest accumulator pressure in
        operation.  The pipeline takes them from the verification's recommended controller at
        both temperature ends; before that they are the quasi-static values of the schedule
        (lowest at the coldest, highest at the hottest temperature).
    relief : float
        Relief valve cracking pressure, absolute, [Pa].
    process : str
        Gas process of the quasi-static model, e.g. ``"polytropic:1.21"``.
    schedule : pandas.DataFrame
        Indexed by ``time [s]`` (step start): ``demand [m³/s]``, ``required_pressure [Pa]``
        (absolute, line loss included), ``pump_loaded [-]`` (loaded for at least part of the
        step), ``pump_flow [m³/s]`` (mean flow the pump puts into the pressure line over the
        step: less than its full flow when the unloading valve opens part-way through it),
        ``spill [m³/s]`` (flow over the relief valve: a pump-only supply, or a loaded pump
        with a full store when the switching limits forbid unloading),
        ``accumulator_oil [m³]`` (at the step end), ``pressure_cold [Pa]`` and
        ``pressure_hot [Pa]`` (quasi-static, at the step end).  Balance per step:
        oil change = (pump_flow − spill − demand)·Δt.
    energy_per_cycle : float
        Electrical energy over one cycle from the schedule model, [J].
    mip_gap : float
        Relative gap of the schedule model at the end of the solve, [-].
    best_bound : float
        Best lower bound on the energy per cycle, [J].
    levels : dict
        Lexicographic objective values: ``installed_power [W]``, ``capex``,
        ``energy_per_cycle [J]``.
    alternatives : tuple[Alternative, ...]
        The power–capex trade-off behind the lexicographic choice: the chosen level first,
        then each larger motor rating that buys a cheaper supply.
    runners_up : tuple[Alternative, ...]
        The next component sets in the order of the settings' objective, with their energy
        and gas volume (the runners-up the report lists).
    robust_schedule : bool
        True when the open-loop schedule is planned against the bounds of both temperature
        ends at once; False when the bank's window at the two ends does not overlap widely
        enough and it is planned at the coldest temperature (at the hot end the gas holds more
        pressure and the relief valve caps the store; the verification shows whether it
        holds there).
    schedule_flow : float | None
        Pump flow the schedule was planned with, [m³/s]: the worn pump's (catalogue flow ×
        (1 − flow margin)), so that the schedule holds with a worn pump; a new pump's surplus
        ends at the schedule's cut-out.  ``pump_loaded × schedule_flow − returned`` is the
        schedule's ``pump_flow``; None: the pump's catalogue flow.
    schedule_timed : bool
        True when ``schedule`` is a timed load schedule proved by the verification
        (:func:`stowflow.simulation.verify.verify` with ``timed_schedule``): its
        ``pump_loaded`` is the load command, which a latching cut-out may end early; False for
        the schedule model's plan, whose ``pump_flow`` gives the share of each step loaded.
    lower_bound_power : float
        Mean hydraulic power of the cycle (line loss included) over the best pump overall
        efficiency in the catalogue, [W]: a motor's rating is its shaft output, so no supply
        can install less.
    """

    status: str
    reason: str | None
    bank: Bank | None
    pump: PumpOption | None
    motor: MotorOption | None
    p_min: float
    p_max: float
    relief: float
    process: str
    schedule: pd.DataFrame
    energy_per_cycle: float
    mip_gap: float
    best_bound: float
    levels: dict
    lower_bound_power: float
    baselines: tuple[Baseline, ...] = ()
    stats: SearchStats = field(default_factory=SearchStats)
    notes: tuple[str, ...] = ()
    alternatives: tuple[Alternative, ...] = ()
    robust_schedule: bool = True
    runners_up: tuple[Alternative, ...] = ()
    schedule_flow: float | None = None
    schedule_timed: bool = False

    @property
    def feasible(self) -> bool:
        """True when a design was found."""
        return self.status in ("optimal", "feasible")

    @property
    def planned_flow(self) -> float:
        """Pump flow the schedule was planned with, [m³/s] (:attr:`schedule_flow`, else the
        pump's catalogue flow; nan without a pump)."""
        if self.schedule_flow is not None:
            return float(self.schedule_flow)
        return self.pump.flow if self.pump is not None else float("nan")

    @property
    def installed_power(self) -> float:
        """Rated motor power, [W] (nan when infeasible)."""
        return self.motor.rated_power if self.motor is not None else float("nan")

    @property
    def capex(self) -> float:
        """Components' catalogue price: bank + pump + motor, [currency]."""
        if not self.feasible:
            return float("nan")
        bank = self.bank.price if self.bank is not None else 0.0
        return bank + self.pump.price + self.motor.price
