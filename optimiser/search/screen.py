"""Design space, exact screening and the lexicographic search for the least installed power.

How the search is decomposed
----------------------------
For one pump, let it stay loaded and spill what the store cannot take.  The deficit below a
full store, ``D_t``, then follows Lindley's recursion and does not depend on the bank
(:func:`stowflow.search.schedule.deficit_from_full`).  For a bank of gas volume ``V0``, precharge
``p0`` and unload pressure ``p_max``, the store must stay between ``V0·l_t`` (the oil the
required pressure needs, at the coldest temperature) and ``V0·u`` (the oil at the unload
pressure, at the hottest temperature), so the pump and bank work together exactly when

.. math::
    V_0 \\ge \\max_t \\frac{D_t}{u - l_t}

Always loaded is a schedule that keeps every dwell and start limit, and it draws the least
from the bank at every step, so this screen is exact for feasibility: a pair passes it if and
only if some schedule works.  Everything nonlinear (real-gas nitrogen, temperature, the
precharge rules of each accumulator type) is inside ``l_t`` and ``u``, precomputed per
precharge on a grid.

The objective is lexicographic: (1) installed motor power, (2) capital cost from catalogue
prices, (3) energy per cycle.  Levels 1 and 2 are settled by exhaustive enumeration of the
catalogue on the precharge grid with this exact screen; level 3, the schedule under dwell and
start limits, by the Pyomo model of :mod:`stowflow.search.milp`, solved by HiGHS, with levels 1
and 2 held at their optimum.
"""

from __future__ import annotations

import math
import time
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
from stowflow.catalogue import AccumulatorOption, Catalogue, MotorOption, PumpOption
from stowflow.cycle.duty import DutyCycle
from stowflow.errors import SettingsError
from stowflow.physics import accumulator as acc
from stowflow.physics import gas
from stowflow.physics.valves import narrowest_band
from stowflow.search.schedule import cooling_loss, deficit_from_full, level_draws, refill_memory
from stowflow.search.settings import DesignSettings
from stowflow.units import T_REF

#: Motor ratings above the least power scanned for the power–capex frontier.
FRONTIER_LEVELS = 4
#: Gas expansion V2/V1 of the discharge at which the ``auto`` process takes its effective
#: index: a short stroke from the top of the window, where real nitrogen is stiffest (our
#: choice, no published source; 1.5 gives an index about 0.1 lower near 200 bar).
AUTO_EXPANSION = 1.1
#: Runge–Kutta steps of the ``auto`` process's real-gas thermal integration, [-].
AUTO_STEPS = 32

__all__ = [
    "AUTO_EXPANSION",
    "FRONTIER_LEVELS",
    "Candidate",
    "PrechargeGrid",
    "Problem",
    "ScreenResult",
    "bank_lower",
    "bank_upper",
    "charge_heating",
    "make_problem",
    "resolve_process",
    "screen",
    "stored_fraction",
    "stored_pressure",
    "top_pressure",
]


@dataclass(frozen=True)
class Problem:
    """A cycle prepared for the search (SI).

    Attributes
    ----------
    dt : float
        Step length, [s].
    demand : numpy.ndarray
        Demand per step, [m³/s].
    p_step : numpy.ndarray
        Required pressure of each step plus line loss and any extra margin, absolute, [Pa].
    p_end : numpy.ndarray
        Pressure the store must hold at the end of each step: the larger of the requirements of
        the step and of the next one (the store must meet a step's requirement at its start
        and its end), absolute, [Pa].
    process : gas.Process
        Quasi-static gas process.
    process_note : str
        How the process was chosen.
    settings : DesignSettings
        The settings.
    """

    dt: float
    demand: np.ndarray
    p_step: np.ndarray
    p_end: np.ndarray
    process: gas.Process
    process_note: str
    settings: DesignSettings

    @property
    def n(self) -> int:
        """Number of steps, [-]."""
        return int(self.demand.size)

    @property
    def cycle_time(self) -> float:
        """Cycle duration, [s]."""
        return self.n * self.dt

    @property
    def temperatures(self) -> tuple[float, float]:
        """Coldest and hottest operating temperature, [K]."""
        return (self.settings.t_min, self.settings.t_max)


def _discharge_time(demand: np.ndarray, dt: float) -> float:
    """Longest stretch in which the demand is above its mean, [s] (the bank's discharge)."""
    above = demand > demand.mean() * (1 + 1e-9)
    if not above.any():
        return demand.size * dt
    if above.all():
        return demand.size * dt
    k = int(np.flatnonzero(~above)[0])
    r = np.roll(above, -k)
    best = run = 0
    for a in r:
        run = run + 1 if a else 0
        best = max(best, run)
    return best * dt


