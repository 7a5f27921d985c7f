"""Plotly figures of the report: the cycle, the design at work, the comparison.

Each function takes a :class:`~stowflow.pipeline.StudyResult` and returns a
``plotly.graph_objects.Figure`` (or None when there is nothing to draw).  They only draw what
:mod:`stowflow.report.content` hands them.  Text the user wrote (cycle labels, names) is
HTML-escaped before it reaches Plotly, which renders a subset of HTML in its labels.
"""

from __future__ import annotations

import html

import numpy as np
import plotly.graph_objects as go
from stowflow.io import numbers
from stowflow.report import content
from stowflow.units import to_unit

__all__ = [
    "COLOURS",
    "DISPLAY_POINTS",
    "FONT",
    "SUPPLY_KEYS",
    "breakdown_figure",
    "comparison_figure",
    "cycle_figure",
    "operation_figure",
    "timeline_figure",
]

#: The report's palette (our own): ink, rules, the design and the pump-only alternatives, cold
#: and hot.  A supply has one colour in every chart and the page's tables
#: (:data:`SUPPLY_KEYS`); no other line, bar or part of a breakdown uses a supply's colour.
COLOURS = {
    "ink": "#1f2a30",
    "muted": "#6b7780",
    "grid": "#e3e7e9",
    "design": "#0e7c66",
    "fixed": "#8c5a3c",
    "compensated": "#9a8c2a",
    "variable-speed": "#6d5a8c",
    "load-sensing": "#c0508a",
    "cold": "#2c64a8",
    "hot": "#c2452d",
    "required": "#1f2a30",
    "flow": "#1d3557",
    "set": "#6b7780",
    "relief": "#1f2a30",
}

#: The keys of :data:`COLOURS` that name a supply (the comparison's option keys).
SUPPLY_KEYS: tuple[str, ...] = ("design", "fixed", "compensated", "variable-speed", "load-sensing")

#: System font stack (no web fonts: the report works offline).
FONT = (
    'system-ui, -apple-system, "Segoe UI", Roboto, "Helvetica Neue", "Noto Sans", '
    '"Liberation Sans", Arial, sans-serif'
)

_OPTION_NAMES = {
    "design": "accumulator supply",
    "fixed": "fixed pump + relief",
    "compensated": "compensated pump",
    "variable-speed": "variable-speed pump",
    "load-sensing": "load-sensing pump",
}
_BAR_NAMES = {
    "design": "accumulator<br>supply",
    "fixed": "fixed pump<br>+ relief",
    "compensated": "compensated<br>pump",
    "variable-speed": "variable-<br>speed pump",
    "load-sensing": "load-sensing<br>pump",
}

#: Colours of the parts of an energy breakdown (our own), in the stacking order.
_PART_COLOURS = {
    "useful": "#1d3557",
    "throttling": "#e9c46a",
    "relief": "#e63946",
    "standby": "#f4a261",
    "gas_heat": "#457b9d",
    "pump": "#a8dadc",
    "motor": "#8a96a0",
    "drive": "#cfd8dc",
}


#: Styling of every axis of every figure.
_AXIS = {
    "showline": True,
    "linecolor": COLOURS["muted"],
    "gridcolor": COLOURS["grid"],
    "zeroline": False,
    "ticks": "outside",
    "tickcolor": COLOURS["muted"],
}
#: Font of the panel titles.
_TITLE_FONT = {"family": FONT, "size": 12, "color": COLOURS["muted"]}


def _on(panel: int) -> dict:
    """The axis references ("x", "y2", ...) of a trace drawn in panel ``panel`` (1 = top left)."""
    n = "" if panel == 1 else str(panel)
    return {"xaxis": f"x{n}", "yaxis": f"y{n}"}


