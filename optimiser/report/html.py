"""The self-contained HTML report: one file, works offline, prints on A4.

Layout (each section is one function ``_section_<name>(result) -> str``, listed in
:data:`SECTIONS`): summary, duty cycle, the design at work, comparison, specification,
assumptions, safety.  Plotly's JavaScript is inlined once in the head; the figures follow as
``<div>`` plus a small ``Plotly.newPlot`` script each.  Every user-supplied string (study name,
file name, cycle labels, catalogue names, reasons) goes through :func:`html.escape`.
"""

from __future__ import annotations

import datetime as _dt
import html
import math
from collections.abc import Callable
from importlib import resources
from pathlib import PurePath

import plotly.graph_objects as go
import plotly.offline
from stowflow.costs.comparison import KIND_WORDS
from stowflow.cycle.duty import summarize
from stowflow.io import numbers
from stowflow.report import content, figures, objective, schematic, spec
from stowflow.report.content import money, q
from stowflow.report.display_units import catalogue_names, in_system_text, keeping
from stowflow.report.exports import spec_rows
from stowflow.report.figure_units import figure_in_system
from stowflow.report.table_units import table_in_system
from stowflow.units import kelvin_to_celsius
from stowflow.version import __version__

__all__ = ["SECTIONS", "figure_html", "render_html"]

_CONFIG = {
    "displaylogo": False,
    "responsive": True,
    "modeBarButtonsToRemove": ["lasso2d", "select2d"],
    "toImageButtonOptions": {"format": "svg"},
}


def e(value) -> str:
    """Escape any value for HTML text or a quoted attribute."""
    return html.escape("" if value is None else in_system_text(str(value)), quote=True)


def figure_html(fig: go.Figure | None, div_id: str, caption: str = "") -> str:
    """A figure as a ``<figure>`` with its Plotly div and script (plotly.js not included)."""
    fig = figure_in_system(fig)  # axes in the units of --units
    if fig is None:
        return ""
    body = fig.to_html(full_html=False, include_plotlyjs=False, div_id=div_id, config=_CONFIG)
    cap = f"<figcaption class='note'>{e(caption)}</figcaption>" if caption else ""
    return f"<figure class='plot' style='margin:6px 0 10px'>{body}{cap}</figure>"


def _table(
    headers: list[str],
    rows: list[list[str]],
    *,
    numeric: set[int] = frozenset(),
    cls: str = "wide",
    row_classes: list[str] | None = None,
    caption: str = "",
) -> str:
    """A table from already-escaped cells (columns headed "… [bar]" in the units of --units)."""
    rows, headers = table_in_system([list(r) for r in rows], headers, texts=False)
    head = "".join(
        f"<th class='n'>{h}</th>" if i in numeric else f"<th>{h}</th>"
        for i, h in enumerate(headers)
    )
    body = []
    for k, r in enumerate(rows):
        rc = f" class='{row_classes[k]}'" if row_classes and row_classes[k] else ""
        cells = "".join(
            f"<td class='n'>{c}</td>" if i in numeric else f"<td>{c}</td>" for i, c in enumerate(r)
        )
        if 0 < len(r) < len(headers):  # a short row: its last cell spans the rest
            span = len(headers) - len(r) + 1
            cells = cells[: cells.rfind("<td")] + f"<td colspan='{span}'>{r[-1]}</td>"
        body.append(f"<tr{rc}>{cells}</tr>")
    cap = f"<caption>{caption}</caption>" if caption else ""
    return (
        f"<div class='tablewrap'><table class='{cls}'>{cap}<thead><tr>{head}</tr></thead>"
        f"<tbody>{''.join(body)}</tbody></table></div>"
    )


# -- sections ------------------------------------------------------------------------------
#
# One function per section, ``_section_<name>(result) -> str``, listed in SECTIONS below: a
# new section is one function and one line there.


def _h2(sid: str, title: str) -> str:
    """A section's opening tag and heading, numbered by its place in :data:`SECTIONS`."""
    num = next((k for k, (s, _, _) in enumerate(SECTIONS) if s == sid), None)
    tag = f"<span class='num'>{num}</span>" if num else ""
    return f"<section id='{sid}'><h2>{tag}{e(title)}</h2>"