def resolve_process(
    demand: np.ndarray, dt: float, settings: DesignSettings, p_start: float | None = None
):
    """Choose the quasi-static gas process of the discharge.

    ``"auto"`` integrates the thermal time-constant model (Otis & Pourmovahed) over the
    cycle's longest discharge, an expansion by :data:`AUTO_EXPANSION` from a gas at rest at
    ``p_start`` and the coldest temperature, and uses the effective polytropic index it gives
    (real nitrogen for the real gas model: about 1.5–1.9 near 200 bar, where an ideal gas
    gives at most 1.4).

    Parameters
    ----------
    demand : numpy.ndarray
        Demand per step, [m³/s].
    dt : float
        Step length, [s].
    settings : DesignSettings
        Settings (process, time constant, gas model).
    p_start : float, optional
        Absolute pressure where the discharge starts, [Pa]: the real gas's index depends on
        it (default 200 bar).

    Returns
    -------
    (gas.Process, str)
        The process and a sentence saying how it was chosen.
    """
    if settings.process != "auto":
        try:
            proc = gas.parse_process(settings.process)
        except Exception as exc:
            raise SettingsError(f"design settings: process: {exc}") from None
        return proc, f"{proc.kind} (n = {proc.n:.3g}) as set"
    from stowflow.physics import thermal

    t_d = _discharge_time(demand, dt)
    if settings.gas_model == "real":
        p1 = float(p_start) if p_start is not None else settings.p_ambient + 200e5
        n_eff = float(
            thermal.effective_polytropic_index(
                t_d,
                settings.time_constant,
                1.0 / AUTO_EXPANSION,
                model="real",
                p_start=p1,
                T_start=settings.t_min,
                steps=AUTO_STEPS,
            )
        )
        where = f" of real nitrogen from {(p1 - settings.p_ambient) / 1e5:.0f} bar"
    else:
        n_eff = float(
            thermal.effective_polytropic_index(
                t_d, settings.time_constant, 1.0 / AUTO_EXPANSION, model="ideal"
            )
        )
        where = " of an ideal gas"
    n_eff = min(max(n_eff, 1.0), 3.0)
    proc = gas.Process("polytropic", n_eff)
    note = (
        f"discharge polytropic n = {n_eff:.3f}{where}: thermal time-constant model (τ = "
        f"{settings.time_constant:g} s) over the longest discharge of {t_d:.3g} s, from a gas "
        "at rest at the top of the window"
    )
    return proc, note


def make_problem(
    cycle: DutyCycle, settings: DesignSettings, extra_pressure: np.ndarray | float = 0.0
) -> Problem:
    """Prepare a cycle for the search.

    Parameters
    ----------
    cycle : DutyCycle
        The duty cycle; it must carry a required pressure.
    settings : DesignSettings
        Design settings.
    extra_pressure : float or numpy.ndarray
        Extra pressure added to the requirement of every step (used when the verification
        tightens the bounds), [Pa].

    Returns
    -------
    Problem
    """
    if cycle.pressure is None:
        raise SettingsError(
            f"{cycle.source}: the cycle has no pressure column; give the minimum working "
            "pressure as an option (e.g. --min-pressure 150bar)"
        )
    p_step = np.asarray(cycle.pressure, float) + settings.line_loss + extra_pressure
    p_end = np.maximum(p_step, np.roll(p_step, -1))
    proc, note = resolve_process(cycle.flow, cycle.dt, settings, float(p_end.max()))
    return Problem(
        dt=float(cycle.dt),
        demand=np.asarray(cycle.flow, float),
        p_step=p_step,
        p_end=p_end,
        process=proc,
        process_note=note,
        settings=settings,
    )


def top_pressure(settings: DesignSettings, p_max) -> np.ndarray | float:
    """Where a discharge starts under an unload pressure, absolute, [Pa].

    The load point of the narrowest pressure-switch band below ``p_max``
    (:func:`stowflow.physics.valves.narrowest_band`): a switched pump lets the store drift down
    to it before loading again, so the machine may start drawing there.
    """
    p_max = np.asarray(p_max, float)
    return _out(p_max - narrowest_band(p_max - settings.p_ambient))


def _out(a: np.ndarray):
    return float(a) if np.ndim(a) == 0 else a


