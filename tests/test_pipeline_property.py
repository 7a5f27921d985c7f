"""A property of the closed loop on random small cycles (hypothesis, seeded).

For every cycle drawn: what ``pipeline.run`` returns as a design passes the time-domain
verification again when re-run on its own (its recommended controller with the settings it
states, and the timed schedule it exports) at both temperature ends with catalogue and worn
pump flow; and a cycle that a pump-only supply serves is never answered with "no design".
The cycles are invented test inputs; the checks come from the design's own contract.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from stowflow.catalogue import default_catalogue_path, load_catalogue
from stowflow.cycle.duty import cycle_from_arrays
from stowflow.pipeline import Study, run
from stowflow.search.designer import design
from stowflow.search.settings import DesignSettings
from stowflow.simulation.verify import verify
from stowflow.units import BAR, LPM, P_AMBIENT

CATALOGUE = load_catalogue(default_catalogue_path())


@st.composite
def small_cycles(draw):
    """3–5 phases of 1–8 s (0.25 s steps), 0–120 L/min at 40–200 bar gauge."""
    phases = draw(st.integers(3, 5))
    steps = draw(st.lists(st.integers(4, 32), min_size=phases, max_size=phases))
    flows = draw(st.lists(st.floats(0.0, 120.0), min_size=phases, max_size=phases))
    flows[draw(st.integers(0, phases - 1))] = draw(st.floats(10.0, 120.0))  # some demand
    bars = draw(st.lists(st.floats(40.0, 200.0), min_size=phases, max_size=phases))
    flow = np.repeat(np.asarray(flows) * LPM, steps)
    pressure = np.repeat(np.asarray(bars) * BAR + P_AMBIENT, steps)
    return cycle_from_arrays(0.25, flow, pressure, name="random")


@pytest.mark.slow
@settings(
    max_examples=8,
    deadline=None,
    derandomize=True,
    suppress_health_check=[HealthCheck.too_slow],
)
@given(small_cycles())
def test_what_the_loop_returns_passes_again_and_pump_only_cycles_get_a_design(cycle):
    s = DesignSettings()
    res = run(Study(cycle=cycle, catalogue=CATALOGUE, settings=s))
    pump_only = design(cycle, CATALOGUE, s.with_(types=()))
    if pump_only.feasible:
        assert res.design.feasible, res.design.reason
    if not res.design.feasible:
        return
    v = res.verification
    assert v is not None and v.passed
    # Re-run on its own: the recommended controller with the settings the design states.
    again = verify(res.design, cycle, s, controllers=(v.controller,), setpoints=v.setpoints or None)
    conds = {(r.temperature, r.worn) for r in again.runs}
    assert conds == {(T, w) for T in (s.t_min, s.t_max) for w in (False, True)}
    assert again.passed and all(r.passed for r in again.runs)
    # The exported schedule, when there is one, passes in the same four runs.
    if res.design.bank is not None and not res.design.schedule.empty:
        sch = verify(res.design, cycle, s, controllers=("schedule",), setpoints=v.setpoints)
        assert len(sch.runs) == 4 and all(r.passed for r in sch.runs), [r.reason for r in sch.runs]