def _grid(titles, rows=1, cols=1, heights=None, vspace=0.0, hspace=0.0, shared_x=False):
    """Axes and titles of a grid of panels, placed where ``make_subplots`` puts them.

    Panels are numbered row by row from the top left, as ``make_subplots`` numbers them; the
    domains follow its arithmetic (a top-left start cell), so the panels land in the same place.

    Parameters
    ----------
    titles : sequence of str
        Title of each panel, in panel order; it sits above the panel at its left edge.
    rows, cols : int
        Size of the grid.
    heights : sequence of float, optional
        Relative row heights, top row first (equal rows without it).
    vspace, hspace : float
        Gap between rows and between columns [fraction of the plotting area].
    shared_x : bool
        The panels of a column share the x axis of the bottom one, which alone shows tick labels.

    Returns
    -------
    axes : dict
        Layout entries "xaxis", "yaxis", "xaxis2", ... with their domain and anchor.
    annotations : list of dict
        The panel titles as layout annotations.
    """
    widths = [(1.0 - hspace * (cols - 1)) / cols] * cols
    h = [(1.0 - vspace * (rows - 1)) / rows] * rows
    if heights is not None:
        total = float(sum(heights))
        h = [(1.0 - vspace * (rows - 1)) * (x / total) for x in heights]
    up = h[::-1]  # rows are stacked from the bottom

    def clip(v):  # rounding may step just past the edge of the figure
        return min(max(v, 0.0), 1.0)

    axes, annotations = {}, []
    for r in range(rows):
        below = rows - 1 - r
        y0 = sum(up[:below]) + below * vspace
        y0, y1 = clip(y0), clip(y0 + h[r])
        for c in range(cols):
            x0 = sum(widths[:c]) + c * hspace
            k = r * cols + c + 1
            ref = _on(k)
            n = ref["xaxis"][1:]
            axes[f"xaxis{n}"] = {"anchor": ref["yaxis"], "domain": [x0, x0 + widths[c]]}
            axes[f"yaxis{n}"] = {"anchor": ref["xaxis"], "domain": [y0, y1]}
            if shared_x and r < rows - 1:
                bottom = _on((rows - 1) * cols + c + 1)["xaxis"]
                axes[f"xaxis{n}"] |= {"matches": bottom, "showticklabels": False}
            if k <= len(titles) and titles[k - 1]:
                annotations.append(
                    {"font": _TITLE_FONT, "showarrow": False, "text": titles[k - 1], "x": x0,
                     "xanchor": "left", "xref": "paper", "y": y1, "yanchor": "bottom",
                     "yref": "paper"}
                )  # fmt: skip
    return axes, annotations


def _figure(data, axes, height, annotations=(), shapes=(), **layout) -> go.Figure:
    """The figure in the report's style, built in one call from plain dicts.

    Parameters
    ----------
    data : list of dict
        Traces, each with its "type" and, in a grid, its "xaxis" and "yaxis".
    axes : dict
        Layout axes ("xaxis", "yaxis2", ...); each gets the report's axis style.
    height : int
        Figure height [px].
    annotations, shapes : sequence of dict
        Layout annotations and shapes.
    **layout
        Further layout settings.
    """
    spec = {
        "template": {},  # none (plotly stores its empty "none" template): all style is here
        "height": height,
        "margin": {"l": 70, "r": 24, "t": 48, "b": 46},
        "font": {"family": FONT, "size": 12, "color": COLOURS["ink"]},
        "paper_bgcolor": "#ffffff",
        "plot_bgcolor": "#ffffff",
        "hovermode": "x unified",
        "legend": {"orientation": "h", "y": 1.02, "yanchor": "bottom", "x": 0, "xanchor": "left"},
        "hoverlabel": {"font": {"family": FONT}},
    }
    spec |= {name: ax | _AXIS for name, ax in axes.items()}
    thinned = [_thin(trace) for trace in data]
    if any(t is not d for t, d in zip(thinned, data, strict=True)):
        data = thinned
        annotations = [*annotations, _THINNED]
    if annotations:
        spec["annotations"] = list(annotations)
    if shapes:
        spec["shapes"] = list(shapes)
    return go.Figure(data=data, layout=spec | layout)


#: Most points one line of a figure shows, [-].  A longer line (a long cycle at full
#: resolution) is thinned for display only: each of DISPLAY_POINTS / 3 intervals keeps its
#: first, lowest and highest point, so every peak and dip stays visible; the design, the
#: verification and the CSV exports keep every step.
DISPLAY_POINTS = 6_000
_THINNED = {
    "text": f"long cycle: each line shown with at most {DISPLAY_POINTS:,} points (first, lowest "
    "and highest of each interval); schedule.csv holds every step",
    "xref": "paper", "x": 1.0, "xanchor": "right",
    "yref": "paper", "y": 1.0, "yanchor": "bottom", "yshift": 6,
    "showarrow": False, "font": {"size": 10, "color": COLOURS["muted"]},
}  # fmt: skip


