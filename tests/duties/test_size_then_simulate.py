"""Property: what ``size`` returns holds its pressure when simulated.

``stowflow.duties.sizing.size_accumulator`` promises (its default ``charge="slow"``): the
pump charges the gas slowly (isothermal) to p2 at the wall temperature, the machine then
draws ΔV fast (adiabatic), and the pressure stays at or above p1, at every temperature
between T_min and T_max.  Here that duty is built as a cycle and run through the time-domain
simulation (``stowflow.simulation.verify.simulate``, real or ideal nitrogen with the thermal
time constant τ):

* the bank: one bladder of the returned gas volume at the returned precharge;
* a pressure switch unloads the pump at p2 and loads it again below (p1 + p2)/2, i.e. once
  per cycle, after the draw;
* the pump refills ΔV over 100 τ and the gas then rests 20 τ at p2 (slow: a first-order lag
  with e^-20 left of the rest's start); the draw takes ΔV in one step of τ/20 (fast).

Tolerance on p1, from the physics of a finite charge rate: a steady refill at the rate q
leaves the gas warmer than the wall by g·(q·τ/V)·T (the linearised energy equation of
sources.OTIS_POURMOVAHED_1985; g = (∂p/∂T)_v·α_p T/(ρ c_v), γ − 1 for the ideal gas,
computed from CoolProp in tests/_textbook.py); the switch unloads there and the gas then cools
at constant volume, so the store starts its draw up to g·(q·τ/V_top)·p2 below p2.  Plus 1e-4
of p1 for the nitrogen table and the integration.  The draw's small heat gain from the wall
and the pump loading within the draw step only raise the pressure.
"""

from __future__ import annotations

import math

import _textbook as textbook
import numpy as np
import pandas as pd
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from stowflow.catalogue import AccumulatorOption, MotorOption, PumpOption
from stowflow.cycle.duty import cycle_from_arrays
from stowflow.duties.sizing import size_accumulator
from stowflow.search.settings import DesignSettings
from stowflow.search.solution import Bank, Design
from stowflow.simulation.verify import simulate
from stowflow.units import BAR, P_AMBIENT, ZERO_CELSIUS

TAU = 5.0  # thermal time constant, [s] (the default)
DT = TAU / 20  # step, [s]: the draw takes one step
REFILL = 100 * TAU  # the pump refills ΔV in this time, [s]
REST = 20 * TAU  # then the gas rests at p2, [s]
#: Nitrogen table and integration, relative to p1, [-].
NUMERIC_RTOL = 1e-4


def _design(v0, p0, p1, p2, q) -> Design:
    """One bladder of ``v0`` at the precharge ``p0`` (20 °C) and a pump of ``q`` [m³/s]
    (test inputs built from the sizing, not catalogue rows)."""
    bladder = AccumulatorOption("bladder", v0, max(2 * p2, 400 * BAR), 0.0, 1.0, "sized")
    pump = PumpOption(q, 1.0, 2 * p2, 1.0, 0.9, 1.0, "pump")
    motor = MotorOption(1e6, 0.9, 1.0, "motor")
    empty = pd.DataFrame()
    nan = math.nan
    return Design("feasible", None, Bank(bladder, 1, p0), pump, motor, p1, p2, 1.2 * p2,
                  "adiabatic", empty, nan, nan, nan, {}, nan)  # fmt: skip


@settings(max_examples=30, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    litres=st.floats(0.5, 20.0),
    p1_bar=st.floats(20.0, 200.0),
    ratio=st.floats(1.15, 2.0),
    t_min_c=st.floats(-20.0, 50.0),
    spread=st.floats(0.0, 40.0),
    model=st.sampled_from(["ideal", "real"]),
)
def test_sized_accumulator_holds_p1_when_simulated(litres, p1_bar, ratio, t_min_c, spread, model):
    dv = litres * 1e-3
    p1 = P_AMBIENT + p1_bar * BAR
    p2 = P_AMBIENT + min(ratio * p1_bar, 300.0) * BAR
    t_min = ZERO_CELSIUS + t_min_c
    t_max = t_min + spread
    g = size_accumulator(
        dv, p1, p2, model=model, T_min=t_min, T_max=t_max, types=["bladder"]
    ).governing
    v0, p0 = g.required_gas_volume, g.precharge_ref
    q = dv / REFILL
    n = round((REFILL + REST) / DT)
    flow = np.zeros(n + 1)
    flow[-1] = dv / DT  # the fast draw, last step
    cycle = cycle_from_arrays(DT, flow, np.full(n + 1, p1))
    s = DesignSettings(
        t_min=t_min,
        t_max=t_max,
        gas_model=model,
        line_loss=0.0,
        time_constant=TAU,
        switch_tolerance=0.0,
    )
    switch = {"load_below": 0.5 * (p1 + p2), "unload_above": p2}
    design = _design(v0, p0, p1, p2, q)
    rho0 = textbook.density(p0, textbook.T_20C, model)  # the precharge's gas
    for T in (t_min, t_max):
        run = simulate(design, cycle, s, "pressure-switch", T, setpoints=switch,
                       estimate_error=False)  # fmt: skip
        v_top = v0 * rho0 / textbook.density(p2, T, model)
        heat = textbook.heating_factor(p2, T, model) * q * TAU / v_top * p2
        tol = heat + NUMERIC_RTOL * p1
        assert run.min_margin >= -tol, (
            f"{model} gas at {T - ZERO_CELSIUS:.1f} °C: pressure {run.min_margin / BAR:+.3f} "
            f"bar from p1 (tolerance {tol / BAR:.3f} bar); V0 {v0 * 1e3:.3f} L, "
            f"p0 {(p0 - P_AMBIENT) / BAR:.2f} bar"
        )
