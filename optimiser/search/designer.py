"""``design()``: the lexicographic search from a cycle and a catalogue to a :class:`Design`.

1. :func:`stowflow.search.screen.screen` settles level 1 (least installed motor power) and level 2
   (least capex) exactly by enumeration on the precharge grid.
2. Among the combinations tied at both levels, each (component set, precharge) is scheduled by
   the greedy last-moment rule; the best few go to the schedule MILP
   (:func:`stowflow.search.milp.solve_schedule`) for level 3, the energy per cycle.
3. The chosen schedule is checked again at full resolution by an independent routine
   (:func:`stowflow.search.schedule.check_schedule`); a schedule that fails it is never returned.
"""

from __future__ import annotations

import math
import time
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import pandas as pd
from stowflow.catalogue import Catalogue
from stowflow.cycle.duty import DutyCycle
from stowflow.physics import accumulator as acc
from stowflow.physics import gas
from stowflow.physics.valves import RELIEF_OVERRIDE
from stowflow.search import objective
from stowflow.search.baseline import pump_only_alternatives
from stowflow.search.milp import VALVE_MODES, ScheduleProblem, hidden_load_events, solve_schedule
from stowflow.search.problem import Problem, make_problem
from stowflow.search.schedule import (
    check_schedule,
    deficit_from_full,
    greedy_schedule,
    lowest_trajectory,
    run_store,
    switch_counts,
    window_steps,
)
from stowflow.search.screen import Candidate, ScreenResult, screen
from stowflow.search.settings import DesignSettings
from stowflow.search.solution import Alternative, Bank, Design, SearchStats
from stowflow.search.store import (
    PrechargeGrid,
    bank_lower,
    bank_upper,
    stored_pressure,
    top_pressure,
)
from stowflow.units import HOUR, kelvin_to_celsius

__all__ = ["Family", "design", "family_problem", "family_problems", "ideal_energies"]

#: Most tied families that get the schedule MILP (the rest are ranked by the greedy rule).
MILP_FAMILIES = 1
#: Most precharges per tied component set that are ranked by the greedy rule.
PRECHARGES_PER_SET = 24
#: Largest schedule model (blocks) solved a second time with the strict valves, [-], and
#: the time given to that solve, [s]: beyond them the ideal pressure switch's plan stands
#: and the verification judges the real switch.
STRICT_MAX_BLOCKS = 200
STRICT_TIME_LIMIT = 5.0
#: Chords of the gas curve in the schedule model's energy law.
CHORDS = 4


@dataclass(frozen=True)
class Family:
    """A component set with one precharge: everything but the schedule is fixed.

    Attributes
    ----------
    candidate : Candidate
        Pump, motor, accumulator row and count.
    precharge : float
        Precharge at 20 °C, absolute, [Pa].
    p_max : float
        Unload pressure, absolute, [Pa].
    sp : ScheduleProblem
        The schedule model's data for it.
    volume : float
        Bank gas volume at precharge (gas-over-oil: less its residual oil), [m³].
    robust : bool
        True when the schedule is planned against the bounds of both temperature ends; False
        when it is planned at the coldest.
    p_top : float
        Where a discharge starts on the quasi-static curve, absolute, [Pa]
        (:func:`stowflow.search.store.top_pressure`).
    rules : TypeRules or None
        The accumulator type's rules with the catalogue's overrides (None: the defaults).
    """

    candidate: Candidate
    precharge: float
    p_max: float
    sp: ScheduleProblem
    volume: float
    robust: bool = True
    p_top: float = math.nan
    rules: acc.TypeRules | None = None


def _dwell_steps(seconds: float, dt: float) -> int:
    return max(1, math.ceil(seconds / dt - 1e-9)) if seconds > 0 else 1


def family_problem(
    problem: Problem, cand: Candidate, p0: float, p_max: float, catalogue: Catalogue
) -> Family:
    """Build the schedule data for one component set and precharge.

    Parameters
    ----------
    problem : Problem
        The prepared cycle.
    cand : Candidate
        Component set with a bank.
    p0 : float
        Precharge at 20 °C, absolute, [Pa].
    p_max : float
        Unload pressure, absolute, [Pa].
    catalogue : Catalogue
        For the accumulator type rules.

    Returns
    -------
    Family
    """
    return family_problems(problem, cand, [p0], [p_max], catalogue)[0]


