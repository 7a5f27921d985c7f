"""Plotly figures of the report: the cycle, the design at work, the comparison.

Each function takes a :class:`~optimiser.pipeline.StudyResult` and returns a
``plotly.graph_objects.Figure`` (or None when there is nothing to draw).  They only draw what
:mod:`optimiser.report.content` hands them.  Text the user wrote (cycle labels, names) is
HTML-escaped before it reaches Plotly, which renders a subset of HTML in its labels.
"""

from __future__ import annotations

import html

import numpy as np
import plotly.graph_objects as go
from plotly.subplots import make_subplots

from optimiser.report import content
from optimiser.units import to_unit

__all__ = [
    "COLOURS",
    "FONT",
    "comparison_figure",
    "cycle_figure",
    "operation_figure",
    "timeline_figure",
]

#: The report's palette (our own): ink, rules, the design and the two baselines, cold and hot.
COLOURS = {
    "ink": "#1f2a30",
    "muted": "#6b7780",
    "grid": "#e3e7e9",
    "design": "#0e7c66",
    "fixed": "#8c5a3c",
    "compensated": "#b7a98f",
    "cold": "#2c64a8",
    "hot": "#c2452d",
    "required": "#1f2a30",
    "flow": "#0e7c66",
    "set": "#8a96a0",
}

#: System font stack (no web fonts: the report works offline).
FONT = (
    'system-ui, -apple-system, "Segoe UI", Roboto, "Helvetica Neue", "Noto Sans", '
    '"Liberation Sans", Arial, sans-serif'
)

_OPTION_NAMES = {
    "design": "accumulator supply",
    "fixed": "fixed pump + relief",
    "compensated": "compensated pump",
}
_BAR_NAMES = {
    "design": "accumulator<br>supply",
    "fixed": "fixed pump<br>+ relief",
    "compensated": "compensated<br>pump",
}


def _layout(fig: go.Figure, height: int) -> go.Figure:
    fig.update_layout(
        template=None,
        height=height,
        margin={"l": 70, "r": 24, "t": 48, "b": 46},
        font={"family": FONT, "size": 12, "color": COLOURS["ink"]},
        paper_bgcolor="#ffffff",
        plot_bgcolor="#ffffff",
        hovermode="x unified",
        legend={"orientation": "h", "y": 1.02, "yanchor": "bottom", "x": 0, "xanchor": "left"},
        hoverlabel={"font": {"family": FONT}},
    )
    axes = {
        "showline": True,
        "linecolor": COLOURS["muted"],
        "gridcolor": COLOURS["grid"],
        "zeroline": False,
        "ticks": "outside",
        "tickcolor": COLOURS["muted"],
    }
    fig.update_xaxes(**axes)
    fig.update_yaxes(**axes)
    return fig


def _subplots(**kwargs) -> go.Figure:
    """make_subplots with the subplot titles set at the left edge of their panel."""
    fig = make_subplots(**kwargs)
    for a in fig.layout.annotations:
        a.font = {"family": FONT, "size": 12, "color": COLOURS["muted"]}
        a.xanchor, a.x = "left", a.x - 0.5 * _domain_width(fig, a)
    return fig


def _domain_width(fig: go.Figure, annotation) -> float:
    # subplot titles sit at the centre of their domain; move them to its left edge.
    for ax in fig.layout:
        if ax.startswith("xaxis"):
            dom = fig.layout[ax].domain
            if dom and abs(0.5 * (dom[0] + dom[1]) - annotation.x) < 1e-6:
                return dom[1] - dom[0]
    return 0.0


def _closed(t: np.ndarray, y: np.ndarray, end: float) -> tuple[np.ndarray, np.ndarray]:
    """Append the cycle end so a step line ("hv") shows the last step in full."""
    return np.append(t, end), np.append(y, y[-1])