def _glance(result) -> str:
    """The key figures of the recommendation as a definition list."""
    rows = "".join(f"<dt>{e(k)}</dt><dd>{e(v)}</dd>" for k, v in content.glance(result))
    return f"<dl class='glance'>{rows}</dl>" if rows else ""


def _section_summary(result) -> str:
    why = content.reasons(result)
    reasons = (
        "<h3>Why this supply</h3><ul class='reasons'>"
        + "".join(f"<li>{e(x)}</li>" for x in why)
        + "</ul>"
        if why
        else ""
    )
    return (
        _h2("summary", "Recommendation")
        + f"<p class='lede'>{e(content.recommendation(result))}</p>"
        + _glance(result)
        + reasons
        + "<p class='callout'>Accumulators store energy and stay pressurised after the pump "
        "stops. Read the <a href='#safety'>safety cautions</a> before commissioning or any "
        "work on the circuit.</p></section>"
    )


def _saves(p, result) -> str:
    """A payback's yearly saving and installed power in words (negative: costs more)."""
    money_part = (
        f"saves {money(p.savings_per_year, result)} a year"
        if p.savings_per_year >= 0
        else f"costs {money(-p.savings_per_year, result)} a year more to run"
    )
    kw = p.installed_power_saved
    power = (
        f"{q(kw, 'power')} less installed power"
        if kw >= 0
        else f"{q(-kw, 'power')} more installed power"
    )
    return f"{money_part}, {power}"


def content_label(result, key: str) -> str:
    """Label of an option of the comparison."""
    return result.comparison.option(key).label


def _section_cycle(result) -> str:
    s = summarize(result.cycle)
    cyc = result.cycle
    rows = [
        ["cycle length", q(s.duration, "time")],
        ["time steps", f"{s.steps:,} × {q(s.step, 'time')}"],
        ["peak demand", q(s.peak_flow, "flow")],
        ["mean demand", q(s.mean_flow, "flow")],
        ["oil per cycle", q(s.volume_per_cycle, "volume")],
        ["highest required pressure", q(s.peak_required_pressure, "pressure", result)],
        ["mean hydraulic power", q(s.mean_hydraulic_power, "power")],
        ["peak hydraulic power", q(s.peak_hydraulic_power, "power")],
        ["mean over peak demand", numbers.shown(s.mean_to_peak_ratio, "ratio")],
    ]
    return (
        _h2("cycle", "The cycle")
        + f"<p>Cycle <b>{e(cyc.name)}</b> from <code>{e(PurePath(cyc.source).name)}</code> "
        f"({e(cyc.form)} table, grid {e(cyc.grid)}). The flow is what the machine draws from "
        "the pressure line; the pressure is what it needs at that moment (gauge).</p>"
        + figure_html(figures.cycle_figure(result), "fig-cycle")
        + _table(["quantity", "value"], [[e(a), e(b)] for a, b in rows], numeric={1}, cls="")
        + "</section>"
    )


def content_summary(result) -> dict:
    """The cycle summary in trade units (from :func:`stowflow.cycle.duty.summarize`)."""
    return summarize(result.cycle).as_dict()


def _switch_words(result) -> str:
    """The verified switch settings and the relief setting in one sentence."""
    d = result.design
    sp = content.setpoints_bar(result)
    relief = f"the relief valve is set to {q(d.relief, 'pressure', result, digits=3)}"
    if "load_below" in sp and "unload_above" in sp:
        lo = numbers.shown(sp["load_below"], "pressure")
        hi = numbers.shown(sp["unload_above"], "pressure")
        return f"The pressure switch loads the pump below {lo} and unloads it above {hi}; {relief}."
    return f"Working window {q(d.p_min, 'pressure', result, unit=False)} … " + (
        f"{q(d.p_max, 'pressure', result)}; {relief}."
    )


