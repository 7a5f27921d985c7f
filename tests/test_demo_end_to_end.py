"""A whole ``stowflow demo`` run, and the report's figure data against its design.json.

The demo is run once, as a user runs it: the installed command (``python -m stowflow``) in a
fresh temporary folder with ``--out tmp``.  Checks:

* the run: exit code 0, the four files, design.json's status ``optimal`` and its verification
  passed, schedule.csv with one row per step of the cycle (the demo's phase table summed and
  cut into the step design.json reports);
* report.html's Plotly figures (each a ``Plotly.newPlot(id, data, layout, config)`` call; numeric
  arrays as base64 typed arrays) against design.json: the pressure-switch and relief lines
  where the verification set them, the required-pressure trace from the cycle plus the line
  loss, the margin trace as pressure minus requirement, the least margin and the peak
  pressure of the recommended runs, the comparison bars.

No demo value is pinned: the design rules change, so every expected value is computed from
the inputs or from another part of the same output.
"""

from __future__ import annotations

import base64
import csv
import json
import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

#: design.json rounds pressures to 3 decimals in bar, [bar].
JSON_BAR = 5e-4
#: design.json rounds energies to 4–6 significant digits; relative, [-].
JSON_REL = 1e-5
#: Repository root (the demo cycle is read from duty_cycles/ for the expected values).
REPO = Path(__file__).resolve().parent.parent
FILES = ("report.html", "design.json", "schedule.csv", "spec.csv")


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    """Run ``stowflow demo --out tmp`` in a new folder; (completed process, output folder,
    design.json as a dict, the demo cycle's phase table)."""
    where = tmp_path_factory.mktemp("demo")
    done = subprocess.run(
        [sys.executable, "-m", "stowflow", "demo", "--out", "tmp"],
        cwd=where,
        capture_output=True,
        text=True,
        timeout=600,
        check=False,
    )
    out = where / "tmp"
    design = json.loads((out / "design.json").read_text()) if done.returncode == 0 else {}
    phases = _phases(REPO / "duty_cycles" / "forming_press.csv")
    return done, out, design, phases


def _phases(path):
    """(duration [s], flow [L/min], pressure [bar gauge]) rows of a demo phase table."""
    text = path.read_text(encoding="utf-8").splitlines()
    rows = list(csv.reader(line for line in text if not line.startswith("#")))
    return [tuple(float(x) for x in r[:3]) for r in rows[1:]]


def _figures(html: str) -> dict:
    """Every ``Plotly.newPlot(id, data, layout, ...)`` of the page: {id: (data, layout)}."""
    dec = json.JSONDecoder()
    out = {}
    for m in re.finditer(r"Plotly\.newPlot\(", html):
        i, vals = m.end(), []
        for _ in range(3):
            while html[i] in " \n\t,":
                i += 1
            value, i = dec.raw_decode(html, i)
            vals.append(value)
        out[vals[0]] = (vals[1], vals[2])
    return out


def _array(v) -> np.ndarray:
    """A Plotly array: a plain list or a base64 typed array {dtype, bdata[, shape]}."""
    if isinstance(v, dict) and "bdata" in v:
        a = np.frombuffer(base64.b64decode(v["bdata"]), dtype=np.dtype(v["dtype"]))
        return a.reshape(v["shape"]) if "shape" in v else a
    return np.asarray(v)


def _trace(data, name):
    (t,) = [t for t in data if t.get("name") == name]
    return _array(t["x"]).astype(float), _array(t["y"]).astype(float)


def test_demo_runs_and_writes_the_four_files(demo):
    done, out, design, _ = demo
    assert done.returncode == 0, done.stderr[-2000:]
    for name in FILES:
        assert (out / name).is_file() and (out / name).stat().st_size > 0, name
    assert design["status"] == "optimal"
    assert design["verification"]["passed"] is True


def test_schedule_has_one_row_per_cycle_step(demo):
    done, out, design, phases = demo
    assert done.returncode == 0
    duration = sum(p[0] for p in phases)
    step = design["cycle"]["step_s"]
    n = round(duration / step)
    assert n * step == pytest.approx(duration, rel=1e-12)  # the phases sit on the grid
    with (out / "schedule.csv").open() as fh:
        rows = list(csv.DictReader(line for line in fh if not line.startswith("#")))
    assert len(rows) == n == design["cycle"]["steps"]
    t = np.array([float(r["time [s]"]) for r in rows])
    np.testing.assert_allclose(t, np.arange(n) * step, atol=1e-9)
    # The demand column is the phase table, step by step.
    expected = np.concatenate([np.full(round(d / step), q) for d, q, _ in phases])
    np.testing.assert_allclose([float(r["demand [L/min]"]) for r in rows], expected, atol=1e-9)


