"""Checks and figures of a simulated steady state (the body of a :class:`ControllerRun`).

:func:`assess` turns the cycles of a periodic orbit into the verdict of one controller at one
temperature: least pressure margin (line loss included), peak pressure against the relief
setting, the accumulator's PS and the pump's rating, bank discharge against its limit, bank
empty or piston at its end stop, load events per hour and least dwells, motor load, gas
temperature range, energy per cycle, oil over the relief, and the per-step shortfall.
:func:`pump_only` does the same for a supply without a bank.  Both return the fields of
:class:`stowflow.simulation.verify.ControllerRun` as a dict.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import pandas as pd
from stowflow.cycle.duty import DutyCycle
from stowflow.physics import accumulator as acc
from stowflow.search.settings import DesignSettings
from stowflow.search.solution import Design
from stowflow.simulation._integrator import Plant
from stowflow.simulation._loop import Orbit
from stowflow.simulation._setup import lpm_text, required
from stowflow.units import HOUR, KW, bar_text, kelvin_to_celsius, to_unit

__all__ = ["assess", "discharge_limit", "limits_ok", "pump_only", "switching", "trace_frame"]


def switching(recs, dt: float, cyclic: bool) -> tuple[int, float, float]:
    """Load events, least loaded and least unloaded interval [s] over the cycles ``recs``.

    ``cyclic``: the cycles form a periodic orbit, so the last interval joins the first;
    otherwise the intervals cut by the window's ends are not counted as dwells.
    """
    # A part delivering the fraction u of the full flow is loaded for u·h, then unloaded.
    frac = np.concatenate([np.column_stack([r.u1, r.u2]).ravel() for r in recs])
    part = np.concatenate([np.column_stack([r.h1, dt - r.h1]).ravel() for r in recs])
    u = np.tile([True, False], frac.size)
    h = np.column_stack([frac * part, (1.0 - frac) * part]).ravel()
    keep = h > 1e-12 * dt
    u, h = u[keep], h[keep]
    if u.size == 0 or np.all(u == u[0]):
        return 0, math.inf, math.inf
    first = np.concatenate(([0], np.flatnonzero(u[1:] != u[:-1]) + 1))
    dur = np.add.reduceat(h, first)
    state = u[first]
    if cyclic:
        if state[0] == state[-1]:
            dur[0] += dur[-1]
            dur, state = dur[:-1], state[:-1]
        events = int(np.count_nonzero(state == 1))
    else:
        events = int(np.count_nonzero(state[1:] == 1))  # loads inside the window
        dur, state = dur[1:-1], state[1:-1]
    loaded = state == 1
    on = float(dur[loaded].min()) if loaded.any() else math.inf
    off = float(dur[~loaded].min()) if (~loaded).any() else math.inf
    return events, on, off


def discharge_limit(design: Design, limits: dict | None) -> tuple[float, str]:
    """Bank discharge limit [m³/s] (units × per-unit limit) and how it was found."""
    opt, count = design.bank.option, design.bank.count
    rules = acc.rules_for(opt.type, (limits or {}).get(opt.type))
    unit = acc.unit_flow_limit(opt.type, opt.nominal_volume, opt.bore or None, opt.max_flow, rules)
    why = f"{count} × {opt.type}, {to_unit(unit, 'L/s', 'flow'):.3g} L/s per unit"
    return count * unit, why


@dataclass(frozen=True)
class _Figures:
    """What a simulated steady state measures (SI), with where its extremes occur.

    ``c``/``j``: cycle and step of the least margin, ``jh`` step of the peak pressure, ``jo``
    step of the largest bank discharge; ``p_lo`` the least pressure per (cycle, step), [Pa];
    ``w_pump`` the pump's work per (cycle, step), [J].
    """

    P: int
    p_lo: np.ndarray
    c: int
    j: int
    min_margin: float
    jh: int
    peak: float
    temps: np.ndarray
    w_pump: np.ndarray
    energy: float
    shaft_rms: float
    shaft_peak: float
    events: int
    dwell_on: float
    dwell_off: float
    per_hour: float
    v_relief: float
    v_unmet: float
    jo: int
    q_out: float


def _figures(plant: Plant, orbit: Orbit, design: Design, s: DesignSettings) -> _Figures:
    """Margins, peaks, energy, motor load, switching and volumes of a steady state."""
    pa, dt = plant.p_ambient, plant.dt
    recs = orbit.records
    P = len(recs)
    p_lo = np.stack([r.p_lo for r in recs])
    p_hi = np.stack([r.p_hi for r in recs])
    margin = p_lo - plant.required
    c, j = np.unravel_index(int(np.argmin(margin)), margin.shape)
    ch, jh = np.unravel_index(int(np.argmax(p_hi)), p_hi.shape)
    temps = np.concatenate([[r.start.T for r in recs], np.concatenate([r.T for r in recs])])
    eta_o = design.pump.overall_efficiency
    unl = np.stack([r.h1 * (1 - r.u1) + (dt - r.h1) * (1 - r.u2) for r in recs])
    w_pump = np.stack([r.w_pump for r in recs])
    shaft_steps = (w_pump + plant.qp * s.standby_pressure * unl) / eta_o  # J per step
    loaded_any = np.stack([(r.u1 * (r.h1 > 0) + r.u2 * (r.h1 < dt)) > 0 for r in recs])
    events, dwell_on, dwell_off = switching(recs, dt, orbit.periodic)
    out_max = np.stack([r.out_max for r in recs])
    co, jo = np.unravel_index(int(np.argmax(out_max)), out_max.shape)
    return _Figures(
        P=P,
        p_lo=p_lo,
        c=c,
        j=j,
        min_margin=float(margin[c, j]),
        jh=jh,
        peak=float(p_hi[ch, jh]),
        temps=temps,
        w_pump=w_pump,
        energy=float(shaft_steps.sum() / design.motor.efficiency / P),
        shaft_rms=float(np.sqrt(np.mean((shaft_steps / dt) ** 2))),
        shaft_peak=float(np.max(np.where(loaded_any, plant.qp * (p_hi - pa) / eta_o, 0.0))),
        events=events,
        dwell_on=dwell_on,
        dwell_off=dwell_off,
        per_hour=events * HOUR / (P * plant.duration),
        v_relief=float(sum(r.v_relief.sum() for r in recs) / P),
        v_unmet=float(sum(r.v_unmet.sum() for r in recs) / P),
        jo=jo,
        q_out=float(out_max[co, jo]),
    )


def _supply_failures(
    f: _Figures, plant: Plant, orbit: Orbit, controller: str, design: Design, q_lim, lim_text, at
) -> list[str]:
    """Broken checks of the oil supply: bank empty, pressure margin, discharge limit, relief,
    the shell's PS and the pump's rating, the piston's end stop."""
    pa, dt, req = plant.p_ambient, plant.dt, plant.required
    recs = orbit.records
    c, j = f.c, f.j
    fails: list[str] = []
    if f.v_unmet > 0:
        i = int(np.argmax(np.stack([r.v_unmet for r in recs]).max(axis=0) > 0))
        fails.append(
            f"bank runs empty at t = {i * dt:.4g} s ({to_unit(f.v_unmet, 'L', 'volume'):.3g} L "
            f"of demand unmet per cycle, {at})"
        )
    if f.min_margin < 0:
        fails.append(
            f"pressure {bar_text(f.p_lo[c, j], pa)} falls "
            f"{to_unit(-f.min_margin, 'bar', 'pressure'):.2f} bar below the required "
            f"{bar_text(req[j], pa)} at t = {j * dt:.4g} s ({at})"
        )
    if f.q_out > q_lim * (1 + 1e-9):
        fails.append(
            f"bank discharge {lpm_text(f.q_out)} at t = {f.jo * dt:.4g} s exceeds its limit "
            f"{lpm_text(q_lim)} ({lim_text})"
        )
    # A schedule that keeps the pump loaded against a full store plans its relief flow (the
    # load-event limit leaves no other way); any other opening of the relief valve is a fault.
    sch = design.schedule
    planned = (
        controller == "schedule"
        and sch is not None
        and "spill [m³/s]" in sch
        and bool((sch["spill [m³/s]"] > 0).any())
    )
    peak = f.peak
    if peak > plant.relief * (1 + 1e-12) and not planned:
        fails.append(
            f"peak pressure {bar_text(peak, pa)} at t = {f.jh * dt:.4g} s exceeds the relief "
            f"setting {bar_text(plant.relief, pa)}; {to_unit(f.v_relief, 'L', 'volume'):.3g} L "
            f"per cycle over the relief ({at})"
        )
    for what, limit in (
        ("the accumulator's PS", design.bank.option.max_pressure),
        ("the pump's rating", design.pump.max_pressure),
    ):
        if peak > limit:
            fails.append(f"peak pressure {bar_text(peak, pa)} exceeds {what} {bar_text(limit, pa)}")
    if any(r.stop.any() for r in recs):
        fails.append(f"the piston reaches its end stop ({at})")
    return fails


