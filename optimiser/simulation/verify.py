"""Time-domain verification of a design: real nitrogen, heat exchange, flow limits, relief.

:func:`verify` simulates the design at the coldest and the hottest operating temperature under
each controller (:data:`CONTROLLERS`), cycle after cycle until the periodic steady state, and
checks every step: accumulator pressure ≥ required pressure (line loss included), peak pressure
≤ relief setting, accumulator PS and pump rating, bank discharge ≤ its limit, switching limits
(load events per hour, least dwell), motor load; it reports the gas-temperature range, the
energy the motor draws per cycle and the oil over the relief.  :func:`simulate` runs one
controller at one temperature.

Model (state: stored oil S and gas temperature T, see :mod:`~._integrator`): the bank's
nitrogen, of the mass fixed by the precharge at 20 °C, exchanges heat with the wall at the
run's temperature through the thermal time constant τ (Otis & Pourmovahed 1985); the gas is
real (Span et al. 2000, tabulated) or ideal (``settings.gas_model``).  The pump delivers
displacement × speed × volumetric efficiency when loaded and nothing when unloaded; the relief
valve cracks at ``design.relief`` and passes the full pump flow
:data:`~stowflow.physics.valves.RELIEF_OVERRIDE` above it (linear).  A pump-only design (no bank)
runs loaded against its relief valve: the line holds the relief setting while the pump
delivers at least the demand, as the designer assumes (the valve's override is not modelled
there).

Energy per cycle: the pump's hydraulic power at the actual pressure over its overall
efficiency while loaded, its flow at the standby pressure over the same efficiency while
unloaded, all over the motor efficiency.  :func:`stowflow.search.designer._energy` uses the same
efficiencies but the quasi-static pressure at the middle temperature and the work the machine
draws (the gas returning all it stores); the difference is the heat the gas loses to the wall
and the spread between the two temperatures.

References
----------
.. [1] D. R. Otis, M. Pourmovahed, ASME J. Dyn. Syst. Meas. Control 107(1), 93-96 (1985).
.. [2] A. Pourmovahed, D. R. Otis, ASME J. Dyn. Syst. Meas. Control 112(1), 116-121 (1990).
.. [3] R. Span et al., J. Phys. Chem. Ref. Data 29(6), 1361-1433 (2000), doi:10.1063/1.1349047.
"""

from __future__ import annotations

import math
import time
from collections.abc import Callable, Iterable
from dataclasses import dataclass, field, replace

import numpy as np
import pandas as pd
from stowflow.cycle.duty import DutyCycle
from stowflow.errors import SettingsError, SimulationError
from stowflow.physics.valves import RELIEF_OVERRIDE
from stowflow.search.settings import DesignSettings
from stowflow.search.solution import Design
from stowflow.simulation._assess import assess, limits_ok, pump_only
from stowflow.simulation._integrator import Plant, start_state
from stowflow.simulation._loop import (
    MAX_PERIOD,
    OIL_TOL,
    TEMPERATURE_TOL,
    Orbit,
    run_cycle,
    run_periodic,
)
from stowflow.simulation._setup import (
    plant_for,
    pressure_search,
    schedule_fraction,
    start_oil,
    stroke_search,
)
from stowflow.simulation.controllers import (
    HysteresisController,
    ScheduleController,
    SwitchSearch,
    derive_switch,
)
from stowflow.units import BAR, bar_text, kelvin_to_celsius, to_unit

__all__ = [
    "CONTROLLERS",
    "RECOMMENDATION_ORDER",
    "ControllerRun",
    "Verification",
    "plant_for",
    "schedule_command",
    "schedule_fraction",
    "simulate",
    "switch_controller",
    "verify",
    "worn_design",
]
# plant_for and schedule_fraction (from stowflow.simulation._setup) are part of this module's API.

#: Controllers the verification knows.
CONTROLLERS: tuple[str, ...] = ("schedule", "pressure-switch", "position-switch")
#: Order in which a passing controller is recommended: the pressure switch first (closed loop
#: on the quantity that matters; it adapts to temperature, leakage and a changed cycle), then
#: the schedule (open loop: it must run in step with the machine, and any volume imbalance
#: drifts), then the position switch (piston types only; it ignores the gas temperature).
RECOMMENDATION_ORDER: tuple[str, ...] = ("pressure-switch", "schedule", "position-switch")