def _section_operation(result) -> str:
    d, v = result.design, result.verification
    head = _h2("operation", "The design at work")
    if not d.feasible:
        return head + f"<p>No design to show: {e(d.reason)}</p></section>"
    ops = content.operation_frames(result)
    if ops is not None and ops.source == "verification":
        verdict = "passes" if v.passed else "fails"
        src = (
            f"Simulated over repeated cycles with the <b>{e(ops.controller)}</b> controller, "
            "real nitrogen with heat exchange, at the coldest and the hottest temperature: the "
            f"supply {verdict} the check with a least margin of "
            f"{e(q(v.min_margin, 'pressure_difference'))} above the required pressure."
        )
    else:
        src = (
            "Quasi-static pressures of the design's schedule at the coldest and the hottest "
            "temperature (the time-domain check was not run)."
        )
    parts = [head, f"<p>{src} {e(_switch_words(result))}</p>"]
    if ops is not None and ops.source == "schedule" and d.bank is not None:
        short = {
            w: float(f["margin [bar]"].min())
            for w, f in ops.frames.items()
            if float(f["margin [bar]"].min()) < 0
        }
        if short:
            where = " and ".join(
                f"{numbers.shown(-m, 'pressure_difference')} at "
                f"{numbers.shown(ops.temperatures[w], 'temperature')}"
                for w, m in short.items()
            )
            parts.append(
                "<p class='callout'>With the stored oil of the schedule the quasi-static "
                f"pressure falls below the requirement by up to {e(where)}. The schedule is "
                "planned at the coldest temperature when the bank's windows at the two ends "
                "overlap too little; at the other end the cut-out or the pressure switch stores "
                "the oil that end needs. Only the time-domain check shows whether the supply "
                "holds.</p>"
            )
    if d.bank is None:
        parts.append(
            "<p class='note'>Pump-only design: the pump runs loaded at the relief setting; "
            "there is no stored oil.</p>"
        )
    parts.append(figure_html(figures.operation_figure(result), "fig-operation"))
    parts.append("</section>")
    return "".join(parts)


def _runs_table(rows: list[dict]) -> str:
    """Every controller × temperature the verification simulated; the first broken check of
    a failed run on a line of its own."""
    heads = [
        "controller", "temperature", "pump flow", "verdict", "least margin", "at",
        "peak pressure", "gas temperature", "energy per cycle", "loads per hour",
        "relief per cycle", "cycles simulated",
    ]  # fmt: skip
    numeric = {1, 4, 5, 6, 7, 8, 9, 10, 11}
    head = "".join(
        f"<th class='n'>{h}</th>" if i in numeric else f"<th>{h}</th>" for i, h in enumerate(heads)
    )
    body = []
    for r in rows:
        verdict = (
            "<span class='pass'>passed</span>"
            if r["passed"]
            else ("<span class='fail'>failed</span>")
        )
        cycles = f"{r['cycles_to_steady']:,}" + ("" if r["periodic"] else " (not settled)")
        cells = [
            e(r["controller"]) + (" (recommended)" if r["recommended"] else ""),
            e(numbers.shown(r["temperature_c"], "temperature")),
            e(r["pump_flow"]),
            verdict,
            e(numbers.shown(r["min_margin_bar"], "pressure_difference")),
            e(numbers.shown(r["min_margin_time_s"], "time")),
            e(numbers.shown(r["peak_pressure_bar"], "pressure")),
            e(numbers.shown(r["gas_temperature_min_c"], "temperature", unit=False))
            + " … "
            + e(numbers.shown(r["gas_temperature_max_c"], "temperature")),
            e(numbers.shown(r["energy_per_cycle_kj"], "energy")),
            e(numbers.shown(r["load_events_per_hour"], "count")),
            e(numbers.shown(r["relief_volume_l"], "volume")),
            e(cycles),
        ]
        cls = "rec" if r["recommended"] else "dim"
        tds = "".join(
            f"<td class='n'>{c}</td>" if i in numeric else f"<td>{c}</td>"
            for i, c in enumerate(cells)
        )
        body.append(f"<tr class='{cls}'>{tds}</tr>")
        if r["reason"]:
            body.append(
                f"<tr class='{cls} why'><td></td><td colspan='{len(heads) - 1}' class='note'>"
                f"{e(r['reason'])}</td></tr>"
            )
    return (
        "<div class='tablewrap'><table class='wide compact'><caption>Controllers simulated"
        f"</caption><thead><tr>{head}</tr></thead><tbody>{''.join(body)}</tbody></table></div>"
    )


