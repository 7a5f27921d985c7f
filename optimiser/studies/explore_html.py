"""``explore.html``: the trade-off front and the sensitivity of one design, one file.

The front as a sortable table and two interactive charts (capex against TCO, installed
power against TCO; every candidate the screen found in grey, the front in colour by gas
volume, the chosen design a star), the sensitivity table with a bar chart of each case's
margin, and the Monte Carlo samples' margins with the probability of a shortfall.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

import plotly.graph_objects as go
from stowflow.report.html import figure_html
from stowflow.studies.fleet_html import page, sortable_table

if TYPE_CHECKING:  # pragma: no cover - typing only
    import pandas as pd

__all__ = ["render_explore", "shortfall_probability"]

_SENSITIVITY = (
    "case",
    "passed",
    "min_margin [bar]",
    "margin_change [bar]",
    "breaks_first",
    "controller",
    "energy_per_cycle [kJ]",
    "reason",
)
_FRONT = (
    "supply",
    "motor [kW]",
    "capex",
    "tco",
    "total_gas_volume [L]",
    "energy_per_cycle [kJ]",
    "precharge [bar]",
    "chosen",
)


def shortfall_probability(monte_carlo: pd.DataFrame) -> tuple[float, float]:
    """(share of samples that fail, its standard error) [-]; nan without samples."""
    n = len(monte_carlo)
    if n == 0:
        return math.nan, math.nan
    p = float((~monte_carlo["passed"].astype(bool)).mean())
    return p, math.sqrt(p * (1.0 - p) / n)


def _front_charts(ex) -> str:
    allc, front = ex.candidates, ex.front
    out = []
    for x, title in (("capex", "capex"), ("motor [kW]", "installed motor power [kW]")):
        fig = go.Figure()
        fig.add_trace(
            go.Scatter(
                x=allc[x],
                y=allc["tco"],
                mode="markers",
                marker={"color": "#cccccc", "size": 5},
                name="every candidate",
                text=allc["supply"],
                hoverinfo="text+x+y",
            )
        )
        on = front[front["on_front"]]
        fig.add_trace(
            go.Scatter(
                x=on[x],
                y=on["tco"],
                mode="markers",
                marker={
                    "color": on["total_gas_volume [L]"],
                    "colorscale": "Viridis",
                    "size": 10,
                    "colorbar": {"title": "gas [L]"},
                },
                name="front",
                text=on["supply"],
                hoverinfo="text+x+y",
            )
        )
        chosen = front[front["chosen"]]
        if not chosen.empty:
            fig.add_trace(
                go.Scatter(
                    x=chosen[x],
                    y=chosen["tco"],
                    mode="markers",
                    marker={"symbol": "star", "size": 18, "color": "#d62728"},
                    name="chosen design",
                    text=chosen["supply"],
                    hoverinfo="text+x+y",
                )
            )
        fig.update_layout(
            xaxis_title=title,
            yaxis_title="TCO",
            height=440,
            margin={"t": 50},
            legend={"orientation": "h", "y": 1.12},
        )
        out.append(figure_html(fig, f"front-{len(out)}", f"{title} against TCO"))
    return "".join(out)


def _sensitivity_chart(sens: pd.DataFrame) -> str:
    if sens.empty:
        return ""
    colours = ["#2ca02c" if p else "#d62728" for p in sens["passed"]]
    fig = go.Figure(go.Bar(x=sens["case"], y=sens["min_margin [bar]"], marker_color=colours))
    fig.update_layout(yaxis_title="least pressure margin [bar]", height=380, margin={"t": 30})
    return figure_html(fig, "sensitivity", "least pressure margin per case (red: fails)")


def _monte_carlo(mc: pd.DataFrame) -> str:
    if mc.empty:
        return ""
    p, se = shortfall_probability(mc)
    fig = go.Figure(go.Histogram(x=mc["min_margin [bar]"], nbinsx=30))
    fig.update_layout(xaxis_title="least pressure margin [bar]", height=340, margin={"t": 30})
    return (
        f"<h2>Monte Carlo: {len(mc)} samples</h2><p>Probability of a shortfall (the design "
        f"fails its verification): <b>{p:.1%}</b> ± {se:.1%} (one standard error). "
        "Distributions: precharge loss 0–10 %, coldest 0–10 K lower, hottest 0–10 K higher, "
        "time constant ×0.5–×2 (log-uniform), pump flow 0–10 % lower, cycle flow 0–10 % "
        "higher, efficiencies 0–3 points lower; uniform and independent.</p>"
        + figure_html(fig, "monte-carlo", "least pressure margin of the samples")
    )


def render_explore(ex) -> str:
    """``explore.html`` of an exploration.

    Parameters
    ----------
    ex : Exploration
        What :func:`stowflow.studies.explore.explore_cycle` found.

    Returns
    -------
    str
        The HTML text.
    """
    name = ex.study.name
    chosen = ex.front[ex.front["chosen"]]
    where = (
        "The chosen design is marked."
        if not chosen.empty
        else "The chosen design is not among the screen's candidates (the verification "
        "raised its requirement)."
    )
    sens = ex.sensitivity
    first = sens[sens["breaks_first"]]["case"].tolist() if not sens.empty else []
    body = (
        f"<h1>Trade-offs: {name}</h1>"
        f"<h2>Trade-off front: {int(ex.front['on_front'].sum())} of {len(ex.candidates)} "
        "candidates</h2><p>No design on the front is beaten or equalled on all four of "
        "installed power, capex, TCO and gas volume by another candidate of the screen. TCO "
        "takes the energy under an ideal pressure switch (the designer's estimate). "
        f"{where}</p>"
        + _front_charts(ex)
        + sortable_table(ex.front, _FRONT)
        + "<h2>Sensitivity of the chosen design</h2><p>The design verified again (not "
        "redesigned, switch settings kept) under each change on its own, then all together "
        "at each change's worse side. "
        + (f"First to break: <b>{first[0]}</b>.</p>" if first else "</p>")
        + _sensitivity_chart(sens)
        + sortable_table(sens, _SENSITIVITY)
        + _monte_carlo(ex.monte_carlo)
    )
    return page(f"trade-offs {name}", body)
