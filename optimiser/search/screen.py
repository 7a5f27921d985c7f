"""The exact screen: levels 1 and 2 of the search (least installed power, then least capex).

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
precharge on a grid (the store curve of :mod:`stowflow.search.store`, on the cycle
:mod:`stowflow.search.problem` prepares).  When nothing meets the cycle,
:func:`infeasibility_reason` names the binding limit.

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
from stowflow.physics import accumulator as acc
from stowflow.search.objective import category_allowed
from stowflow.search.problem import Problem
from stowflow.search.schedule import cooling_loss, deficit_from_full, level_draws, refill_memory
from stowflow.search.settings import DesignSettings
from stowflow.search.store import PrechargeGrid, bank_lower, bank_upper, charge_heating
from stowflow.units import BAR, KW, LITRE, LPM, bar_text

#: Motor ratings above the least power scanned for the power–capex frontier.
FRONTIER_LEVELS = 4
#: Lowest precharge of the screen's grid, gauge, [Pa] (2 bar).
LOWEST_PRECHARGE = 2 * BAR
#: Unload pressures are rounded down to this for their bank bounds, [Pa].
BOUND_RESOLUTION = 100.0

__all__ = [
    "BOUND_RESOLUTION",
    "FRONTIER_LEVELS",
    "LOWEST_PRECHARGE",
    "Candidate",
    "ScreenResult",
    "all_candidates",
    "infeasibility_reason",
    "pump_unload_limit",
    "screen",
]


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
    ranked : tuple[Candidate, ...]
        Every combination found that meets the cycle: at the least power (and the frontier's)
        with the ``"power"`` objective, at every motor rating the scan reached otherwise.
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
    ranked: tuple[Candidate, ...] = ()


def pump_unload_limit(pump: PumpOption, motor: MotorOption, s: DesignSettings) -> float:
    """Highest unload pressure at which the motor covers the pump's shaft power, [Pa abs].

    Shaft power :math:`P = Q_p\\,(p - p_{amb}) / \\eta_o`; the motor covers it when
    :math:`P \\le P_m`.  With ``motor_sizing = "relief"`` (the default) ``p`` is the relief
    setting of the unload pressure: a stuck unloading valve sends the full flow over the
    relief valve, and the motor must carry that (shaft power at the cracking pressure, common
    practice); with ``"working"`` it is the unload pressure itself.  The pump's own maximum
    pressure must also carry the relief setting.
    """
    p_motor = s.p_ambient + motor.rated_power * pump.overall_efficiency / pump.flow
    by_motor = s.max_unload_for_relief(p_motor) if s.motor_sizing == "relief" else p_motor
    by_pump = s.max_unload_for_relief(pump.max_pressure)
    return min(by_motor, by_pump)


def _bound_key(p_allowed: float) -> tuple[float, float]:
    """(the unload pressure, the one its bank bounds are computed at): rounded down to
    :data:`BOUND_RESOLUTION` so that unload pressures a few pascals apart share their bounds,
    never above the limit, [Pa]."""
    return p_allowed, math.floor(p_allowed / BOUND_RESOLUTION) * BOUND_RESOLUTION


def _precharge_grid(s: DesignSettings, p_hi: float) -> np.ndarray:
    """Precharges at 20 °C from :data:`LOWEST_PRECHARGE` (gauge) to just below ``p_hi``,
    absolute, [Pa]."""
    lo = s.p_ambient + LOWEST_PRECHARGE
    if p_hi <= lo:
        return np.empty(0)
    return np.arange(lo, p_hi, s.precharge_step)


def _pump_deficits(
    problem: Problem, pumps: list[PumpOption], worn: float, levels: np.ndarray, inverse
) -> tuple[dict[int, np.ndarray | None], dict[int, list]]:
    """What each pump, loaded throughout, leaves the bank to supply (independent of the bank).

    ``worn`` is the share of the pump's flow the design counts on, [-]; ``levels`` the
    distinct pressures the store must hold [Pa] and ``inverse`` each step's index in them.
    Returns (``deficit_max``, ``draws``) keyed by the pump's index in ``pumps``:
    ``deficit_max[j]`` the largest deficit below a full store at each pressure level, [m³]
    (None: the worn pump falls short of the mean demand), and ``draws[j]`` the level draws
    with the heat the refills leave in the gas (:func:`~stowflow.search.schedule.level_draws`).
    """
    s = problem.settings
    dt = problem.dt
    deficit_max: dict[int, np.ndarray | None] = {}
    deficits = {}
    for j, pump in enumerate(pumps):
        d = deficit_from_full((pump.flow * worn - problem.demand) * dt)
        deficit_max[j] = None
        if d is not None:
            deficit_max[j] = np.zeros(levels.size)
            np.maximum.at(deficit_max[j], inverse, d)
            deficits[j] = d
    # The warm gas of the refills (auto process, gas that cools): heat lost since full.
    cools = s.process == "auto" and math.isfinite(s.time_constant)
    draws: dict[int, list] = {}
    for j, d in deficits.items():
        loss = cooling_loss(d, refill_memory(d, dt, s.time_constant)) if cools else None
        draws[j] = level_draws(d, loss, inverse, levels.size)
    return deficit_max, draws


class _Screen:
    """The screen's set-up and tables for one problem and catalogue.

    The catalogue in scan order, the per-pump deficits (:func:`_pump_deficits`), the widest
    precharge grid, and the bank bounds and count tables computed so far, cached per
    accumulator type and unload pressure (rounded by :func:`_bound_key`) and per pump.
    """

    def __init__(self, problem: Problem, catalogue: Catalogue) -> None:
        s = problem.settings
        self.problem, self.s = problem, s
        self.p_need_max = float(problem.p_end.max())
        self.levels, inverse = np.unique(problem.p_end, return_inverse=True)
        self.peak = float(problem.demand.max())
        self.worn = 1.0 - s.flow_margin  # the design must hold with a worn pump
        self.motors = sorted(catalogue.motors, key=lambda m: (m.rated_power, m.price))
        self.pumps = sorted(catalogue.pumps, key=lambda p: (p.flow, p.price))
        self.options = [
            o
            for o in catalogue.accumulators
            if o.type in s.types and category_allowed(o, s.max_category, s.p_ambient)
        ]
        self.rules = {t: acc.rules_for(t, (catalogue.limits or {}).get(t)) for t in s.types}
        self.evaluated = 0
        # Deficits depend on the pump only; so does the refill that warms the gas (auto).
        self.deficit_max, self.draws = _pump_deficits(
            problem, self.pumps, self.worn, self.levels, inverse
        )
        self.bounds: dict[tuple, tuple] = {}
        self.volumes: dict[tuple, np.ndarray] = {}
        self.draw_tables: dict[tuple, np.ndarray] = {}
        self.split_bounds: dict[tuple, tuple] = {}
        # the widest precharge grid: every pump with the largest motor (more power, higher limit)
        big = max(self.motors, key=lambda m: m.rated_power, default=None)
        p_widest = max((pump_unload_limit(p, big, s) for p in self.pumps), default=s.p_ambient)
        self.full_grid = PrechargeGrid.of(problem, _precharge_grid(s, p_widest))
        self.motors_at: dict[float, list] = {}
        for m in self.motors:
            self.motors_at.setdefault(m.rated_power, []).append(m)
        self.option_caps = [s.max_unload_for_relief(o.max_pressure) for o in self.options]
        self.shell_caps = sorted(
            {(o.type, cap) for o, cap in zip(self.options, self.option_caps, strict=True)}
        )

    def fill_bounds(self, acc_type: str, limits: list[float]) -> None:
        """Bank bounds of a type for several unload pressures at once (one batch of gas
        evaluations), cut to each pressure's precharge grid."""
        problem, levels = self.problem, self.levels
        n_of = [int(np.count_nonzero(self.full_grid.p0 < p)) for p in limits]
        head = self.full_grid.head(max(n_of))
        r = self.rules[acc_type]
        # Sized from the switch's load point: the least a switched store holds when a
        # draw begins (the schedule model may still fill it to the unload pressure).
        up, pm = bank_upper(problem, acc_type, head, np.array(limits), levels, r, level="load")
        lo = bank_lower(problem, acc_type, head, levels, r, None, pm)
        heat = np.stack([charge_heating(problem, pm, t_k) for t_k in problem.temperatures])
        for a, (p_a, n) in enumerate(zip(limits, n_of, strict=True)):
            if n == 0:
                self.bounds[(acc_type, p_a)] = (
                    head.p0[:0],
                    np.empty((0, levels.size)),
                    np.empty(0),
                    np.empty(0),
                    None,
                )
                continue
            self.bounds[(acc_type, p_a)] = (
                head.p0[:n],
                lo[:, a, :n, :],
                up[:, a, :n],
                pm[a, :n],
                heat[:, a, :n],
            )

    def _draw(self, j: int, key: tuple) -> np.ndarray:
        """What each (temperature, precharge, level) draws from the store: the deficit plus
        the heat the gas has lost since the pump unloaded (charge_heating × loss), [m³]."""
        if (key, j) not in self.draw_tables:
            heat = self.bounds[key][4]
            draw = np.zeros((heat.shape[0], heat.shape[1], self.levels.size))
            for k, (d_k, e_k) in enumerate(self.draws[j]):
                if d_k.size:
                    draw[:, :, k] = np.max(d_k + heat[:, :, None] * e_k, axis=2)
            self.draw_tables[(key, j)] = draw
        return self.draw_tables[(key, j)]

    def _least_volume(self, j: int, key: tuple, vu: float, cap: np.ndarray) -> np.ndarray:
        """Per precharge, the most any (temperature, level) asks of one unit's volume
        (``vu`` nominal, ``cap`` (T, P) oil at the unload pressure, both m³)."""
        lo, draw, free = self._level_split(j, key)
        room = cap[:, :, None] - vu * lo  # (T, P, K), m³ per unit
        # Levels with a deficit need draw / room (none fits where room ≤ 0).
        need = np.full(room.shape, np.inf)
        np.divide(draw, room, out=need, where=room > 0)
        worst = np.max(need, axis=(0, 2), initial=-np.inf)
        if free is not None:
            # A level with no deficit only needs room ≥ 0 (the store may sit at its top).
            room0 = cap[:, :, None] - vu * free
            bad = ~np.all(room0 >= -1e-12 * vu, axis=(0, 2))
            worst = np.where(bad, np.inf, np.maximum(worst, 0.0))
        return worst

    def _level_split(self, j: int, key: tuple):
        """The bank's lower bounds and the draws at the levels with a deficit, and the lower
        bounds at those without (None when every level has one): (T, P, K) tables [m³]."""
        if (key, j, "split") not in self.draw_tables:
            lo, draw = self.bounds[key][1], self._draw(j, key)
            del self.draw_tables[(key, j)]  # the split copy replaces it
            short = ~(self.deficit_max[j] <= 0)
            if short.all():
                self.draw_tables[(key, j, "split")] = (lo, draw, None)
            else:
                # pumps with the same levels in deficit share the bounds' copies
                mask = (key, short.tobytes())
                if mask not in self.split_bounds:
                    self.split_bounds[mask] = (lo[:, :, short], lo[:, :, ~short])
                lo_short, lo_free = self.split_bounds[mask]
                self.draw_tables[(key, j, "split")] = (lo_short, draw[:, :, short], lo_free)
        return self.draw_tables[(key, j, "split")]

    def bank_counts(self, j: int, pump: PumpOption, key: tuple, option: AccumulatorOption):
        """Least count per precharge for one pump and row (inf where impossible); ``key`` is
        (type, unload pressure rounded to 100 Pa) of the bank bounds."""
        grid, _lo, up, pm, _heat = self.bounds[key]
        if grid.size == 0:
            return grid, np.empty(0), pm
        vu = option.nominal_volume
        if option.swept_volume:
            cap = np.minimum(vu * up, option.swept_volume)
            per_unit = self._least_volume(j, key, vu, cap)
        else:
            # Without a stroke limit the need scales with 1/vu: one table per pump and key.
            if (key, j) not in self.volumes:
                self.volumes[(key, j)] = self._least_volume(j, key, 1.0, up)
            per_unit = self.volumes[(key, j)] / vu
        n_store = np.ceil(per_unit - 1e-9)
        if self.s.min_gas_volume > 0:  # a floor the closed loop set after an empty bank
            gas_unit = vu * acc.gas_share(option.type, self.rules[option.type])
            n_store = np.maximum(n_store, math.ceil(self.s.min_gas_volume / gas_unit - 1e-9))
        n_store[~np.all(np.isfinite(up), axis=0)] = np.inf
        q_unit = acc.unit_flow_limit(
            option.type,
            option.nominal_volume,
            option.bore,
            option.max_flow,
            self.rules[option.type],
        )
        short = max(self.peak - pump.flow * self.worn, 0.0)
        n_rate = math.ceil(short / q_unit - 1e-9) if q_unit > 0 else math.inf
        n = np.maximum(np.maximum(n_store, n_rate), 1)
        return grid, n, pm

    def _pairs(self, power: float) -> tuple[list[tuple], list[dict]]:
        """The (pump index, pump, motor, unload limit) pairs of a motor rating that reach the
        requirement, with each pair's bank-bound keys per shell limit; the bounds this level
        needs and has not met yet are computed in one batch per type."""
        s, p_need_max = self.s, self.p_need_max
        pairs = [
            (j, pump, motor, pump_unload_limit(pump, motor, s))
            for j, pump in enumerate(self.pumps)
            if self.deficit_max[j] is not None
            for motor in self.motors_at[power]
        ]
        pairs = [p for p in pairs if p[3] >= p_need_max]
        # Each pair's unload pressure under each shell limit, as bank-bound keys.
        keys = [
            {(t, cap): _bound_key(min(p_allowed, cap)) for t, cap in self.shell_caps}
            for *_, p_allowed in pairs
        ]
        missing: dict[str, set] = {}
        for pair_keys in keys:
            for (t, _cap), (p_opt, p_key) in pair_keys.items():
                if p_opt >= p_need_max and (t, p_key) not in self.bounds:
                    missing.setdefault(t, set()).add(p_key)
        for acc_type, limits in missing.items():
            self.fill_bounds(acc_type, sorted(limits))
        return pairs, keys

    def _pump_only(self, pump: PumpOption, motor: MotorOption) -> Candidate | None:
        """The pump alone, loaded all the time against the relief valve, when the motor
        covers the pump at the relief setting."""
        s, p_need_max = self.s, self.p_need_max
        if not (s.allow_pump_only and pump.flow * self.worn >= self.peak * (1 - 1e-12)):
            return None
        relief = s.relief_setting(p_need_max)
        shaft = pump.flow * (relief - s.p_ambient) / pump.overall_efficiency
        if shaft <= motor.rated_power and relief <= pump.max_pressure:
            return Candidate(
                pump,
                motor,
                None,
                0,
                np.empty(0),
                np.array([p_need_max]),
                pump.price + motor.price,
            )
        return None

    def _with_bank(
        self, j: int, pump: PumpOption, motor: MotorOption, option, key: tuple
    ) -> Candidate | None:
        """The least bank of one accumulator row for a pump and motor, or None."""
        p_opt, p_key = key
        if p_opt < self.p_need_max:
            return None
        grid, n, pm = self.bank_counts(j, pump, (option.type, p_key), option)
        if n.size == 0:
            return None
        n_best = float(np.min(n))
        if not math.isfinite(n_best) or n_best > self.s.max_count:
            return None
        sel = n == n_best
        capex = int(n_best) * option.price + pump.price + motor.price
        return Candidate(pump, motor, option, int(n_best), grid[sel], pm[sel], capex)

    def level_candidates(self, power: float) -> list[Candidate]:
        """Every combination with a motor of rating ``power`` [W] that meets the cycle."""
        found: list[Candidate] = []
        pairs, keys = self._pairs(power)
        for (j, pump, motor, _p_allowed), pair_keys in zip(pairs, keys, strict=True):
            alone = self._pump_only(pump, motor)
            if alone is not None:
                found.append(alone)
            for option, cap in zip(self.options, self.option_caps, strict=True):
                self.evaluated += 1
                cand = self._with_bank(j, pump, motor, option, pair_keys[(option.type, cap)])
                if cand is not None:
                    found.append(cand)
        return found

    def scan(
        self, min_power: float, report: Callable[[float, str], None] | None
    ) -> tuple[list[Candidate], float, list[Candidate]]:
        """Motor ratings in ascending order: (the combinations at the least power that has
        any, that power [W], the power–capex frontier, every combination found).  With an
        objective other than ``"power"`` every rating is scanned (for ``"capex"`` until no
        larger motor can beat the cheapest found)."""
        exhaustive = self.s.objective != "power"
        everything: list[Candidate] = []
        least_pump = min((p.price for p in self.pumps), default=0.0)
        feasible: list[Candidate] = []
        best_power = math.nan
        frontier: list[Candidate] = []
        motor_powers = sorted({m.rated_power for m in self.motors})
        for level_no, power in enumerate(motor_powers):
            if power < min_power * (1 - 1e-12):
                continue
            if report:
                report(level_no / max(len(motor_powers), 1), f"motor {power / KW:g} kW")
            if exhaustive and self.s.objective == "capex" and everything:
                floor = min(m.price for m in self.motors if m.rated_power >= power) + least_pump
                if floor > min(c.capex for c in everything):
                    break  # no larger motor can make a cheaper supply
            found = self.level_candidates(power)
            everything += found
            if not found:
                continue
            cheapest = min(found, key=lambda c: c.capex)
            if not feasible:
                best_power, feasible = power, found
                frontier.append(cheapest)
            elif cheapest.capex < frontier[-1].capex * (1 - 1e-9):
                frontier.append(cheapest)  # more power buys a cheaper supply
            if not exhaustive and (len(frontier) > FRONTIER_LEVELS or cheapest.option is None):
                break
        return feasible, best_power, frontier, everything


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
    sc = _Screen(problem, catalogue)
    feasible, best_power, frontier, everything = sc.scan(min_power, report)
    elapsed = time.perf_counter() - t0
    if not feasible:
        reason = infeasibility_reason(problem, catalogue, sc.deficit_max, sc.pumps)
        return ScreenResult((), math.nan, math.nan, sc.evaluated, reason, elapsed)
    best_capex = min(c.capex for c in feasible)
    ties = tuple(c for c in feasible if c.capex <= best_capex * (1 + 1e-12) + 1e-9)
    ranked = everything if problem.settings.objective != "power" else [*feasible, *frontier]
    return ScreenResult(
        ties,
        best_power,
        best_capex,
        sc.evaluated,
        None,
        elapsed,
        tuple(frontier),
        tuple(ranked),
    )


