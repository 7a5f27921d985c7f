"""Every bundled demo cycle end to end: the energy breakdowns add up, the headline names the
least-TCO alternative and its verdict matches the numbers.

Internal consistency checks (no outside source; demo data is never an expected value here):
the parts of each breakdown are computed from flows and pressures, the electrical energy from
the loss models, so their sums agree only when the bookkeeping and the flow balance hold.
"""

from __future__ import annotations

import functools
from pathlib import Path

import numpy as np
import pytest
from stowflow.report.exports import design_record

REPO = Path(__file__).resolve().parents[2]
DEMOS = sorted(p.stem for p in (REPO / "duty_cycles").glob("*.csv"))

BREAKDOWN_REL = 1e-3  # the bar: within 0.1 %
# The trace holds step-end pressures; the account takes each step at the mean of its start
# and end, the verification integrates within the step.  Their work into the gas may differ
# by a small share of the pump's work (our own bound for a smooth trace).
GAS_WORK_SHARE = 0.01


@functools.cache
def _study(name: str):
    from stowflow.pipeline import Study, run

    return run(Study(cycle=REPO / "duty_cycles" / f"{name}.csv"))


pytestmark = pytest.mark.slow


@pytest.mark.parametrize("name", DEMOS)
def test_every_breakdown_adds_up_to_the_electrical_energy(name):
    r = _study(name)
    c = r.comparison
    priced = [o for o in c.options if o.feasible]
    assert len([o for o in priced if o.key != "design"]) >= 3
    for o in priced:
        b = o.breakdown
        assert b is not None, o.key
        assert b.total == pytest.approx(b.electrical, rel=BREAKDOWN_REL), o.key
        assert b.electrical == pytest.approx(o.energy_per_cycle, rel=1e-12), o.key
        assert o.heat_load > 0


@pytest.mark.parametrize("name", DEMOS)
def test_the_design_energy_is_read_from_the_verification_runs(name):
    r = _study(name)
    v, d = r.verification, r.comparison.option("design")
    assert v is not None and "time-domain verification" in d.energy_source
    runs = [v.run(v.controller, "cold"), v.run(v.controller, "hot")]
    runs = list({id(x): x for x in runs}.values())
    gas = np.mean(
        [x.work["pump [J]"] - x.work["consumer [J]"] - x.work["relief [J]"] for x in runs]
    )
    pump = np.mean([x.work["pump [J]"] for x in runs])
    assert abs(d.breakdown.gas_heat - gas) <= GAS_WORK_SHARE * pump


@pytest.mark.parametrize("name", DEMOS)
def test_design_json_names_the_strongest_alternative_and_its_verdict(name):
    r = _study(name)
    c = r.comparison
    rec = design_record(r)
    best = c.strongest
    assert rec["costs"]["payback_against"] == best.key
    assert best.tco == min(o.tco for o in c.alternatives if o.feasible)
    design_tco = c.option("design").tco
    assert rec["costs"]["pays_back"] == (design_tco <= best.tco)
    assert rec["costs"]["recommended"] == ("design" if design_tco <= best.tco else best.key)
    assert [b["kind"] for b in rec["baselines"]] == [o.key for o in c.alternatives]
    for b in rec["baselines"]:
        if b["feasible"]:
            assert b["verdict"]["pays_back"] == (b["tco"] >= rec["costs"]["tco"] - 0.01)
            bd = b["energy_breakdown"]
            assert sum(bd["per_cycle_kj"].values()) == pytest.approx(
                bd["electrical_per_cycle_kj"], rel=BREAKDOWN_REL
            )
    assert rec["heat_load_kw"] > 0 and rec["energy_breakdown"]["per_year_kwh"]["useful"] > 0
    note = rec["costs"]["verdict_note"]
    assert "0.0 years" not in note
    if "pays back in" in note:
        assert rec["costs"]["discounted_payback_years"] <= c.settings.years