def _drive_failures(f: _Figures, design: Design, s: DesignSettings, at: str) -> list[str]:
    """Broken checks of the drive: load events per hour, least dwells, motor RMS load."""
    fails: list[str] = []
    lim = s.max_load_events_per_hour
    if lim is not None and f.per_hour > lim * (1 + 1e-9):
        fails.append(f"{f.per_hour:.0f} load events per hour exceed the limit {lim:g}/h ({at})")
    if s.min_loaded_dwell > 0 and f.dwell_on < s.min_loaded_dwell * (1 - 1e-9):
        fails.append(
            f"pump stays loaded only {f.dwell_on:.3g} s, below the least loaded dwell "
            f"{s.min_loaded_dwell:g} s ({at})"
        )
    if s.min_unloaded_dwell > 0 and f.dwell_off < s.min_unloaded_dwell * (1 - 1e-9):
        fails.append(
            f"pump stays unloaded only {f.dwell_off:.3g} s, below the least unloaded dwell "
            f"{s.min_unloaded_dwell:g} s ({at})"
        )
    motor = design.motor
    if f.shaft_rms > motor.rated_power * (1 + 1e-9):
        fails.append(
            f"motor RMS load {to_unit(f.shaft_rms, 'kW', 'power'):.3g} kW exceeds its rating "
            f"{to_unit(motor.rated_power, 'kW', 'power'):.3g} kW ({at})"
        )
    return fails


