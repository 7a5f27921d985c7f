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
from stowflow.report import content, figures, objective, schematic, spec
from stowflow.report.content import fmt, money
from stowflow.report.exports import spec_rows
from stowflow.units import kelvin_to_celsius, to_unit
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
    return html.escape("" if value is None else str(value), quote=True)


def figure_html(fig: go.Figure | None, div_id: str, caption: str = "") -> str:
    """A figure as a ``<figure>`` with its Plotly div and script (plotly.js not included)."""
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
    """A table from already-escaped cells."""
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


def _section_summary(result) -> str:
    d, c = result.design, result.comparison
    status_cls = (
        "infeasible"
        if not d.feasible
        else (
            "failed" if result.verification is not None and not result.verification.passed else ""
        )
    )
    cards = []
    ref, best = c.reference, c.strongest
    for row in content.key_figures(result):
        if not row["feasible"]:
            cards.append(
                f"<div class='card {e(row['key'])} na'><h4>{e(row['label'])}</h4>"
                f"<p>not available: {e(row['reason'])}</p></div>"
            )
            continue
        tag = " (strongest alternative)" if best is not None and row["key"] == best.key else ""
        cards.append(
            f"<div class='card {e(row['key'])}'><h4>{e(row['label'])}{e(tag)}</h4>"
            f"<div class='big'>{fmt(row['installed_kw'], 'g')} <small>kW installed</small></div>"
            "<dl>"
            f"<dt>capex</dt><dd>{e(money(row['capex'], result))}</dd>"
            f"<dt>energy per year</dt><dd>{fmt(row['energy_mwh'], ',.1f', 'MWh')}</dd>"
            f"<dt>energy cost per year</dt><dd>{e(money(row['energy_cost'], result))}</dd>"
            f"<dt>total over {c.settings.years} years</dt><dd>{e(money(row['tco'], result))}</dd>"
            + f"<dt>heat into the oil</dt><dd>{fmt(row['heat_load_kw'], '.3g', 'kW')}</dd>"
            + "</dl>"
            + (
                f"<p class='note'>against the strongest alternative: {e(ref.note)}</p>"
                if row["key"] == "design" and ref is not None
                else ""
            )
            + "</div>"
        )
    pays = "".join(
        f"<li>against a {e(KIND_WORDS[p.baseline])}: {e(p.note)}; {e(_saves(p, result))}</li>"
        for p in c.paybacks
    )
    return (
        "<section id='summary'><h2>Recommendation</h2>"
        f"<p class='lede'>{e(content.recommendation(result))}</p>"
        f"<p class='status {status_cls}'>{e(content.status_line(result))}</p>"
        f"<div class='cards'>{''.join(cards)}</div>"
        + (f"<ul class='notes'>{pays}</ul>" if pays else "")
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
    kw = to_unit(p.installed_power_saved, "kW", "power")
    power = (
        f"{fmt(kw, 'g', 'kW')} less installed power"
        if kw >= 0
        else f"{fmt(-kw, 'g', 'kW')} more installed power"
    )
    return f"{money_part}, {power}"


def content_label(result, key: str) -> str:
    """Label of an option of the comparison."""
    return result.comparison.option(key).label


def _section_cycle(result) -> str:
    s = content_summary(result)
    rows = [
        ["cycle length", fmt(s.get("duration_s"), "g", "s")],
        ["time steps", f"{s.get('steps')} × {fmt(s.get('step_s'), 'g', 's')}"],
        ["peak demand", fmt(s.get("peak_flow_lpm"), ".1f", "L/min")],
        ["mean demand", fmt(s.get("mean_flow_lpm"), ".1f", "L/min")],
        ["oil per cycle", fmt(s.get("volume_per_cycle_l"), ".2f", "L")],
        ["highest required pressure", fmt(s.get("peak_required_pressure_bar"), ".0f", "bar")],
        ["mean hydraulic power", fmt(s.get("mean_hydraulic_power_kw"), ".2f", "kW")],
        ["peak hydraulic power", fmt(s.get("peak_hydraulic_power_kw"), ".2f", "kW")],
        ["mean over peak demand", fmt(s.get("mean_to_peak_ratio"), ".2f")],
    ]
    return (
        "<section id='cycle'><h2><span class='num'>1</span>The duty cycle</h2>"
        f"<p>Cycle <b>{e(result.cycle.name)}</b> from <code>{e(result.cycle.source)}</code> "
        f"({e(result.cycle.form)} table, grid {e(result.cycle.grid)}). The flow is what the "
        "machine draws from the pressure line; the pressure is what it needs at that moment "
        "(gauge).</p>"
        + figure_html(figures.cycle_figure(result), "fig-cycle")
        + _table(["quantity", "value"], [[e(a), e(b)] for a, b in rows], numeric={1}, cls="")
        + "</section>"
    )


def content_summary(result) -> dict:
    """The cycle summary in trade units (from :func:`stowflow.cycle.duty.summarize`)."""
    return summarize(result.cycle).as_dict()


def _section_operation(result) -> str:
    d, v = result.design, result.verification
    head = "<section id='operation'><h2><span class='num'>2</span>The design at work</h2>"
    if not d.feasible:
        return head + f"<p>No design to show: {e(d.reason)}</p></section>"
    ops = content.operation_frames(result)
    if ops is not None and ops.source == "verification":
        src = (
            f"Time-domain verification with the <b>{e(ops.controller)}</b> controller in its "
            "periodic steady state: real-gas nitrogen with heat exchange (thermal time "
            f"constant {v.time_constant:g} s), at the coldest and the hottest temperature."
        )
    else:
        src = (
            "Quasi-static pressures of the design's schedule at the coldest and the hottest "
            "temperature (the time-domain verification was not run)."
        )
    parts = [head, f"<p>{src}</p>"]
    if ops is not None and ops.source == "schedule" and d.bank is not None:
        short = {
            w: float(f["margin [bar]"].min())
            for w, f in ops.frames.items()
            if float(f["margin [bar]"].min()) < 0
        }
        if short:
            where = " and ".join(
                f"{-m:.1f} bar at {ops.temperatures[w]:.0f} °C" for w, m in short.items()
            )
            parts.append(
                "<p class='callout'>With the oil trajectory of the planned schedule the "
                f"quasi-static pressure falls below the requirement by up to {e(where)}. The "
                "schedule is planned for one temperature when no single open-loop schedule "
                "holds across the range; a pressure switch then stores more oil when cold. "
                "Only the time-domain verification shows whether the supply holds.</p>"
            )
    if d.bank is None:
        parts.append(
            "<p class='note'>Pump-only design: the pump runs loaded at the relief setting; "
            "there is no stored oil.</p>"
        )
    parts.append(figure_html(figures.operation_figure(result), "fig-operation"))
    rows = content.verification_rows(result)
    if rows:
        parts.append(_runs_table(rows))
    else:
        parts.append(
            f"<p>Working window {content.bar_g(d.p_min, result):.1f} … "
            f"{content.bar_g(d.p_max, result):.1f} bar; relief set to "
            f"{content.bar_g(d.relief, result):.0f} bar. Switch setpoints come from the "
            "time-domain verification.</p>"
        )
    parts.append("</section>")
    return "".join(parts)


def _runs_table(rows: list[dict]) -> str:
    """Every controller × temperature the verification simulated; the first broken check of
    a failed run on a line of its own."""
    heads = [
        "controller", "temperature", "verdict", "least margin", "at", "peak pressure",
        "gas temperature", "energy per cycle", "loads per hour", "relief per cycle",
    ]  # fmt: skip
    numeric = {1, 3, 4, 5, 6, 7, 8, 9}
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
        cells = [
            e(r["controller"]) + (" (recommended)" if r["recommended"] else ""),
            fmt(r["temperature_c"], ".0f", "°C"),
            verdict,
            fmt(r["min_margin_bar"], ".2f", "bar"),
            fmt(r["min_margin_time_s"], ".2f", "s"),
            fmt(r["peak_pressure_bar"], ".1f", "bar"),
            fmt(r["gas_temperature_min_c"], ".0f")
            + " … "
            + fmt(r["gas_temperature_max_c"], ".0f", "°C"),
            fmt(r["energy_per_cycle_kj"], ",.1f", "kJ"),
            fmt(r["load_events_per_hour"], ".0f"),
            fmt(r["relief_volume_l"], ".3f", "L"),
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
    head = "<section id='comparison'><h2><span class='num'>3</span>Against a pump-only supply</h2>"
    rows, classes = [], []
    for o in c.options:
        if not o.feasible:
            rows.append([e(o.label), e(f"not available: {o.reason}")])
            classes.append("dim")
            continue
        p = c.payback(o.key)
        rows.append(
            [
                f"{e(o.label)}<br><span class='note'>{e(', '.join(o.components))}</span>",
                fmt(to_unit(o.installed_power, "kW", "power"), "g", "kW"),
                e(money(o.capex, result)),
                fmt(to_unit(o.energy_per_year, "MWh", "energy"), ",.1f", "MWh"),
                e(money(o.tco, result)),
                fmt(to_unit(o.heat_load, "kW", "power"), ".3g", "kW"),
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
    sources = "; ".join(
        f"{o.key}: {o.energy_source}" for o in c.options if o.feasible and o.energy_source
    )
    table += f"<p class='note'>Energy per cycle from {e(sources)}.</p>"
    pay_rows = [
        [
            e(content_label(result, p.baseline)),
            fmt(to_unit(p.installed_power_saved, "kW", "power"), "g", "kW"),
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


def _section_specification(result) -> str:
    head = (
        "<section id='specification'><h2><span class='num'>4</span>"
        "Specification for procurement</h2>"
    )
    items = spec.spec_items(result)
    if not items:
        return head + f"<p>Nothing to buy: {e(result.design.reason)}</p></section>"
    cur = content.currency(result)
    blocks = []
    for it in items:
        rule = (("sizing rule", it.rule),) if it.rule else ()
        rows = "".join(f"<tr><th>{e(k)}</th><td>{e(v)}</td></tr>" for k, v in it.details + rule)
        blocks.append(
            f"<table><caption>{e(it.item)}</caption><tbody>{rows}"
            f"<tr><th>quantity</th><td>{it.quantity}</td></tr></tbody></table>"
        )
    bill = spec_rows(result)
    keys = [k for k in bill[0] if k != "sizing_rule"]  # the rules are in the items
    body, classes = [], []
    for r in bill:
        body.append(
            [
                e(r[k])
                if k in ("item", "description", "notes")
                else (
                    "" if r[k] is None else (f"{r[k]:,.0f}" if isinstance(r[k], float) else e(r[k]))
                )
                for k in keys
            ]
        )
        classes.append("total" if r["item"] == "total" else "")
    parts = [head, "<h3>Quantities and prices</h3>"]
    parts.append(
        _table(
            [
                "item",
                "description",
                "quantity",
                f"unit price [{e(cur)}]",
                f"total [{e(cur)}]",
                "notes",
            ],
            body,
            numeric={2, 3, 4},
            row_classes=classes,
        )
    )
    parts.append(
        "<p class='note'>Prices are the catalogue's (in the demo catalogue: placeholders, not "
        "quotes). Unpriced lines are not in the catalogue and must be quoted. The same lines "
        "are in <code>spec.csv</code>.</p>"
    )
    parts.append(schematic.schematics_html(result) + objective.objective_html(result))
    parts.append("<h3>Items</h3>")
    parts.append(f"<div class='spec-grid'>{''.join(blocks)}</div>")
    table = spec.precharge_table(result)
    if table is not None:
        rows = [
            [fmt(t, ".0f", "°C"), fmt(p, ".1f", "bar")]
            for t, p in zip(table["temperature [°C]"], table["precharge [bar]"], strict=True)
        ]
        classes = [
            "rec" if abs(t - 20.0) < 1e-9 else ("" if inside else "dim")
            for t, inside in zip(table["temperature [°C]"], table["in_range"], strict=True)
        ]
        model = "real-gas nitrogen" if result.settings.gas_model == "real" else "ideal gas"
        parts.append(
            "<h3>Commissioning: precharge against temperature</h3>"
            "<p>Set and check the precharge with the oil side fully discharged and the gas at "
            "the temperature of the shell. The value at 20 °C is the design value; the others "
            f"hold the same gas charge (constant volume, {e(model)}). Greyed rows lie outside "
            "the operating range.</p>"
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


def _section_assumptions(result) -> str:
    rows = "".join(f"<dt>{e(k)}</dt><dd>{e(v)}</dd>" for k, v in content.assumptions(result))
    notes = "".join(f"<li>{e(n)}</li>" for n in content.notes(result))
    st = result.design.stats
    timing = (
        f"Search: {st.candidates} combinations screened, {st.families_solved} schedule model(s) "
        f"solved, {st.total_time:.1f} s in total; study wall-clock "
        f"{result.timings.get('total', math.nan):.1f} s."
    )
    lb = result.design.lower_bound_power
    bound = ""
    if result.design.feasible and lb > 0:
        bound = (
            f" No supply can install less than {to_unit(lb, 'kW', 'power'):.2f} kW (the mean "
            "hydraulic power over the best efficiencies in the catalogue); this design installs "
            f"{result.design.installed_power / lb:.1f} times that."
        )
    return (
        "<section id='assumptions'><h2><span class='num'>5</span>Assumptions and sources</h2>"
        f"<dl class='assume'>{rows}</dl>"
        f"<p class='note'>{e(timing + bound)}</p>"
        "<h3>Notes from the design stages</h3>"
        f"<ul class='notes'>{notes}</ul></section>"
    )


def _section_safety(result) -> str:
    items = "".join(f"<li>{e(x)}</li>" for x in content.SAFETY_CAUTIONS)
    hint = spec.category_hint(result)
    if hint is not None:
        cat, note, ps, shell_l = hint
        cat_text = (
            f"Pressure-equipment category hint for one accumulator: <b>{e(cat)}</b> "
            f"(PS {ps:.0f} bar × shell volume {shell_l:.3g} L = {ps * shell_l:,.0f} bar·L). "
            f"{e(note)}"
        )
    else:
        cat_text = (
            "No accumulator in this design; any accumulator added later needs the same "
            "pressure-equipment classification from PS·V (EU Directive 2014/68/EU, values from "
            "memory: check the directive and local codes)."
        )
    return (
        "<section id='safety'><h2><span class='num'>6</span>Safety</h2>"
        "<p>Accumulators store energy and stay pressurised after the pumps stop.</p>"
        f"<ol class='safety'>{items}</ol><p>{cat_text}</p>"
        f"<p class='disclaimer'>{e(content.DISCLAIMER)}</p></section>"
    )


#: The report's sections in order: (anchor id, title in the contents, renderer).
SECTIONS: tuple[tuple[str, str, Callable[..., str]], ...] = (
    ("summary", "Recommendation", _section_summary),
    ("cycle", "Duty cycle", _section_cycle),
    ("operation", "Design at work", _section_operation),
    ("comparison", "Comparison", _section_comparison),
    ("specification", "Specification", _section_specification),
    ("assumptions", "Assumptions", _section_assumptions),
    ("safety", "Safety", _section_safety),
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
    return resources.files("stowflow.report").joinpath("style.css").read_text(encoding="utf-8")


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
        The HTML text: plotly.js inlined once, no external resources.
    """
    day = (generated or _dt.date.today()).isoformat()
    cyc = result.cycle
    toc = "".join(
        f"<a href='#{sid}'><span>{k}</span>{e(title)}</a>"
        for k, (sid, title, _) in enumerate(SECTIONS)
    )
    sections = "".join(render(result) for _, _, render in SECTIONS)
    t_lo = kelvin_to_celsius(result.settings.t_min)
    t_hi = kelvin_to_celsius(result.settings.t_max)
    meta = (
        f"cycle {cyc.name} · {cyc.n_steps} steps of {cyc.dt:g} s · {t_lo:.0f} … {t_hi:.0f} °C · "
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