@dataclass(frozen=True)
class PrechargeGrid:
    """Precharges with their gas density and their pressure at each temperature.

    Attributes
    ----------
    p0 : numpy.ndarray
        Precharges at 20 °C, absolute, (P,), [Pa].
    rho : numpy.ndarray
        Gas density at rest, (P,), [kg/m³].
    at : dict
        Temperature [K] -> precharge at that temperature (isochoric), (P,), [Pa].
    """

    p0: np.ndarray
    rho: np.ndarray
    at: dict

    @classmethod
    def of(cls, problem: Problem, p0, temperatures=()) -> PrechargeGrid:
        """The grid for precharges ``p0`` [Pa] at the operating and the given temperatures."""
        if isinstance(p0, cls):
            return p0
        model = problem.settings.gas_model
        p0 = np.atleast_1d(np.asarray(p0, float))
        rho = np.asarray(gas.density(p0, T_REF, model), float)
        temps = {*problem.temperatures, *temperatures}
        return cls(
            p0, rho, {t: np.asarray(gas.pressure_from_density(rho, t, model)) for t in temps}
        )

    def head(self, n: int) -> PrechargeGrid:
        """The first ``n`` precharges."""
        return PrechargeGrid(self.p0[:n], self.rho[:n], {t: v[:n] for t, v in self.at.items()})

    def precharge_at(self, problem: Problem, T: float) -> np.ndarray:
        """Precharge at temperature T, absolute, [Pa]."""
        if T not in self.at:
            self.at[T] = np.asarray(
                gas.pressure_from_density(self.rho, T, problem.settings.gas_model)
            )
        return self.at[T]


def _iso_ratio(p: np.ndarray, rho0: np.ndarray, T: float, model: str) -> np.ndarray:
    """Gas volume over nominal volume on the isotherm T: min(ρ0/ρ(p, T), 1) [-]."""
    u, inv = np.unique(p, return_inverse=True)
    rho = np.asarray(gas.density(u, T, model), float)[inv].reshape(p.shape)
    return np.minimum(rho0 / rho, 1.0)


def stored_fraction(problem: Problem, p, p0, T: float, p_top, rho0=None) -> np.ndarray | float:
    """Oil fraction S/V0 the store holds at pressure p on the design's quasi-static curve.

    The gas, of the mass the precharge ``p0`` (20 °C) fixes, is charged at rest to
    ``p_top`` at the wall temperature T (isothermal: the pump fills slowly), then discharged
    from there along ``problem.process``.  Above ``p_top`` the store follows the isotherm.
    An isothermal process is the isotherm throughout.

    Parameters
    ----------
    problem : Problem
        For the process and the gas model.
    p : array_like
        Absolute pressure, [Pa].
    p0 : array_like
        Precharge at 20 °C, absolute, [Pa].
    T : float
        Wall temperature, [K].
    p_top : array_like
        Where the discharge starts, absolute, [Pa].
    rho0 : array_like, optional
        The gas density at rest of ``p0`` (saves its computation), [kg/m³].

    Returns
    -------
    float or numpy.ndarray
        Oil fraction in [0, 1), broadcast over p, p0 and p_top, [-].
    """
    model = problem.settings.gas_model
    if rho0 is None:
        rho0 = gas.density(p0, T_REF, model)
    p, rho0, p_top = np.broadcast_arrays(*(np.asarray(a, float) for a in (p, rho0, p_top)))
    v = np.array(_iso_ratio(p, rho0, T, model), dtype=float)
    below = p < p_top
    if problem.process.kind != "isothermal" and np.any(below):
        v_top = _iso_ratio(p_top[below], rho0[below], T, model)
        pb, tb = p[below], p_top[below]
        if problem.process.kind == "polytropic" or model == "ideal":
            r = np.asarray(gas.expansion_ratio(pb, tb, T, problem.process, model), float)
        else:  # the real isentrope is costly per point: each distinct pair once
            pairs, inv = np.unique(np.stack((pb, tb), axis=1), axis=0, return_inverse=True)
            r = np.asarray(
                gas.expansion_ratio(pairs[:, 0], pairs[:, 1], T, problem.process, model), float
            )[inv.ravel()]
        v[below] = np.minimum(v_top * r, 1.0)
    return _out(1.0 - v)


def stored_pressure(problem: Problem, frac, p0, T: float, p_top) -> np.ndarray | float:
    """Pressure at the oil fraction ``frac`` (inverse of :func:`stored_fraction`), [Pa]."""
    model = problem.settings.gas_model
    iso = gas.ISOTHERMAL
    if problem.process.kind == "isothermal":
        return gas.pressure_at_oil_fraction(frac, p0, T, iso, model)
    frac, p0, p_top = np.broadcast_arrays(*(np.asarray(a, float) for a in (frac, p0, p_top)))
    v = 1.0 - frac
    v_top = np.asarray(gas.gas_volume_ratio(p_top, p0, T, iso, model), float)
    p = np.asarray(gas.pressure_at_oil_fraction(frac, p0, T, iso, model), float).copy()
    below = v > v_top
    if np.any(below):
        p[below] = gas.pressure_after_expansion(
            v[below] / v_top[below], p_top[below], T, problem.process, model
        )
    return _out(p)