def _comparison_lede(result) -> str:
    """The verdict against the strongest alternative, first thing in the section."""
    c = result.comparison
    best, ref = c.strongest, c.reference
    if best is None:
        return (
            "<p class='lede'>No pump-only supply from this catalogue could be priced: "
            + "; ".join(e(f"{o.label}: {o.reason}") for o in c.alternatives)
            + ".</p>"
        )
    years = c.settings.years
    head = (
        f"The strongest pump-only alternative, the one with the least total cost over {years} "
        f"years, is a {KIND_WORDS[best.key]} ({', '.join(best.components)}): "
        f"{money(best.tco, result)}."
    )
    if ref is None:
        return f"<p class='lede'>{e(head)}</p>"
    verdict = (
        f"Against it the accumulator supply {ref.note}."
        if c.recommended == "design"
        else "It costs less than the accumulator supply: the pump-only supply is the "
        f"recommendation. Against it the accumulator supply {ref.note}."
    )
    return f"<p class='lede'>{e(head)} {e(verdict)}</p>"


def _section_comparison(result) -> str:
    c = result.comparison
    head = _h2("comparison", "The comparison with pump-only supplies")
    rows, classes = [], []
    for o in c.options:
        if not o.feasible:
            rows.append([e(o.label), e(f"not available: {o.reason}")])
            classes.append("dim")
            continue
        p = c.payback(o.key)
        rows.append(
            [
                f"<span class='swatch {e(o.key)}'></span>{e(o.label)}<br>"
                f"<span class='note'>{e(', '.join(o.components))}</span>",
                e(q(o.installed_power, "power")),
                e(money(o.capex, result)),
                e(numbers.fmt(o.energy_per_year, "energy_per_year")),
                e(money(o.tco, result)),
                e(q(o.heat_load, "power")),
                "this design" if o.key == "design" else e(p.note) if p is not None else "–",
            ]
        )
        best = c.strongest
        classes.append(
            "rec" if o.key == (c.recommended or "design") else "best" if best and o is best else ""
        )
    table = _table(
        [
            "option",
            "installed",
            "capex",
            "energy per year",
            f"total over {c.settings.years} years",
            "heat into the oil",
            "accumulator supply against it",
        ],
        rows,
        numeric={1, 2, 3, 4, 5},
        row_classes=classes,
    )
    pay_rows = [
        [
            e(content_label(result, p.baseline)),
            e(q(p.installed_power_saved, "power")),
            e(money(p.extra_capex, result)),
            e(money(p.savings_per_year, result)),
            e(content.years(p.simple_years)),
            e(content.years(p.discounted_years)),
            e(money(p.tco_saving, result)),
        ]
        for p in c.paybacks
    ]
    pay = (
        _table(
            [
                "accumulator supply against",
                "installed power saved",
                "extra capex",
                "saving per year",
                "simple payback",
                "discounted payback",
                f"saving over {c.settings.years} years",
            ],
            pay_rows,
            numeric={1, 2, 3, 4, 5, 6},
            caption="Payback (negative savings: the accumulator supply costs more)",
        )
        if pay_rows
        else f"<p>No payback: {e(c.reason or 'no pump-only supply could be priced')}.</p>"
    )
    return (
        head
        + _comparison_lede(result)
        + table
        + figure_html(figures.comparison_figure(result), "fig-comparison")
        + figure_html(
            figures.breakdown_figure(result),
            "fig-breakdown",
            "Where the electrical energy goes, per year. Throttling, relief and compensator "
            "flow, standby circulation and pump losses heat the oil (the heat load a cooler "
            "must remove); motor and drive losses heat the air; the gas's heat leaves through "
            "the accumulator shell.",
        )
        + pay
        + figure_html(
            figures.timeline_figure(result),
            "fig-timeline",
            "Cumulative cost: capex plus the present value of the energy paid so far. The "
            "supply with the lower line has cost less by that year.",
        )
        + "</section>"
    )


def _price(value) -> str:
    """A price cell: whole units, grouped; empty when not priced."""
    return "" if value is None else e(numbers.shown(value, "money", unit=False))


