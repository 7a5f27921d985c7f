"""Electrical energy per cycle of an accumulator supply against an integration by hand.

The demo forming press (invented input) is designed and verified by ``pipeline.run``; every
run of the recommended controller (both temperature ends, catalogue and worn pump) has a
one-cycle trace of its periodic steady state.  From that trace alone, the energy the motor
draws is integrated here by the model the verification states (module docstring of
stowflow.simulation.verify):

    E = Σ_steps [Q_k·Δt·(p_k − p_amb) + Q_p·p_standby·(1 − u_k)·Δt] / η_o / η_m

with Q_k the pump's delivery in step k (loaded fraction u_k of its full flow Q_p), p_k the
pressure it works against, η_o the pump's overall efficiency (a worn pump's falls with its
delivery: same shaft power, less flow, ``worn_design``) and η_m the motor's.  The trace gives
the pressure at step ends and its least and greatest value within each step, so:

* the exact energy lies between the sums with p_k = the step's least and greatest pressure
  (a bound, no approximation);
* the trapezoid rule on the step-end pressures agrees to O(Δt²).

Neither uses a function of the code under test; the expected values are the trace's own
numbers, never pinned demo results.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
from stowflow.pipeline import Study, run
from stowflow.simulation._loop import OIL_TOL

#: Trapezoid on step-end pressures against the code's within-step integral, relative, [-]:
#: O(Δt²); 1e-6 seen on the demo, a quarter of the 4e-4 half-width of the bound.
TRAPEZOID_RTOL = 1e-4
#: Rounding of the sums, relative, [-].
SUM_RTOL = 1e-12

DEMO = Path(__file__).resolve().parents[2] / "duty_cycles" / "forming_press.csv"


@pytest.fixture(scope="module")
def study():
    res = run(Study(cycle=DEMO))
    assert res.verification is not None and res.verification.passed
    return res


def _runs(res):
    v = res.verification
    return [r for r in v.runs if r.controller == v.controller]


def test_every_recommended_run_is_checked(study):
    # Two temperatures × catalogue and worn pump.
    assert {(r.temperature, r.worn) for r in _runs(study)} == {
        (study.settings.t_min, False),
        (study.settings.t_max, False),
        (study.settings.t_min, True),
        (study.settings.t_max, True),
    }


@pytest.mark.parametrize("which", range(4))
def test_energy_per_cycle_by_hand(study, which):
    s, d = study.settings, study.design
    r = sorted(_runs(study), key=lambda r: (r.worn, r.temperature))[which]
    tr = r.trace
    dt = study.cycle.dt
    pa = s.p_ambient
    keep = 1.0 - s.flow_margin if r.worn else 1.0
    q_full = d.pump.flow * keep  # the worn pump delivers (1 − margin) of its catalogue flow
    eta_o = d.pump.overall_efficiency * keep
    eta_m = d.motor.efficiency
    u = tr["pump_loaded [-]"].to_numpy()
    q = tr["pump_flow [m³/s]"].to_numpy()
    assert len(tr) == study.cycle.flow.size
    # The pump delivers its full flow for the loaded fraction of each step.
    np.testing.assert_allclose(q, q_full * u, rtol=1e-9, atol=1e-15)
    # Oil balance of the bank: what the pump delivers less relief and demand, step by step;
    # across the cycle's end to within the steady-state criterion (OIL_TOL of the gas volume).
    oil = tr["accumulator_oil [m³]"].to_numpy()
    net = (q - tr["relief_flow [m³/s]"].to_numpy() - tr["demand [m³/s]"].to_numpy()) * dt
    np.testing.assert_allclose(oil[:-1] + net[1:], oil[1:], rtol=0, atol=1e-9)
    assert abs(oil[-1] + net[0] - oil[0]) <= OIL_TOL * d.bank.gas_volume

    standby = np.sum(q_full * s.standby_pressure * (1.0 - u) * dt)

    def energy(p_gauge):
        return (np.sum(q * dt * p_gauge) + standby) / eta_o / eta_m

    p = tr["pressure [Pa]"].to_numpy()
    low = energy(tr["pressure_min [Pa]"].to_numpy() - pa)
    high = energy(tr["pressure_max [Pa]"].to_numpy() - pa)
    trapezoid = energy(0.5 * (p + np.roll(p, 1)) - pa)  # periodic: step 0 starts at the end
    assert low * (1 - SUM_RTOL) <= r.energy_per_cycle <= high * (1 + SUM_RTOL)
    assert r.energy_per_cycle == pytest.approx(trapezoid, rel=TRAPEZOID_RTOL)