def charge_heating(problem: Problem, p_top, T: float) -> np.ndarray | float:
    """Heating factor :math:`g\\,\\alpha_p T` of the gas at the top of the window, [-].

    Oil pumped into the store heats its gas.  The Otis & Pourmovahed energy equation
    (:func:`stowflow.physics.thermal.temperature_rate`), linearised about the wall temperature,
    gives the gas's excess temperature as a first-order lag of the refill rate r:

    .. math::
        \\frac{d}{dt}\\frac{T - T_w}{T} = -\\frac{1}{\\tau}\\frac{T - T_w}{T}
            + g\\,\\frac{r}{V}, \\qquad g = \\frac{(\\partial p/\\partial T)_v}{\\rho\\, c_v}

    (g = κ − 1 for an ideal gas).  At a given pressure a gas ΔT warmer than at rest fills
    :math:`\\Delta V = V\\alpha_p\\,\\Delta T` more, so its heat counts as oil:

    .. math:: \\Delta V = g\\,(\\alpha_p T)\\, E, \\qquad
        E = \\int r(s)\\, e^{-(t - s)/\\tau}\\, ds

    with E from :func:`stowflow.search.schedule.refill_memory` (τ·q for a steady refill at the
    rate q).  The pump unloads at the unload pressure with the gas still warm; the heat the
    gas loses after that (:func:`stowflow.search.schedule.cooling_loss`) is pressure the store
    lacks.  This function returns :math:`g\\,\\alpha_p T` (κ − 1 for an ideal gas).  Only the
    ``auto`` process carries it (a process that is set is taken as the whole gas law):
    0 otherwise.

    Parameters
    ----------
    problem : Problem
        For the settings (gas model, process).
    p_top : array_like
        Unload pressure, absolute, [Pa].
    T : float
        Wall temperature, [K].

    Returns
    -------
    float or numpy.ndarray
        :math:`g\\,\\alpha_p T`, broadcast over ``p_top``, [-].
    """
    s = problem.settings
    p_top = np.asarray(p_top, float)
    if s.process != "auto":
        return _out(np.zeros(p_top.shape))
    model = s.gas_model
    p, inv = np.unique(p_top, return_inverse=True)
    rho = np.asarray(gas.density(p, T, model), float)
    st = gas.state_from_density(rho, np.full(rho.shape, float(T)), model)
    g = np.asarray(st.dpdT_v) / (rho * np.asarray(st.cv))
    d = 1e-3  # relative temperature step for α_p T = (∂ ln V/∂ ln T)_p
    alpha_t = (rho / np.asarray(gas.density(p, T * (1 + d), model), float) - 1.0) / d
    return _out((g * alpha_t)[inv].reshape(p_top.shape))


def bank_lower(
    problem: Problem,
    acc_type: str,
    p0,
    p_levels: np.ndarray,
    rules,
    temperatures: tuple[float, ...] | None,
    p_max: np.ndarray,
) -> np.ndarray:
    """Least oil fraction of a bank for each required pressure level, at each temperature.

    At temperature ``T`` the precharge, stated at 20 °C, has become ``p0(T)`` (isochoric);
    the store must hold at least the oil that gives each required pressure after a
    discharge from the top of the window (:func:`stored_fraction`, :func:`top_pressure`)
    and at least the oil the type's precharge rule asks for (the working pressure must stay
    above the precharge by the type's margin).

    Parameters
    ----------
    problem : Problem
        The prepared cycle.
    acc_type : str
        Accumulator type.
    p0 : numpy.ndarray or PrechargeGrid
        Precharges at 20 °C, absolute, shape (P,), [Pa].
    p_levels : numpy.ndarray
        Distinct pressures the store must hold, absolute, shape (K,), [Pa].
    rules : TypeRules
        Rules of the accumulator type.
    temperatures : tuple of float or None
        Temperatures, [K]; None: the coldest and hottest operating temperature.
    p_max : numpy.ndarray
        Unload pressure of each precharge (:func:`bank_upper`), (P,) or, one row per unload
        limit, (A, P), [Pa].

    Returns
    -------
    numpy.ndarray
        (T, P, K), or (T, A, P, K), [-].
    """
    temps = temperatures or problem.temperatures
    grid = PrechargeGrid.of(problem, p0, temps)
    top = np.asarray(top_pressure(problem.settings, p_max), float)[..., None]
    lower = np.empty((len(temps), *top.shape[:-1], p_levels.size))
    for i, t_k in enumerate(temps):
        floor = acc.min_working_pressure_for_precharge(
            acc_type, grid.precharge_at(problem, t_k), rules
        )
        need = np.maximum(p_levels[None, :], np.asarray(floor)[:, None])
        lower[i] = stored_fraction(problem, need, grid.p0[:, None], t_k, top, grid.rho[:, None])
    return lower