def all_candidates(problem: Problem, catalogue: Catalogue) -> list[Candidate]:
    """Every combination the screen finds for the cycle, at every motor rating: for each pump,
    motor and accumulator row that meet the cycle, the least bank (and each pump-only
    supply), with the precharges at which it suffices.  What a trade-off front is drawn
    from; :func:`screen` stops at the least power instead.

    Parameters
    ----------
    problem : Problem
        The prepared cycle.
    catalogue : Catalogue
        Components to choose from.

    Returns
    -------
    list of Candidate
        In ascending motor rating.
    """
    sc = _Screen(problem, catalogue)
    found: list[Candidate] = []
    for power in sorted({m.rated_power for m in sc.motors}):
        found += sc.level_candidates(power)
    return found


def infeasibility_reason(problem: Problem, catalogue: Catalogue, deficit_max, pumps) -> str:
    """Name the limit that rules out every design, in one sentence with numbers."""
    s = problem.settings
    demand = problem.demand
    p_need_max = float(problem.p_end.max())
    g = bar_text(p_need_max, s.p_ambient, ".0f")
    relief_ok = [p for p in pumps if s.max_unload_for_relief(p.max_pressure) >= p_need_max]
    if not relief_ok:
        best = bar_text(max(p.max_pressure for p in pumps), s.p_ambient, ".0f")
        return (
            f"required {g} (line loss included) with a relief setting above it exceeds "
            f"every pump's maximum pressure in the catalogue (highest {best})"
        )
    mean = float(demand.mean())
    worn = 1.0 - s.flow_margin
    if all(deficit_max[j] is None for j in range(len(pumps))):
        q = max(p.flow for p in pumps)
        margin = (
            f" less the {s.flow_margin:.0%} wear margin ({q * worn / LPM:.1f} L/min)"
            if s.flow_margin
            else ""
        )
        return (
            f"mean demand {mean / LPM:.1f} L/min exceeds the largest pump's delivery "
            f"{q / LPM:.1f} L/min{margin}"
        )
    big_motor = max(catalogue.motors, key=lambda m: m.rated_power)
    if not any(
        pump_unload_limit(p, big_motor, s) >= p_need_max and deficit_max[j] is not None
        for j, p in enumerate(pumps)
    ):
        return (
            f"no motor in the catalogue (largest {big_motor.rated_power / KW:g} kW) drives a pump "
            f"that covers the mean demand {mean / LPM:.1f} L/min at {g}"
        )
    options = [o for o in catalogue.accumulators if o.type in s.types]
    if not options:
        return (
            f"peak demand {demand.max() / LPM:.1f} L/min needs storage, but the catalogue has no "
            f"accumulator of the allowed types {list(s.types)}"
        )
    ps_ok = [o for o in options if s.max_unload_for_relief(o.max_pressure) >= p_need_max]
    if not ps_ok:
        best = max(o.max_pressure for o in options)
        return (
            f"required {g} with a relief setting above it exceeds every accumulator's "
            f"maximum allowable pressure PS (highest {bar_text(best, s.p_ambient, '.0f')})"
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
            f"peak flow {demand.max() / LPM:,.0f} L/min exceeds the largest pump "
            f"({qmax / LPM:,.0f} L/min) plus the fastest bank discharge in the catalogue "
            f"({s.max_count} units, {fastest / LITRE:,.0f} L/s)"
        )
    return (
        f"no bank of at most {s.max_count} accumulators stores enough oil between the required "
        f"{g} and the highest unload pressure the pumps, motors, relief margin and "
        "shells allow; allow more units per bank (--max-count), larger sizes or higher-pressure "
        "components"
    )