@dataclass(frozen=True)
class ControllerRun:
    """One controller simulated at one operating temperature, in its periodic steady state.

    Attributes
    ----------
    controller : str
        ``"schedule"`` (the stowflow's load/unload schedule, open loop),
        ``"pressure-switch"`` or ``"position-switch"``.
    temperature : float
        Ambient/oil (wall) temperature of the run, [K].
    passed : bool
        True when every check holds.
    reason : str | None
        The first broken check, one plain sentence with numbers and units.
    min_margin : float
        Least accumulator pressure minus required pressure over the cycle, [Pa].
    min_margin_time : float
        Where in the cycle it occurs (start of the step), [s].
    peak_pressure : float
        Highest accumulator (line) pressure, absolute, [Pa].
    gas_temperature_min, gas_temperature_max : float
        Range of the gas temperature, [K] (nan without a bank).
    energy_per_cycle : float
        Electrical energy the motor draws per cycle, [J].
    load_events_per_hour : float
        Load events (unloaded → loaded) per hour, [1/h].
    relief_volume : float
        Oil over the relief valve per cycle, [m³].
    cycles_to_steady : int
        Cycles simulated until the periodic steady state, [-].
    trace : pandas.DataFrame
        One cycle of the steady state (the one with the least margin when the period spans
        several cycles), indexed by ``time [s]`` (step start; states at the step end):
        ``pressure [Pa]`` (absolute), ``pressure_min [Pa]`` and ``pressure_max [Pa]`` (within
        the step), ``required_pressure [Pa]`` (absolute, line loss included),
        ``gas_temperature [K]``, ``accumulator_oil [m³]``, ``pump_loaded [-]`` (loaded
        fraction of the step), ``pump_flow [m³/s]``, ``relief_flow [m³/s]``,
        ``demand [m³/s]``, ``bank_flow [m³/s]`` (positive out of the bank).
    failures : tuple[str, ...]
        Every broken check (``reason`` is the first).
    setpoints : dict
        Switch settings of the run (see :attr:`Verification.setpoints`).
    periodic : bool
        True when the steady-state criterion was met within the cycle cap.
    period_cycles : int
        Machine cycles per period of the steady state, [-].
    min_loaded_dwell, min_unloaded_dwell : float
        Shortest loaded / unloaded interval, [s] (inf when the pump never switches).
    peak_discharge : float
        Largest flow out of the bank, [m³/s].
    discharge_limit : float
        Bank discharge limit (units × per-unit limit), [m³/s].
    shaft_power_rms, shaft_power_peak : float
        RMS and peak pump shaft power, [W].
    unmet_volume : float
        Demand the empty bank could not supply, per cycle, [m³].
    integration_error : float
        Largest pressure change when the final cycle is repeated with half the substep
        (step-doubling estimate of the integration error), [Pa]; nan when not estimated.
    work : dict
        Per cycle: ``pump [J]`` (hydraulic work of the pump), ``consumer [J]`` (delivered to
        the machine), ``relief [J]`` (lost over the relief valve), gauge pressures.
    start : tuple[float, float]
        Stored oil [m³] and gas temperature [K] at the start of the trace's cycle.
    shortfall : numpy.ndarray | None
        Per step, how far the pressure fell below the requirement, [Pa].
    worn : bool
        True for a run at the worn pump's flow (catalogue flow × (1 − flow margin)), False
        at the catalogue flow.
    period_traces : tuple[pandas.DataFrame, ...]
        When the steady state spans several cycles: every cycle of the period, each as
        ``trace`` (whose one cycle is among them); empty for a period of one cycle.  The
        per-cycle figures (``energy_per_cycle``, ``work``) are means over the period.
    """

    controller: str
    temperature: float
    passed: bool
    reason: str | None
    min_margin: float
    min_margin_time: float
    peak_pressure: float
    gas_temperature_min: float
    gas_temperature_max: float
    energy_per_cycle: float
    load_events_per_hour: float
    relief_volume: float
    cycles_to_steady: int
    trace: pd.DataFrame = field(repr=False)
    failures: tuple[str, ...] = ()
    setpoints: dict = field(default_factory=dict)
    periodic: bool = True
    period_cycles: int = 1
    min_loaded_dwell: float = math.inf
    min_unloaded_dwell: float = math.inf
    peak_discharge: float = math.nan
    discharge_limit: float = math.inf
    shaft_power_rms: float = math.nan
    shaft_power_peak: float = math.nan
    unmet_volume: float = 0.0
    integration_error: float = math.nan
    work: dict = field(default_factory=dict)
    start: tuple[float, float] = (math.nan, math.nan)
    shortfall: np.ndarray | None = field(default=None, repr=False)
    worn: bool = False
    period_traces: tuple = field(default=(), repr=False)

    @property
    def cycle_traces(self) -> tuple:
        """Every cycle of the steady state's period (``period_traces``, or ``trace``)."""
        return self.period_traces or (self.trace,)


