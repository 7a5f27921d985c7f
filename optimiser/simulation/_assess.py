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

import numpy as np
import pandas as pd
from stowflow.cycle.duty import DutyCycle
from stowflow.physics import accumulator as acc
from stowflow.search.settings import DesignSettings
from stowflow.search.solution import Design
from stowflow.simulation._integrator import Plant
from stowflow.simulation._loop import Orbit
from stowflow.simulation._setup import bar_text, lpm_text, required
from stowflow.units import kelvin_to_celsius, to_unit

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
    s, pa, dt = settings, plant.p_ambient, plant.dt
    recs = orbit.records
    P = len(recs)
    req = plant.required
    p_lo = np.stack([r.p_lo for r in recs])
    p_hi = np.stack([r.p_hi for r in recs])
    margin = p_lo - req
    c, j = np.unravel_index(int(np.argmin(margin)), margin.shape)
    min_margin = float(margin[c, j])
    ch, jh = np.unravel_index(int(np.argmax(p_hi)), p_hi.shape)
    peak = float(p_hi[ch, jh])
    temps = np.concatenate([[r.start.T for r in recs], np.concatenate([r.T for r in recs])])
    pump, motor = design.pump, design.motor
    eta_o = pump.overall_efficiency
    unl = np.stack([r.h1 * (1 - r.u1) + (dt - r.h1) * (1 - r.u2) for r in recs])
    w_pump = np.stack([r.w_pump for r in recs])
    shaft_steps = (w_pump + plant.qp * s.standby_pressure * unl) / eta_o  # J per step
    energy = float(shaft_steps.sum() / motor.efficiency / P)
    shaft_rms = float(np.sqrt(np.mean((shaft_steps / dt) ** 2)))
    loaded_any = np.stack([(r.u1 * (r.h1 > 0) + r.u2 * (r.h1 < dt)) > 0 for r in recs])
    shaft_peak = float(np.max(np.where(loaded_any, plant.qp * (p_hi - pa) / eta_o, 0.0)))
    events, dwell_on, dwell_off = switching(recs, dt, orbit.periodic)
    per_hour = events * 3600.0 / (P * plant.duration)
    v_relief = float(sum(r.v_relief.sum() for r in recs) / P)
    v_unmet = float(sum(r.v_unmet.sum() for r in recs) / P)
    out_max = np.stack([r.out_max for r in recs])
    co, jo = np.unravel_index(int(np.argmax(out_max)), out_max.shape)
    q_out = float(out_max[co, jo])
    q_lim, lim_text = discharge_limit(design, limits)
    T_w = kelvin_to_celsius(plant.T_wall)
    at = f"at {T_w:.0f} °C, {controller}"

    fails: list[str] = []
    if v_unmet > 0:
        i = int(np.argmax(np.stack([r.v_unmet for r in recs]).max(axis=0) > 0))
        fails.append(
            f"bank runs empty at t = {i * dt:.4g} s ({to_unit(v_unmet, 'L', 'volume'):.3g} L "
            f"of demand unmet per cycle, {at})"
        )
    if min_margin < 0:
        fails.append(
            f"pressure {bar_text(p_lo[c, j], pa)} falls "
            f"{to_unit(-min_margin, 'bar', 'pressure'):.2f} bar below the required "
            f"{bar_text(req[j], pa)} at t = {j * dt:.4g} s ({at})"
        )
    if q_out > q_lim * (1 + 1e-9):
        fails.append(
            f"bank discharge {lpm_text(q_out)} at t = {jo * dt:.4g} s exceeds its limit "
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
    if peak > plant.relief * (1 + 1e-12) and not planned:
        fails.append(
            f"peak pressure {bar_text(peak, pa)} at t = {jh * dt:.4g} s exceeds the relief "
            f"setting {bar_text(plant.relief, pa)}; {to_unit(v_relief, 'L', 'volume'):.3g} L "
            f"per cycle over the relief ({at})"
        )
    for what, limit in (
        ("the accumulator's PS", design.bank.option.max_pressure),
        ("the pump's rating", pump.max_pressure),
    ):
        if peak > limit:
            fails.append(f"peak pressure {bar_text(peak, pa)} exceeds {what} {bar_text(limit, pa)}")
    if any(r.stop.any() for r in recs):
        fails.append(f"the piston reaches its end stop ({at})")
    lim = s.max_load_events_per_hour
    if lim is not None and per_hour > lim * (1 + 1e-9):
        fails.append(f"{per_hour:.0f} load events per hour exceed the limit {lim:g}/h ({at})")
    if s.min_loaded_dwell > 0 and dwell_on < s.min_loaded_dwell * (1 - 1e-9):
        fails.append(
            f"pump stays loaded only {dwell_on:.3g} s, below the least loaded dwell "
            f"{s.min_loaded_dwell:g} s ({at})"
        )
    if s.min_unloaded_dwell > 0 and dwell_off < s.min_unloaded_dwell * (1 - 1e-9):
        fails.append(
            f"pump stays unloaded only {dwell_off:.3g} s, below the least unloaded dwell "
            f"{s.min_unloaded_dwell:g} s ({at})"
        )
    if shaft_rms > motor.rated_power * (1 + 1e-9):
        fails.append(
            f"motor RMS load {to_unit(shaft_rms, 'kW', 'power'):.3g} kW exceeds its rating "
            f"{to_unit(motor.rated_power, 'kW', 'power'):.3g} kW ({at})"
        )
    shortfall = np.maximum(0.0, req - p_lo).max(axis=0)
    rec = recs[c]
    trace = trace_frame(plant, rec)
    work = {
        "pump [J]": float(w_pump.sum() / P),
        "consumer [J]": float(sum(r.w_cons.sum() for r in recs) / P),
        "relief [J]": float(sum(r.w_relief.sum() for r in recs) / P),
    }
    return dict(
        controller=controller,
        temperature=plant.T_wall,
        passed=not fails,
        reason=fails[0] if fails else None,
        min_margin=min_margin,
        min_margin_time=float(j * dt),
        peak_pressure=peak,
        gas_temperature_min=float(temps.min()),
        gas_temperature_max=float(temps.max()),
        energy_per_cycle=energy,
        load_events_per_hour=float(per_hour),
        relief_volume=v_relief,
        cycles_to_steady=int(orbit.cycles),
        trace=trace,
        failures=tuple(fails),
        setpoints=dict(setpoints),
        periodic=orbit.periodic,
        period_cycles=int(orbit.period),
        min_loaded_dwell=dwell_on,
        min_unloaded_dwell=dwell_off,
        peak_discharge=q_out,
        discharge_limit=q_lim,
        shaft_power_rms=shaft_rms,
        shaft_power_peak=shaft_peak,
        unmet_volume=v_unmet,
        work=work,
        start=(rec.start.S, rec.start.T),
        shortfall=shortfall,
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
            f"setting exceeds the motor's {design.motor.rated_power / 1e3:g} kW"
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
