"""The HTML report: self-contained, escaped, complete (summary, figures, specification, safety).

Rendering only: the numbers in the report are checked against the StudyResult they came from.
"""

from __future__ import annotations

import html
import re

import numpy as np
import plotly.offline
import pytest
from _report_studies import (
    ACC_NAME,
    CURRENCY,
    SCRIPT_LABEL,
    STUDY_NAME,
    forming_press,
    forming_press_verified,
    hostile,
    infeasible,
)
from stowflow.costs import KIND_WORDS
from stowflow.report import content, render_html, spec
from stowflow.report.html import SECTIONS
from stowflow.units import T_REF

#: A tenth of the 0.1 bar the report prints, [bar].
PRINT_TOL_BAR = 0.01
#: Largest report we accept for a demo cycle, [MB] (plotly.js alone is about 4.8 MB).
MAX_REPORT_MB = 8.0

#: The cautions every report must carry: paraphrases of sources.ISO_4413 (from memory) and the
#: caveats of the pressure-equipment hint (sources.PED_2014_68_EU, from memory).
SAFETY_PHRASES = (
    "nitrogen only, never with air or oxygen",
    "Discharge the accumulator automatically, or isolate it positively",
    "relief valve set at or below the accumulator's maximum allowable pressure PS",
    "Discharge before disassembly",
    "use only nitrogen",
    "Pressure-equipment category hint",
    "from memory",
    "competent person",
    "does not replace licensed engineering practice",
)


@pytest.fixture(scope="module")
def page():
    return render_html(forming_press())


def _without_plotly_js(text: str) -> str:
    js = plotly.offline.get_plotlyjs()
    assert text.count(js) == 1, "plotly.js must be inlined exactly once"
    return text.replace(js, "")


def test_plotly_js_is_inlined_exactly_once(page):
    js = plotly.offline.get_plotlyjs()
    assert page.count(js) == 1
    # one <script> for plotly.js, one per figure (its Plotly.newPlot call) and the print hook
    scripts = page.count("<script")
    assert scripts == 2 + page.count("Plotly.newPlot(")
    # cycle, design at work, comparison bars, energy breakdown, cost over time
    assert page.count("Plotly.newPlot(") == 5


def test_report_has_no_external_resources(page):
    rest = _without_plotly_js(page)
    assert not re.search(r"<script[^>]*\bsrc\s*=", rest, re.I)
    assert not re.search(r"<link\b", rest, re.I)
    assert not re.search(r"<(img|iframe|object|embed)\b", rest, re.I)
    assert not re.search(r"(src|href)\s*=\s*[\"']?\s*(https?:)?//", rest, re.I)
    assert "@import" not in rest and "url(" not in rest


def test_report_size(page):
    assert len(page.encode("utf-8")) / 1e6 < MAX_REPORT_MB


def test_report_has_every_section_in_order(page):
    positions = [page.find(f"<section id='{sid}'>") for sid, _, _ in SECTIONS]
    assert all(p > 0 for p in positions)
    assert positions == sorted(positions)
    assert "@media print" in page


def test_summary_states_the_recommendation_from_the_result(page):
    # The sentence judges the design against the strongest alternative (least TCO) and
    # recommends the cheaper of the two over the horizon.
    r = forming_press()
    c = r.comparison
    d, best, ref = r.design, c.strongest, c.reference
    assert best.tco == min(o.tco for o in c.alternatives if o.feasible)
    sentence = content.recommendation(r)
    if c.recommended == "design":
        assert sentence.startswith(f"Use {d.bank.count} × ")
        assert f"{d.motor.rated_power / 1e3:g} kW motor" in sentence
        assert f"{d.pump.displacement * 1e6:g} cm³/rev pump" in sentence
        assert "strongest pump-only alternative" in sentence
    else:
        assert best.tco < c.option("design").tco
        assert sentence.startswith(f"A pump-only {KIND_WORDS[best.key]} (")
        assert f"costs less over {c.settings.years} years" in sentence
        assert f"{best.tco:,.0f} EUR against {c.option('design').tco:,.0f} EUR" in sentence
        assert "Use the pump-only supply" in sentence
    assert ref.note in sentence
    assert sentence.replace("'", "&#x27;") in page
    assert "status optimal" in page


def test_comparison_and_specification_numbers(page):
    r = forming_press()
    cur = content.currency(r)
    assert cur == "EUR"  # the demo catalogue's currency
    d = r.comparison.option("design")
    assert f"{d.capex:,.0f} EUR" in page
    assert f"{r.comparison.option('fixed').tco:,.0f} EUR" in page
    bank = r.design.bank
    assert f"<tr><th>count</th><td>{bank.count}</td></tr>" in page
    p0 = (bank.precharge - r.settings.p_ambient) / 1e5
    assert f"{p0:.1f} bar" in page