def bank_upper(
    problem: Problem,
    acc_type: str,
    p0,
    p_allowed: float,
    p_levels: np.ndarray,
    rules,
    temperatures: tuple[float, ...] | None = None,
) -> tuple[np.ndarray, np.ndarray]:
    """Most oil fraction of a bank at its unload pressure (gas at rest), at each temperature.

    Parameters
    ----------
    problem, acc_type, p0, p_levels, rules, temperatures
        As for :func:`bank_lower`.
    p_allowed : float or numpy.ndarray
        Highest unload pressure the pump, motor, relief and shell allow, absolute, [Pa];
        shape (A,) for several at once.

    Returns
    -------
    (upper, p_max)
        ``upper`` (T, P) or (T, A, P) [-]; ``p_max`` (P,) or (A, P): unload pressure after
        the type's own limits (the pressure ratio counts at the coldest temperature, where
        the precharge is lowest), [Pa].  Combinations the type rules out have
        ``upper = -inf``.
    """
    s = problem.settings
    temps = temperatures or problem.temperatures
    grid = PrechargeGrid.of(problem, p0, temps)
    p0_cold = grid.precharge_at(problem, s.t_min)
    p_type = acc.max_pressure_for_precharge(acc_type, p0_cold, rules)
    p_max = np.minimum(np.asarray(p_allowed, float)[..., None], p_type)
    if np.ndim(p_allowed) == 0:
        p_max = p_max.reshape(p_type.shape)
    ok = (p_max >= p_levels.max() - 1e-6) & (p_max > p0_cold)
    upper = np.empty((len(temps), *p_max.shape))
    for i, t_k in enumerate(temps):
        frac = 1.0 - _iso_ratio(p_max, grid.rho, t_k, s.gas_model)
        upper[i] = np.where(ok, frac, -np.inf)
    return upper, p_max


@dataclass(frozen=True)
class Candidate:
    """One component combination that meets the cycle (levels 1 and 2 of the objective).

    Attributes
    ----------
    pump, motor : PumpOption, MotorOption
        Catalogue rows.
    option : AccumulatorOption | None
        Accumulator row (None: pump only).
    count : int
        Accumulators in the bank, [-].
    precharges : numpy.ndarray
        Precharges at 20 °C at which this count suffices, absolute, [Pa].
    p_max : numpy.ndarray
        Unload pressure for each of those precharges, absolute, [Pa].
    capex : float
        Price of bank + pump + motor, [currency].
    """

    pump: PumpOption
    motor: MotorOption
    option: AccumulatorOption | None
    count: int
    precharges: np.ndarray
    p_max: np.ndarray
    capex: float

    @property
    def installed_power(self) -> float:
        """Rated motor power, [W]."""
        return self.motor.rated_power


@dataclass(frozen=True)
class ScreenResult:
    """Outcome of the exact screen.

    Attributes
    ----------
    candidates : tuple[Candidate, ...]
        Every combination at the least installed power and the least capex (ties).
    installed_power : float
        Least installed motor power, [W] (nan if none).
    capex : float
        Least capex at that power, [currency].
    evaluated : int
        Combinations screened, [-].
    reason : str | None
        Binding limit when nothing meets the cycle.
    elapsed : float
        Wall-clock time, [s].
    frontier : tuple[Candidate, ...]
        The trade-off the lexicographic order hides: the cheapest combination at the least
        power, then at each larger motor rating that buys a cheaper supply (at most
        :data:`FRONTIER_LEVELS` steps, or up to a pump-only supply).
    """

    candidates: tuple[Candidate, ...]
    installed_power: float
    capex: float
    evaluated: int
    reason: str | None
    elapsed: float
    frontier: tuple[Candidate, ...] = ()


def pump_unload_limit(pump: PumpOption, motor: MotorOption, s: DesignSettings) -> float:
    """Highest unload pressure at which the motor covers the pump's shaft power, [Pa abs].

    Shaft power :math:`P = Q_p\\,(p - p_{amb}) / \\eta_o`; the motor covers it when
    :math:`P \\le P_m`.  The pump's own maximum pressure must also carry the relief setting.
    """
    by_motor = s.p_ambient + motor.rated_power * pump.overall_efficiency / pump.flow
    by_pump = s.max_unload_for_relief(pump.max_pressure)
    return min(by_motor, by_pump)


def _bound_key(p_allowed: float) -> tuple[float, float]:
    """(the unload pressure, the one its bank bounds are computed at): rounded down to 100 Pa
    so that unload pressures a few pascals apart share their bounds, never above the
    limit, [Pa]."""
    return p_allowed, math.floor(p_allowed / 100.0) * 100.0