@dataclass(frozen=True)
class Verification:
    """Verdict of the time-domain check of one design.

    Attributes
    ----------
    passed : bool
        True when the recommended controller passes at the coldest and the hottest
        temperature, at the pump's catalogue flow and at its worn flow.
    controller : str
        The recommended controller: the first that passes in the order of
        :data:`RECOMMENDATION_ORDER` (pressure switch, schedule, position switch); when none
        passes, the first in that order whose only failures are the pressure falling short or
        the bank running empty (raising the requirement can cure those), else the first
        simulated in that order.  A pump-only supply has one mode, always loaded, reported as
        ``"schedule"``.
    setpoints : dict
        Derived switch settings: ``load_below [Pa]`` and ``unload_above [Pa]`` (absolute) for
        the pressure switch; for piston types also ``load_below_stroke [-]`` and
        ``unload_above_stroke [-]`` (fractions of the piston stroke) for the position switch.
    runs : tuple[ControllerRun, ...]
        Every controller at every temperature simulated, at catalogue flow and (with a flow
        margin) at worn flow.
    min_margin : float
        Least pressure margin of the recommended controller over both temperatures, [Pa].
    shortfall : numpy.ndarray | None
        Per step of the cycle grid, how far the recommended controller's pressure fell below
        the requirement (0 where it held), [Pa]; None when it passed.  The pipeline raises the
        requirement by this much and designs again.
    reason : str | None
        Why it failed, else None.
    time_constant : float
        Thermal time constant used, [s].
    gas_model : str
        ``"real"`` or ``"ideal"``.
    elapsed : float
        Wall-clock time of the verification, [s].
    notes : tuple[str, ...]
        What a reader should know (e.g. the steady-state criterion).
    schedule : pandas.DataFrame or None
        The timed load schedule this verification derived and proved (``timed_schedule``),
        in the columns of :attr:`Design.schedule <stowflow.search.solution.Design.schedule>`;
        None when none was derived or none held.
    """

    passed: bool
    controller: str
    setpoints: dict
    runs: tuple[ControllerRun, ...]
    min_margin: float
    shortfall: np.ndarray | None
    reason: str | None
    time_constant: float
    gas_model: str
    elapsed: float = 0.0
    notes: tuple[str, ...] = ()
    schedule: pd.DataFrame | None = field(default=None, repr=False)

    def run(self, controller: str, which: str, worn: bool = False) -> ControllerRun | None:
        """The run of ``controller`` at the ``"cold"`` or ``"hot"`` end, if simulated (at
        catalogue flow, or at worn flow with ``worn``)."""
        runs = [r for r in self.runs if r.controller == controller and r.worn == worn]
        if not runs:
            return None
        return (
            min(runs, key=lambda r: r.temperature)
            if which == "cold"
            else max(runs, key=lambda r: r.temperature)
        )


# --------------------------------------------------------------------------- simulate
def _check_design(design: Design) -> None:
    """Refuse a design without components (infeasible) with one SettingsError line."""
    if not design.feasible or design.pump is None or design.motor is None:
        raise SettingsError(
            f"design is {design.status} ({design.reason}); only a feasible design can be simulated"
        )


def _make_controller(name, design, cycle, settings, setpoints):
    """The controller object for a name and its settings ([Pa] absolute / stroke [-])."""
    if name == "schedule":
        f = schedule_command(design, cycle)
        if f is None:
            raise SettingsError(
                "the design carries no schedule; the schedule controller cannot be simulated"
            )
        return schedule_controller(f, design, cycle, settings, setpoints)
    if name == "pressure-switch":
        return switch_controller(
            name, "pressure", setpoints["load_below"], setpoints["unload_above"], settings
        )
    if name == "position-switch":
        if not design.bank.option.has_piston:
            raise SettingsError(
                f"the position switch needs a piston accumulator, not {design.bank.type}"
            )
        return HysteresisController(
            name, "stroke", setpoints["load_below_stroke"], setpoints["unload_above_stroke"]
        )
    raise SettingsError(f"controller '{name}' is unknown; use one of {', '.join(CONTROLLERS)}")


def _estimate_error(plant: Plant, ctrl, orbit: Orbit) -> float:
    """Step doubling: repeat the orbit's first cycle with twice the substeps, [Pa]."""
    rec = orbit.records[0]
    fine, _ = run_cycle(plant, ctrl, rec.start, rec.T, substeps=2 * plant.substeps)
    return float(np.max(np.abs(fine.p - rec.p)))


def simulate(
    design: Design,
    cycle: DutyCycle,
    settings: DesignSettings | None = None,
    controller: str = "schedule",
    temperature: float | None = None,
    *,
    setpoints: dict | None = None,
    limits: dict | None = None,
    estimate_error: bool = True,
    worn: bool = False,
) -> ControllerRun:
    """Simulate one controller at one temperature to the periodic steady state.

    Parameters
    ----------
    design : Design
        A feasible design.
    cycle : DutyCycle
        The duty cycle.
    settings : DesignSettings, optional
        Gas model, time constant, line loss, switching limits, ambient pressure.
    controller : str
        One of :data:`CONTROLLERS`.
    temperature : float, optional
        Wall (ambient, oil) temperature, [K]; default ``settings.t_min``.
    setpoints : dict, optional
        Switch settings (``load_below``/``unload_above`` [Pa] absolute, or
        ``load_below_stroke``/``unload_above_stroke`` [-]); derived as in :func:`verify`
        when not given.
    limits : dict, optional
        The catalogue's ``[limits.<type>]`` overrides for the discharge limit.
    estimate_error : bool
        Repeat the final cycle with half the substep to estimate the integration error.
    worn : bool
        Run the pump at its worn flow (:func:`worn_design`).

    Returns
    -------
    ControllerRun
    """
    s = settings or DesignSettings()
    _check_design(design)
    T = float(s.t_min if temperature is None else temperature)
    if controller in ("pressure-switch", "position-switch") and not setpoints:
        v = verify(design, cycle, s, controllers=(controller,), limits=limits)
        setpoints = v.setpoints
    if worn:
        design = worn_design(design, s)
    if design.bank is None:
        return ControllerRun(**pump_only(design, cycle, s, T), worn=worn)
    plant = plant_for(design, cycle, s, T)
    ctrl = _make_controller(controller, design, cycle, s, setpoints or {})
    st = start_state(plant, start_oil(design, s, plant, ctrl), T, ctrl.initial_u())
    orbit = run_periodic(plant, ctrl, st)
    fields = assess(plant, orbit, controller, design, s, ctrl.setpoints(), limits)
    run = ControllerRun(**fields, worn=worn)
    if estimate_error:
        run = replace(run, integration_error=_estimate_error(plant, ctrl, orbit))
    return run


