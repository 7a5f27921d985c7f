"""``stowflow explore``: the trade-off front against a brute force, and the sensitivity.

Sources of truth:
* the independent brute force of tests/search/test_search.py (every pump, motor,
  accumulator row, count and precharge judged by a plain step-by-step simulation of the
  always-loaded store on its own gas curves), here keeping, for each pump, motor and row,
  the least count that works: the set of designs the front is drawn from;
* installed power, capex and gas volume worked out by hand from the catalogue rows of each
  design, and a pairwise dominance check written here;
* self-consistency: the case "nothing changed" is the design's own verification again.

The small catalogue and the seeded cycle are test inputs (made up); no expected value comes
from them, only from the brute force and the arithmetic.
"""

from __future__ import annotations

import dataclasses
import math
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "search"))
import test_search as ground
from stowflow.physics import accumulator as acc
from stowflow.studies.explore import (
    OBJECTIVES,
    Case,
    apply_case,
    explore_cycle,
    non_dominated,
)

#: A seeded small cycle of the brute force's generator whose design carries a bank and
#: passes its verification (a test input).
SEED = 3009
SETTINGS = ground.GROUND_TRUTH_SETTINGS
CATALOGUE = ground.SMALL


def _brute_designs(cyc, cat, s) -> set[tuple]:
    """(pump, motor, accumulator row or None, count): for each pump, motor and row that
    work together, the least count that some precharge of the grid carries through the
    step-by-step simulation; each pump-only supply whose motor carries the relief setting."""
    from stowflow.search.problem import make_problem, resolve_process

    demand, dt = np.asarray(cyc.flow), cyc.dt
    p_step = np.asarray(cyc.pressure) + s.line_loss
    p_end = np.maximum(p_step, np.roll(p_step, -1))
    proc, _ = resolve_process(demand, dt, s)
    problem = make_problem(cyc, s)
    worn = 1.0 - s.flow_margin
    found = set()
    for pump in cat.pumps:
        if pump.flow * worn < demand.mean():
            continue
        for motor in cat.motors:
            p_motor = s.p_ambient + motor.rated_power * pump.overall_efficiency / pump.flow
            by_motor = s.max_unload_for_relief(p_motor)
            by_pump = s.max_unload_for_relief(pump.max_pressure)
            relief = s.relief_setting(p_end.max())
            shaft = pump.flow * (relief - s.p_ambient) / pump.overall_efficiency
            if (
                s.allow_pump_only
                and pump.flow * worn >= demand.max()
                and shaft <= motor.rated_power
                and relief <= pump.max_pressure
            ):
                found.add((pump.name, motor.name, None, 0))
            for opt in cat.accumulators:
                rules = acc.rules_for(opt.type)
                q_unit = acc.unit_flow_limit(
                    opt.type, opt.nominal_volume, opt.bore, opt.max_flow, rules
                )
                p_allow = min(by_motor, by_pump, s.max_unload_for_relief(opt.max_pressure))
                p0_grid = np.arange(s.p_ambient + 2 * ground.BAR, p_allow, s.precharge_step)
                for count in range(1, s.max_count + 1):
                    if demand.max() - pump.flow * worn > count * q_unit:
                        continue
                    v0 = count * opt.nominal_volume
                    if any(
                        ground._simulate_ok(
                            demand,
                            dt,
                            pump.flow * worn,
                            v0,
                            p0,
                            p_end,
                            p_allow,
                            opt,
                            rules,
                            proc,
                            s,
                            problem,
                        )
                        for p0 in p0_grid
                    ):
                        found.add((pump.name, motor.name, opt.name, count))
                        break
    return found


@pytest.fixture(scope="module")
def explored():
    cyc = ground._random_cycle(SEED)
    ex = explore_cycle(cyc, CATALOGUE, SETTINGS, _costs(), samples=3, seed=1, workers=1)
    return cyc, ex


def _costs():
    from stowflow.costs.comparison import CostSettings

    return CostSettings()


@pytest.mark.slow
def test_the_candidates_are_the_brute_force_designs(explored):
    cyc, ex = explored
    got = {
        (r["pump"], r["motor"], None if pd.isna(r["accumulator"]) else r["accumulator"], r["count"])
        for r in ex.candidates.to_dict("records")
    }
    assert got == _brute_designs(cyc, CATALOGUE, SETTINGS)


@pytest.mark.slow
def test_power_capex_and_gas_by_hand(explored):
    _, ex = explored
    pumps = {p.name: p for p in CATALOGUE.pumps}
    motors = {m.name: m for m in CATALOGUE.motors}
    rows = {a.name: a for a in CATALOGUE.accumulators}
    for r in ex.candidates.to_dict("records"):
        opt = None if pd.isna(r["accumulator"]) else rows[r["accumulator"]]
        bank = 0.0 if opt is None else r["count"] * opt.price
        assert r["capex"] == pytest.approx(bank + pumps[r["pump"]].price + motors[r["motor"]].price)
        assert r["motor [kW]"] == pytest.approx(motors[r["motor"]].rated_power / 1e3)
        # Separator types: the nominal volume is the gas volume (no gas-over-oil here).
        gas = 0.0 if opt is None else r["count"] * opt.nominal_volume * 1e3
        assert r["total_gas_volume [L]"] == pytest.approx(gas)


