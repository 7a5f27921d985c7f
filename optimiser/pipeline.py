"""One workflow: ``run(study) -> StudyResult``.  The CLI and the web page are shells over it.

Steps: read the cycle and the catalogue → design (least installed power, then capex, then
energy) → verify in the time domain at the coldest and hottest temperature → if the
verification finds the pressure falling short, raise the requirement of the steps that fell
short by the shortfall and design again (a bounded number of times) → costs against the
pump-only baselines.  A design that never passes the verification is returned as
``infeasible``; it is never reported as feasible.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np
from stowflow.catalogue import Catalogue, default_catalogue_path, load_catalogue
from stowflow.costs.comparison import Comparison, CostSettings, compare, energy_value
from stowflow.cycle.duty import DutyCycle, load_cycle
from stowflow.search.designer import design
from stowflow.search.settings import DesignSettings
from stowflow.search.solution import Design
from stowflow.simulation.verify import Verification, verify
from stowflow.units import BAR, KW, LITRE

__all__ = ["MAX_TIGHTENINGS", "Attempt", "Study", "StudyResult", "run"]

#: Most times the closed loop raises the requirement and designs again.
MAX_TIGHTENINGS = 4
#: Extra pressure added on top of a measured shortfall when tightening, [Pa] (0.5 bar).
TIGHTEN_MARGIN = 0.5e5
#: Resolution of the raised requirement, [Pa] (rounded up; 0.5 bar).
TIGHTEN_STEP = 0.5e5
#: Factor on the tightening per pass in a row that left the design unchanged, [-].
STUCK_GAIN = 4.0


@dataclass(frozen=True)
class Study:
    """What to design.

    Attributes
    ----------
    cycle : DutyCycle | str | Path
        The duty cycle, or the path of its CSV.
    catalogue : Catalogue | str | Path | None
        Components, or the path of a TOML catalogue; None for the bundled demo catalogue.
    settings : DesignSettings
        Design settings.
    costs : CostSettings
        Cost settings.
    name : str | None
        Study name (default: the cycle's name).
    min_pressure : float | None
        Minimum working pressure for a cycle without a pressure column, gauge, [Pa].
    step : float | None
        Time step of the cycle grid, [s] (default: chosen automatically).
    max_steps : int | None
        Largest number of steps of the cycle grid, [-] (default
        :data:`~stowflow.cycle.duty.DEFAULT_MAX_STEPS`).
    verify : bool
        Whether to run the time-domain verification (and its closed loop).
    """

    cycle: DutyCycle | str | Path
    catalogue: Catalogue | str | Path | None = None
    settings: DesignSettings = field(default_factory=DesignSettings)
    costs: CostSettings = field(default_factory=CostSettings)
    name: str | None = None
    min_pressure: float | None = None
    step: float | None = None
    verify: bool = True
    max_steps: int | None = None


@dataclass(frozen=True)
class Attempt:
    """One pass of the design–verify loop.

    Attributes
    ----------
    extra_pressure_max : float
        Largest extra requirement on any step in this pass, [Pa].
    status : str
        Design status of the pass.
    passed : bool | None
        Verification verdict (None when not verified).
    min_margin : float
        Least pressure margin found by the verification, [Pa].
    """

    extra_pressure_max: float
    status: str
    passed: bool | None
    min_margin: float


@dataclass(frozen=True)
class StudyResult:
    """Everything a study produced.

    Attributes
    ----------
    name : str
        Study name.
    cycle : DutyCycle
        The cycle as read.
    catalogue : Catalogue
        The catalogue used.
    settings : DesignSettings
        Design settings used.
    cost_settings : CostSettings
        Cost settings used.
    design : Design
        The design (status ``infeasible`` when no design passed the verification).
    verification : Verification | None
        Time-domain verdict of the returned design (None when not verified or infeasible).
    comparison : Comparison
        Costs against the pump-only baselines.
    attempts : tuple[Attempt, ...]
        The closed loop's passes.
    timings : dict
        Wall-clock seconds per stage: ``design``, ``verify``, ``costs``, ``total``.
    """

    name: str
    cycle: DutyCycle
    catalogue: Catalogue
    settings: DesignSettings
    cost_settings: CostSettings
    design: Design
    verification: Verification | None
    comparison: Comparison
    attempts: tuple[Attempt, ...]
    timings: dict


def _same_design(a: Design, b: Design) -> bool:
    """Whether two passes chose the same components, precharge and unload pressure."""
    if (a.bank is None) != (b.bank is None):
        return False
    same_bank = a.bank is None or (
        a.bank.option == b.bank.option
        and a.bank.count == b.bank.count
        and a.bank.precharge == b.bank.precharge
    )
    return same_bank and a.pump == b.pump and a.motor == b.motor and a.p_max == b.p_max


def _load(study: Study) -> tuple[DutyCycle, Catalogue]:
    cycle = study.cycle
    if not isinstance(cycle, DutyCycle):
        limit = {} if study.max_steps is None else {"max_steps": study.max_steps}
        cycle = load_cycle(cycle, step=study.step, min_pressure=study.min_pressure, **limit)
    cat = study.catalogue
    if cat is None:
        cat = load_catalogue(default_catalogue_path())
    elif not isinstance(cat, Catalogue):
        cat = load_catalogue(cat)
    return cycle, cat


@dataclass
class _Loop:
    """State of the design–verify loop."""

    extra: np.ndarray  # extra requirement per step, [Pa]
    attempts: list[Attempt] = field(default_factory=list)
    t_design: float = 0.0  # [s]
    t_verify: float = 0.0  # [s]
    result: Design | None = None
    verification: Verification | None = None
    previous: Design | None = None
    stuck: int = 0  # passes in a row that left the design unchanged
    notes: list[str] = field(default_factory=list)  # what the loop changed, for the reader
    # After a gas cure: (settings before it, the design that ran empty, its shortfall [Pa]).
    gas_cure: tuple | None = None


def _raise_requirement(loop: _Loop, d: Design, shortfall: np.ndarray) -> None:
    """Raise the requirement of the steps that fell short by the shortfall and a margin."""
    # When raising the requirement by the shortfall left the design as it was (the
    # quasi-static model already met it; the real controller did not), raise it faster.
    same = loop.previous is not None and _same_design(loop.previous, d)
    loop.stuck = loop.stuck + 1 if same else 0
    loop.previous = d
    gain = STUCK_GAIN**loop.stuck
    raise_by = np.where(shortfall > 0, gain * (shortfall + TIGHTEN_MARGIN), 0.0)
    # Rounded up to TIGHTEN_STEP: conservative, and few distinct pressure levels keep the
    # screen's tables small.
    loop.extra = loop.extra + np.ceil(raise_by / TIGHTEN_STEP) * TIGHTEN_STEP


def _design_and_verify(study: Study, cycle: DutyCycle, catalogue: Catalogue, report) -> _Loop:
    """Design, verify, and raise the requirement where the pressure fell short, at most
    :data:`MAX_TIGHTENINGS` times."""
    settings = study.settings
    if settings.objective == "tco" and settings.energy_value == 0:
        settings = settings.with_(energy_value=energy_value(study.costs, cycle.duration))
    loop = _Loop(extra=np.zeros(cycle.n_steps))
    for k in range(MAX_TIGHTENINGS + 1):
        span = 0.8 / (MAX_TIGHTENINGS + 1)
        base = k * span

        def stage(frac: float, label: str, base=base, span=span, k=k) -> None:
            tag = f" (tightening {k})" if k else ""
            report(base + span * frac, label + tag)

        extra, previous = loop.extra, loop.previous
        t1 = time.perf_counter()
        d = design(
            cycle,
            catalogue,
            settings,
            extra_pressure=extra,
            progress=lambda f, lab, stage=stage: stage(0.5 * f, lab),
            # a raised requirement never makes a smaller motor feasible again
            min_power=previous.levels["installed_power [W]"] if previous is not None else 0.0,
        )
        loop.t_design += time.perf_counter() - t1
        if not d.feasible and loop.gas_cure is not None:
            # More gas made the design impossible: raise the requirement where the pressure
            # fell short instead, when it did.
            settings, (failed, shortfall) = loop.gas_cure[0], loop.gas_cure[1:]
            loop.gas_cure = None
            if shortfall is not None and np.any(shortfall > 0):
                loop.notes.append(
                    "no design holds the gas volume an empty bank asked for; the requirement "
                    "is raised where the pressure fell short instead"
                )
                _raise_requirement(loop, failed, shortfall)
                continue
        loop.gas_cure = None
        if not d.feasible or not study.verify:
            loop.attempts.append(Attempt(float(extra.max()), d.status, None, float("nan")))
            loop.result, loop.verification = d, None
            break

        def progress(frac: float, label: str, stage=stage) -> None:
            stage(0.5 + 0.5 * frac, label)

        d, v = _verified(loop, d, cycle, settings, progress)
        loop.attempts.append(Attempt(float(extra.max()), d.status, v.passed, v.min_margin))
        loop.result, loop.verification = d, v
        if v.passed:
            break
        if _same_power_pass(loop, d, v, cycle, catalogue, settings, progress):
            break
        cure = _cure(d, v, settings)
        if cure is None:
            break  # nothing a redesign can cure: the failure is not storage or pressure
        if isinstance(cure, DesignSettings):
            loop.gas_cure = (settings, d, v.shortfall)
            settings = cure  # the bank ran empty: more gas, not more pressure
            loop.notes.append(
                f"a bank ran empty in the verification: the next pass asked for at least "
                f"{settings.min_gas_volume / LITRE:.3g} L of gas"
            )
            loop.previous = d
            continue
        _raise_requirement(loop, d, cure)
    return loop


def _verified(loop: _Loop, d: Design, cycle, settings, progress) -> tuple[Design, Verification]:
    """Verify a design; the exported schedule becomes the timed one the verification proved,
    or none."""
    t1 = time.perf_counter()
    v = verify(d, cycle, settings, progress=progress, timed_schedule=True)
    loop.t_verify += time.perf_counter() - t1
    if d.bank is not None:
        sch = v.schedule if v.schedule is not None else d.schedule.iloc[0:0]
        d = replace(d, schedule=sch, schedule_timed=v.schedule is not None)
    return d, v


#: Most other component sets at the same installed power tried, when a design falls short,
#: before the requirement is raised.
SAME_POWER_TRIES = 3


def _same_power_pass(
    loop: _Loop, d: Design, v: Verification, cycle, catalogue, settings, progress
) -> bool:
    """After a failed verification, the runners-up at the same installed power, in the
    objective's order, each designed with its own components only (same raised requirement)
    and verified; the first that passes becomes the result (True).  Their pump-only
    alternatives and lower bound stay those of the whole catalogue."""
    power = d.installed_power
    # The verification sees the pump's flow and the bank, not the pump's control: a set that
    # differs only there would fall short the same way, and so would one that puts the same
    # pump flow on no more nominal volume than the bank that fell short.
    flow = round(d.pump.flow, 12)
    seen = {(flow, d.bank.option.name if d.bank else None)}
    volume = d.bank.count * d.bank.option.nominal_volume if d.bank else 0.0
    tries = 0
    for alt in d.runners_up:
        key = (round(alt.pump.flow, 12), alt.option.name if alt.option else None)
        alt_volume = alt.count * alt.option.nominal_volume if alt.option else 0.0
        smaller = key[0] == flow and alt_volume <= volume * (1 + 1e-9)
        if alt.motor.rated_power != power or key in seen or smaller:
            continue
        seen.add(key)
        if tries == SAME_POWER_TRIES:
            break
        tries += 1
        only = replace(
            catalogue,
            pumps=(alt.pump,),
            motors=(alt.motor,),
            accumulators=(alt.option,) if alt.option is not None else (),
        )
        t1 = time.perf_counter()
        d2 = design(cycle, only, settings, extra_pressure=loop.extra)
        loop.t_design += time.perf_counter() - t1
        if not d2.feasible:
            continue
        d2 = replace(
            d2,
            baselines=d.baselines,
            lower_bound_power=d.lower_bound_power,
            runners_up=d.runners_up,
            alternatives=d.alternatives,
        )
        d2, v2 = _verified(loop, d2, cycle, settings, progress)
        loop.attempts.append(Attempt(float(loop.extra.max()), d2.status, v2.passed, v2.min_margin))
        if v2.passed:
            loop.notes.append(
                f"the first choice fell short in the verification ({_failure(d, v)}); the next "
                f"component set at the same {power / KW:g} kW passed"
            )
            loop.result, loop.verification = d2, v2
            return True
    return False


#: Growth of the gas volume on top of what an empty bank lacked, [-] (a margin; the next
#: verification checks the result).
EMPTY_BANK_GROWTH = 1.1
#: Most the gas volume grows in one pass after a bank ran empty, [-]: the growth is scaled
#: by what the bank lacked over the oil it delivered, which is unbounded for a bank whose
#: oil hardly moved.
EMPTY_BANK_MAX_GROWTH = 4.0


def _cure(d: Design, v: Verification, settings: DesignSettings):
    """What the next pass changes after a failed verification, or None when a redesign
    cannot cure the failure.

    * a bank that ran empty (demand unmet) needs more gas, not more pressure: the settings
      with a floor on the gas volume, grown by what the bank lacked over what it delivered;
    * a pressure that fell short: the shortfall per step, by which the requirement is raised
      where it fell short (and nowhere else).
    """
    mine = [r for r in v.runs if r.controller == v.controller and not r.passed]
    empty = [r for r in mine if r.unmet_volume > 0]
    if empty and d.bank is not None:
        swing = max(float(np.ptp(r.trace["accumulator_oil [m³]"].to_numpy())) for r in empty)
        lack = max(r.unmet_volume for r in empty)
        grow = EMPTY_BANK_GROWTH * (1.0 + lack / max(swing, 1e-9 * d.bank.gas_volume))
        grow = min(grow, EMPTY_BANK_MAX_GROWTH)  # a bank that hardly moved says little
        floor = max(settings.min_gas_volume, d.bank.gas_volume * grow)
        return settings.with_(min_gas_volume=floor)
    if v.shortfall is None or not np.any(v.shortfall > 0):
        return None
    return v.shortfall


def _pump_only_fallback(
    study: Study, cycle: DutyCycle, catalogue: Catalogue, loop: _Loop, report
) -> None:
    """When no accumulator design passed, the pump-only supply, verified: a cycle a pump
    alone serves is never reported as having no design."""
    s = study.settings
    if not (study.verify and s.allow_pump_only) or loop.result is None:
        return
    if loop.verification is not None and loop.verification.passed:
        return
    if loop.result.feasible and loop.result.bank is None:
        return  # the pump-only supply itself was the design that failed
    report(0.85, "checking a pump-only supply")
    first = loop.result
    t1 = time.perf_counter()
    d = design(cycle, catalogue, s.with_(types=()))
    loop.t_design += time.perf_counter() - t1
    if not d.feasible:
        loop.notes.append(f"a pump-only supply is not possible either: {d.reason}")
        return
    t1 = time.perf_counter()
    v = verify(d, cycle, s)
    loop.t_verify += time.perf_counter() - t1
    loop.attempts.append(Attempt(0.0, d.status, v.passed, v.min_margin))
    if not v.passed:
        loop.notes.append(f"a pump-only supply fails the verification too: {v.reason}")
        return
    what = "no design" if not first.feasible else "no accumulator design"
    loop.notes.append(
        f"{what} passed the time-domain verification ({_failure(first, loop.verification)}); "
        f"the pump-only supply does, with a {d.motor.rated_power / KW:g} kW motor"
    )
    loop.result, loop.verification = d, v


def _failure(d: Design, v: Verification | None) -> str:
    """Why the accumulator design failed, in a few words."""
    if not d.feasible:
        return d.reason or d.status
    return v.reason if v is not None and v.reason else "failed"


def _outcome(
    result: Design, verification: Verification | None, attempts: list, notes: list[str]
) -> Design:
    """The design as the loop leaves it: the window the recommended controller keeps, or
    infeasible when no pass verified; a note on the tightenings."""
    if verification is not None and verification.passed:
        # The working window the designer sets up is the one the recommended controller
        # keeps at both temperature ends.
        runs = [r for r in verification.runs if r.controller == verification.controller]
        if runs:
            p_lo = min(float(r.trace["pressure [Pa]"].min()) for r in runs)
            p_hi = max(float(r.trace["pressure [Pa]"].max()) for r in runs)
            result = replace(result, p_min=p_lo, p_max=min(p_hi, result.relief))
    if verification is not None and not verification.passed:
        result = replace(
            result,
            status="infeasible",
            reason=(
                f"no design passed the time-domain verification after {len(attempts)} "
                f"pass(es): {verification.reason}"
            ),
        )
    notes = [*result.notes, *notes]
    if len(attempts) > 1:
        raised = max(a.extra_pressure_max for a in attempts)
        notes.append(
            f"the design was repeated {len(attempts) - 1} "
            f"{'time' if len(attempts) == 2 else 'times'} after the verification"
            + (f", the requirement raised by up to {raised / BAR:.1f} bar" if raised > 0 else "")
            + (", before it passed" if verification is not None and verification.passed else "")
        )
    if notes != list(result.notes):
        result = replace(result, notes=tuple(notes))
    return result


def run(study: Study, *, progress: Callable[[float, str], None] | None = None) -> StudyResult:
    """Run a study end to end.

    Parameters
    ----------
    study : Study
        What to design.
    progress : callable, optional
        ``progress(fraction, label)``, called as the stages advance.

    Returns
    -------
    StudyResult
    """
    t0 = time.perf_counter()
    report = progress or (lambda frac, label: None)
    cycle, catalogue = _load(study)
    loop = _design_and_verify(study, cycle, catalogue, report)
    assert loop.result is not None
    _pump_only_fallback(study, cycle, catalogue, loop, report)
    if study.settings.motor_sizing == "working" and loop.result.feasible:
        loop.notes.append(
            "caution: the motor is sized at the working (unload) pressure, not at the relief "
            "setting: a stuck unloading valve sends the full flow over the relief valve and "
            "overloads the motor; protect it (motor overload relay) or size it at the relief "
            "setting"
        )
    verification = loop.verification
    result = _outcome(loop.result, verification, loop.attempts, loop.notes)
    report(0.9, "costs")
    t1 = time.perf_counter()
    comparison = compare(result, verification, cycle, study.costs, design_settings=study.settings)
    t_costs = time.perf_counter() - t1
    report(1.0, "done")
    return StudyResult(
        name=study.name or cycle.name,
        cycle=cycle,
        catalogue=catalogue,
        settings=study.settings,
        cost_settings=study.costs,
        design=result,
        verification=verification,
        comparison=comparison,
        attempts=tuple(loop.attempts),
        timings={
            "design": loop.t_design,
            "verify": loop.t_verify,
            "costs": t_costs,
            "total": time.perf_counter() - t0,
        },
    )