# --------------------------------------------------------------------------- verify
def worn_design(design: Design, settings: DesignSettings) -> Design:
    """The design with its pump worn by the flow margin.

    Wear is internal leakage: the delivery falls to catalogue × (1 − flow margin) while the
    shaft power at a pressure stays as it was, so the volumetric and the overall efficiency
    both fall by that factor.
    """
    keep = 1.0 - settings.flow_margin
    pump = design.pump
    worn = replace(
        pump,
        volumetric_efficiency=pump.volumetric_efficiency * keep,
        overall_efficiency=pump.overall_efficiency * keep,
    )
    return replace(design, pump=worn)


def schedule_controller(
    fraction: np.ndarray,
    design: Design,
    cycle: DutyCycle,
    settings: DesignSettings,
    setpoints: dict | None = None,
) -> ScheduleController:
    """The design's schedule with its latching high-pressure cut-out.

    The cut-out is set where the pressure switch unloads (``setpoints["cut_out"]`` or
    ``setpoints["unload_above"]`` when given, else the design's maximum working pressure,
    capped like the switch's, :func:`~stowflow.simulation._setup.pressure_search`), and acts at
    the low end of its repeatability, the store's worst case.  A pump-only design has none,
    nor a plan that keeps the pump loaded throughout with the relief valve as its planned
    overflow.
    """
    if design.bank is None or _relief_by_design(design):
        return ScheduleController(fraction)
    given = setpoints or {}
    cut = given.get("cut_out", given.get("unload_above"))
    if cut is None:
        cut = pressure_search(
            design, settings, plant_for(design, cycle, settings, settings.t_min)
        ).off
    return ScheduleController(
        fraction,
        float(settings.worst_setting(cut)),
        nominal=float(cut),
        min_off=settings.min_unloaded_dwell,
    )


def switch_controller(
    name: str, signal: str, on: float, off: float, settings: DesignSettings
) -> HysteresisController:
    """A hysteresis switch with stated settings ``on``/``off``; a pressure switch acts at
    the low end of its repeatability (:meth:`DesignSettings.worst_setting`), the store's
    worst case."""
    if signal != "pressure" or settings.switch_tolerance == 0:
        return HysteresisController(name, signal, on, off)
    return HysteresisController(
        name,
        signal,
        float(settings.worst_setting(on)),
        float(settings.worst_setting(off)),
        nominal=(on, off),
    )


class _Runner:
    """Runs controllers at the operating temperatures, at catalogue and at worn pump flow,
    warm-starting from earlier runs."""

    def __init__(self, design, cycle, settings, limits):
        self.design, self.cycle, self.s, self.limits = design, cycle, settings, limits
        temps = sorted({float(settings.t_min), float(settings.t_max)})
        wear = (False, True) if settings.flow_margin > 0 else (False,)
        self.designs = {w: worn_design(design, settings) if w else design for w in wear}
        #: (temperature [K], worn) → plant: every condition the design must pass.
        self.plants = {
            (T, w): plant_for(self.designs[w], cycle, settings, T) for w in wear for T in temps
        }
        self.warm: dict = {}
        self.orbits: dict = {}

    def run(self, name: str, ctrl, cond: tuple[float, bool], warm_key: str) -> ControllerRun:
        T, worn = cond
        plant, design = self.plants[cond], self.designs[worn]
        w = self.warm.get((warm_key, cond))
        if w is None:
            S0 = start_oil(design, self.s, plant, ctrl)
            st, guess = start_state(plant, S0, T, ctrl.initial_u()), None
        else:
            st, guess = w
        orbit = run_periodic(plant, ctrl, st, guess)
        self.warm[(warm_key, cond)] = (orbit.end, orbit.records[-1].T)
        fields = assess(plant, orbit, name, design, self.s, ctrl.setpoints(), self.limits)
        run = ControllerRun(**fields, worn=worn)
        self.orbits[id(run)] = (plant, ctrl, orbit)
        return run

    def switch(self, name, signal, search: SwitchSearch, report) -> tuple[list, list[str]]:
        """Derive a hysteresis switch's load point; return its runs in every condition."""
        conds = list(self.plants)

        def evaluate(on: float):
            ctrl = switch_controller(name, signal, on, search.off, self.s)
            runs = []
            for cond in conds:
                report(f"{name}: trying load point {on:.6g}")
                r = self.run(name, ctrl, cond, name)
                runs.append(r)
                if not limits_ok(
                    r.load_events_per_hour, r.min_loaded_dwell, r.min_unloaded_dwell, self.s
                ):
                    return False, runs
            return True, runs

        on, runs, notes = derive_switch(search, evaluate)
        done = {(r.temperature, r.worn) for r in runs}
        ctrl = switch_controller(name, signal, on, search.off, self.s)
        runs = list(runs) + [self.run(name, ctrl, c, name) for c in conds if c not in done]
        return runs, notes


