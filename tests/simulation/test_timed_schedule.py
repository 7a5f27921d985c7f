"""The timed load schedule with its latching high-pressure cut-out.

Checks from the conservation of oil (no outside source needed): in a periodic steady state
the pump delivers exactly what the cycle draws plus what the relief valve passes.  Cycle,
design and schedule are invented test inputs.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from stowflow.catalogue import AccumulatorOption, MotorOption, PumpOption
from stowflow.cycle.duty import cycle_from_arrays
from stowflow.search.settings import DesignSettings
from stowflow.search.solution import Bank, Design
from stowflow.simulation._loop import OIL_TOL
from stowflow.simulation.verify import simulate
from stowflow.units import P_AMBIENT

BAR = 1e5
LPM = 1e-3 / 60.0
DT = 0.1  # [s]
N = 100  # a 10 s cycle
PUMP = 30.0 * LPM  # [m³/s]


def _cycle():
    # 2 s at 60 L/min, then 8 s idle: 2 L per cycle; the consumer needs 100 bar.
    flow = np.where(np.arange(N) < 20, 60.0 * LPM, 0.0)
    return cycle_from_arrays(DT, flow, np.full(N, 100 * BAR + P_AMBIENT), name="toy")


def _design(cycle) -> Design:
    """A 20 L bladder at 80 bar with a 30 L/min pump, and a schedule whose load command
    covers 6 s of each cycle (3 L at full flow, 1 L more than the cycle draws)."""
    opt = AccumulatorOption("bladder", 0.02, 330 * BAR + P_AMBIENT, 0.0, 1.0, "acc")
    pump = PumpOption(PUMP / (1450 / 60.0), 1450 / 60.0, 250 * BAR + P_AMBIENT, 1.0, 0.85, 1.0, "p")
    motor = MotorOption(15e3, 0.9, 1.0, "motor")
    command = (np.arange(N) >= 30) & (np.arange(N) < 90)
    delivered = np.where((np.arange(N) >= 30) & (np.arange(N) < 70), PUMP, 0.0)  # 2 L
    oil = 0.004 + np.cumsum((delivered - np.asarray(cycle.flow)) * DT)
    oil = oil - oil[-1] + 0.004  # closes: the plan's oil at the cycle end is its start
    schedule = pd.DataFrame(
        {
            "demand [m³/s]": cycle.flow,
            "required_pressure [Pa]": cycle.pressure,
            "pump_loaded [-]": command.astype(int),
            "pump_flow [m³/s]": delivered,
            "spill [m³/s]": np.zeros(N),
            "accumulator_oil [m³]": oil,
            "pressure_cold [Pa]": np.full(N, np.nan),
            "pressure_hot [Pa]": np.full(N, np.nan),
        },
        index=pd.Index(np.arange(N) * DT, name="time [s]"),
    )
    return Design(
        "feasible",
        None,
        Bank(opt, 1, 80 * BAR + P_AMBIENT),
        pump,
        motor,
        110 * BAR + P_AMBIENT,
        200 * BAR + P_AMBIENT,
        230 * BAR + P_AMBIENT,
        "isothermal",
        schedule,
        math.nan,
        math.nan,
        math.nan,
        {},
        math.nan,
        schedule_flow=PUMP,
        schedule_timed=True,
    )


SETTINGS = DesignSettings(
    process="isothermal",
    flow_margin=0.0,
    switch_tolerance=0.0,
    min_loaded_dwell=0.0,
    min_unloaded_dwell=0.0,
    max_load_events_per_hour=None,
)


def test_cut_out_unloads_the_surplus_instead_of_the_relief_valve():
    c = _cycle()
    d = _design(c)
    cut = 180 * BAR + P_AMBIENT
    run = simulate(d, c, SETTINGS, "schedule", SETTINGS.t_min, setpoints={"cut_out": cut})
    pumped = float(run.trace["pump_flow [m³/s]"].sum() * DT)
    drawn = float(np.sum(c.flow) * DT)
    # Periodic: the pump delivers what the cycle draws; nothing goes over the relief valve.
    assert run.periodic and run.relief_volume == pytest.approx(0.0, abs=1e-9)
    tol = 2 * OIL_TOL * d.bank.gas_volume  # the steady state repeats within this
    assert pumped == pytest.approx(drawn, abs=tol)
    # One load event per cycle (the command's start): the latch makes none of its own.
    assert run.load_events_per_hour == pytest.approx(3600.0 / (N * DT))
    # The pump ran until the cut-out, 2 L / 30 L/min = 4 s, and the pressure stopped there.
    loaded = float(run.trace["pump_loaded [-]"].sum() * DT)
    assert loaded == pytest.approx(drawn / PUMP, abs=tol / PUMP)
    assert run.trace["pressure [Pa]"].max() <= cut * (1 + 1e-3)
    assert run.setpoints == {"cut_out": cut}


def test_without_the_cut_out_the_surplus_goes_over_the_relief_valve():
    # The same command with the cut-out set out of reach (above the relief setting): the
    # 1 L the command delivers beyond the draw leaves over the relief valve every cycle.
    c = _cycle()
    d = _design(c)
    run = simulate(
        d, c, SETTINGS, "schedule", SETTINGS.t_min, setpoints={"cut_out": 400 * BAR + P_AMBIENT}
    )
    surplus = 6.0 * PUMP - float(np.sum(c.flow) * DT)
    assert run.relief_volume == pytest.approx(surplus, rel=1e-3)
    assert not run.passed  # the relief valve opens in operation
