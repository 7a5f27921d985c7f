"""The objective and the runners-up in design.json and the report (stowflow.report.objective)."""

from __future__ import annotations

import json
import math

from _report_studies import forming_press
from stowflow.report import design_record
from stowflow.report.html import render_html
from stowflow.report.objective import runner_rows


def test_design_json_names_the_objective_and_the_runners_up():
    r = forming_press()
    rec = json.loads(json.dumps(design_record(r), allow_nan=False))["objective"]
    assert rec["objective"] == "power" and rec["max_category"] is None
    assert rec["max_count"] == r.settings.max_count
    designs = rec["designs"]
    assert len(designs) == 1 + len(r.design.runners_up) and designs[0]["design"] == "chosen"
    for row in designs:
        assert set(row) >= {"installed power [kW]", "capex", "tco", "gas volume [L]"}


def test_tco_of_each_row_is_capex_plus_the_energy_priced_like_the_comparison():
    r = forming_press()
    c = r.comparison
    f, price = c.settings.installation_factor, c.settings.energy_price
    for row in runner_rows(r):
        e = row["energy per cycle [kWh]"] * 3.6e6  # 1 kWh = 3.6 MJ (definition)
        want = f * row["capex"] + price * e * c.cycles_per_year * c.annuity_factor
        assert math.isclose(row["tco"], want, rel_tol=1e-9)


def test_report_shows_the_objective_and_the_table():
    html = render_html(forming_press())
    assert "Objective and runners-up" in html and "runner-up 1" in html