def _recommend(runs: list[ControllerRun]) -> str:
    """The recommended controller (rule in :attr:`Verification.controller`)."""
    names = [c for c in RECOMMENDATION_ORDER if any(r.controller == c for r in runs)]
    for c in names:
        if all(r.passed for r in runs if r.controller == c):
            return c
    for c in names:
        if all(all(_curable(f) for f in r.failures) for r in runs if r.controller == c):
            return c
    return names[0]


def _curable(failure: str) -> bool:
    """A failure that raising the requirement of the steps concerned can cure."""
    return failure.startswith("bank runs empty") or (
        failure.startswith("pressure ") and "below the required" in failure
    )


#: The hysteresis switches: name, signal, the keys of their settings, the search of the load
#: point.
_SWITCHES = (
    ("pressure-switch", "pressure", ("load_below", "unload_above"), pressure_search),
    ("position-switch", "stroke", ("load_below_stroke", "unload_above_stroke"), stroke_search),
)


class _Progress:
    """``report(fraction, label)`` advanced by one tick per run, about eight per controller."""

    def __init__(self, report: Callable[[float, str], None], controllers: int) -> None:
        self.report = report
        self.steps = 0.0
        self.total = controllers * 8.0

    def __call__(self, label: str) -> None:
        self.steps += 1
        self.report(min(0.95, self.steps / self.total), label)


def _wanted_controllers(controllers: Iterable[str]) -> tuple[str, ...]:
    """The controllers asked for, refused with one SettingsError line when unknown or none."""
    wanted = tuple(controllers)
    unknown = [c for c in wanted if c not in CONTROLLERS]
    if unknown or not wanted:
        raise SettingsError(
            f"controller(s) {unknown or '(none)'} unknown; use {', '.join(CONTROLLERS)}"
        )
    return wanted


def _schedule_runs(
    runner: _Runner, given: dict, tick: _Progress, notes: list[str]
) -> list[ControllerRun]:
    """The design's own schedule, open loop, at every temperature (none without one)."""
    f = schedule_command(runner.design, runner.cycle)
    if f is None:
        notes.append("the design carries no schedule: schedule controller not simulated")
        return []
    ctrl = schedule_controller(f, runner.design, runner.cycle, runner.s, given)
    runs = []
    for cond in runner.plants:
        tick("schedule")
        runs.append(runner.run("schedule", ctrl, cond, "schedule"))
    return runs


def schedule_command(design: Design, cycle: DutyCycle) -> np.ndarray | None:
    """What the schedule controller follows, per step (None without a schedule).

    For a timed schedule (:attr:`Design.schedule_timed
    <stowflow.search.solution.Design.schedule_timed>`) the load command, ``pump_loaded`` (1:
    loaded; the cut-out of :func:`schedule_controller` may unload it earlier); otherwise the
    share of each step the pump delivers
    (:func:`~stowflow.simulation._setup.schedule_fraction`).  Both are checked against the
    cycle and the volume balance first, [-].
    """
    f = schedule_fraction(design, cycle)
    if f is None or not design.schedule_timed or design.bank is None or _relief_by_design(design):
        return f
    return (design.schedule["pump_loaded [-]"].to_numpy(float) > 0) * 1.0


def _relief_by_design(design: Design) -> bool:
    """Whether the design's plan keeps the pump loaded throughout with the relief valve as
    its planned overflow (the switching limits allow no load event in a cycle): its schedule
    then runs without a cut-out."""
    sch = design.schedule
    if sch is None or sch.empty:
        return False
    loaded = sch["pump_loaded [-]"].to_numpy(float)
    spill = sch["spill [m³/s]"].to_numpy(float)
    return bool(np.all(loaded > 0) and np.any(spill > 0))