def _precharge_grid(s: DesignSettings, p_hi: float) -> np.ndarray:
    """Precharges at 20 °C from 2 bar gauge to just below ``p_hi``, absolute, [Pa]."""
    lo = s.p_ambient + 2e5
    if p_hi <= lo:
        return np.empty(0)
    return np.arange(lo, p_hi, s.precharge_step)


def screen(
    problem: Problem,
    catalogue: Catalogue,
    *,
    report: Callable[[float, str], None] | None = None,
    min_power: float = 0.0,
) -> ScreenResult:
    """Exhaustive exact screen for levels 1 and 2 (least installed power, then least capex).

    Parameters
    ----------
    problem : Problem
        The prepared cycle.
    catalogue : Catalogue
        Components to choose from.
    report : callable, optional
        ``report(fraction_done, label)`` for progress.
    min_power : float
        Motor ratings below this are known to be infeasible and are skipped, [W] (the closed
        loop only ever raises the requirement, so a rating that failed before fails again).

    Returns
    -------
    ScreenResult
    """
    t0 = time.perf_counter()
    s = problem.settings
    dt = problem.dt
    demand = problem.demand
    p_need_max = float(problem.p_end.max())
    levels, inverse = np.unique(problem.p_end, return_inverse=True)
    peak = float(demand.max())
    float(demand.mean())

    motors = sorted(catalogue.motors, key=lambda m: (m.rated_power, m.price))
    pumps = sorted(catalogue.pumps, key=lambda p: (p.flow, p.price))
    options = [o for o in catalogue.accumulators if o.type in s.types]
    rules = {t: acc.rules_for(t, (catalogue.limits or {}).get(t)) for t in s.types}
    evaluated = 0

    # Deficits depend on the pump only; so does the refill that warms the gas (auto process).
    deficit_max: dict[int, np.ndarray | None] = {}
    draws: dict[int, list] = {}
    worn = 1.0 - s.flow_margin  # the design must hold with a worn pump
    deficits = {}
    for j, pump in enumerate(pumps):
        d = deficit_from_full((pump.flow * worn - demand) * dt)
        deficit_max[j] = None
        if d is not None:
            deficit_max[j] = np.zeros(levels.size)
            np.maximum.at(deficit_max[j], inverse, d)
            deficits[j] = d
    # The warm gas of the refills (auto process, gas that cools): heat lost since full.
    cools = s.process == "auto" and math.isfinite(s.time_constant)
    for j, d in deficits.items():
        loss = cooling_loss(d, refill_memory(d, dt, s.time_constant)) if cools else None
        draws[j] = level_draws(d, loss, inverse, levels.size)

    bounds_cache: dict[tuple, tuple] = {}
    volume_cache: dict[tuple, np.ndarray] = {}
    draw_cache: dict[tuple, np.ndarray] = {}
    # the widest precharge grid: every pump with the largest motor (more power, higher limit)
    big = max(motors, key=lambda m: m.rated_power, default=None)
    p_widest = max((pump_unload_limit(p, big, s) for p in pumps), default=s.p_ambient)
    full_grid = PrechargeGrid.of(problem, _precharge_grid(s, p_widest))

    def fill_bounds(acc_type: str, limits: list[float]) -> None:
        """Bank bounds of a type for several unload pressures at once (one batch of gas
        evaluations), cut to each pressure's precharge grid."""
        n_of = [int(np.count_nonzero(full_grid.p0 < p)) for p in limits]
        head = full_grid.head(max(n_of))
        r = rules[acc_type]
        up, pm = bank_upper(problem, acc_type, head, np.array(limits), levels, r)
        lo = bank_lower(problem, acc_type, head, levels, r, None, pm)
        heat = np.stack([charge_heating(problem, pm, t_k) for t_k in problem.temperatures])
        for a, (p_a, n) in enumerate(zip(limits, n_of, strict=True)):
            if n == 0:
                bounds_cache[(acc_type, p_a)] = (
                    head.p0[:0],
                    np.empty((0, levels.size)),
                    np.empty(0),
                    np.empty(0),
                    None,
                )
                continue
            bounds_cache[(acc_type, p_a)] = (
                head.p0[:n],
                lo[:, a, :n, :],
                up[:, a, :n],
                pm[a, :n],
                heat[:, a, :n],
            )

    def bank_counts(j: int, pump: PumpOption, key: tuple, option: AccumulatorOption):
        """Least count per precharge for one pump and row (inf where impossible); ``key`` is
        (type, unload pressure rounded to 100 Pa) of the bank bounds."""
        dm = deficit_max[j]
        grid, lo, up, pm, heat = bounds_cache[key]
        if grid.size == 0:
            return grid, np.empty(0), pm

        if (key, j) not in draw_cache:
            # What each (temperature, precharge, level) draws from the store: the deficit
            # plus the heat the gas has lost since the pump unloaded (charge_heating × loss).
            draw = np.zeros((heat.shape[0], heat.shape[1], levels.size))
            for k, (d_k, e_k) in enumerate(draws[j]):
                if d_k.size:
                    draw[:, :, k] = np.max(d_k + heat[:, :, None] * e_k, axis=2)
            draw_cache[(key, j)] = draw
        draw = draw_cache[(key, j)]

        def least_volume(vu: float, cap: np.ndarray) -> np.ndarray:
            """Per precharge, the most any (temperature, level) asks of one unit's volume
            (``vu`` nominal, ``cap`` (T, P) oil at the unload pressure, both m³)."""
            room = cap[:, :, None] - vu * lo  # (T, P, K), m³ per unit
            with np.errstate(divide="ignore", invalid="ignore"):
                need = np.where(room > 0, draw / room, np.inf)
            # A level with no deficit only needs room ≥ 0 (the store may sit at its top).
            need = np.where((dm <= 0) & (room >= -1e-12 * vu), 0.0, need)
            return np.max(need, axis=(0, 2))

        vu = option.nominal_volume
        if option.swept_volume:
            cap = np.minimum(vu * up, option.swept_volume)
            per_unit = least_volume(vu, cap)
        else:
            # Without a stroke limit the need scales with 1/vu: one table per pump and key.
            if (key, j) not in volume_cache:
                volume_cache[(key, j)] = least_volume(1.0, up)
            per_unit = volume_cache[(key, j)] / vu
        n_store = np.ceil(per_unit - 1e-9)
        n_store[~np.all(np.isfinite(up), axis=0)] = np.inf
        q_unit = acc.unit_flow_limit(
            option.type, option.nominal_volume, option.bore, option.max_flow, rules[option.type]
        )
        short = max(peak - pump.flow * worn, 0.0)
        n_rate = math.ceil(short / q_unit - 1e-9) if q_unit > 0 else math.inf
        n = np.maximum(np.maximum(n_store, n_rate), 1)
        return grid, n, pm

    motors_at: dict[float, list] = {}
    for m in motors:
        motors_at.setdefault(m.rated_power, []).append(m)
    option_caps = [s.max_unload_for_relief(o.max_pressure) for o in options]
    shell_caps = sorted({(o.type, cap) for o, cap in zip(options, option_caps, strict=True)})

    def level_candidates(power: float) -> list[Candidate]:
        nonlocal evaluated
        found: list[Candidate] = []
        pairs = [
            (j, pump, motor, pump_unload_limit(pump, motor, s))
            for j, pump in enumerate(pumps)
            if deficit_max[j] is not None
            for motor in motors_at[power]
        ]
        pairs = [p for p in pairs if p[3] >= p_need_max]
        # Each pair's unload pressure under each shell limit, as bank-bound keys; the bounds
        # this level needs and has not met yet are computed in one batch per type.
        keys = [
            {(t, cap): _bound_key(min(p_allowed, cap)) for t, cap in shell_caps}
            for *_, p_allowed in pairs
        ]
        missing: dict[str, set] = {}
        for pair_keys in keys:
            for (t, _cap), (p_opt, p_key) in pair_keys.items():
                if p_opt >= p_need_max and (t, p_key) not in bounds_cache:
                    missing.setdefault(t, set()).add(p_key)
        for acc_type, limits in missing.items():
            fill_bounds(acc_type, sorted(limits))
        for (j, pump, motor, _p_allowed), pair_keys in zip(pairs, keys, strict=True):
            # Pump only: loaded all the time against the relief valve, so the motor must
            # cover the pump at the relief setting.
            if s.allow_pump_only and pump.flow * worn >= peak * (1 - 1e-12):
                relief = s.relief_setting(p_need_max)
                shaft = pump.flow * (relief - s.p_ambient) / pump.overall_efficiency
                if shaft <= motor.rated_power and relief <= pump.max_pressure:
                    found.append(
                        Candidate(
                            pump,
                            motor,
                            None,
                            0,
                            np.empty(0),
                            np.array([p_need_max]),
                            pump.price + motor.price,
                        )
                    )
            for option, cap in zip(options, option_caps, strict=True):
                evaluated += 1
                p_opt, p_key = pair_keys[(option.type, cap)]
                if p_opt < p_need_max:
                    continue
                grid, n, pm = bank_counts(j, pump, (option.type, p_key), option)
                if n.size == 0:
                    continue
                n_best = float(np.min(n))
                if not math.isfinite(n_best) or n_best > s.max_count:
                    continue
                sel = n == n_best
                capex = int(n_best) * option.price + pump.price + motor.price
                found.append(Candidate(pump, motor, option, int(n_best), grid[sel], pm[sel], capex))
        return found

    feasible: list[Candidate] = []
    best_power = math.nan
    frontier: list[Candidate] = []
    motor_powers = sorted({m.rated_power for m in motors})
    for level_no, power in enumerate(motor_powers):
        if power < min_power * (1 - 1e-12):
            continue
        if report:
            report(level_no / max(len(motor_powers), 1), f"motor {power / 1e3:g} kW")
        found = level_candidates(power)
        if not found:
            continue
        cheapest = min(found, key=lambda c: c.capex)
        if not feasible:
            best_power, feasible = power, found
            frontier.append(cheapest)
        elif cheapest.capex < frontier[-1].capex * (1 - 1e-9):
            frontier.append(cheapest)  # more power buys a cheaper supply
        if len(frontier) > FRONTIER_LEVELS or cheapest.option is None:
            break
    elapsed = time.perf_counter() - t0
    if not feasible:
        reason = infeasibility_reason(problem, catalogue, deficit_max, pumps)
        return ScreenResult((), math.nan, math.nan, evaluated, reason, elapsed)
    best_capex = min(c.capex for c in feasible)
    ties = tuple(c for c in feasible if c.capex <= best_capex * (1 + 1e-12) + 1e-9)
    return ScreenResult(ties, best_power, best_capex, evaluated, None, elapsed, tuple(frontier))