def assess(
    plant: Plant,
    orbit: Orbit,
    controller: str,
    design: Design,
    settings: DesignSettings,
    setpoints: dict,
    limits: dict | None,
) -> dict:
    """Checks and figures of a simulated steady state.

    Parameters
    ----------
    plant : Plant
        The run's fixed data.
    orbit : Orbit
        The simulated steady state.
    controller : str
        Controller name.
    design : Design
        The design (components and their ratings).
    settings : DesignSettings
        Standby pressure, switching limits.
    setpoints : dict
        The controller's settings, reported with the run.
    limits : dict or None
        The catalogue's type-rule overrides for the discharge limit.

    Returns
    -------
    dict
        The fields of :class:`stowflow.simulation.verify.ControllerRun`.
    """
    dt, recs = plant.dt, orbit.records
    f = _figures(plant, orbit, design, settings)
    q_lim, lim_text = discharge_limit(design, limits)
    at = f"at {kelvin_to_celsius(plant.T_wall):.0f} °C, {controller}"
    fails = _supply_failures(f, plant, orbit, controller, design, q_lim, lim_text, at)
    fails += _drive_failures(f, design, settings, at)
    rec = recs[f.c]
    return dict(
        controller=controller,
        temperature=plant.T_wall,
        passed=not fails,
        reason=fails[0] if fails else None,
        min_margin=f.min_margin,
        min_margin_time=float(f.j * dt),
        peak_pressure=f.peak,
        gas_temperature_min=float(f.temps.min()),
        gas_temperature_max=float(f.temps.max()),
        energy_per_cycle=f.energy,
        load_events_per_hour=float(f.per_hour),
        relief_volume=f.v_relief,
        cycles_to_steady=int(orbit.cycles),
        trace=trace_frame(plant, rec),
        period_traces=tuple(trace_frame(plant, r) for r in recs) if len(recs) > 1 else (),
        failures=tuple(fails),
        setpoints=dict(setpoints),
        periodic=orbit.periodic,
        period_cycles=int(orbit.period),
        min_loaded_dwell=f.dwell_on,
        min_unloaded_dwell=f.dwell_off,
        peak_discharge=f.q_out,
        discharge_limit=q_lim,
        shaft_power_rms=f.shaft_rms,
        shaft_power_peak=f.shaft_peak,
        unmet_volume=f.v_unmet,
        work={
            "pump [J]": float(f.w_pump.sum() / f.P),
            "consumer [J]": float(sum(r.w_cons.sum() for r in recs) / f.P),
            "relief [J]": float(sum(r.w_relief.sum() for r in recs) / f.P),
        },
        start=(rec.start.S, rec.start.T),
        shortfall=np.maximum(0.0, plant.required - f.p_lo).max(axis=0),
    )


def trace_frame(plant: Plant, rec) -> pd.DataFrame:
    """One simulated cycle as the trace table of a :class:`~.verify.ControllerRun`."""
    dt = plant.dt
    loaded = (rec.h1 * rec.u1 + (dt - rec.h1) * rec.u2) / dt
    S_prev = np.concatenate(([rec.start.S], rec.S[:-1]))
    return pd.DataFrame(
        {
            "pressure [Pa]": rec.p,
            "pressure_min [Pa]": rec.p_lo,
            "pressure_max [Pa]": rec.p_hi,
            "required_pressure [Pa]": plant.required,
            "gas_temperature [K]": rec.T,
            "accumulator_oil [m³]": rec.S,
            "pump_loaded [-]": loaded,
            "pump_flow [m³/s]": plant.qp * loaded,
            "relief_flow [m³/s]": rec.v_relief / dt,
            "demand [m³/s]": plant.demand,
            "bank_flow [m³/s]": (S_prev - rec.S) / dt,
        },
        index=pd.Index(np.arange(plant.n) * dt, name="time [s]"),
    )