def family_problems(problem: Problem, cand: Candidate, p0s, p_maxs, catalogue) -> list[Family]:
    """:func:`family_problem` for several precharges of one component set (one batch of gas
    evaluations); ``p0s`` and ``p_maxs`` pair up, [Pa]."""
    s = problem.settings
    opt = cand.option
    rules = acc.rules_for(opt.type, (catalogue.limits or {}).get(opt.type))
    levels, inverse = np.unique(problem.p_end, return_inverse=True)
    t_mid = 0.5 * (s.t_min + s.t_max)
    temps = (s.t_min, s.t_max, t_mid)
    p0s, p_maxs = np.asarray(p0s, float), np.asarray(p_maxs, float)
    grid = PrechargeGrid.of(problem, p0s, temps)
    up, pm = bank_upper(problem, opt.type, grid, p_maxs, levels, rules, temps)
    diag = np.arange(p0s.size)
    up, pm = up[:, diag, diag], pm[diag, diag]  # each precharge with its own unload pressure
    lo = bank_lower(problem, opt.type, grid, levels, rules, temps, pm)
    p_top = np.asarray(top_pressure(s, pm), float)
    nominal = cand.count * opt.nominal_volume  # the bounds' basis; the gas fills a share of it
    volume = cand.count * acc.nominal_gas_volume(opt.type, opt.nominal_volume, rules)
    swept = cand.count * opt.swept_volume if opt.swept_volume else np.inf
    # The schedule is planned with the worn pump (the screen sized the bank for it): it then
    # holds with a worn pump, and a new pump's surplus goes over the relief valve.
    q_plan = cand.pump.flow * (1.0 - s.flow_margin)
    deficit = deficit_from_full((q_plan - problem.demand) * problem.dt)
    q_bank = cand.count * acc.unit_flow_limit(
        opt.type, opt.nominal_volume, opt.bore, opt.max_flow, rules
    )
    pump, motor = cand.pump, cand.motor
    eta = pump.overall_efficiency * motor.efficiency
    shape: list[tuple] = []
    for i in diag:
        # One open-loop schedule for the whole temperature range when the bank allows it
        # (the store then keeps the coldest lower bound and the hottest upper bound);
        # otherwise it is planned at the coldest temperature, where the gas holds the least
        # pressure for its oil (the screen has proven that end feasible on its own): at the
        # hot end the same oil stands at a higher pressure and the timed schedule's cut-out
        # ends the loading early (stowflow.simulation.controllers.ScheduleController).
        lower = nominal * np.max(lo[:2, i, :], axis=0)[inverse]
        upper = min(nominal * float(np.min(up[:2, i])), swept)
        robust = deficit is not None and bool(np.all(upper - lower >= deficit - 1e-12 * volume))
        if not robust:
            lower = nominal * lo[0, i, :][inverse]
            upper = min(nominal * float(up[0, i]), swept)
        s_lo = float(max(lower.min(), 0.0))
        shape.append((lower, upper, robust, np.linspace(s_lo, upper, CHORDS + 1)))
    knots = np.array([k for *_, k in shape])
    p_knots = (
        stored_pressure(
            problem, np.clip(knots / volume, 0.0, 0.999), p0s[:, None], t_mid, p_top[:, None]
        )
        - s.p_ambient
    )
    out = []
    for i, (lower, upper, robust, kn) in enumerate(shape):
        cuts = []
        for j in range(CHORDS):
            ds = kn[j + 1] - kn[j]
            slope = (p_knots[i, j + 1] - p_knots[i, j]) / ds if ds > 0 else 0.0
            cuts.append((float(p_knots[i, j] - slope * kn[j]), float(slope)))
        sp = ScheduleProblem(
            dt=problem.dt,
            demand=problem.demand,
            lower=lower,
            upper=upper,
            qp=q_plan,
            discharge_limit=q_bank,
            pressure_cuts=tuple(cuts),
            relief_gauge=s.relief_setting(p_maxs[i]) - s.p_ambient,
            efficiency=eta,
            unloaded_power=pump.flow * s.standby_pressure / eta,
            min_up=_dwell_steps(s.min_loaded_dwell, problem.dt),
            min_down=_dwell_steps(s.min_unloaded_dwell, problem.dt),
            max_events_per_hour=s.max_load_events_per_hour,
        )
        fam = Family(cand, float(p0s[i]), float(pm[i]), sp, volume, robust, float(p_top[i]), rules)
        out.append(fam)
    return out