def _section_specification(result) -> str:
    """Every item to buy, once: what it is, its properties, quantity and price."""
    head = _h2("specification", "Specification")
    items = spec.spec_items(result)
    if not items:
        return head + f"<p>Nothing to buy: {e(result.design.reason)}</p></section>"
    cur = content.currency(result)
    body, classes = [], []
    for it in items:
        rule = (("sizing rule", it.rule),) if it.rule else ()
        details = "".join(f"<tr><th>{e(k)}</th><td>{e(v)}</td></tr>" for k, v in it.details + rule)
        body.append(
            [
                f"<b>{e(it.item)}</b>",
                f"{e(it.description)}<table class='details'><tbody>{details}</tbody></table>"
                f"<span class='note'>{e(it.notes)}</span>",
                f"{it.quantity}",
                _price(it.unit_price),
                _price(it.total),
            ]
        )
        classes.append("")
    for r in spec_rows(result)[len(items) :]:  # installation allowance and the total
        body.append(
            [
                f"<b>{e(r['item'])}</b>",
                e(r["description"]) + (f"<br><span class='note'>{e(r['notes'])}</span>"),
                "" if r["quantity [-]"] is None else e(r["quantity [-]"]),
                _price(r[f"unit_price [{cur}]"]),
                _price(r[f"total [{cur}]"]),
            ]
        )
        classes.append("total" if r["item"] == "total" else "")
    return (
        head + "<p>What to buy, with the catalogue's prices (in the demo catalogue: placeholders, "
        "not quotes). Unpriced lines are not in the catalogue and must be quoted. The same "
        "lines are in <code>spec.csv</code>.</p>"
        + _table(
            ["item", "what to buy", "quantity", f"unit price [{e(cur)}]", f"total [{e(cur)}]"],
            body,
            numeric={2, 3, 4},
            row_classes=classes,
            cls="wide spec",
        )
        + schematic.schematics_html(result)
        + objective.objective_html(result)
        + "</section>"
    )


def _section_commissioning(result) -> str:
    """Precharge against temperature and the settings to make before the first start."""
    head = _h2("commissioning", "Commissioning")
    d = result.design
    if not d.feasible:
        return head + "<p>No design: nothing to commission.</p></section>"
    steps = []
    if d.bank is not None:
        steps.append(
            "With the oil side fully discharged and the gas at the shell's temperature, set "
            f"the precharge with nitrogen to {q(d.bank.precharge, 'pressure', result)} at "
            "20 °C, or to the value of the table below at the measured temperature."
        )
    steps.append(
        f"Set the relief valve to {q(d.relief, 'pressure', result, digits=3)} and check it "
        "before the first full-pressure run."
    )
    sp = content.setpoints_bar(result)
    if "load_below" in sp and "unload_above" in sp:
        steps.append(
            f"Set the pressure switch to load the pump below "
            f"{numbers.shown(sp['load_below'], 'pressure')} and unload it above "
            f"{numbers.shown(sp['unload_above'], 'pressure')}."
        )
    if d.bank is not None:
        steps.append(
            "Check the automatic discharge at shutdown: after the pump stops the gauge on the "
            "safety block must fall to zero."
        )
    parts = [head, "<ol class='steps'>" + "".join(f"<li>{e(x)}</li>" for x in steps) + "</ol>"]
    table = spec.precharge_table(result)
    if table is not None:
        rows = [
            [e(numbers.shown(t, "temperature")), e(numbers.shown(p, "pressure"))]
            for t, p in zip(table["temperature [°C]"], table["precharge [bar]"], strict=True)
        ]
        classes = [
            "rec" if abs(t - 20.0) < 1e-9 else ("" if inside else "dim")
            for t, inside in zip(table["temperature [°C]"], table["in_range"], strict=True)
        ]
        model = "real-gas nitrogen" if result.settings.gas_model == "real" else "ideal gas"
        parts.append(
            "<h3>Precharge against temperature</h3>"
            "<p>The value at 20 °C is the design value; the others hold the same gas charge "
            f"(constant volume, {e(model)}). Greyed rows lie outside the operating range.</p>"
            + _table(
                ["gas temperature", "precharge (gauge)"],
                rows,
                numeric={0, 1},
                cls="",
                row_classes=classes,
            )
        )
    parts.append("</section>")
    return "".join(parts)


def _section_safety(result) -> str:
    items = "".join(f"<li>{e(x)}</li>" for x in content.SAFETY_CAUTIONS)
    hint = spec.category_hint(result)
    if hint is not None:
        cat, note, ps, shell_l = hint
        cat_text = (
            f"Pressure-equipment category hint for one accumulator: <b>{e(cat)}</b> "
            f"(PS {e(numbers.shown(ps, 'pressure', digits=3))} × shell volume "
            f"{e(numbers.shown(shell_l, 'volume'))} = "
            f"{e(numbers.shown(ps * shell_l, 'count'))} bar·L). {e(note)}"
        )
    else:
        cat_text = (
            "No accumulator in this design; any accumulator added later needs the same "
            "pressure-equipment classification from PS·V (EU Directive 2014/68/EU, values from "
            "memory: check the directive and local codes)."
        )
    return (
        _h2("safety", "Safety")
        + "<p>Accumulators store energy and stay pressurised after the pumps stop.</p>"
        f"<ol class='safety'>{items}</ol><p>{cat_text}</p>"
        "<p>Local codes and standards take precedence over anything in this report.</p>"
        f"<p class='disclaimer'>{e(content.DISCLAIMER)}</p></section>"
    )


