"""Long lines in the report's figures are thinned for display, keeping every peak and dip.

Internal checks (no outside source).
"""

from __future__ import annotations

import numpy as np
from stowflow.report import figures


def _trace(n: int) -> dict:
    t = np.arange(n) * 0.1
    y = np.sin(t / 7.0)
    y[12_345 % n] = 9.0  # one spike up
    y[23_456 % n] = -9.0  # one dip
    return {"type": "scatter", "x": t, "y": y, "customdata": np.arange(n)}


def test_a_short_line_is_left_as_it_is():
    trace = _trace(figures.DISPLAY_POINTS)
    assert figures._thin(trace) is trace


def test_a_long_line_keeps_its_ends_peaks_and_dips_in_time_order():
    trace = _trace(36_000)
    thin = figures._thin(trace)
    x, y = np.asarray(thin["x"]), np.asarray(thin["y"])
    assert len(x) <= figures.DISPLAY_POINTS + 1 and len(y) == len(x) == len(thin["customdata"])
    assert np.all(np.diff(x) > 0)
    assert x[0] == trace["x"][0] and x[-1] == trace["x"][-1]
    assert y.max() == 9.0 and y.min() == -9.0
    # every kept point is a point of the line, with its own custom data
    idx = np.asarray(thin["customdata"])
    assert np.array_equal(trace["y"][idx], y)


def test_a_figure_with_a_thinned_line_says_so():
    fig = figures._figure([_trace(36_000)], {"xaxis": {}, "yaxis": {}}, 300)
    texts = [a.text for a in fig.layout.annotations]
    assert any("long cycle" in t and "schedule.csv holds every step" in t for t in texts)
    short = figures._figure([_trace(600)], {"xaxis": {}, "yaxis": {}}, 300)
    assert not short.layout.annotations
