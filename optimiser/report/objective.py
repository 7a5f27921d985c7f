"""Which objective chose the design, and the runners-up: the next designs in its order.

Rendering only: the runners-up come from :attr:`stowflow.search.solution.Design.runners_up`
(the search's order, each with its energy per cycle under an ideal pressure switch); their
total cost of ownership is priced here with the comparison's own factors (installation factor,
cycles a year, energy price, annuity factor), so that the chosen design's row, priced the same
way from the search's energy, compares like with like.
"""

from __future__ import annotations

import math
from html import escape

from stowflow.report.content import currency, kilowatts, litres
from stowflow.report.table_units import table_in_system
from stowflow.units import KWH

__all__ = ["OBJECTIVE_WORDS", "objective_html", "objective_record", "runner_rows"]

#: What each objective puts first, in words.
OBJECTIVE_WORDS = {
    "power": "least installed power, then least capex, then least energy",
    "capex": "least capex, then least installed power, then least energy",
    "tco": "least total cost of ownership (capex and the present value of the energy), then "
    "least installed power, then least energy",
    "volume": "least gas volume, then least installed power, then least capex, then least energy",
}


def _tco(result, capex: float, energy: float) -> float:
    c = result.comparison
    s = c.settings
    if not math.isfinite(energy):
        return math.nan
    return capex * s.installation_factor + s.energy_price * energy * c.cycles_per_year * (
        c.annuity_factor
    )


def _row(result, label, pump, motor, option, count, capex, energy, gas) -> dict:
    bank = (
        "pump only"
        if option is None
        else f"{count} × {option.type} {litres(option.nominal_volume):g} L"
    )
    return {
        "design": label,
        "accumulators": bank,
        "pump": pump.name,
        "installed power [kW]": kilowatts(motor.rated_power),
        "capex": capex,
        "tco": _tco(result, capex, energy),
        "gas volume [L]": litres(gas) if math.isfinite(gas) else math.nan,
        "energy per cycle [kWh]": energy / KWH if math.isfinite(energy) else math.nan,
    }


def runner_rows(result) -> list[dict]:
    """The chosen design and its runners-up, one dict per design (empty when infeasible).

    Keys: ``design`` (chosen / runner-up k), ``accumulators``, ``pump`` (catalogue name),
    ``installed power [kW]``,
    ``capex`` (catalogue prices), ``tco`` (with the cost settings, from the search's energy),
    ``gas volume [L]`` and ``energy per cycle [kWh]`` (quasi-static, ideal pressure switch,
    part-load losses: the same estimate for every row).
    """
    d = result.design
    if not d.feasible or d.motor is None:
        return []
    gas = d.bank.gas_volume if d.bank is not None else 0.0
    rows = [
        _row(
            result,
            "chosen",
            d.pump,
            d.motor,
            d.bank.option if d.bank else None,
            d.bank.count if d.bank else 0,
            d.capex,
            d.levels.get("energy_estimate [J]", math.nan),
            gas,
        )
    ]
    for k, a in enumerate(d.runners_up, 1):
        label = f"runner-up {k}"
        row = _row(
            result, label, a.pump, a.motor, a.option, a.count, a.capex, a.energy, a.gas_volume
        )
        rows.append(row)
    return rows


def objective_record(result) -> dict:
    """``design.json``'s ``objective`` section: the objective, its order, the caps and the
    runners-up (numbers rounded, NaN as None by the caller's JSON helper)."""
    s = result.settings
    return {
        "objective": s.objective,
        "order": OBJECTIVE_WORDS[s.objective],
        "max_category": s.max_category,
        "max_count": s.max_count,
        "prefer_types": list(s.prefer_types),
        "currency": currency(result),
        "designs": [{k: _rounded(v) for k, v in r.items()} for r in runner_rows(result)],
    }


def _rounded(v):
    return round(v, 6) if isinstance(v, float) and math.isfinite(v) else v


#: The runners-up table: (row key, column heading with {cur} for the currency, format).
_COLUMNS = (
    ("design", "design", ""),
    ("accumulators", "accumulators", ""),
    ("pump", "pump", ""),
    ("installed power [kW]", "installed power [kW]", "g"),
    ("capex", "capex [{cur}]", ",.0f"),
    ("tco", "TCO [{cur}]", ",.0f"),
    ("gas volume [L]", "gas volume [L]", ".1f"),
    ("energy per cycle [kWh]", "energy per cycle [kWh]", ".4f"),
)


def _cell(v, spec: str) -> str:
    if isinstance(v, float):
        return "–" if not math.isfinite(v) else format(v, spec)
    return escape(str(v))


def objective_html(result) -> str:
    """The objective in words and the runners-up table (HTML fragment; empty when infeasible)."""
    rows = runner_rows(result)
    if not rows:
        return ""
    s = result.settings
    caps = [f"at most {s.max_count} accumulators of one size"]
    if s.max_category is not None:
        caps.append(f"pressure-equipment category at most {s.max_category}")
    if s.prefer_types:
        caps.append("ties go to " + ", then ".join(s.prefer_types))
    cur = escape(currency(result))

    def cells(tag: str, values) -> str:
        return "".join(
            f"<{tag} class='n'>{v}</{tag}>" if i > 2 else f"<{tag}>{v}</{tag}>"
            for i, v in enumerate(values)
        )

    table, headers = table_in_system(  # columns "[kW]", "[L]" in the units of --units
        [[_cell(r[key], sp) for key, _, sp in _COLUMNS] for r in rows],
        [h.format(cur=cur) for _, h, _ in _COLUMNS],
        texts=False,
    )
    head = cells("th", headers)
    body = "".join(
        ("<tr class='rec'>" if k == 0 else "<tr>") + cells("td", r) + "</tr>"
        for k, r in enumerate(table)
    )
    return (
        "<h3>Objective and runners-up</h3>"
        f"<p>Objective: <b>{escape(s.objective)}</b>: {escape(OBJECTIVE_WORDS[s.objective])}; "
        f"{escape('; '.join(caps))}. The runners-up are the next component sets in that order. "
        "Every row's energy is the same quasi-static estimate (an ideal pressure switch, the "
        "part-load losses of pump and motor), and its TCO is priced from that energy with the "
        "cost settings; the comparison above prices the verified run.</p>"
        f"<div class='tablewrap'><table class='wide'><thead><tr>{head}</tr></thead>"
        f"<tbody>{body}</tbody></table></div>"
    )