def infeasibility_reason(problem: Problem, catalogue: Catalogue, deficit_max, pumps) -> str:
    """Name the limit that rules out every design, in one sentence with numbers."""
    s = problem.settings
    demand = problem.demand
    p_need_max = float(problem.p_end.max())
    bar = 1e5
    g = (p_need_max - s.p_ambient) / bar
    relief_ok = [p for p in pumps if s.max_unload_for_relief(p.max_pressure) >= p_need_max]
    if not relief_ok:
        best = (max(p.max_pressure for p in pumps) - s.p_ambient) / bar
        return (
            f"required {g:.0f} bar (line loss included) with a relief setting above it exceeds "
            f"every pump's maximum pressure in the catalogue (highest {best:.0f} bar)"
        )
    mean = float(demand.mean())
    worn = 1.0 - s.flow_margin
    if all(deficit_max[j] is None for j in range(len(pumps))):
        q = max(p.flow for p in pumps)
        margin = (
            f" less the {s.flow_margin:.0%} wear margin ({q * worn * 6e4:.1f} L/min)"
            if s.flow_margin
            else ""
        )
        return (
            f"mean demand {mean * 6e4:.1f} L/min exceeds the largest pump's delivery "
            f"{q * 6e4:.1f} L/min{margin}"
        )
    big_motor = max(catalogue.motors, key=lambda m: m.rated_power)
    if not any(
        pump_unload_limit(p, big_motor, s) >= p_need_max and deficit_max[j] is not None
        for j, p in enumerate(pumps)
    ):
        return (
            f"no motor in the catalogue (largest {big_motor.rated_power / 1e3:g} kW) drives a pump "
            f"that covers the mean demand {mean * 6e4:.1f} L/min at {g:.0f} bar"
        )
    options = [o for o in catalogue.accumulators if o.type in s.types]
    if not options:
        return (
            f"peak demand {demand.max() * 6e4:.1f} L/min needs storage, but the catalogue has no "
            f"accumulator of the allowed types {list(s.types)}"
        )
    ps_ok = [o for o in options if s.max_unload_for_relief(o.max_pressure) >= p_need_max]
    if not ps_ok:
        best = max(o.max_pressure for o in options)
        return (
            f"required {g:.0f} bar with a relief setting above it exceeds every accumulator's "
            f"maximum allowable pressure PS (highest {(best - s.p_ambient) / bar:.0f} bar)"
        )
    rules = {t: acc.rules_for(t, (catalogue.limits or {}).get(t)) for t in s.types}
    fastest = max(
        s.max_count
        * acc.unit_flow_limit(o.type, o.nominal_volume, o.bore, o.max_flow, rules[o.type])
        for o in ps_ok
    )
    qmax = max(p.flow for p in pumps) * worn
    if demand.max() - qmax > fastest:
        return (
            f"peak flow {demand.max() * 6e4:,.0f} L/min exceeds the largest pump "
            f"({qmax * 6e4:,.0f} L/min) plus the fastest bank discharge in the catalogue "
            f"({s.max_count} units, {fastest * 1e3:,.0f} L/s)"
        )
    return (
        f"no bank of at most {s.max_count} accumulators stores enough oil between the required "
        f"{g:.0f} bar and the highest unload pressure the pumps, motors, relief margin and "
        "shells allow; allow more units per bank (--max-count), larger sizes or higher-pressure "
        "components"
    )