@pytest.mark.slow
def test_the_front_is_exactly_the_non_dominated_candidates(explored):
    _, ex = explored
    v = ex.candidates[list(OBJECTIVES)].to_numpy()
    assert np.isfinite(v).all()
    for i, row in enumerate(v):
        beaten = [j for j in range(len(v)) if j != i and (v[j] <= row).all() and (v[j] < row).any()]
        equal_before = [j for j in range(i) if (v[j] == row).all()]
        assert bool(ex.candidates["on_front"].iloc[i]) == (not beaten and not equal_before), i
    assert int(ex.front["chosen"].sum()) == 1  # the chosen design is marked
    front = ex.front[ex.front["on_front"]]
    assert len(front) == int(ex.candidates["on_front"].sum()) > 0
    # No design on the front is dominated by any candidate.
    for row in front[list(OBJECTIVES)].to_numpy():
        assert not any((w <= row).all() and (w < row).any() for w in v)


def test_non_dominated_by_hand():
    # (kW, capex): (1, 5) and (2, 3) trade off; (2, 6) is beaten by both; (1, 5) twice keeps one.
    pts = np.array([[1.0, 5.0], [2.0, 3.0], [2.0, 6.0], [1.0, 5.0], [3.0, 3.0]])
    assert non_dominated(pts).tolist() == [True, True, False, False, False]


@pytest.mark.slow
def test_nothing_changed_reproduces_the_verified_margin_exactly(explored):
    from stowflow.simulation.verify import verify

    cyc, ex = explored
    d, v, s = ex.study.design, ex.study.verification, ex.study.settings
    assert d.feasible and v is not None and v.passed
    same = verify(*apply_case(Case("nothing changed"), d, cyc, s), setpoints=v.setpoints)
    assert same.min_margin == v.min_margin
    sens = ex.sensitivity.set_index("case")
    assert sens.loc["nothing changed", "min_margin [bar]"] == v.min_margin / 1e5
    assert sens.loc["nothing changed", "margin_change [bar]"] == 0.0
    assert int(sens["breaks_first"].sum()) == 1
    assert not sens.loc["nothing changed", "breaks_first"]
    # A precharge lost is the same design with less gas, re-verified with the same switch
    # settings: a different run (with fixed settings the margin need not fall: the pressure
    # rises faster per litre charged, so a draw may start higher).
    lost = sens.loc["precharge −10 %", "min_margin [bar]"]
    assert np.isfinite(lost) and lost != v.min_margin / 1e5
    assert len(ex.monte_carlo) == 3


def test_a_case_changes_only_what_it_names():
    from stowflow.cycle.duty import cycle_from_arrays
    from stowflow.search.settings import DesignSettings

    cyc = cycle_from_arrays(1.0, np.array([1e-3, 0.0]), np.array([100e5, 100e5]))
    s = DesignSettings()

    # only what apply_case reads of a design
    made = dataclasses.make_dataclass("Made", ["bank", "pump", "motor"], frozen=True)
    d = made(None, ground._pump(10, 100, eta_o=0.9), ground._motor(5, 100, eta=0.9))
    d2, c2, s2 = apply_case(
        Case("x", colder=10, hotter=10, tau_factor=2, cycle_flow_gain=0.1, efficiency_loss=0.03),
        d,
        cyc,
        s,
    )
    assert s2.t_min == s.t_min - 10 and s2.t_max == s.t_max + 10
    assert s2.time_constant == 2 * s.time_constant
    assert np.allclose(c2.flow, 1.1 * cyc.flow)
    assert d2.pump.overall_efficiency == pytest.approx(0.87)
    assert d2.motor.efficiency == pytest.approx(0.87)
    d3, _, _ = apply_case(Case("y", pump_flow_loss=0.1), d, cyc, s)
    assert d3.pump.flow == pytest.approx(0.9 * d.pump.flow)
    # the shaft power at a pressure stays: flow / overall efficiency unchanged
    assert d3.pump.flow / d3.pump.overall_efficiency == pytest.approx(
        d.pump.flow / d.pump.overall_efficiency
    )
    assert math.isclose(s2.p_ambient, s.p_ambient)


@pytest.mark.slow
def test_the_files_hold_the_frames(explored, tmp_path):
    import re

    from stowflow.studies.explore import EXPLORE_OUTPUTS, write_exploration

    _, ex = explored
    paths = write_exploration(ex, tmp_path / "x")
    assert set(paths) == set(EXPLORE_OUTPUTS)
    pd.testing.assert_frame_equal(pd.read_csv(paths["front.csv"]), ex.front)
    pd.testing.assert_frame_equal(pd.read_csv(paths["sensitivity.csv"]), ex.sensitivity)
    pd.testing.assert_frame_equal(pd.read_csv(paths["monte_carlo.csv"]), ex.monte_carlo)
    html = paths["explore.html"].read_text(encoding="utf-8")
    assert "chosen design" in html and "nothing changed" in html
    assert not re.search(r"<(script|link)[^>]+(src|href)=", html)


def test_explore_refuses_a_negative_sample_count(run_cli, repo_root):
    code, _, stderr = run_cli(
        "explore", repo_root / "duty_cycles" / "forming_press.csv", "--samples", "-1"
    )
    assert code == 2 and "--samples" in stderr and stderr.count("\n") == 1
