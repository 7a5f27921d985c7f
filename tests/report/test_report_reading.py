"""The report reads without help: plain numbers, one specification, the computation in an
appendix, a recommendation with its reasons (issue 19's "done when" checks)."""

from __future__ import annotations

import re
from html.parser import HTMLParser

import pytest
from _report_studies import forming_press, forming_press_verified, hostile, infeasible
from stowflow.report import content, render_html, spec
from stowflow.report.html import SECTIONS

#: A number in exponent notation: 1e-06, 1.83e+05, 2E5.
EXPONENT = re.compile(r"\b\d+(?:\.\d+)?[eE][-+]?\d+\b")


class _Text(HTMLParser):
    """The text a reader sees: everything outside <script> and <style>."""

    def __init__(self):
        super().__init__()
        self.skip = 0
        self.parts: list[str] = []

    def handle_starttag(self, tag, attrs):
        if tag in ("script", "style"):
            self.skip += 1
        self.parts.append(" ")

    def handle_endtag(self, tag):
        if tag in ("script", "style"):
            self.skip -= 1
        self.parts.append(" ")

    def handle_data(self, data):
        if not self.skip:
            self.parts.append(data)


def visible_text(page: str) -> str:
    """The visible text of a report page, whitespace collapsed."""
    p = _Text()
    p.feed(page)
    return re.sub(r"\s+", " ", "".join(p.parts))


def _studies():
    verified = forming_press_verified()
    return [forming_press(), *([verified] if verified is not None else []), infeasible()]


@pytest.fixture(scope="module", params=["press", "press-verified", "infeasible"])
def study(request):
    if request.param == "press":
        return forming_press()
    if request.param == "infeasible":
        return infeasible()
    r = forming_press_verified()
    if r is None:
        pytest.skip("the time-domain verification is not available in this tree")
    return r


def test_no_exponent_numbers_and_no_s_plurals(study):
    text = visible_text(render_html(study))
    assert not EXPONENT.findall(text), EXPONENT.findall(text)
    assert "(s)" not in text


def test_the_specification_is_shown_once(study):
    page = render_html(study)
    text = visible_text(page)
    assert page.count("<section id='specification'>") == 1
    for it in spec.spec_items(study):
        assert text.count(it.description) == 1, it.description


def test_sections_in_the_issues_order_with_the_appendix_last(study):
    page = render_html(study)
    ids = [sid for sid, _, _ in SECTIONS]
    assert ids == [
        "summary", "cycle", "operation", "comparison", "specification", "commissioning",
        "safety", "appendix",
    ]  # fmt: skip
    positions = [page.find(f"<section id='{sid}'>") for sid in ids]
    assert all(p > 0 for p in positions) and positions == sorted(positions)
    appendix = page[positions[-1] :]
    assert "How this was computed" in page
    # solver internals live in the appendix only
    for word in ("MIP gap", "schedule model", "integrator"):
        if word in page:
            assert page.find(word) > positions[-1], word
    assert "Assumptions and sources" in appendix


def test_the_recommendation_says_why_it_won():
    r = forming_press()
    why = content.reasons(r)
    text = visible_text(render_html(r))
    assert "Why this supply" in text
    # the search's order and the cost ranking, from the result
    assert any("least motor power" in x for x in why)
    ranking = next(x for x in why if x.startswith("Total cost over"))
    priced = sorted((o for o in r.comparison.options if o.feasible), key=lambda o: o.tco)
    amounts = [f"{o.tco:,.0f} EUR" for o in priced]
    assert [ranking.find(a) for a in amounts] == sorted(ranking.find(a) for a in amounts)
    for a in r.design.alternatives[1:3]:
        assert f"{a.capex:,.0f} EUR" in text
    for x in why:
        assert x in text


def test_hostile_strings_stay_plain_in_the_new_sections():
    text = visible_text(render_html(hostile()))
    assert "alert(" in text  # shown as text, escaped in the page (tests/report/test_report.py)
    assert not EXPONENT.findall(text)


def _verified_or_plain():
    return forming_press_verified() or forming_press()


def test_setpoint_labels_are_legend_entries_not_floating_text():
    from stowflow.report import figures

    r = _verified_or_plain()
    fig = figures.operation_figure(r)
    texts = [a.text for a in fig.layout.annotations]
    assert not any("bar" in t and ("load" in t or "relief" in t) for t in texts), texts
    names = [t.name for t in fig.data if t.showlegend is not False]
    assert any(n.startswith("relief valve ") for n in names)
    sp = content.setpoints_bar(r)
    if "load_below" in sp:
        assert any(n.startswith("switch: load below ") for n in names)
        assert any(n.startswith("switch: unload above ") for n in names)
    # every axis carries a unit: a bracketed unit in its title, or named ticks (on/off)
    for name in ("yaxis", "yaxis2", "yaxis4", "xaxis4"):
        assert "[" in fig.layout[name].title.text, name
    assert list(fig.layout.yaxis3.ticktext) == ["off", "on"]


def test_a_supply_has_one_colour_in_every_chart_and_table():
    from stowflow.report import figures

    r = forming_press()
    supply = {figures.COLOURS[k]: k for k in figures.SUPPLY_KEYS}
    assert len(supply) == len(figures.SUPPLY_KEYS)  # no two supplies share a colour
    seen = {}
    for make in (figures.comparison_figure, figures.timeline_figure):
        for trace in make(r).data:
            colours = trace.marker.color if trace.type == "bar" else trace.line.color
            for c in [colours] if isinstance(colours, str) else colours:
                assert c in supply, c
    for trace in figures.timeline_figure(r).data:
        key = next(
            o.key for o in r.comparison.options if figures._OPTION_NAMES[o.key] == trace.name
        )
        seen[key] = trace.line.color
        assert trace.line.color == figures.COLOURS[key]
    # lines and bars that are not a supply never borrow a supply's colour
    others = [*figures.breakdown_figure(r).data, *figures.cycle_figure(r).data]
    others += list(figures.operation_figure(_verified_or_plain()).data)
    for trace in others:
        colour = trace.marker.color if trace.type == "bar" else getattr(trace.line, "color", None)
        assert colour not in supply, (trace.name, colour)
    # the tables' swatches take the same colours
    page = render_html(r)
    for key in figures.SUPPLY_KEYS:
        assert f".swatch.{key} {{ background: {figures.COLOURS[key]}; }}" in page