def _thin(trace: dict) -> dict:
    """The trace with at most :data:`DISPLAY_POINTS` points (itself when it has no more)."""
    x, y = trace.get("x"), trace.get("y")
    if x is None or y is None or len(x) <= DISPLAY_POINTS:
        return trace
    n = len(x)
    values = np.asarray(y, dtype=float)
    edges = np.linspace(0, n, DISPLAY_POINTS // 3 + 1).astype(np.int64)
    keep = [n - 1]
    for a, b in zip(edges[:-1].tolist(), edges[1:].tolist(), strict=True):
        part = values[a:b]
        if b > a and not np.isnan(part).all():
            keep += [a, a + int(np.nanargmin(part)), a + int(np.nanargmax(part))]
        elif b > a:
            keep.append(a)
    idx = np.unique(np.array(keep))
    out = dict(trace)
    for key in ("x", "y", "customdata"):
        if key in trace and len(trace[key]) == n:
            out[key] = np.asarray(trace[key])[idx]
    return out


def _hline(y: float, line: dict, panel: int = 1) -> dict:
    """A horizontal line across panel ``panel`` at ``y`` (in its y units) as a layout shape."""
    ref = _on(panel)
    return {"type": "line", "xref": f"{ref['xaxis']} domain", "x0": 0, "x1": 1,
            "yref": ref["yaxis"], "y0": y, "y1": y, "line": line}  # fmt: skip


def _closed(t: np.ndarray, y: np.ndarray, end: float) -> tuple[np.ndarray, np.ndarray]:
    """Append the cycle end so a step line ("hv") shows the last step in full."""
    return np.append(t, end), np.append(y, y[-1])


def cycle_figure(result) -> go.Figure:
    """Demand flow [L/min] and required pressure [bar] over one cycle."""
    frame = result.cycle.to_frame()
    t = frame.index.to_numpy(dtype=float)
    end = result.cycle.duration
    labels = np.array([html.escape(x) for x in frame["label"]] + [""], dtype=object)
    axes, titles = _grid(
        ("demand flow [L/min]", "required pressure at the consumer [bar]"),
        rows=2,
        vspace=0.1,
        shared_x=True,
    )
    x, q = _closed(t, frame["flow [L/min]"].to_numpy(), end)
    data = [
        {
            "type": "scatter",
            "x": x,
            "y": q,
            "name": "demand",
            "mode": "lines",
            "line": {"shape": "hv", "color": COLOURS["flow"], "width": 1.6},
            "fill": "tozeroy",
            "fillcolor": "rgba(29,53,87,0.10)",
            "customdata": labels,
            "hovertemplate": "%{y:.1f} L/min<br>%{customdata}<extra>demand</extra>",
            **_on(1),
        }
    ]
    p = frame["required_pressure [bar]"].to_numpy()
    if np.all(np.isfinite(p)):
        x, p = _closed(t, p, end)
        data.append(
            {
                "type": "scatter",
                "x": x,
                "y": p,
                "name": "required pressure",
                "mode": "lines",
                "line": {"shape": "hv", "color": COLOURS["required"], "width": 1.6},
                "customdata": labels,
                "hovertemplate": "%{y:.1f} bar<br>%{customdata}<extra>required</extra>",
                **_on(2),
            }
        )
    axes["xaxis"] |= {"range": [0, end]}
    axes["xaxis2"] |= {"range": [0, end], "title": {"text": "time in cycle [s]"}}
    axes["yaxis"] |= {"title": {"text": "flow [L/min]"}, "rangemode": "tozero"}
    axes["yaxis2"] |= {"title": {"text": "pressure [bar]"}, "rangemode": "tozero"}
    return _figure(data, axes, 440, titles, showlegend=False)


def _line(panel, t, y, name, hover, which, width, step_end, legend) -> dict:
    """One trace of the operation figure in the colour of its temperature ("cold"/"hot").

    With ``step_end`` (the cycle end, [s]) the line is drawn as steps closed at that time.
    """
    x = t
    if step_end is not None:
        x, y = _closed(t, np.asarray(y, dtype=float), step_end)
    style = {"color": COLOURS[which], "width": width} | ({"shape": "hv"} if step_end else {})
    return {"type": "scatter", "x": x, "y": y, "mode": "lines", "name": name,
            "legendgroup": which, "showlegend": legend, "line": style, "hovertemplate": hover,
            **_on(panel)}  # fmt: skip


def operation_figure(result) -> go.Figure | None:
    """Accumulator pressure, stored oil, pump state and relief events, margin; cold and hot."""
    ops = content.operation_frames(result)
    if ops is None:
        return None
    d = result.design
    axes, notes = _grid(
        (
            "",  # the legend above names the pressure panel's lines
            "oil stored in the accumulators [L]" if d.bank else "oil stored [L] (no accumulator)",
            "pump loaded (on) or unloaded (off); ▼ flow over the relief valve",
            "margin above the required pressure [bar]",
        ),
        rows=4,
        heights=[0.38, 0.22, 0.14, 0.26],
        vspace=0.05,
        shared_x=True,
    )
    end = result.cycle.duration
    data = []
    first = True
    for which in ("cold", "hot"):
        f = ops.frames.get(which)
        if f is None:
            continue
        colour = COLOURS[which]
        tag = f"{ops.temperatures[which]:.0f} °C"
        t = f["time [s]"].to_numpy()

        def line(panel, y, name, hover, width=1.4, step=False, legend=False, t=t, which=which):
            data.append(
                _line(panel, t, y, name, hover, which, width, end if step else None, legend)
            )

        line(1, f["pressure [bar]"], f"pressure at {tag}", "%{y:.1f} bar", width=1.8, legend=True)
        if first:
            x, y = _closed(t, f["required_pressure [bar]"].to_numpy(), end)
            style = {"color": COLOURS["required"], "width": 1.4, "dash": "dash", "shape": "hv"}
            data.append(
                {"type": "scatter", "x": x, "y": y, "mode": "lines",
                 "name": "required (with line loss)", "line": style,
                 "hovertemplate": "%{y:.1f} bar", **_on(1)}
            )  # fmt: skip
        if d.bank is not None and (ops.source == "verification" or first):
            line(2, f["accumulator_oil [L]"], f"stored oil at {tag}", "%{y:.2f} L", width=1.6)
        line(3, f["pump_loaded [-]"], f"pump state at {tag}", "%{y:.0f}", step=True)
        ex = f["relief_flow [L/min]"].to_numpy()
        hit = ex > 1e-6 * max(float(np.nanmax(np.abs(ex))) if ex.size else 0.0, 1e-9)
        if np.any(hit):
            data.append(
                {
                    "type": "scatter",
                    "x": t[hit],
                    "y": np.full(int(hit.sum()), 1.25 if which == "cold" else 1.45),
                    "mode": "markers",
                    "name": f"relief flow at {tag}",
                    "legendgroup": which,
                    "showlegend": False,
                    "marker": {"symbol": "triangle-down", "size": 6, "color": colour},
                    "customdata": ex[hit],
                    "hovertemplate": "relief %{customdata:.1f} L/min",
                    **_on(3),
                }
            )
        line(4, f["margin [bar]"], f"margin at {tag}", "%{y:.1f} bar")
        first = False
    sp = content.setpoints_bar(result)
    relief = float(content.bar_g(d.relief, result))
    # (value, label, colour, dash): each line drawn as a shape across the panel, its label in
    # the legend, so no two labels can overlap however close the settings are
    lines = [
        (sp[key], f"{text} {numbers.shown(sp[key], 'pressure')}", COLOURS["set"], dash)
        for key, text, dash in (
            ("unload_above", "switch: unload above", "dot"),
            ("load_below", "switch: load below", "dash"),
        )
        if key in sp
    ]
    relief_text = f"relief valve {numbers.shown(relief, 'pressure', digits=3)}"
    lines.append((relief, relief_text, COLOURS["relief"], "dashdot"))
    shapes = []
    for y, text, colour, dash in lines:
        style = {"color": colour, "width": 1.2, "dash": dash}
        shapes.append(_hline(y, style | {"width": 1}))
        data.append(
            {"type": "scatter", "x": [None], "y": [None], "mode": "lines", "name": text,
             "line": style, "hoverinfo": "skip", **_on(1)}
        )  # fmt: skip
    shapes.append(_hline(0, {"color": COLOURS["ink"], "width": 1}, panel=4))
    axes["yaxis"] |= {"title": {"text": "pressure [bar]"}}
    axes["yaxis2"] |= {"title": {"text": "oil [L]"}, "rangemode": "tozero"}
    axes["yaxis3"] |= {
        "range": [-0.15, 1.6],
        "tickvals": [0, 1],
        "ticktext": ["off", "on"],
        "title": {"text": "pump"},
    }
    axes["yaxis4"] |= {"title": {"text": "margin [bar]"}}
    for n in ("", "2", "3", "4"):
        axes[f"xaxis{n}"] |= {"range": [0, end]}
    axes["xaxis4"] |= {"title": {"text": "time in cycle [s]"}}
    legend = {"orientation": "h", "y": 1.01, "yanchor": "bottom", "x": 0, "xanchor": "left"}
    return _figure(
        data, axes, 800, notes, shapes, legend=legend, margin={"l": 70, "r": 24, "t": 78, "b": 46}
    )


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
    axes, titles = _grid([p[0] for p in panels], cols=2, rows=2, hspace=0.1, vspace=0.2)
    names = [_BAR_NAMES[o.key] for o in opts]
    colours = [COLOURS[o.key] for o in opts]
    data = []
    for k, (_title, get, spec) in enumerate(panels, start=1):
        values = [float(get(o)) for o in opts]
        data.append(
            {
                "type": "bar",
                "x": names,
                "y": values,
                "marker": {"color": colours},
                "text": [format(v, spec) for v in values],
                "textposition": "outside",
                "cliponaxis": False,
                "hovertemplate": "%{text}<extra></extra>",
                "showlegend": False,
                **_on(k),
            }
        )
        n = "" if k == 1 else str(k)
        unit = _title[_title.rfind("[") + 1 : -1]
        axes[f"yaxis{n}"] |= {"rangemode": "tozero", "title": {"text": unit}}
        axes[f"xaxis{n}"] |= {"tickangle": 0, "tickfont": {"size": 10}}
    return _figure(data, axes, 560, titles, bargap=0.35)


def breakdown_figure(result) -> go.Figure | None:
    """Stacked bars per option: where the electrical energy of a year goes."""
    rows = content.breakdown_rows(result)
    if not rows:
        return None
    names = [_BAR_NAMES.get(r["key"], html.escape(r["label"])) for r in rows]
    data = []
    for part, label in content.BREAKDOWN_LABELS.items():
        values = [r["parts_mwh"][part] for r in rows]
        if not any(abs(v) > 0 for v in values):
            continue
        data.append(
            {
                "type": "bar",
                "name": label,
                "x": names,
                "y": values,
                "marker": {"color": _PART_COLOURS[part]},
                "hovertemplate": f"{label}: %{{y:,.1f}} MWh<extra></extra>",
            }
        )
    totals = {
        "type": "scatter",
        "mode": "text",
        "x": names,
        "y": [r["electrical_mwh"] for r in rows],
        "text": [
            f"{r['electrical_mwh']:,.1f} MWh<br>heat {r['heat_load_kw']:.3g} kW" for r in rows
        ],
        "textposition": "top center",
        "cliponaxis": False,
        "showlegend": False,
        "hoverinfo": "skip",
    }
    axes = {
        "xaxis": {"tickangle": 0, "tickfont": {"size": 10}},
        "yaxis": {
            "title": {"text": "energy per year [MWh]"},
            "range": [0.0, 1.25 * max(r["electrical_mwh"] for r in rows)],
        },
    }
    return _figure([*data, totals], axes, 460, barmode="relative", bargap=0.35)


def timeline_figure(result) -> go.Figure | None:
    """Cumulative discounted cost of each option, year by year (payback where lines cross)."""
    opts = _options(result)
    if len(opts) < 2:
        return None
    tl = result.comparison.cost_timeline()
    cur = html.escape(content.currency(result))
    data = [
        {
            "type": "scatter",
            "x": tl.index.to_numpy(),
            "y": tl[o.key],
            "name": _OPTION_NAMES[o.key],
            "mode": "lines+markers",
            "line": {"color": COLOURS[o.key], "width": 2},
            "marker": {"size": 5},
            "hovertemplate": "%{y:,.0f} " + cur,
        }
        for o in opts
    ]
    axes = {
        "xaxis": {"title": {"text": "year"}, "dtick": 1},
        "yaxis": {
            "title": {"text": f"capex + present value of energy [{cur}]"},
            "rangemode": "tozero",
        },
    }
    ref = result.comparison.reference
    if ref is None or ref.discounted_years in (None, 0.0) or ref.discounted_years > len(tl) - 1:
        return _figure(data, axes, 340)
    x = ref.discounted_years
    line = {"type": "line", "xref": "x", "x0": x, "x1": x, "yref": "y domain", "y0": 0, "y1": 1,
            "line": {"color": COLOURS["muted"], "width": 1, "dash": "dot"}}  # fmt: skip
    note = {
        "x": x,
        "xref": "x",
        "xanchor": "left",
        "y": 1,
        "yref": "y domain",
        "yanchor": "top",
        "text": f"discounted payback against the strongest: {content.years(x)}",
        "showarrow": False,
        "font": {"size": 10, "color": COLOURS["muted"]},
    }
    return _figure(data, axes, 340, [note], [line])
