"""The report's figures in the unit system of ``--units``, converted as they are written.

:mod:`stowflow.report.figures` draws in metric units, each axis titled with its unit in
brackets ("pressure [bar]", "flow [L/min]", "oil [L]", "installed motor power [kW]").  Under
another unit system :func:`figure_in_system` converts each such axis: the y values of its
traces, the horizontal lines drawn on it, the title; trace names, hover texts and panel
titles go through :func:`stowflow.report.display_units.in_system_text`.  Under metric the
figure is returned as it is.
"""

from __future__ import annotations

import re

import numpy as np
import plotly.graph_objects as go
from stowflow.io.numbers import METRIC, current_system, display_value, unit_label
from stowflow.report.display_units import METRIC_WORDS, in_system_text

__all__ = ["figure_in_system"]

#: Metric unit in an axis title → (kind, SI of one unit).  Bar on an axis is gauge or a
#: difference: both scale alike.
_AXIS_UNITS = METRIC_WORDS
_TITLE = re.compile(r"^(.*)\[(bar|L|L/min|kW)\]\s*$")
_BARE = re.compile(r"^(bar|L|L/min|kW)$")  # an axis titled by its unit alone
# a hover template's unit after a %{y…} or %{customdata…} field
_HOVER = re.compile(r"(%\{(?:y|customdata)[^}]*\})\s?(bar|L/min|kW|L)\b")


def _axis_ref(layout_key: str) -> str:
    """ "yaxis2" → "y2" (the trace's and shape's name of that axis)."""
    return "y" + layout_key[len("yaxis") :]


def figure_in_system(fig: go.Figure | None) -> go.Figure | None:
    """``fig`` with its metric axes in the unit system in force (a new figure; None passes).

    Parameters
    ----------
    fig : plotly.graph_objects.Figure or None
        A figure of :mod:`stowflow.report.figures`.

    Returns
    -------
    plotly.graph_objects.Figure or None
    """
    if fig is None or current_system() is METRIC:
        return fig
    fig = go.Figure(fig)  # a copy: the caller's figure stays metric
    scale: dict[str, float] = {}
    labels: dict[str, str] = {}
    for key in list(fig.layout.to_plotly_json()):
        if not key.startswith("yaxis"):
            continue
        axis = fig.layout[key]
        text = (axis.title.text or "") if axis.title is not None else ""
        m = _TITLE.match(text) or _BARE.match(text)
        if not m:
            continue
        head, unit = (m.group(1), m.group(2)) if m.re is _TITLE else ("", m.group(1))
        kind, one = _AXIS_UNITS[unit]
        factor = display_value(one, kind)  # linear: no gauge shift for a difference
        ref = _axis_ref(key)
        scale[ref], labels[ref] = factor, unit_label(kind)
        label = f"{in_system_text(head)}[{unit_label(kind)}]" if head else unit_label(kind)
        axis.title.text = label
        if axis.range is not None:
            axis.range = [None if v is None else v * factor for v in axis.range]
    for trace in fig.data:
        ref = getattr(trace, "yaxis", None) or "y"
        if ref in scale and getattr(trace, "y", None) is not None:
            y = np.array([np.nan if v is None else v for v in trace.y], dtype=float)
            trace.y = [None if np.isnan(v) else float(v) for v in y * scale[ref]]
        template = getattr(trace, "hovertemplate", None)
        if ref in scale and template and "%{customdata" in template:
            data = getattr(trace, "customdata", None)
            if data is not None and _numeric(data):
                trace.customdata = [float(v) * scale[ref] for v in data]
        if template and ref in labels:
            trace.hovertemplate = _HOVER.sub(
                lambda mm, r=ref: f"{mm.group(1)} {labels[r]}", template
            )
        if isinstance(getattr(trace, "name", None), str):
            trace.name = in_system_text(trace.name)
    for shape in fig.layout.shapes or ():
        ref = shape.yref or "y"
        if ref in scale:
            if isinstance(shape.y0, int | float):
                shape.y0 = shape.y0 * scale[ref]
            if isinstance(shape.y1, int | float):
                shape.y1 = shape.y1 * scale[ref]
    for note in fig.layout.annotations or ():
        if isinstance(note.text, str):
            note.text = in_system_text(note.text)
    return fig


def _numeric(values) -> bool:
    try:
        return all(isinstance(float(v), float) for v in values)
    except (TypeError, ValueError):
        return False