def cycle_figure(result) -> go.Figure:
    """Demand flow [L/min] and required pressure [bar] over one cycle."""
    frame = result.cycle.frame()
    t = frame.index.to_numpy(dtype=float)
    end = result.cycle.duration
    labels = np.array([html.escape(x) for x in frame["label"]] + [""], dtype=object)
    fig = _subplots(
        rows=2,
        cols=1,
        shared_xaxes=True,
        vertical_spacing=0.1,
        subplot_titles=("demand flow [L/min]", "required pressure at the consumer [bar]"),
    )
    x, q = _closed(t, frame["demand [L/min]"].to_numpy(), end)
    fig.add_trace(
        go.Scatter(
            x=x,
            y=q,
            name="demand",
            mode="lines",
            line={"shape": "hv", "color": COLOURS["flow"], "width": 1.6},
            fill="tozeroy",
            fillcolor="rgba(14,124,102,0.12)",
            customdata=labels,
            hovertemplate="%{y:.1f} L/min<br>%{customdata}<extra>demand</extra>",
        ),
        row=1,
        col=1,
    )
    p = frame["required_pressure [bar]"].to_numpy()
    if np.all(np.isfinite(p)):
        x, p = _closed(t, p, end)
        fig.add_trace(
            go.Scatter(
                x=x,
                y=p,
                name="required pressure",
                mode="lines",
                line={"shape": "hv", "color": COLOURS["required"], "width": 1.6},
                customdata=labels,
                hovertemplate="%{y:.1f} bar<br>%{customdata}<extra>required</extra>",
            ),
            row=2,
            col=1,
        )
    fig.update_xaxes(range=[0, end])
    fig.update_xaxes(title_text="time in cycle [s]", row=2, col=1)
    fig.update_yaxes(title_text="L/min", rangemode="tozero", row=1, col=1)
    fig.update_yaxes(title_text="bar", rangemode="tozero", row=2, col=1)
    fig.update_layout(showlegend=False)
    return _layout(fig, 440)


def _line(fig, row, t, y, name, hover, which, width, step_end, legend) -> None:
    """One trace of the operation figure in the colour of its temperature ("cold"/"hot").

    With ``step_end`` (the cycle end, [s]) the line is drawn as steps closed at that time.
    """
    x = t
    if step_end is not None:
        x, y = _closed(t, np.asarray(y, dtype=float), step_end)
    style = {"color": COLOURS[which], "width": width} | ({"shape": "hv"} if step_end else {})
    trace = go.Scatter(x=x, y=y, mode="lines", name=name, legendgroup=which, showlegend=legend,
                       line=style, hovertemplate=hover)  # fmt: skip
    fig.add_trace(trace, row=row, col=1)


def operation_figure(result) -> go.Figure | None:
    """Accumulator pressure, stored oil, pump state and relief events, margin; cold and hot."""
    ops = content.operation_frames(result)
    if ops is None:
        return None
    d = result.design
    fig = _subplots(
        rows=4,
        cols=1,
        shared_xaxes=True,
        vertical_spacing=0.05,
        row_heights=[0.38, 0.22, 0.14, 0.26],
        subplot_titles=(
            "accumulator pressure and required pressure [bar]",
            "oil stored in the accumulators [L]" if d.bank else "oil stored [L] (no accumulator)",
            "pump loaded (1) / unloaded (0); ▼ relief flow",
            "margin above the required pressure [bar]",
        ),
    )
    end = result.cycle.duration
    first = True
    for which in ("cold", "hot"):
        f = ops.frames.get(which)
        if f is None:
            continue
        colour = COLOURS[which]
        tag = f"{ops.temperatures[which]:.0f} °C"
        t = f["time [s]"].to_numpy()

        def line(row, y, name, hover, width=1.4, step=False, legend=False, t=t, which=which):
            _line(fig, row, t, y, name, hover, which, width, end if step else None, legend)

        line(1, f["pressure [bar]"], f"pressure at {tag}", "%{y:.1f} bar", width=1.8, legend=True)
        if first:
            x, y = _closed(t, f["required_pressure [bar]"].to_numpy(), end)
            style = {"color": COLOURS["required"], "width": 1.4, "dash": "dash", "shape": "hv"}
            fig.add_trace(
                go.Scatter(x=x, y=y, mode="lines", name="required (with line loss)", line=style,
                           hovertemplate="%{y:.1f} bar"),
                row=1,
                col=1,
            )  # fmt: skip
        if d.bank is not None and (ops.source == "verification" or first):
            line(2, f["accumulator_oil [L]"], f"stored oil at {tag}", "%{y:.2f} L", width=1.6)
        line(3, f["pump_loaded [-]"], f"pump state at {tag}", "%{y:.0f}", step=True)
        ex = f["relief_flow [L/min]"].to_numpy()
        hit = ex > 1e-6 * max(float(np.nanmax(np.abs(ex))) if ex.size else 0.0, 1e-9)
        if np.any(hit):
            fig.add_trace(
                go.Scatter(
                    x=t[hit],
                    y=np.full(int(hit.sum()), 1.25 if which == "cold" else 1.45),
                    mode="markers",
                    name=f"relief flow at {tag}",
                    legendgroup=which,
                    showlegend=False,
                    marker={"symbol": "triangle-down", "size": 6, "color": colour},
                    customdata=ex[hit],
                    hovertemplate="relief %{customdata:.1f} L/min",
                ),
                row=3,
                col=1,
            )
        line(4, f["margin [bar]"], f"margin at {tag}", "%{y:.1f} bar")
        first = False
    sp = content.setpoints_bar(result)
    relief = float(content.bar_g(d.relief, result))
    # (value, label, colour, dash, side, label above or below the line)
    lines = [
        (sp[key], f"{text} {sp[key]:.1f} bar", COLOURS["set"], "dot", "left", where)
        for key, text, where in (
            ("load_below", "load below", "top"),
            ("unload_above", "unload above", "bottom"),
        )
        if key in sp
    ]
    lines.append(
        (relief, f"relief {relief:.0f} bar", COLOURS["fixed"], "dashdot", "right", "bottom")
    )
    for y, text, colour, dash, side, anchor in lines:
        fig.add_hline(y=y, line={"color": colour, "width": 1, "dash": dash}, row=1, col=1)
        fig.add_annotation(
            x=0.005 if side == "left" else 0.995,
            xref="x domain",
            y=y,
            yref="y",
            xanchor=side,
            yanchor=anchor,
            text=text,
            showarrow=False,
            font={"size": 10, "color": colour if side == "right" else COLOURS["muted"]},
        )
    fig.add_hline(y=0, line={"color": COLOURS["ink"], "width": 1}, row=4, col=1)
    fig.update_yaxes(title_text="bar", row=1, col=1)
    fig.update_yaxes(title_text="L", rangemode="tozero", row=2, col=1)
    fig.update_yaxes(range=[-0.15, 1.6], tickvals=[0, 1], row=3, col=1)
    fig.update_yaxes(title_text="bar", row=4, col=1)
    fig.update_xaxes(range=[0, end])
    fig.update_xaxes(title_text="time in cycle [s]", row=4, col=1)
    return _layout(fig, 760)