def pump_only(design: Design, cycle: DutyCycle, settings: DesignSettings, T: float) -> dict:
    """Pump-only supply: always loaded against its relief valve, held at the relief setting.

    Parameters
    ----------
    design : Design
        A design without a bank.
    cycle : DutyCycle
        The cycle.
    settings : DesignSettings
        Line loss, ambient pressure.
    T : float
        Temperature of the run, [K] (reported only: no gas).

    Returns
    -------
    dict
        The fields of :class:`stowflow.simulation.verify.ControllerRun`.
    """
    s, pa, dt = settings, settings.p_ambient, cycle.dt
    req = required(cycle, s)
    d = np.asarray(cycle.flow, float)
    qp, relief = design.pump.flow, design.relief
    short = d > qp * (1 + 1e-12)
    p = np.where(short, pa, relief)  # the line collapses where the pump cannot keep up
    q_relief = np.maximum(qp - d, 0.0)
    shaft = qp * (relief - pa) / design.pump.overall_efficiency
    fails = []
    if short.any():
        i = int(np.argmax(short))
        fails.append(
            f"pump flow {lpm_text(qp)} is below the demand {lpm_text(d[i])} at t = {i * dt:.4g} s"
        )
    margin = p - req
    j = int(np.argmin(margin))
    if margin[j] < 0 and not short.any():
        fails.append(
            f"relief setting {bar_text(relief, pa)} is below the required "
            f"{bar_text(req[j], pa)} at t = {j * dt:.4g} s"
        )
    if relief > design.pump.max_pressure:
        fails.append(
            f"relief setting {bar_text(relief, pa)} exceeds the pump's rating "
            f"{bar_text(design.pump.max_pressure, pa)}"
        )
    if shaft > design.motor.rated_power * (1 + 1e-9):
        fails.append(
            f"pump shaft power {to_unit(shaft, 'kW', 'power'):.3g} kW at the relief "
            f"setting exceeds the motor's {design.motor.rated_power / KW:g} kW"
        )
    n = cycle.n_steps
    trace = pd.DataFrame(
        {
            "pressure [Pa]": p,
            "pressure_min [Pa]": p,
            "pressure_max [Pa]": p,
            "required_pressure [Pa]": req,
            "gas_temperature [K]": np.full(n, np.nan),
            "accumulator_oil [m³]": np.zeros(n),
            "pump_loaded [-]": np.ones(n),
            "pump_flow [m³/s]": np.full(n, qp),
            "relief_flow [m³/s]": q_relief,
            "demand [m³/s]": d,
            "bank_flow [m³/s]": np.zeros(n),
        },
        index=pd.Index(cycle.time, name="time [s]"),
    )
    e = shaft * cycle.duration / design.motor.efficiency
    return dict(
        controller="schedule",
        temperature=float(T),
        passed=not fails,
        reason=fails[0] if fails else None,
        min_margin=float(margin[j]),
        min_margin_time=float(j * dt),
        peak_pressure=float(p.max()),
        gas_temperature_min=math.nan,
        gas_temperature_max=math.nan,
        energy_per_cycle=e,
        load_events_per_hour=0.0,
        relief_volume=float(q_relief.sum() * dt),
        cycles_to_steady=1,
        trace=trace,
        failures=tuple(fails),
        shaft_power_rms=shaft,
        shaft_power_peak=shaft,
        work={
            "pump [J]": float(qp * (relief - pa) * cycle.duration),
            "consumer [J]": float(np.sum(d * (p - pa)) * dt),
            "relief [J]": float(np.sum(q_relief * (p - pa)) * dt),
        },
        shortfall=np.maximum(0.0, req - p),
    )


def limits_ok(
    events_per_hour: float, dwell_on: float, dwell_off: float, settings: DesignSettings
) -> bool:
    """Whether the switching limits alone hold (events per hour [1/h], least dwells [s])."""
    lim = settings.max_load_events_per_hour
    return (
        (lim is None or events_per_hour <= lim * (1 + 1e-9))
        and dwell_on >= settings.min_loaded_dwell * (1 - 1e-9)
        and dwell_off >= settings.min_unloaded_dwell * (1 - 1e-9)
    )