def test_precharge_table_for_commissioning():
    r = forming_press()
    t = spec.precharge_table(r)
    temps = t["temperature [°C]"].to_numpy()
    p = t["precharge [bar]"].to_numpy()
    # every 5 °C from 10 °C below the coldest to 10 °C above the hottest, 20 °C included
    assert temps[0] == 0.0 and temps[-1] == 60.0 and np.all(np.diff(temps) == 5.0)
    p_amb = r.settings.p_ambient / 1e5
    row20 = p[temps == 20.0][0]
    # the report prints 0.1 bar; the tabulated gas path reproduces 20 °C to about 1e-6
    assert row20 == pytest.approx((r.design.bank.precharge / 1e5) - p_amb, abs=PRINT_TOL_BAR)
    assert np.all(np.diff(p) > 0)
    # sources.SPAN_2000 computed with sources.COOLPROP 8.0.0: at constant volume from 100 bar
    # abs, 20 → 50 °C gives 112.58 bar abs for real nitrogen against 110.23 ideal: the real
    # gas rises faster than T/T_ref near these pressures, so the 50 °C row must lie above the
    # ideal-gas value.
    p50_abs = p[temps == 50.0][0] + p_amb
    ideal = (row20 + p_amb) * (323.15 / T_REF)
    assert p50_abs > ideal
    assert list(t["in_range"]) == [10.0 <= x <= 50.0 for x in temps]


def test_safety_cautions_are_in_every_report(page):
    # The cautions paraphrase sources.ISO_4413 (from memory); the check is that they are there.
    for phrase in SAFETY_PHRASES:
        assert phrase in html.unescape(page), phrase
    bad = html.unescape(render_html(infeasible()))
    for phrase in SAFETY_PHRASES[:5] + SAFETY_PHRASES[7:]:
        assert phrase in bad, phrase


def test_pressure_equipment_hint_of_the_bank(page):
    cat, note, ps, shell_l = spec.category_hint(forming_press())
    # sources.PED_2014_68_EU (from memory): Annex II Table 2, PS·V > 3000 bar·L
    # is category IV; the demo press uses 125 L units at PS 350 bar (43,750 bar·L).
    assert ps * shell_l > 3000 and cat == "IV"
    assert "from memory" in note
    assert f"<b>{cat}</b>" in page


def test_user_strings_are_inert_in_the_html():
    text = render_html(hostile())
    rest = _without_plotly_js(text)
    # nothing the user wrote becomes markup
    assert "<script>alert" not in text
    assert "<img src=x" not in text
    assert "<b>EUR</b>" not in text
    # but it is shown, escaped, where it belongs
    assert "&lt;img src=x onerror=alert(2)&gt;" in rest  # study name in the title and header
    assert "&lt;script&gt;alert(3)&lt;/script&gt;" in rest  # catalogue name in the spec
    assert "&lt;b&gt;EUR&lt;/b&gt;" in rest  # currency label
    # the catalogue's file name, escaped, without the folder it was read from
    assert "&lt;img src=y onerror=alert(4)&gt;.toml" in rest
    assert "/srv/uploads" not in rest
    # cycle labels travel in the figure data: HTML-escaped before Plotly sees them (Plotly
    # renders some tags in labels), then JSON-escaped by Plotly inside the script block
    assert "\\u003cscript\\u003ealert(1)" not in rest
    assert "alert(1)" in rest
    assert STUDY_NAME not in rest and ACC_NAME not in rest and SCRIPT_LABEL not in rest
    assert CURRENCY not in rest


def test_infeasible_report_renders_with_the_reason():
    r = infeasible()
    text = render_html(r)
    assert "No supply from this catalogue meets the cycle" in text
    assert "status infeasible" in text
    reason = r.design.reason.replace("'", "&#x27;")
    assert reason in text
    assert "Nothing to buy" in text
    assert text.count("Plotly.newPlot(") >= 1  # the cycle is still drawn


def test_verified_report_shows_the_controllers_and_setpoints():
    r = forming_press_verified()
    if r is None:
        pytest.skip("the time-domain verification is not available in this tree")
    text = render_html(r)
    v = r.verification
    assert "Simulated over repeated cycles with the" in text or not r.design.feasible
    if r.design.feasible:
        assert "Controllers simulated" in text
        sp = content.setpoints_bar(r)
        if "load_below" in sp:
            assert f"{sp['load_below']:.1f} bar" in text
    assert ("passed" if v.passed else "failed") in text


def test_generated_date_is_printed():
    import datetime

    text = render_html(forming_press(), generated=datetime.date(2024, 1, 2))
    assert "2024-01-02" in text