def _timing_candidates(runner: _Runner, sw_runs: list) -> list[tuple[str, np.ndarray]]:
    """Binary load plans to derive a timed schedule from, in order: the design's own plan,
    then the pressure switch's timing at the coldest temperature with the worn pump."""
    out = []
    sch = runner.design.schedule
    if sch is not None and not sch.empty and len(sch) == runner.cycle.n_steps:
        out.append(("the design's plan", (sch["pump_loaded [-]"].to_numpy(float) > 0) * 1.0))
    worn = any(r.worn for r in sw_runs)
    ps = [r for r in sw_runs if r.controller == "pressure-switch" and r.worn == worn]
    if ps:
        r = min(ps, key=lambda r: r.temperature)
        if r.period_cycles == 1:
            loaded = r.trace["pump_loaded [-]"].to_numpy(float)
            out.append(("the pressure switch's timing", (loaded > 1e-9) * 1.0))
    return out


def _schedule_from_runs(runner: _Runner, command: np.ndarray, cold, hot) -> pd.DataFrame:
    """A timed schedule in the columns of ``Design.schedule``: the load command, and what
    the pump and the store do at the coldest temperature with the worn pump (the flows, the
    stored oil) and at the hottest (its pressure)."""
    tr, plant = cold.trace, runner.plants[(cold.temperature, cold.worn)]
    oil = tr["accumulator_oil [m³]"].to_numpy()
    # The steady state repeats within the periodic tolerance: spread what is left of the
    # cycle's closure over its steps, so that the table's oil balance closes exactly.
    oil = oil + (cold.start[0] - oil[-1]) * np.arange(1, oil.size + 1) / oil.size
    out = pd.DataFrame(
        {
            "demand [m³/s]": tr["demand [m³/s]"].to_numpy(),
            "required_pressure [Pa]": plant.required,
            "pump_loaded [-]": np.asarray(command, float).astype(int),
            "pump_flow [m³/s]": tr["pump_flow [m³/s]"].to_numpy(),
            "spill [m³/s]": tr["relief_flow [m³/s]"].to_numpy(),
            "accumulator_oil [m³]": oil,
            "pressure_cold [Pa]": tr["pressure [Pa]"].to_numpy(),
            "pressure_hot [Pa]": hot.trace["pressure [Pa]"].to_numpy(),
        },
        index=tr.index,
    )
    out.attrs["source"] = "simulation"
    return out


def _timed_schedule_runs(
    runner: _Runner, given: dict, sw_runs: list, tick: _Progress, notes: list[str]
) -> tuple[list[ControllerRun], pd.DataFrame | None]:
    """The timed load schedule to export, and its runs in every condition.

    Each binary load command (:func:`_timing_candidates`) runs with the latching
    high-pressure cut-out (:func:`schedule_controller`) in every condition (both temperature
    ends, catalogue and worn flow), the coldest with the worn pump first; the first that
    passes them all is the timed schedule, with the flows and the stored oil of that
    first run.  When none does, the last one's runs are returned with no schedule: a
    schedule that failed is never exported.
    """
    try:
        return _derive_timed(runner, given, sw_runs, tick, notes)
    except SimulationError as exc:  # the schedule is an extra: its failure is not the design's
        notes.append(f"schedule: not simulated ({exc}); none is exported")
        return [], None


def _derive_timed(
    runner: _Runner, given: dict, sw_runs: list, tick: _Progress, notes: list[str]
) -> tuple[list[ControllerRun], pd.DataFrame | None]:
    """The body of :func:`_timed_schedule_runs`."""
    design, s = runner.design, runner.s
    if _relief_by_design(design):  # loaded throughout: the plan is the schedule, no cut-out
        runs = _schedule_runs(runner, given, tick, notes)
        if runs and all(r.passed for r in runs):
            return runs, design.schedule
        notes.append(
            "schedule: the pump kept loaded throughout fails in the time domain; none is "
            "exported (the pressure switch carries the cycle)"
        )
        return runs, None
    conds = list(runner.plants)
    worn = any(w for _, w in conds)
    cold = (min(T for T, _ in conds), worn)
    hot = (max(T for T, _ in conds), worn)
    runs: list[ControllerRun] = []
    for label, u in _timing_candidates(runner, sw_runs):
        ctrl = schedule_controller(u, design, runner.cycle, s, given)
        runs = []
        for cond in [cold, *(c for c in conds if c != cold)]:
            tick("schedule")
            runs.append(runner.run("schedule", ctrl, cond, f"schedule:{label}"))
            if not runs[-1].passed:
                break
        if len(runs) == len(conds) and all(r.passed for r in runs):
            by = {(r.temperature, r.worn): r for r in runs}
            runs = [by[c] for c in conds]  # in the order of the other controllers' runs
            notes.append(
                f"schedule: timed from {label} with a latching cut-out at "
                f"{bar_text(ctrl.nominal, s.p_ambient)}; it holds at both temperature ends with "
                "a new and a worn pump"
            )
            if by[cold].period_cycles == 1 and by[hot].period_cycles == 1:
                return runs, _schedule_from_runs(runner, u, by[cold], by[hot])
            # Cycles that differ in the steady state (the cut-out acts in some): the flows and
            # the stored oil shown are the design's quasi-static plan, the command its own.
            plan = design.schedule.copy()
            plan["pump_loaded [-]"] = u.astype(int)
            plan.attrs["source"] = "plan"
            return runs, plan
    notes.append(
        "schedule: no timed load schedule held at both temperature ends with a new and a worn "
        "pump; none is exported (the pressure switch carries the cycle)"
    )
    return runs, None


