"""``fleet.html``: the fleet at a glance, one self-contained file.

A sortable table (click a header) with one row per cycle linking to its report, and two
interactive charts: installed motor power of each design against its strongest pump-only
alternative, and capex against total cost of ownership.  plotly.js is inlined once, as in the
single report (:mod:`stowflow.report.html`); every text from the inputs is escaped.
"""

from __future__ import annotations

import datetime as _dt
import html
import math
from typing import TYPE_CHECKING

import plotly.graph_objects as go
import plotly.offline
from stowflow.report.html import figure_html
from stowflow.version import __version__

if TYPE_CHECKING:  # pragma: no cover - typing only
    import pandas as pd

__all__ = ["SHOWN", "page", "render_fleet", "sortable_table"]

#: Columns of the summary the table shows, in order.
SHOWN: tuple[str, ...] = (
    "cycle",
    "status",
    "run",
    "accumulator",
    "pump",
    "motor [kW]",
    "pump_only_motor [kW]",
    "capex",
    "tco",
    "pump_only_tco",
    "verdict",
    "min_margin [bar]",
    "reason",
)

_CSS = """
body{font:14px/1.4 system-ui,sans-serif;margin:24px;color:#222}
table{border-collapse:collapse;width:100%;margin:12px 0}
th,td{border-bottom:1px solid #ddd;padding:4px 8px;text-align:left;vertical-align:top}
th{cursor:pointer;background:#f4f4f4;user-select:none}
th:after{content:' \\2195';color:#999}
td.num{text-align:right;font-variant-numeric:tabular-nums}
td.long{min-width:18em}
tr.failed td{color:#a00}
.note{color:#666;font-size:12px}
"""

_SORT_JS = """
document.querySelectorAll('table.sortable').forEach(function(t){
  t.querySelectorAll('th').forEach(function(th, col){
    th.addEventListener('click', function(){
      var body = t.tBodies[0], rows = Array.from(body.rows);
      var asc = th.dataset.dir !== 'asc'; th.dataset.dir = asc ? 'asc' : 'desc';
      rows.sort(function(a, b){
        var x = a.cells[col].dataset.v, y = b.cells[col].dataset.v;
        var nx = parseFloat(x), ny = parseFloat(y);
        var c = (!isNaN(nx) && !isNaN(ny)) ? nx - ny : String(x).localeCompare(String(y));
        return asc ? c : -c;
      });
      rows.forEach(function(r){ body.appendChild(r); });
    });
  });
});
"""


def _e(value) -> str:
    return html.escape("" if value is None else str(value), quote=True)


def _number(value) -> float | None:
    try:
        x = float(value)
    except (TypeError, ValueError):
        return None
    return x if math.isfinite(x) else None


def _cell(col: str, value, link: str | None) -> str:
    x = _number(value) if not isinstance(value, bool | str) else None
    if x is not None:
        text = f"{x:,.0f}" if abs(x) >= 1e3 else f"{x:.1f}" if abs(x) >= 10 else f"{x:.2f}"
        return f"<td class='num' data-v='{x!r}'>{_e(text)}</td>"
    shown = "" if value is None or (isinstance(value, float) and math.isnan(value)) else value
    inner = _e(shown)
    if link and col == "cycle":
        inner = f"<a href='{_e(link)}'>{inner}</a>"
    wide = " class='long'" if len(str(shown)) > 40 else ""  # a verdict or reason in words
    return f"<td{wide} data-v='{_e(shown)}'>{inner}</td>"


def sortable_table(frame: pd.DataFrame, columns, link_column: str | None = None) -> str:
    """A table whose columns sort on a click (numbers as numbers), rows linked by
    ``link_column`` when given."""
    cols = [c for c in columns if c in frame.columns]
    head = "".join(f"<th>{_e(c)}</th>" for c in cols)
    body = []
    for rec in frame.to_dict("records"):
        link = rec.get(link_column) if link_column else None
        link = link if isinstance(link, str) and rec.get("status") != "failed" else None
        cls = " class='failed'" if rec.get("status") in ("failed", "infeasible") else ""
        body.append(f"<tr{cls}>" + "".join(_cell(c, rec.get(c), link) for c in cols) + "</tr>")
    return (
        f"<table class='sortable'><thead><tr>{head}</tr></thead>"
        f"<tbody>{''.join(body)}</tbody></table>"
    )


def _charts(frame: pd.DataFrame) -> str:
    ok = frame[frame["status"].isin(["optimal", "feasible"])]
    if ok.empty:
        return ""
    power = go.Figure(
        [
            go.Bar(name="design", x=ok["cycle"], y=ok["motor [kW]"]),
            go.Bar(name="strongest pump-only", x=ok["cycle"], y=ok["pump_only_motor [kW]"]),
        ]
    )
    power.update_layout(
        barmode="group", yaxis_title="installed motor power [kW]", height=360, margin={"t": 30}
    )
    cost = go.Figure(
        go.Scatter(
            x=ok["capex"],
            y=ok["tco"],
            mode="markers+text",
            text=ok["cycle"],
            textposition="top center",
            name="design",
        )
    )
    currency = next((c for c in ok["currency"] if isinstance(c, str) and c), "")
    cost.update_layout(
        xaxis_title=f"capex [{currency}]".replace(" []", ""),
        yaxis_title=f"TCO [{currency}]".replace(" []", ""),
        height=360,
        margin={"t": 30},
    )
    return figure_html(
        power,
        "fleet-power",
        "installed motor power per cycle: the design and the strongest "
        "pump-only supply (least TCO)",
    ) + figure_html(cost, "fleet-cost", "capital cost against total cost of ownership")


def page(title: str, body: str) -> str:
    """A self-contained page: the studies' style, plotly.js inlined once, sortable tables."""
    return (
        "<!DOCTYPE html>\n<html lang='en'><head><meta charset='utf-8'>"
        f"<meta name='generator' content='stowflow {_e(__version__)}'>"
        f"<title>{_e(title)} · stowflow</title><style>{_CSS}</style>"
        f"<script type='text/javascript'>{plotly.offline.get_plotlyjs()}</script>"
        f"</head><body>{body}"
        f"<p class='note'>Generated by stowflow {_e(__version__)} on "
        f"{_dt.date.today().isoformat()}. Results are design support; a competent person "
        "checks them against local codes and standards.</p>"
        f"<script type='text/javascript'>{_SORT_JS}</script></body></html>\n"
    )


def render_fleet(frame: pd.DataFrame) -> str:
    """``fleet.html`` of a batch's summary (the frame of ``summary.csv``).

    Parameters
    ----------
    frame : pandas.DataFrame
        The summary, columns :data:`stowflow.studies.batch.COLUMNS`.

    Returns
    -------
    str
        The HTML text.
    """
    n = len(frame)
    failed = int((frame["status"] == "failed").sum())
    body = (
        f"<h1>Fleet: {n} cycle(s)</h1>"
        f"<p>{n - failed} designed or unchanged, {failed} failed. Click a column to sort; "
        "click a cycle to open its report.</p>"
        + sortable_table(frame, SHOWN, "report")
        + _charts(frame)
    )
    return page("fleet", body)