def _energy(
    problem: Problem,
    fam: Family,
    u: np.ndarray,
    oil: np.ndarray,
    returned: np.ndarray,
    relief: np.ndarray | float = 0.0,
) -> float:
    """Quasi-static electrical energy per cycle on the gas curve itself, [J].

    The pump's hydraulic work over a periodic cycle equals the work the machine draws at the
    accumulator pressure (the gas returns what it stores) plus the oil it pushes over the
    relief valve at the relief setting; the unloaded share of the time pays the standby
    circulation (``returned``: pump flow sent back to tank by the unloading valve, [m³/s]).
    """
    s = problem.settings
    t_mid = 0.5 * (s.t_min + s.t_max)
    mid = 0.5 * (np.roll(oil, 1) + oil)
    frac = np.clip(mid / fam.volume, 0.0, 0.999)
    p = stored_pressure(problem, frac, fam.precharge, t_mid, fam.p_top)
    sp = fam.sp
    hyd = problem.demand * (p - s.p_ambient) + np.asarray(relief, float) * sp.relief_gauge
    idle = (1 - np.asarray(u, float) + np.asarray(returned, float) / sp.qp) * sp.unloaded_power
    return float((hyd.sum() / sp.efficiency + idle.sum()) * problem.dt)


def _block_size(problem: Problem, sp: ScheduleProblem) -> int:
    s = problem.settings
    if problem.n <= s.max_model_steps:
        return 1
    b = math.ceil(problem.n / s.max_model_steps)
    return max(b, sp.min_up, sp.min_down)


