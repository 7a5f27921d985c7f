"""Sizes of the circuit's items beyond the catalogue (stowflow.costs.circuit) and their lines
in spec.csv and the report's specification."""

from __future__ import annotations

import csv
import io
import math

import pytest
from _report_studies import forming_press
from sources import EN_837_1, EN_10305_4, ESPOSITO_2009, ISO_3
from stowflow.costs import circuit as cc
from stowflow.report.exports import spec_csv
from stowflow.report.html import render_html

BAR = 1e5  # Pa per bar (definition)
LPM = 1e-3 / 60  # m³/s per L/min (definition)
MM = 1e-3
#: The hand values below are worked to four digits.
HAND_RTOL = 1e-3

#: Every item of the supply circuit the specification must carry (issue: bill of materials).
CIRCUIT_ITEMS = (
    "accumulator",
    "pump",
    "motor",
    "relief valve",
    "pressure switch",
    "unloading valve",
    "accumulator safety block",
    "non-return valve",
    "pressure gauge",
    "cooler",
    "tank",
    "return filter",
    "suction line",
    "pump line",
    "pressure line",
    "return line",
)


def test_pipe_size_by_hand():
    """100 L/min in a pressure line at 250 bar, velocity limit 5 m/s.

    Velocity limit: inside the 7-20 ft/s (2.1-6.1 m/s) of working lines, sources.ESPOSITO_2009
    (from memory).  By hand (continuity): Q = 100/60000 = 1.6667e-3 m³/s, A = Q/v = 3.3333e-4
    m², d = √(4A/π) = 20.60 mm.  Tubes of sources.EN_10305_4 (from memory) with a bore of at
    least 20.6 mm, in list order: 28 × 2 (bore 24 mm) is rated 2·(235/1.5 MPa)·2/28 = 223.8
    bar by Barlow, short of 250; 28 × 3 (bore 22 mm) is rated 335.7 bar: chosen, with a mean
    velocity of 1.6667e-3 / (π/4 · 0.022²) = 4.385 m/s.
    """
    line = cc.pick_tube("pressure line", 100 * LPM, 5.0, 250 * BAR)
    assert line.least_bore == pytest.approx(20.60 * MM, rel=HAND_RTOL), ESPOSITO_2009
    assert (line.outside, line.wall) == pytest.approx((28 * MM, 3 * MM)), EN_10305_4
    assert line.bore == pytest.approx(22 * MM)
    assert line.rating == pytest.approx(335.7 * BAR, rel=HAND_RTOL)
    assert line.velocity == pytest.approx(4.385, rel=HAND_RTOL)
    assert cc.tube_rating(28 * MM, 2 * MM) == pytest.approx(223.8 * BAR, rel=HAND_RTOL)


def test_pipe_too_large_for_the_list_says_so():
    line = cc.pick_tube("return line", 5000 * LPM, 3.0, 10 * BAR)
    assert math.isnan(line.outside) and line.least_bore > 0.1


def test_gauge_range_is_the_next_scale_above_one_and_a_half_times():
    """sources.EN_837_1 (from memory): ranges ... 160, 250, 400, 600 bar.  244.2 bar × 1.5 =
    366.3 bar → 400 bar; 100 bar × 1.5 = 150 → 160; 160 × 1.5 = 240 → 250 (factor 1.5:
    common practice, no published source)."""
    assert cc.gauge_range(244.2 * BAR) == pytest.approx(400 * BAR), EN_837_1
    assert cc.gauge_range(100 * BAR) == pytest.approx(160 * BAR), EN_837_1
    assert cc.gauge_range(160 * BAR) == pytest.approx(250 * BAR), EN_837_1


def test_tank_rounding_and_bank_oil():
    """R10 series of sources.ISO_3: 128 → 160, 100 → 100, 0.0031 → 0.00315.  Boyle: 10 L of
    gas at 100 bar abs holds 10·(1 − 100/200) = 5 L of oil at 200 bar abs."""
    assert cc.r10_up(128.0) == pytest.approx(160.0), ISO_3
    assert cc.r10_up(100.0) == pytest.approx(100.0), ISO_3
    assert cc.r10_up(0.0031) == pytest.approx(0.00315), ISO_3
    assert cc.bank_oil_at(10e-3, 100 * BAR, 200 * BAR) == pytest.approx(5e-3)
    assert cc.bank_oil_at(10e-3, 100 * BAR, 90 * BAR) == 0.0


def test_circuit_sizes_of_a_design_follow_their_rules():
    r = forming_press()
    d, s = r.design, r.settings
    heat = r.comparison.option("design").heat_load
    sz = cc.circuit_sizes(d, s, r.cycle, heat)
    q = d.pump.flow
    assert sz.check_valve_flow == q
    assert sz.tank_volume >= cc.TANK_MINUTES * 60 * q + sz.bank_oil - 1e-12
    assert sz.filter_flow >= max(r.cycle.flow.max(), q)
    assert sz.cooler_capacity == pytest.approx(cc.COOLER_MARGIN * heat)
    for line in sz.lines:
        assert line.velocity <= line.velocity_limit * (1 + 1e-12)
        assert line.rating >= line.pressure


def test_every_circuit_item_is_in_spec_csv_and_the_report():
    r = forming_press()
    rows = list(csv.DictReader(io.StringIO(spec_csv(r))))
    items = [row["item"] for row in rows]
    for name in CIRCUIT_ITEMS:
        assert name in items, name
    for row in rows[:-1]:  # every item but the total states its sizing rule
        assert row["sizing_rule"].strip(), row["item"]
    html = render_html(r)
    for name in CIRCUIT_ITEMS:
        assert f"<b>{name}</b>" in html, name  # one row of the specification table
    assert "sizing rule" in html and "400 V, 50 Hz" in html