def _switch_runs(
    runner: _Runner, wanted: tuple[str, ...], given: dict, tick: _Progress, notes: list[str]
) -> tuple[list[ControllerRun], dict]:
    """The hysteresis switches at every temperature, with the settings given or derived;
    returns the runs and the settings."""
    design, conds = runner.design, list(runner.plants)
    first_plant = runner.plants[conds[0]]
    runs: list[ControllerRun] = []
    derived: dict = {}
    for name, signal, keys, make_search in _SWITCHES:
        if name not in wanted or (signal == "stroke" and not design.bank.option.has_piston):
            continue
        if all(k in given for k in keys):
            ctrl = switch_controller(name, signal, given[keys[0]], given[keys[1]], runner.s)
            sw_runs = [runner.run(name, ctrl, c, name) for c in conds]
            sw_notes = ["settings given, not derived"]
        else:
            search = make_search(design, runner.s, first_plant)
            sw_runs, sw_notes = runner.switch(name, signal, search, tick)
        runs += sw_runs
        derived |= sw_runs[0].setpoints
        notes += [f"{name}: {n}" for n in sw_notes]
    return runs, derived


#: How far a switch setting read back from design.json may lie from the one derived (it is
#: written to 0.001 bar), [Pa].
_SETTING_ROUNDING = 200.0


def _check_switch_settings(runs: list, setpoints: dict, design: Design, s: DesignSettings) -> list:
    """Add the pressure switch's static checks to its runs: the differential at least the
    least a switch holds (:meth:`DesignSettings.switch_band`), and the unload setting at the
    high end of its repeatability still below the relief setting."""
    on, off = setpoints["load_below"], setpoints["unload_above"]
    pa, fails = s.p_ambient, []
    band = float(s.switch_band(off))
    if off - on < band - _SETTING_ROUNDING:
        fails.append(
            f"pressure-switch differential {(off - on) / BAR:.3g} bar is narrower than the "
            f"least {band / BAR:.3g} bar a switch holds (--switch-differential)"
        )
    high = pa + (1 + s.switch_tolerance) * (off - pa)
    if high >= design.relief:
        fails.append(
            f"unload setting {bar_text(off, pa)} at +{s.switch_tolerance:.0%} repeatability "
            f"reaches the relief setting {bar_text(design.relief, pa)}"
        )
    if not fails:
        return runs
    return [
        replace(r, passed=False, failures=(*r.failures, *fails), reason=r.reason or fails[0])
        if r.controller == "pressure-switch"
        else r
        for r in runs
    ]


def _bank_runs(
    runner: _Runner,
    wanted: tuple[str, ...],
    setpoints: dict | None,
    report,
    notes: list[str],
    derive: bool = False,
) -> tuple[list[ControllerRun], dict, pd.DataFrame | None]:
    """Every wanted controller of a design with a bank, each run with its integration error
    estimated; returns the runs, the switch settings and the timed schedule derived (with
    ``derive``, else None)."""
    tick = _Progress(report, len(wanted))
    given = setpoints or {}
    timed = None
    sw_runs, derived = _switch_runs(runner, wanted, given, tick, notes)
    if "schedule" not in wanted:
        runs = []
    elif derive:
        runs, timed = _timed_schedule_runs(runner, given | derived, sw_runs, tick, notes)
    else:
        runs = _schedule_runs(runner, given, tick, notes)
    runs += sw_runs
    report(0.96, "estimating the integration error")
    for i, r in enumerate(runs):
        plant, ctrl, orbit = runner.orbits[id(r)]
        runs[i] = replace(r, integration_error=_estimate_error(plant, ctrl, orbit))
    if "load_below" in derived:
        runs = _check_switch_settings(runs, derived, runner.design, runner.s)
    err = max(r.integration_error for r in runs)
    first_plant = next(iter(runner.plants.values()))
    notes.append(
        "integrator: exponential integrator on the cycle grid "
        f"({first_plant.substeps} {'substep' if first_plant.substeps == 1 else 'substeps'} per "
        "step); step doubling changes the "
        + (
            f"pressure by at most {to_unit(err, 'bar', 'pressure'):.2f} bar"
            if to_unit(err, "bar", "pressure") >= 0.005
            else "pressure by less than 0.01 bar"
        )
    )
    if runner.limits is None:
        notes.append("discharge limits: catalogue rows and default type rules")
    return runs, derived, timed