#: Headings of the stages' notes in the appendix.
_STAGE_TITLES = {
    "cycle": "Reading the cycle",
    "search": "The search",
    "verification": "The time-domain check",
    "costs": "The costs",
}


def _search_text(result) -> str:
    """How the search chose, with its counts and times, in plain words."""
    d = result.design
    st = d.stats
    models = numbers.count_words(st.families_solved, "schedule model")
    screened = numbers.count_words(st.candidates, "combination")
    text = (
        "The search ranks every supply the catalogue allows in a fixed order: least installed "
        "motor power first, then least capital cost, then least electrical energy per cycle. "
        "An exact screen finds the least accumulator for each pump, motor and precharge; a "
        "mixed-integer schedule model (solved with HiGHS) then plans when the pump loads for "
        f"the designs that tie. This study screened {screened} "
        f"and solved {models} in {numbers.shown(st.total_time, 'time')}; the whole study took "
        f"{numbers.shown(result.timings.get('total', math.nan), 'time')}."
    )
    lb = d.lower_bound_power
    if d.feasible and lb > 0:
        text += (
            f" No supply can install less than {q(lb, 'power')} (the mean hydraulic power over "
            "the best efficiencies in the catalogue); this design installs "
            f"{numbers.shown(d.installed_power / lb, 'ratio')} times that."
        )
    return text


def _alternatives_table(result) -> str:
    """The search's power–capex trade-off: the cheapest supply at each larger motor."""
    alts = result.design.alternatives
    if len(alts) < 2:
        return ""
    rows = [
        [
            e(q(a.installed_power, "power")),
            e(content._alternative_words(a)),
            e(money(a.capex, result)),
            "chosen" if k == 0 else "",
        ]
        for k, a in enumerate(alts)
    ]
    return _table(
        ["motor", "cheapest supply with it", "capex", ""],
        rows,
        numeric={0, 2},
        caption="Least installed power against capital cost",
    )


def _section_appendix(result) -> str:
    """How this was computed: search, solver levels, verification passes, assumptions, notes."""
    parts = [
        _h2("appendix", "Appendix: how this was computed"),
        "<p>For an engineer who wants to check the numbers.</p>",
        "<h3>The search</h3>",
        f"<p>{e(_search_text(result))}</p>",
        _alternatives_table(result),
        "<h3>Solver status</h3>",
        f"<p class='status'>{e(content.status_line(result))}</p>",
    ]
    rows = content.verification_rows(result)
    if rows:
        parts += [
            "<h3>Verification passes</h3>",
            "<p>Each controller simulated at the coldest and the hottest temperature, with the "
            "catalogue's pump flow and a worn pump's, cycle after cycle until the cycle "
            "repeats itself.</p>",
            _runs_table(rows),
        ]
    sources = [
        f"{o.label}: {o.energy_source}"
        for o in result.comparison.options
        if o.feasible and o.energy_source
    ]
    if sources:
        parts += [
            "<h3>Where each energy figure comes from</h3><ul class='notes'>",
            "".join(f"<li>{e(x)}</li>" for x in sources),
            "</ul>",
        ]
    assume = "".join(f"<dt>{e(k)}</dt><dd>{e(v)}</dd>" for k, v in content.assumptions(result))
    parts += ["<h3>Assumptions and sources</h3>", f"<dl class='assume'>{assume}</dl>"]
    for stage, notes in content.notes_by_stage(result).items():
        if notes:
            items = "".join(f"<li>{e(n)}</li>" for n in notes)
            parts.append(
                f"<h3>Notes: {e(_STAGE_TITLES[stage].lower())}</h3><ul class='notes'>{items}</ul>"
            )
    parts.append("</section>")
    return "".join(parts)