def _options(result):
    return [o for o in result.comparison.options if o.feasible]


def comparison_figure(result) -> go.Figure | None:
    """Bars per option: installed power, capex, energy per year, total cost of ownership."""
    opts = _options(result)
    if not opts:
        return None
    cur = html.escape(content.currency(result))
    years = result.comparison.settings.years
    panels = (
        ("installed motor power [kW]", lambda o: to_unit(o.installed_power, "kW", "power"), ".1f"),
        (f"capex [{cur}]", lambda o: o.capex, ",.0f"),
        ("energy per year [MWh]", lambda o: to_unit(o.energy_per_year, "MWh", "energy"), ",.1f"),
        (f"total cost over {years} years [{cur}]", lambda o: o.tco, ",.0f"),
    )
    fig = _subplots(rows=1, cols=4, horizontal_spacing=0.07, subplot_titles=[p[0] for p in panels])
    names = [_BAR_NAMES[o.key] for o in opts]
    colours = [COLOURS[o.key] for o in opts]
    for k, (_title, get, spec) in enumerate(panels, start=1):
        values = [float(get(o)) for o in opts]
        fig.add_trace(
            go.Bar(
                x=names,
                y=values,
                marker={"color": colours},
                text=[format(v, spec) for v in values],
                textposition="outside",
                cliponaxis=False,
                hovertemplate="%{text}<extra></extra>",
                showlegend=False,
            ),
            row=1,
            col=k,
        )
        fig.update_yaxes(rangemode="tozero", row=1, col=k)
        fig.update_xaxes(tickangle=0, tickfont={"size": 10}, row=1, col=k)
    fig.update_layout(hovermode="closest", bargap=0.35)
    return _layout(fig, 360)


def timeline_figure(result) -> go.Figure | None:
    """Cumulative discounted cost of each option, year by year (payback where lines cross)."""
    opts = _options(result)
    if len(opts) < 2:
        return None
    tl = result.comparison.cost_timeline()
    cur = html.escape(content.currency(result))
    fig = go.Figure()
    for o in opts:
        fig.add_trace(
            go.Scatter(
                x=tl.index.to_numpy(),
                y=tl[o.key],
                name=_OPTION_NAMES[o.key],
                mode="lines+markers",
                line={"color": COLOURS[o.key], "width": 2},
                marker={"size": 5},
                hovertemplate="%{y:,.0f} " + cur,
            )
        )
    ref = result.comparison.reference
    if ref is not None and ref.discounted_years not in (None, 0.0):
        fig.add_vline(
            x=ref.discounted_years,
            line={"color": COLOURS["muted"], "width": 1, "dash": "dot"},
            annotation_text=f"discounted payback {ref.discounted_years:.1f} years",
            annotation_position="top right",
            annotation_font={"size": 10, "color": COLOURS["muted"]},
        )
    fig.update_xaxes(title_text="year", dtick=1)
    fig.update_yaxes(title_text=f"capex + present value of energy [{cur}]", rangemode="tozero")
    return _layout(fig, 340)