def _verdict(
    design: Design, s: DesignSettings, runs: list, derived: dict, notes: list[str], t0, report
) -> Verification:
    """The verdict of the recommended controller over all the runs (``t0`` the start of the
    verification, [s])."""
    rec = _recommend(runs)
    mine = [r for r in runs if r.controller == rec]
    passed = all(r.passed for r in mine)
    margin = min(r.min_margin for r in mine)
    shortfall = None
    if not passed:
        shortfall = np.max(np.stack([r.shortfall for r in mine]), axis=0)
    reason = None if passed else next(r.reason for r in mine if not r.passed)
    e_sim = float(np.mean([r.energy_per_cycle for r in mine]))
    if np.isfinite(design.energy_per_cycle) and design.energy_per_cycle > 0:
        notes.append(
            f"energy per cycle ({rec}, mean of the temperatures): "
            f"{to_unit(e_sim, 'kJ', 'energy'):.4g} kJ against the design's quasi-static "
            f"{to_unit(design.energy_per_cycle, 'kJ', 'energy'):.4g} kJ (actual pressures, heat "
            "lost to the wall and both temperature ends here; the middle temperature there)"
        )
    ok = sorted({r.controller for r in runs} - {r.controller for r in runs if not r.passed})
    notes.append("controllers passing at every temperature: " + (", ".join(ok) or "none"))
    slow = [r for r in runs if not r.periodic]
    if slow:
        which = "; ".join(
            f"{r.controller} at {kelvin_to_celsius(r.temperature):.0f} °C"
            + (" with worn pump flow" if r.worn else "")
            for r in slow
        )
        notes.append(
            f"not settled to an exactly repeating cycle within the cycle cap ({which}): "
            f"{'that run is' if len(slow) == 1 else 'those runs are'} judged on "
            "the last cycles simulated"
        )
    report(1.0, "verified")
    return Verification(
        passed=passed,
        controller=rec,
        setpoints=derived,
        runs=tuple(runs),
        min_margin=float(margin),
        shortfall=shortfall,
        reason=reason,
        time_constant=float(s.time_constant),
        gas_model=s.gas_model,
        elapsed=time.perf_counter() - t0,
        notes=tuple(notes),
    )


def verify(
    design: Design,
    cycle: DutyCycle,
    settings: DesignSettings | None = None,
    *,
    controllers: Iterable[str] = CONTROLLERS,
    progress: Callable[[float, str], None] | None = None,
    limits: dict | None = None,
    setpoints: dict | None = None,
    timed_schedule: bool = False,
) -> Verification:
    """Verify a design in the time domain at the coldest and the hottest temperature.

    Parameters
    ----------
    design : Design
        A feasible design (with a bank, or pump only).
    cycle : DutyCycle
        The duty cycle it was designed for (with its required pressure).
    settings : DesignSettings, optional
        Temperatures, gas model, time constant, line loss, switching limits.
    controllers : iterable of str
        Controllers to simulate (subset of :data:`CONTROLLERS`); the position switch is
        simulated for piston types only, the schedule only when the design carries one.
    progress : callable, optional
        ``progress(fraction, label)``.
    limits : dict, optional
        The catalogue's ``[limits.<type>]`` overrides (for the discharge limit).
    setpoints : dict, optional
        Switch settings to check instead of deriving them: ``load_below``/``unload_above``
        [Pa] absolute and/or ``load_below_stroke``/``unload_above_stroke`` [-].
    timed_schedule : bool
        Derive the timed load schedule to export from the design's plan (or, when that does
        not hold, from the pressure switch's timing) and verify it in place of the plan
        (:func:`_timed_schedule_runs`); the schedule is in :attr:`Verification.schedule`.

    Returns
    -------
    Verification
    """
    t0 = time.perf_counter()
    s = settings or DesignSettings()
    _check_design(design)
    wanted = _wanted_controllers(controllers)
    report = progress or (lambda frac, label: None)
    notes = [
        f"steady state: the state at a cycle start repeats within {OIL_TOL * 1e6:g} parts "
        f"per million of the gas volume (stored oil) and {TEMPERATURE_TOL:g} K (gas "
        f"temperature), period 1 to {MAX_PERIOD} cycles",
        f"relief valve: linear, full pump flow at {RELIEF_OVERRIDE:.0%} of its cracking gauge "
        "pressure above cracking (common practice, no published source)",
    ]
    if design.bank is None:
        temps = sorted({float(s.t_min), float(s.t_max)})
        wear = (False, True) if s.flow_margin > 0 else (False,)
        runs = [
            ControllerRun(**pump_only(worn_design(design, s) if w else design, cycle, s, T), worn=w)
            for w in wear
            for T in temps
        ]
        derived: dict = {}
        notes.append("pump-only supply: always loaded against the relief valve (no switching)")
    else:
        runner = _Runner(design, cycle, s, limits)
        runs, derived, timed = _bank_runs(
            runner, wanted, setpoints, report, notes, derive=timed_schedule
        )
        return replace(_verdict(design, s, runs, derived, notes, t0, report), schedule=timed)
    return _verdict(design, s, runs, derived, notes, t0, report)