#: The report's sections in order: (anchor id, title in the contents, renderer).
SECTIONS: tuple[tuple[str, str, Callable[..., str]], ...] = (
    ("summary", "Recommendation", _section_summary),
    ("cycle", "The cycle", _section_cycle),
    ("operation", "The design at work", _section_operation),
    ("comparison", "The comparison", _section_comparison),
    ("specification", "Specification", _section_specification),
    ("commissioning", "Commissioning", _section_commissioning),
    ("safety", "Safety", _section_safety),
    ("appendix", "How this was computed", _section_appendix),
)


# Plots are drawn at the screen's width; a printed page is narrower.  Redraw them at the
# printable width of A4 portrait (210 mm − 2 × 12 mm margins ≈ 700 CSS px) before printing and
# back to the window's width afterwards.
_PRINT_JS = """
(function () {
  var PRINT_WIDTH = 700;
  function plots() { return document.querySelectorAll('.js-plotly-plot'); }
  function toPrint() {
    plots().forEach(function (p) { Plotly.relayout(p, {width: PRINT_WIDTH, autosize: false}); });
  }
  function toScreen() {
    plots().forEach(function (p) { Plotly.relayout(p, {width: null, autosize: true}); });
  }
  window.addEventListener('beforeprint', toPrint);
  window.addEventListener('afterprint', toScreen);
})();
"""


def _css() -> str:
    """The style sheet, with each supply's colour from :data:`figures.COLOURS` (one source for
    the charts and the tables)."""
    sheet = resources.files("stowflow.report").joinpath("style.css").read_text(encoding="utf-8")
    swatches = "".join(
        f".swatch.{key} {{ background: {figures.COLOURS[key]}; }}\n" for key in figures.SUPPLY_KEYS
    )
    return sheet + swatches


def render_html(result, *, generated: _dt.date | None = None) -> str:
    """The report of a study as one self-contained HTML document.

    Parameters
    ----------
    result : StudyResult
        A study's result (feasible or not, verified or not).
    generated : datetime.date, optional
        Date printed in the header (default today).

    Returns
    -------
    str
        The HTML text: plotly.js inlined once, no external resources.  Texts are in the
        unit system in force (``--units``); catalogue names stay as the catalogue writes them.
    """
    with keeping(catalogue_names(result)):
        return _document(result, generated)


def _document(result, generated: _dt.date | None) -> str:
    """The HTML text of :func:`render_html`."""
    day = (generated or _dt.date.today()).isoformat()
    cyc = result.cycle
    toc = "".join(
        f"<a href='#{sid}'>{f'<span>{k}</span>' if k else ''}{e(title)}</a>"
        for k, (sid, title, _) in enumerate(SECTIONS)
    )
    sections = "".join(render(result) for _, _, render in SECTIONS)
    t_lo = kelvin_to_celsius(result.settings.t_min)
    t_hi = kelvin_to_celsius(result.settings.t_max)
    meta = (
        f"cycle {cyc.name} · {cyc.n_steps:,} steps of {cyc.dt:g} s · "
        f"{t_lo:.0f} °C … {t_hi:.0f} °C · "
        # the file name only: a report travels, and a local folder means nothing to its reader
        f"catalogue {PurePath(result.catalogue.source).name} · {day} · stowflow {__version__}"
    )
    plotly_js = plotly.offline.get_plotlyjs()
    return (
        "<!DOCTYPE html>\n<html lang='en'><head><meta charset='utf-8'>"
        "<meta name='viewport' content='width=device-width, initial-scale=1'>"
        f"<meta name='generator' content='stowflow {e(__version__)}'>"
        f"<title>{e(result.name)} · supply design report · stowflow</title>"
        f"<style>{_css()}</style>"
        f"<script type='text/javascript'>{plotly_js}</script>"
        "</head><body><div class='sheet'>"
        "<header class='masthead'><div class='brand'><b>stowflow</b> · hydraulic supply design "
        "report</div>"
        f"<h1>{e(result.name)}</h1><p class='meta'>{e(meta)}</p></header>"
        f"<nav class='toc'>{toc}</nav><main>{sections}</main>"
        f"<footer>{e(content.DISCLAIMER)} Generated by stowflow {e(__version__)}.</footer>"
        f"</div><script type='text/javascript'>{_PRINT_JS}</script></body></html>\n"
    )
