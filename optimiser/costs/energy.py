"""The designed supply's energy per cycle and where it goes, read from how it ran.

The time-domain verification's runs (:class:`stowflow.simulation.verify.ControllerRun`) hold
one steady-state cycle each: line pressure, loaded fraction, pump flow, relief flow, demand and
bank flow per step.  This module does not simulate again; it prices those steps with the loss
models of the pump and the motor (:mod:`stowflow.physics.machines`, part-load efficiencies) and
splits the energy with :func:`~stowflow.physics.machines.energy_account`:

* the line pressure of a step is the mean of its start and its end (the trace holds the end;
  the cycle is periodic, so the first step starts where the last ends);
* loaded for the fraction ``u`` of a step, the pump delivers into the line at that pressure;
  unloaded for the rest, it circulates its flow at the standby pressure;
* shaft power and motor input are taken for the loaded and the unloaded part separately (the
  motor's losses are not linear in its load);
* the flow into the accumulator is the trace's bank flow, so the work into the gas over the
  cycle (the heat the gas gives to the wall) is its own part, and the parts add up to the
  electrical input only when pump flow = demand + relief flow + flow into the bank.

Without a verification the design's quasi-static schedule stands in for the trace, at its
coldest and at its hottest pressure.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
from stowflow.cycle.duty import DutyCycle
from stowflow.physics.machines import EnergyBreakdown, energy_account
from stowflow.search.solution import Design
from stowflow.units import kelvin_to_celsius

__all__ = ["design_energy", "trace_account"]

#: The trace columns the account reads.
_COLUMNS = {
    "pressure [Pa]",
    "pump_loaded [-]",
    "pump_flow [m³/s]",
    "relief_flow [m³/s]",
    "demand [m³/s]",
    "bank_flow [m³/s]",
}


def trace_account(
    design: Design,
    cycle: DutyCycle,
    demand: np.ndarray,
    pressure: np.ndarray,
    loaded: np.ndarray,
    pump_flow: np.ndarray,
    relief: np.ndarray,
    bank_in: np.ndarray,
    standby_pressure: float,
) -> EnergyBreakdown:
    """Energy account of one cycle of the designed supply from its steps.

    Parameters
    ----------
    design : Design
        A feasible design (its pump and motor).
    cycle : DutyCycle
        The cycle (step, the consumer's pressure, ambient pressure).
    demand : numpy.ndarray
        Mean flow the machine takes, [m³/s].
    pressure : numpy.ndarray
        Line (accumulator) pressure at each step's end, absolute, [Pa].
    loaded : numpy.ndarray
        Loaded fraction of each step, [-].
    pump_flow : numpy.ndarray
        Mean flow the pump puts into the line, [m³/s].
    relief : numpy.ndarray
        Mean flow over the relief valve, [m³/s].
    bank_in : numpy.ndarray
        Mean flow into the accumulator (negative out of it), [m³/s].
    standby_pressure : float
        Pressure an unloaded pump circulates at, gauge, [Pa].

    Returns
    -------
    EnergyBreakdown
    """
    pa = cycle.p_ambient
    p_end = np.asarray(pressure, float)
    supply = 0.5 * (np.roll(p_end, 1) + p_end) - pa
    u = np.clip(np.asarray(loaded, float), 0.0, 1.0)
    pump, motor = design.pump.losses, design.motor.losses
    n = design.pump.speed
    on = pump.shaft_power(1.0, n, supply)
    off = float(pump.shaft_power(1.0, n, standby_pressure))
    shaft = u * on + (1.0 - u) * off
    motor_in = u * motor.input_power(on) + (1.0 - u) * float(motor.input_power(off))
    return energy_account(
        cycle.dt,
        demand=np.asarray(demand, float),
        consumer=np.asarray(cycle.pressure, float) - pa,
        supply=supply,
        delivered=pump_flow,
        electrical=motor_in,
        shaft=shaft,
        motor_input=motor_in,
        relief=relief,
        bank_in=bank_in,
        standby_flow=(1.0 - u) * float(pump.delivered(1.0, n, standby_pressure)),
        standby_pressure=standby_pressure,
    )


def _run_account(design, cycle, trace: pd.DataFrame, standby: float) -> EnergyBreakdown:
    return trace_account(
        design,
        cycle,
        trace["demand [m³/s]"].to_numpy(),
        trace["pressure [Pa]"].to_numpy(),
        trace["pump_loaded [-]"].to_numpy(),
        trace["pump_flow [m³/s]"].to_numpy(),
        trace["relief_flow [m³/s]"].to_numpy(),
        -trace["bank_flow [m³/s]"].to_numpy(),
        standby,
    )


def _schedule_accounts(design, cycle, standby: float) -> list[EnergyBreakdown]:
    sch = design.schedule
    q = sch["pump_flow [m³/s]"].to_numpy()
    spill = sch["spill [m³/s]"].to_numpy()
    demand = sch["demand [m³/s]"].to_numpy()
    bank_in = q - spill - demand
    loaded = q / design.pump.flow
    out = []
    for col in ("pressure_cold [Pa]", "pressure_hot [Pa]"):
        p = sch[col].to_numpy()
        if design.bank is None or not np.all(np.isfinite(p)):
            p = np.full(q.size, design.relief)
        out.append(trace_account(design, cycle, demand, p, loaded, q, spill, bank_in, standby))
    return out


def design_energy(
    design: Design, verification, cycle: DutyCycle, standby_pressure: float
) -> tuple[float, EnergyBreakdown | None, str]:
    """Energy per cycle of the designed supply, its account and where it comes from.

    Parameters
    ----------
    design : Design
        A feasible design.
    verification : Verification or None
        When given, the recommended controller's coldest and hottest runs are read (their
        accounts averaged); else the design's quasi-static schedule.
    cycle : DutyCycle
        The cycle.
    standby_pressure : float
        Pressure an unloaded pump circulates at, gauge, [Pa].

    Returns
    -------
    energy : float
        Electrical energy per cycle, [J].
    breakdown : EnergyBreakdown or None
        Its parts (None when nothing could be read).
    source : str
        Which stage the steps come from.
    """
    part_load = "part-load loss models of pump and motor"
    if verification is not None:
        ctrl = verification.controller
        runs = [verification.run(ctrl, "cold"), verification.run(ctrl, "hot")]
        runs = list({id(r): r for r in runs if r is not None}.values())
        temps = " and ".join(f"{kelvin_to_celsius(r.temperature):.0f} °C" for r in runs)
        source = f"time-domain verification, {ctrl} controller, mean of the runs at {temps}"
        if runs and all(_COLUMNS <= set(r.trace.columns) for r in runs):
            # Each run's account is the mean over the cycles of its periodic steady state
            # (a switch may load every other cycle), as its energy per cycle is.
            accounts = [
                EnergyBreakdown.mean(
                    [_run_account(design, cycle, tr, standby_pressure) for tr in r.cycle_traces]
                )
                for r in runs
            ]
            b = EnergyBreakdown.mean(accounts)
            return b.electrical, b, f"{source}; {part_load}"
        energies = [r.energy_per_cycle for r in runs if math.isfinite(r.energy_per_cycle)]
        if energies:  # runs without their steps: the energy they report, not split
            return float(np.mean(energies)), None, f"{source} (catalogue efficiencies)"
    sch = design.schedule
    if sch is not None and not sch.empty and "pressure_cold [Pa]" in sch:
        b = EnergyBreakdown.mean(_schedule_accounts(design, cycle, standby_pressure))
        return b.electrical, b, f"design schedule model (quasi-static, cold and hot); {part_load}"
    energy = float(design.energy_per_cycle)
    return energy, None, "design schedule model (quasi-static)" if math.isfinite(energy) else ""