def _operation(out):
    data, layout = _figures((out / "report.html").read_text(encoding="utf-8"))["fig-operation"]
    return data, layout


def test_switch_and_relief_lines_are_the_verified_settings(demo):
    _, out, design, _ = demo
    _, layout = _operation(out)
    lines = sorted(s["y0"] for s in layout["shapes"] if s.get("yref") == "y")
    sp = design["setpoints"]
    assert sp["source"] == "time-domain verification"
    expected = sorted([sp["load_below_bar"], sp["unload_above_bar"], design["relief_bar"]])
    np.testing.assert_allclose(lines, expected, atol=JSON_BAR)
    # The switch works inside the relief setting, unloading above where it loads.
    assert sp["load_below_bar"] < sp["unload_above_bar"] < design["relief_bar"]


def test_pressure_traces_against_the_verification(demo):
    _, out, design, phases = demo
    data, _ = _operation(out)
    settings = design["settings"]
    line_loss = settings["line_loss_bar"]
    step = design["cycle"]["step_s"]
    # Required pressure: the phase table's gauge pressure plus the line loss, step by step
    # (the figure closes the step line with one extra point at the cycle end).
    _, req = _trace(data, "required (with line loss)")
    by_hand = np.concatenate([np.full(round(d / step), p + line_loss) for d, _, p in phases])
    np.testing.assert_allclose(req[:-1], by_hand, atol=1e-9)
    runs = [r for r in design["verification"]["runs"] if r["recommended"]]
    for which in ("min", "max"):
        temp = design["temperature_c"][which]
        tag = f"{temp:.0f} °C"
        t, p = _trace(data, f"pressure at {tag}")
        _, margin = _trace(data, f"margin at {tag}")
        assert t.size == round(sum(ph[0] for ph in phases) / step)
        # The margin panel is the pressure panel less the requirement.
        np.testing.assert_allclose(margin, p - req[:-1], atol=1e-9)
        # The recommended runs at this temperature (catalogue and worn pump): the figure shows
        # one of them; its step-end pressures lie within the run's peak and never show less
        # margin than the least the run found within the steps.
        (run,) = [r for r in runs if r["temperature_c"] == temp and r["pump_flow"] == "catalogue"]
        assert p.max() <= run["peak_pressure_bar"] + JSON_BAR  # gauge, as the figure
        assert margin.min() >= run["min_margin_bar"] - JSON_BAR
        assert run["passed"] and run["min_margin_bar"] > 0
        # Never above the relief setting.
        assert p.max() <= design["relief_bar"] + JSON_BAR
        _, oil = _trace(data, f"stored oil at {tag}")
        assert 0 <= oil.min() and oil.max() <= design["accumulator"]["total_gas_volume_l"]
    # The verification's least margin is the least over its runs.
    assert design["verification"]["min_margin_bar"] == pytest.approx(
        min(r["min_margin_bar"] for r in runs), abs=JSON_BAR
    )


def test_comparison_bars_are_the_costs(demo):
    _, out, design, _ = demo
    data, _ = _figures((out / "report.html").read_text(encoding="utf-8"))["fig-comparison"]
    options = [o for o in design["costs"]["options"].values() if o["feasible"]]
    kw, capex, energy, tco = (_array(t["y"]).astype(float) for t in data)
    np.testing.assert_allclose(kw, [o["installed_power_kw"] for o in options], rtol=JSON_REL)
    np.testing.assert_allclose(capex, [o["capex"] for o in options], rtol=JSON_REL)
    # Energy bars in MWh a year.
    np.testing.assert_allclose(
        energy, [o["energy_per_year_kwh"] / 1e3 for o in options], rtol=JSON_REL
    )
    np.testing.assert_allclose(tco, [o["tco"] for o in options], rtol=JSON_REL)


# The energies of the design and of every pump-only alternative, with their part-load losses,
# are checked against hand calculations in tests/search/test_baseline.py and
# tests/costs/test_energy_demo.py (the design's energy read from these runs' traces).