def _pressures(problem: Problem, fam: Family, oil: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    s = problem.settings
    frac = np.clip(oil / fam.volume, 0.0, 0.999)
    out = []
    for t_k in (s.t_min, s.t_max):
        p = stored_pressure(problem, frac, fam.precharge, t_k, fam.p_top)
        p0_t = gas.precharge_at(fam.precharge, t_k, s.gas_model)
        out.append(np.maximum(p, p0_t))
    return out[0], out[1]


@dataclass(frozen=True)
class _Search:
    """What every outcome of one search reports: the prepared cycle, the screen, the physical
    lower bound on installed power [W], the pump-only baselines, the notes so far (a list
    the later stages append to) and the start time [s]."""

    problem: Problem
    screen: ScreenResult
    lb_power: float
    baselines: tuple
    notes: list[str]
    t_start: float


def _power_lower_bound(problem: Problem, catalogue: Catalogue) -> float:
    """Physical lower bound on installed power, [W]: a motor's rating is its shaft output, so
    no supply installs less than the mean hydraulic power over the best pump efficiency."""
    hyd = problem.demand * (problem.p_step - problem.settings.p_ambient)
    best_eta = max(p.overall_efficiency for p in catalogue.pumps)
    return float(hyd.mean()) / best_eta


def _infeasible(search: _Search, reason: str) -> Design:
    """The design that says why there is none."""
    sr = search.screen
    stats = SearchStats(
        candidates=sr.evaluated,
        screen_time=sr.elapsed,
        total_time=time.perf_counter() - search.t_start,
    )
    return Design(
        "infeasible",
        reason,
        None,
        None,
        None,
        math.nan,
        math.nan,
        math.nan,
        _process_label(search.problem),
        pd.DataFrame(),
        math.nan,
        math.nan,
        math.nan,
        {},
        search.lb_power,
        search.baselines,
        stats,
        tuple(search.notes),
    )


def _rank_ties(
    problem: Problem, candidates, catalogue: Catalogue, per_set: int = PRECHARGES_PER_SET
) -> list[tuple]:
    """Level 3 among the ties, first pass: each (component set, precharge) ranked by its
    energy under the ideal controller, least first.

    Returns (energy [J], family or None for a pump-only set, candidate, load state or None)
    per entry.
    """
    demand, dt = problem.demand, problem.dt
    ranked: list[tuple[float, Family | None, Candidate, np.ndarray]] = []
    for cand in candidates:
        if cand.option is None:
            ranked.append((_pump_only_energy(problem, cand), None, cand, np.ones(problem.n, int)))
            continue
        idx = np.arange(cand.precharges.size)
        if idx.size > per_set:
            idx = np.unique(np.linspace(0, idx.size - 1, per_set).round().astype(int))
        fams = family_problems(problem, cand, cand.precharges[idx], cand.p_max[idx], catalogue)
        for fam in fams:
            # Rank by the ideal controller: loaded whenever the store must rise, unloaded
            # part-way as soon as it may (the lowest trajectory); the MILP adds the limits.
            ideal = lowest_trajectory(
                np.ones(problem.n), demand, fam.sp.lower, fam.sp.upper, fam.sp.qp, dt
            )
            if ideal is None:
                continue
            e_rank = _energy(problem, fam, np.ones(problem.n), ideal.oil, ideal.spill)
            ranked.append((e_rank, fam, cand, None))
    ranked.sort(key=lambda r: r[0])
    return ranked


def ideal_energies(
    problem: Problem, candidates, catalogue: Catalogue, per_set: int = PRECHARGES_PER_SET
) -> list[tuple]:
    """Each candidate's least energy per cycle under an ideal pressure switch, over up to
    ``per_set`` of its precharges (evenly spread): the designer's own ranking of ties.

    Returns
    -------
    list of tuple
        Per candidate that has a trajectory: (candidate, energy [J], precharge [Pa]
        absolute, or nan for a pump-only supply).
    """
    best: dict[int, tuple] = {}
    for energy, fam, cand, _u in _rank_ties(problem, candidates, catalogue, per_set):
        if id(cand) not in best:  # ranked least first
            best[id(cand)] = (cand, energy, math.nan if fam is None else fam.precharge)
    return [best[id(c)] for c in candidates if id(c) in best]


def _solve_ranked(problem: Problem, ranked: list[tuple], catalogue, notes, report):
    """Level 3 for the best-ranked families: the schedule model, checked at full resolution.

    Returns (the least-energy record or None, schedule models solved, build time [s], solve
    time [s]); a record is the search's tuple (energy, family, candidate, u, oil, returned,
    relief, gap, bound, status, block).
    """
    build_time = solve_time = 0.0
    solved = 0
    best = None
    for k, (e_rank, fam, cand, u0) in enumerate(ranked[: max(MILP_FAMILIES, 1)]):
        report(0.5 + 0.4 * k / MILP_FAMILIES, "solving the schedule model")
        if fam is None:
            cand_best = (e_rank, None, cand, u0, None, None, None, 0.0, e_rank, "optimal", 1)
        else:
            cand_best, n_solves, t_build, t_solve = _schedule_family(
                problem, fam, cand, catalogue, notes
            )
            solved += n_solves
            build_time += t_build
            solve_time += t_solve
            if cand_best is None:
                continue
        if best is None or cand_best[0] < best[0]:
            best = cand_best
    return best, solved, build_time, solve_time


def _feasible(
    search: _Search,
    best: tuple,
    n_ranked: int,
    solved: int,
    times: tuple[float, float],
    report,
    runners: tuple[Alternative, ...] = (),
    estimate: float = math.nan,
) -> Design:
    """The design of the best record; ``times`` are the schedule models' build and solve
    times, [s]; ``runners`` the next designs in the objective's order and ``estimate`` the
    chosen set's energy estimated as theirs, [J]."""
    problem, sr, notes = search.problem, search.screen, search.notes
    s = problem.settings
    energy, fam, cand, u, oil, returned, relief_flow, gap, bound, status, block = best
    if n_ranked > MILP_FAMILIES:
        notes.append(
            f"{n_ranked} designs tie on {_TIE_WORDS[s.objective]}; the one with the least "
            "energy under an ideal pressure switch was optimised by the schedule model (level 3 "
            "is optimal for that component set and precharge)"
        )
    report(0.95, "writing the schedule")
    schedule, bank, p_min, p_max, relief = _assemble(
        problem, fam, cand, u, oil, returned, relief_flow
    )
    if block > 1:
        notes.append(
            f"schedule model aggregated {block} steps per block (certified feasible "
            "at full resolution)"
        )
    stats = SearchStats(
        candidates=sr.evaluated,
        screen_time=sr.elapsed,
        build_time=times[0],
        solve_time=times[1],
        total_time=time.perf_counter() - search.t_start,
        families_solved=solved,
        block=block,
        notes=(),
        ties=max(n_ranked, 1),
    )
    levels = {
        "installed_power [W]": cand.motor.rated_power,
        "capex": cand.capex,
        "energy_per_cycle [J]": energy,
        "energy_estimate [J]": estimate,
    }
    alternatives = tuple(
        Alternative(c.pump, c.motor, c.option, c.count, c.capex) for c in sr.frontier
    )
    if fam is not None and not fam.robust:
        notes.append(
            "the bank's oil windows at the two temperature ends overlap too little for one "
            f"schedule planned against both: it is planned at {kelvin_to_celsius(s.t_min):.0f} "
            f"°C; at {kelvin_to_celsius(s.t_max):.0f} °C the warmer gas holds more pressure "
            "for the same oil (the verification runs the schedule there too)"
        )
    return Design(
        status=status if status in ("optimal", "feasible") else "feasible",
        reason=None,
        bank=bank,
        pump=cand.pump,
        motor=cand.motor,
        p_min=p_min,
        p_max=p_max,
        relief=relief,
        process=_process_label(problem),
        schedule=schedule,
        energy_per_cycle=energy,
        mip_gap=0.0 if fam is None else (gap if math.isfinite(gap) else math.nan),
        best_bound=bound,
        levels=levels,
        lower_bound_power=search.lb_power,
        baselines=search.baselines,
        stats=stats,
        notes=tuple(notes),
        alternatives=alternatives,
        robust_schedule=fam is None or fam.robust,
        runners_up=runners,
        schedule_flow=cand.pump.flow if fam is None else fam.sp.qp,
    )


def design(
    cycle: DutyCycle,
    catalogue: Catalogue,
    settings: DesignSettings | None = None,
    *,
    extra_pressure: np.ndarray | float = 0.0,
    progress: Callable[[float, str], None] | None = None,
    min_power: float = 0.0,
    **overrides,
) -> Design:
    """Find the least-installed-power supply for a cycle.

    Parameters
    ----------
    cycle : DutyCycle
        The duty cycle (with a required pressure).
    catalogue : Catalogue
        Components to choose from.
    settings : DesignSettings, optional
        Settings; keyword ``overrides`` replace single fields.
    extra_pressure : float or numpy.ndarray
        Extra pressure on every step's requirement (the verification's tightening), [Pa].
    progress : callable, optional
        ``progress(fraction, label)``.
    min_power : float
        Motor ratings known to be infeasible lie below this, [W] (see :func:`screen`).

    Returns
    -------
    Design
        Status ``optimal``/``feasible`` with components and schedule, or ``infeasible`` with
        the binding limit.
    """
    t_start = time.perf_counter()
    s = settings or DesignSettings()
    if overrides:
        s = s.with_(**overrides)
    report = progress or (lambda frac, label: None)
    report(0.0, "screening the catalogue")
    problem = make_problem(cycle, s, extra_pressure)
    lb_power = _power_lower_bound(problem, catalogue)
    baselines = pump_only_alternatives(problem.demand, cycle.pressure, problem.dt, catalogue, s)
    sr = screen(problem, catalogue, report=lambda f, lab: report(0.4 * f, lab), min_power=min_power)
    notes = [f"gas process: {problem.process_note}"]
    search = _Search(problem, sr, lb_power, baselines, notes, t_start)
    if not sr.candidates:
        reason = sr.reason
        if s.max_category is not None:
            reason += f" (accumulators capped at pressure-equipment category {s.max_category})"
        return _infeasible(search, reason)
    # Level 3 among the ties: rank by the ideal controller, then the MILP for the best few.
    report(0.45, "ranking tied designs by energy")
    ties, runners = _objective_order(problem, sr, catalogue)
    ranked = _rank_ties(problem, ties, catalogue)
    best, solved, t_build, t_solve = _solve_ranked(problem, ranked, catalogue, notes, report)
    if best is None:
        return _infeasible(search, "no schedule passed the full-resolution check")
    estimate = _estimate(problem, best[2], catalogue)  # priced as the runners-up are
    times = (t_build, t_solve)
    return _feasible(search, best, len(ranked), solved, times, report, runners, estimate)


#: What designs tied on, by objective (the designer's note).
_TIE_WORDS = {
    "power": "installed power and capex",
    "capex": "capex and installed power",
    "tco": "total cost of ownership and installed power",
    "volume": "gas volume, installed power and capex",
}
#: Precharges per component set when only an estimate of its energy is needed.
ESTIMATE_PRECHARGES = 3


def _estimate(problem: Problem, cand: Candidate, catalogue: Catalogue) -> float:
    """Electrical energy per cycle of a component set under an ideal pressure switch, with the
    part-load loss models of its pump and motor, [J] (inf when no precharge works).

    The store follows the lowest trajectory (loaded whenever it must rise, unloaded part-way
    as soon as it may) at the middle temperature; a loaded step pays the shaft power at the
    store's pressure, an unloaded one the circulation at the standby pressure.  A pump-only
    set runs loaded against its relief setting all the time.  Few precharges are tried
    (:data:`ESTIMATE_PRECHARGES`): it ranks candidates, the schedule model prices the chosen.
    """
    s = problem.settings
    pump, motor, dt = cand.pump, cand.motor, problem.dt

    def electrical(p_gauge):
        return motor.losses.input_power(pump.losses.shaft_power(1.0, pump.speed, p_gauge))

    if cand.option is None:
        relief = s.relief_setting(float(np.max(cand.p_max))) - s.p_ambient
        return float(electrical(relief)) * problem.n * dt
    idx = np.arange(cand.precharges.size)
    if idx.size > ESTIMATE_PRECHARGES:
        idx = np.unique(np.linspace(0, idx.size - 1, ESTIMATE_PRECHARGES).round().astype(int))
    fams = family_problems(problem, cand, cand.precharges[idx], cand.p_max[idx], catalogue)
    standby = float(electrical(s.standby_pressure))
    t_mid = 0.5 * (s.t_min + s.t_max)
    best = math.inf
    for fam in fams:
        run = lowest_trajectory(
            np.ones(problem.n), problem.demand, fam.sp.lower, fam.sp.upper, fam.sp.qp, dt
        )
        if run is None:
            continue
        loaded = np.clip(1.0 - run.spill / fam.sp.qp, 0.0, 1.0)
        mid = 0.5 * (np.roll(run.oil, 1) + run.oil)
        frac = np.clip(mid / fam.volume, 0.0, 0.999)
        p = stored_pressure(problem, frac, fam.precharge, t_mid, fam.p_top) - s.p_ambient
        e = float(np.sum(loaded * electrical(p) + (1.0 - loaded) * standby) * dt)
        best = min(best, e)
    return best


def _objective_order(problem: Problem, sr: ScreenResult, catalogue: Catalogue):
    """The tied candidates at the top of the settings' objective and the runners-up (as
    :class:`Alternative` with their energy under an ideal pressure switch)."""
    s = problem.settings
    rules = {t: acc.rules_for(t, (catalogue.limits or {}).get(t)) for t in s.types}

    def energy(cand) -> float:
        return _estimate(problem, cand, catalogue)

    top = sr.candidates if s.objective == "power" else None
    ties, runners = objective.choose(sr.ranked, s, energy, rules, ties=top)
    return ties, tuple(
        Alternative(
            c.pump,
            c.motor,
            c.option,
            c.count,
            c.capex,
            energy=e,
            gas_volume=objective.gas_volume(c, rules),
        )
        for c, e in runners
    )


def _process_label(problem: Problem) -> str:
    p = problem.process
    if p.kind == "polytropic":
        return f"polytropic:{p.n:.3f}"
    return p.kind


def _accept(problem, fam, cand, u, solver, notes, flows=None):
    """Check a schedule at full resolution; return the search's record of it, or None.

    ``solver`` is (gap, bound, status, block).  ``flows`` is the schedule model's own
    (oil [m³], returned [m³/s], relief [m³/s]) at full resolution; without it, or when it
    leaves the store's bounds, the store follows the schedule and the relief valve takes what
    a full store cannot (the unloading valve only at the end of a loaded stretch).
    """
    chk = _check(problem, fam, u)
    sp = fam.sp
    problems = list(chk.problems)
    if problems:
        notes.append("a schedule failed the full-resolution check (" + "; ".join(problems) + ")")
        return None
    tol = 1e-7 * max(sp.upper, 1e-9)
    if flows is not None:
        oil, returned, relief = (np.asarray(f, float) for f in flows)
        if oil.size != problem.n or np.any(oil < sp.lower - tol) or np.any(oil > sp.upper + tol):
            flows = None
    if flows is None:
        run = run_store(u, problem.demand, sp.qp, problem.dt, sp.upper)
        if run is None or np.any(run.oil < sp.lower - tol):
            notes.append("a schedule failed the full-resolution check (no periodic store)")
            return None
        oil = run.oil
        last = (np.asarray(u) == 1) & (np.roll(u, -1) == 0)
        returned = np.where(last, run.spill, 0.0)
        relief = np.where(last, 0.0, run.spill)
    e = _energy(problem, fam, u, oil, returned, relief)
    return (e, fam, cand, u, oil, returned, relief, *solver)


def _schedule_family(problem: Problem, fam: Family, cand: Candidate, catalogue, notes):
    """The least-energy schedule of one family, checked at full resolution.

    Returns (record or None, schedule-model solves, build time [s], solve time [s]); the
    record is the search's tuple (energy, family, candidate, u, oil, returned, relief, gap,
    bound, status, block).
    """
    s = problem.settings
    demand, dt = problem.demand, problem.dt
    sp = fam.sp
    u0 = greedy_schedule(
        demand,
        sp.lower,
        sp.upper,
        sp.qp,
        dt,
        min_up=sp.min_up,
        min_down=sp.min_down,
        max_events_per_hour=sp.max_events_per_hour,
        discharge_limit=sp.discharge_limit,
    )
    if _no_load_event_allowed(problem, sp):
        rec = _always_loaded(problem, fam, cand, catalogue, notes)
        if rec is not None:
            return rec, 0, 0.0, 0.0
    block = _block_size(problem, sp)
    rec, solves, t_build, t_solve = None, 0, 0.0, 0.0
    for valves in _valve_modes(problem, sp, block):
        sol = solve_schedule(
            sp,
            warm_u=u0 if block == 1 else None,
            block=block,
            mip_gap=s.mip_gap,
            time_limit=s.time_limit if valves == "switch" else STRICT_TIME_LIMIT,
            valves=valves,
        )
        solves += 1
        t_build += sol.build_time
        t_solve += sol.solve_time
        if sol.status == "failed":
            continue
        solver = (sol.gap, sol.bound, sol.status, sol.block)
        found = _accept(problem, fam, cand, sol.u, solver, notes, (sol.oil, sol.spill, sol.relief))
        if found is None:
            continue
        rec = found
        if valves == "strict":
            notes.append(
                "the load events hidden in part-loaded steps would break the limit: the "
                "schedule unloads only at the end of a loaded stretch and the relief valve "
                "takes what a full store cannot"
            )
        if not _hidden_excess(problem, sp, sol.u, sol.spill):
            break
    if rec is None:  # the greedy schedule is feasible by construction
        rec = _accept(problem, fam, cand, u0, (math.nan, math.nan, "feasible", 1), notes)
    elif excess := _hidden_excess(problem, sp, rec[3], rec[5]):
        notes.append(
            f"the schedule model's plan is the ideal pressure switch's: its part-loaded steps "
            f"would mean {excess:.0f} load events per hour, above the limit; the timed schedule "
            "keeps its load command whole and lets the cut-out end the loading (see the "
            "verification)"
        )
    return rec, solves, t_build, t_solve


def _always_loaded(problem: Problem, fam: Family, cand: Candidate, catalogue, notes):
    """The one schedule left when the load-event limit allows none in a cycle: loaded
    throughout, a full store spilling over the relief valve (the unloading valve would make a
    load event).  The relief valve then passes the full pump flow, so its override must stay
    within the pump's and the shell's ratings: the unload pressure comes down if needed.
    Returns the search's record, or None."""
    held = _relief_flow_family(problem, cand, fam, catalogue)
    if held is None:
        return None
    u1 = np.ones(problem.n, dtype=int)
    run = run_store(u1, problem.demand, held.sp.qp, problem.dt, held.sp.upper)
    if run is None:
        return None
    flows = (run.oil, np.zeros(problem.n), run.spill)
    rec = _accept(problem, held, cand, u1, (0.0, math.nan, "optimal", 1), notes, flows)
    if rec is not None:
        notes.append(
            "the load-event limit allows no load event in a cycle this short: the pump stays "
            "loaded and the relief valve takes what the full store cannot"
        )
    return rec


def _relief_flow_family(problem: Problem, cand: Candidate, fam: Family, catalogue) -> Family | None:
    """The family with its unload pressure lowered so that the relief valve passing the full
    pump flow (:data:`stowflow.physics.valves.RELIEF_OVERRIDE` above cracking) stays within the
    pump's and the accumulator's maximum pressure; None when that leaves no room above the
    requirement."""
    s = problem.settings
    limit = min(cand.pump.max_pressure, cand.option.max_pressure)
    pa = s.p_ambient
    p_cap = s.max_unload_for_relief(pa + (limit - pa) / (1.0 + RELIEF_OVERRIDE))
    if p_cap >= fam.p_max:
        return fam
    if p_cap < float(problem.p_end.max()):
        return None
    return family_problem(problem, cand, fam.precharge, p_cap, catalogue)


def _no_load_event_allowed(problem: Problem, sp: ScheduleProblem) -> bool:
    """Whether the load-event limit leaves no load event for a cycle (whole cycles in an
    hour already exceed it), [-]."""
    if sp.max_events_per_hour is None:
        return False
    full, _ = window_steps(problem.n * problem.dt, problem.dt)
    return full > sp.max_events_per_hour * (1 + 1e-9)


def _hidden_excess(problem: Problem, sp: ScheduleProblem, u, returned) -> float:
    """Load events per hour [1/h] of a schedule counting those hidden in part-loaded steps,
    when they break the limit; 0 otherwise."""
    if sp.max_events_per_hour is None:
        return 0.0
    hidden = hidden_load_events(u, returned, sp.qp)
    per_hour = (switch_counts(u)[0] + hidden) * HOUR / (problem.n * problem.dt)
    return per_hour if hidden and per_hour > sp.max_events_per_hour * (1 + 1e-9) else 0.0


def _valve_modes(problem: Problem, sp: ScheduleProblem, block: int) -> tuple[str, ...]:
    """The valve models to try: the strict one too when a limit on load events applies and
    the model is small enough to solve it quickly."""
    if sp.max_events_per_hour is None or math.ceil(problem.n / block) > STRICT_MAX_BLOCKS:
        return ("switch",)
    return VALVE_MODES


def _check(problem: Problem, fam: Family, u: np.ndarray):
    sp = fam.sp
    return check_schedule(
        u,
        problem.demand,
        sp.lower,
        sp.upper,
        sp.qp,
        problem.dt,
        min_up=sp.min_up,
        min_down=sp.min_down,
        max_events_per_hour=sp.max_events_per_hour,
        discharge_limit=sp.discharge_limit,
        tol=1e-9 * max(sp.upper, 1e-6),
    )


def _pump_only_energy(problem: Problem, cand: Candidate) -> float:
    s = problem.settings
    relief = s.relief_setting(float(problem.p_end.max()))
    shaft = cand.pump.flow * (relief - s.p_ambient) / cand.pump.overall_efficiency
    return shaft / cand.motor.efficiency * problem.n * problem.dt


def _assemble(problem: Problem, fam: Family | None, cand: Candidate, u, oil, returned, relief_flow):
    s = problem.settings
    n, dt = problem.n, problem.dt
    time_s = np.arange(n) * dt
    qp = cand.pump.flow if fam is None else fam.sp.qp
    if fam is None:
        p_sys = float(problem.p_end.max())
        relief = s.relief_setting(p_sys)
        oil = np.zeros(n)
        p_cold = p_hot = np.full(n, relief)
        bank = None
        p_min, p_max = p_sys, relief
        delivered = np.full(n, qp)
        relief_flow = qp - problem.demand
    else:
        p_cold, p_hot = _pressures(problem, fam, oil)
        bank = Bank(cand.option, cand.count, fam.precharge, fam.rules)
        p_min = float(p_cold.min())
        # The plan's highest pressure, but never above the unload pressure the search checked
        # against the pump, the motor, the shell and the relief margin (a plan made at the
        # middle temperature rises above it at the hot end, where the switch unloads at it).
        p_max = float(max(min(p_hot.max(), fam.p_max), problem.p_end.max()))
        relief = s.relief_setting(p_max)
        # Flow returned to tank within a step is flow the pump never put into the line; the
        # relief valve spills from the line what a full store cannot take.
        delivered = qp * np.asarray(u, float) - returned
    schedule = pd.DataFrame(
        {
            "demand [m³/s]": problem.demand,
            "required_pressure [Pa]": problem.p_step,
            "pump_loaded [-]": np.asarray(u, int),
            "pump_flow [m³/s]": delivered,
            "spill [m³/s]": relief_flow,
            "accumulator_oil [m³]": oil,
            "pressure_cold [Pa]": p_cold,
            "pressure_hot [Pa]": p_hot,
        },
        index=pd.Index(time_s, name="time [s]"),
    )
    return schedule, bank, p_min, p_max, relief
