"""The Python front door (``import stowflow``): the same jobs as the commands, tables out.

Internal checks (no outside source): the API must give what the commands give (the demo's
design.json, the CSV reader's cycle, the option parsers' settings); the demo data are
invented and appear here only as "the same as the command" comparisons, never as expected
values from outside.
"""

from __future__ import annotations

import doctest
import json
import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import stowflow
from stowflow import api
from stowflow.costs.comparison import CostSettings
from stowflow.cycle.duty import load_cycle
from stowflow.errors import CycleError, DesignFileError, SettingsError, UnitsError
from stowflow.io.options import COST_OPTIONS, DESIGN_OPTIONS, cost_settings, design_settings
from stowflow.search.settings import DesignSettings

REPO = Path(__file__).resolve().parents[1]
PRESS = REPO / "duty_cycles" / "forming_press.csv"
FLAGS = doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE

#: design.json keys that hold wall-clock times or the cycle's path.
VOLATILE = {
    ("verification", "elapsed_s"),
    ("search", "screen_time_s"),
    ("search", "build_time_s"),
    ("search", "solve_time_s"),
    ("search", "total_time_s"),
    ("cycle", "source"),
}


def _steady(record: dict) -> dict:
    """design.json without timings and the cycle's path."""
    out = json.loads(json.dumps(record))
    for section, key in VOLATILE:
        out[section].pop(key, None)
    return out


@pytest.fixture(scope="module")
def press():
    """The forming press designed through the API, once for the module."""
    return stowflow.design(PRESS, name="demo")


# -- import stowflow -------------------------------------------------------------------------


def test_import_stowflow_loads_neither_pandas_nor_the_optimiser():
    code = (
        "import sys, stowflow\n"
        "heavy = [m for m in ('pandas', 'pyomo.environ', 'stowflow.api', 'stowflow.pipeline')"
        " if m in sys.modules]\n"
        "print(heavy, callable(stowflow.read_cycle), 'stowflow.api' in sys.modules)\n"
    )
    out = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, check=True, cwd=REPO
    )
    assert out.stdout.split("\n")[0] == "[] True True"


def test_python_dash_m_stowflow_runs_the_command_line():
    out = subprocess.run(
        [sys.executable, "-m", "stowflow", "--version"], capture_output=True, text=True, cwd=REPO
    )
    assert out.returncode == 0 and stowflow.__version__ in out.stdout + out.stderr


def test_front_door_names_are_lazy_listed_and_the_api_s_own():
    assert set(stowflow.__all__) <= set(dir(stowflow))
    for name in stowflow.__all__:
        assert getattr(stowflow, name) is not None
    assert stowflow.design is api.design and stowflow.size is api.size
    assert issubclass(stowflow.StowflowError, ValueError)
    with pytest.raises(AttributeError, match="no attribute 'desing'"):
        stowflow.desing  # noqa: B018


# -- the README's "From Python" section ------------------------------------------------------


def readme_section(title: str = "From Python") -> tuple[str, int]:
    """The section's ```python blocks and the line of its heading."""
    lines = (REPO / "README.md").read_text(encoding="utf-8").splitlines()
    start = lines.index(f"## {title}")
    end = next(i for i in range(start + 1, len(lines)) if lines[i].startswith("## "))
    blocks, inside = [], False
    for line in lines[start:end]:
        if line.startswith("```"):
            inside = line.strip() == "```python"
            continue
        if inside:
            blocks.append(line)
    return "\n".join(blocks) + "\n", start


def run_doctest(text: str, name: str, lineno: int = 0) -> doctest.TestResults:
    test = doctest.DocTestParser().get_doctest(text, {}, name, "README.md", lineno)
    runner = doctest.DocTestRunner(optionflags=FLAGS)
    runner.run(test)
    return runner.summarize(verbose=False)


def test_readme_from_python_section_runs(monkeypatch):
    text, line = readme_section()
    assert text.count(">>>") >= 5
    assert "stowflow.design(" in text and "stowflow.read_cycle(" in text
    monkeypatch.chdir(REPO)
    result = run_doctest(text, "README.md: From Python", line)
    assert result.attempted >= 5 and result.failed == 0


def test_readme_contents_lists_the_section_between_commands_and_outputs():
    text = (REPO / "README.md").read_text(encoding="utf-8")
    headings = re.findall(r"^## (.+)$", text, flags=re.MULTILINE)
    assert headings.index("From Python") == headings.index("Commands") + 1
    assert headings.index("Outputs") == headings.index("From Python") + 1
    assert "[From Python](#from-python)" in text


@pytest.mark.parametrize("module", ["stowflow.api", "stowflow.cycle.duty"])
def test_docstring_examples_run(module, monkeypatch):
    monkeypatch.chdir(REPO)
    mod = sys.modules.get(module) or __import__(module, fromlist=["_"])
    result = doctest.testmod(mod, optionflags=FLAGS, report=False)
    assert result.attempted > 0 and result.failed == 0


def test_every_api_function_has_numpydoc_sections_and_examples():
    for name in ("read_cycle", "load_catalogue", "design", "simulate", "size", "settings"):
        doc = getattr(api, name).__doc__
        for section in ("Parameters", "Returns", "Examples"):
            assert f"\n    {section}\n    ---" in doc, (name, section)


# -- read_cycle ------------------------------------------------------------------------------


def _press_frame() -> pd.DataFrame:
    return pd.read_csv(PRESS, comment="#", skipinitialspace=True)


def _same_cycle(a, b) -> None:
    assert (a.form, a.dt, a.grid, a.labels) == (b.form, b.dt, b.grid, b.labels)
    np.testing.assert_array_equal(a.flow, b.flow)
    np.testing.assert_array_equal(a.pressure, b.pressure)
    cols = [c for c in a.table.columns if c != "line"]
    pd.testing.assert_frame_equal(a.table[cols], b.table[cols])


def test_dataframe_input_equals_csv_input():
    frame = _press_frame()
    assert list(frame.columns) == ["duration [s]", "flow [L/min]", "pressure [bar]", "label"]
    from_frame = stowflow.read_cycle(frame)
    from_csv = stowflow.read_cycle(PRESS)
    _same_cycle(from_frame, from_csv)
    assert from_frame.name == "cycle" and from_frame.source == "<DataFrame>"
    assert stowflow.read_cycle(frame, name="press").name == "press"


def test_dataframe_with_a_time_index_is_a_sample_table(tmp_path):
    path = tmp_path / "samples.csv"
    path.write_text(
        "time [s], flow [L/min], pressure [bar]\n0, 10, 100\n1, 30, 150\n4, 0, 120\n",
        encoding="utf-8",
    )
    frame = pd.DataFrame(
        {"flow [L/min]": [10, 30, 0], "pressure [bar]": [100, 150, 120]},
        index=pd.Index([0.0, 1.0, 4.0], name="time [s]"),
    )
    from_csv = stowflow.read_cycle(path)
    _same_cycle(stowflow.read_cycle(frame), from_csv)
    assert from_csv.form == "samples"


def test_dataframe_goes_through_the_csv_checks():
    frame = _press_frame()
    frame.loc[1, "flow [L/min]"] = -5
    with pytest.raises(CycleError, match=r"<DataFrame>, line 3, column 2 'flow \[L/min\]'.*neg"):
        stowflow.read_cycle(frame)
    with pytest.raises(CycleError, match="unknown column 'flw'"):
        stowflow.read_cycle(pd.DataFrame({"duration [s]": [1.0], "flw [L/min]": [1.0]}))
    with pytest.raises(CycleError, match="no unit"):
        stowflow.read_cycle(pd.DataFrame({"duration": [1.0], "flow [L/min]": [1.0]}))
    with pytest.raises(CycleError, match="empty cell"):
        stowflow.read_cycle(pd.DataFrame({"duration [s]": [1.0, np.nan], "flow [L/min]": [1, 2]}))
    bad = pd.DataFrame({"duration [s]": [1.0], "flow [L/min]": [1.0], "label": ["a\nb"]})
    with pytest.raises(CycleError, match="line break"):
        stowflow.read_cycle(bad)
    with pytest.raises(CycleError, match="not a CSV path or a pandas DataFrame"):
        stowflow.read_cycle(42)


def test_a_label_that_starts_with_a_hash_is_not_a_comment():
    frame = pd.DataFrame(
        {"label": ["#1 press", "#2 wait"], "duration [s]": [1.0, 3.0], "flow [L/min]": [60, 0]}
    )
    cycle = stowflow.read_cycle(frame)
    assert cycle.labels[0] == "#1 press" and cycle.duration == 4.0


def test_read_cycle_options_take_units_or_si():
    a = stowflow.read_cycle(PRESS, min_pressure="250bar", step="50ms")
    b = stowflow.read_cycle(PRESS, min_pressure=250e5, step=0.05)
    c = load_cycle(PRESS, min_pressure=250e5, step=0.05)
    _same_cycle(a, b)
    _same_cycle(a, c)
    with pytest.raises(UnitsError, match="min_pressure"):
        stowflow.read_cycle(PRESS, min_pressure="250L")


def test_to_frame_is_the_steps_in_trade_units():
    cycle = stowflow.read_cycle(PRESS)
    f = cycle.to_frame()
    assert f.index.name == "time [s]" and len(f) == cycle.n_steps
    assert list(f.columns) == ["flow [L/min]", "required_pressure [bar]", "label"]
    np.testing.assert_allclose(f["flow [L/min]"].to_numpy() / 6e4, cycle.flow, rtol=1e-12)
    np.testing.assert_allclose(
        f["required_pressure [bar]"].to_numpy() * 1e5 + cycle.p_ambient, cycle.pressure, rtol=1e-12
    )
    assert f["label"].tolist() == list(cycle.labels)


# -- load_catalogue --------------------------------------------------------------------------


def test_load_catalogue_defaults_to_the_bundled_one():
    from stowflow.catalogue import default_catalogue_path
    from stowflow.catalogue import load_catalogue as read

    assert stowflow.load_catalogue() == read(default_catalogue_path())
    assert stowflow.load_catalogue(default_catalogue_path()).source.endswith("catalogue.toml")


# -- settings --------------------------------------------------------------------------------

TEXT = {
    "temperature": "0..40",
    "gas": "ideal",
    "time_constant": "3s",
    "line_loss": "4bar",
    "relief_margin": "12%",
    "standby_pressure": "6bar",
    "min_loaded_dwell": "2s",
    "min_unloaded_dwell": "0.5s",
    "max_load_events": "200/h",
    "flow_margin": "5%",
    "switch_differential": "12%",
    "switch_tolerance": "2%",
    "motor_sizing": "working",
    "max_count": "6",
    "types": "bladder,piston",
    "precharge_step": "2bar",
    "time_limit": "30s",
    "mip_gap": "0.5%",
    "motor_voltage": "460",
    "motor_frequency": "60",
    "motor_poles": "6",
    "objective": "capex",
    "max_category": "iii",
    "prefer_types": "piston,bladder",
    "energy_price": "0.2/kWh",
    "hours_per_year": "3000",
    "cycle_time": "40s",
    "years": "8",
    "discount_rate": "6%",
    "installation_factor": "1.3",
    "currency": "EUR",
}
SI = {
    "temperature": (273.15, 313.15),
    "gas": "ideal",
    "time_constant": 3.0,
    "line_loss": 4e5,
    "relief_margin": 0.12,
    "standby_pressure": 6e5,
    "min_loaded_dwell": 2,
    "min_unloaded_dwell": 0.5,
    "max_load_events": 200,
    "flow_margin": 0.05,
    "switch_differential": 0.12,
    "switch_tolerance": 0.02,
    "motor_sizing": "working",
    "max_count": 6,
    "types": ["bladder", "piston"],
    "precharge_step": 2e5,
    "time_limit": 30,
    "mip_gap": 0.005,
    "motor_voltage": 460,
    "motor_frequency": 60,
    "motor_poles": 6,
    "objective": "capex",
    "max_category": "III",
    "prefer_types": ["piston", "bladder"],
    "energy_price": 0.2 / 3.6e6,
    "hours_per_year": 3000,
    "cycle_time": 40.0,
    "years": 8,
    "discount_rate": 0.06,
    "installation_factor": 1.3,
    "currency": "EUR",
}


def test_settings_as_text_and_as_si_numbers_are_the_same_objects():
    text, si = stowflow.settings(**TEXT), stowflow.settings(**SI)
    assert text.design == si.design and text.costs == si.costs
    # ... and the same as the option parsers make from the text
    design_keys = {k: v for k, v in TEXT.items() if k in DESIGN_OPTIONS}
    cost_keys = {k: v for k, v in TEXT.items() if k in COST_OPTIONS}
    assert text.design == design_settings(design_keys)
    assert text.costs == cost_settings(cost_keys)
    assert text.design.t_min == 273.15 and text.costs.operating_time == 3000 * 3600.0


def test_every_option_is_a_keyword_and_every_number_has_a_unit():
    text_only = {"temperature", "gas", "process", "types", "currency", "motor_sizing"}
    text_only |= {"objective", "max_category", "prefer_types"}
    options = set(DESIGN_OPTIONS) | set(COST_OPTIONS)
    assert set(api.NUMBER_UNITS) == options - text_only
    assert set(TEXT) | {"process", "cycles_per_hour"} == options


def test_settings_defaults_and_extras():
    assert stowflow.settings() == (DesignSettings(), CostSettings())
    s = stowflow.settings(min_dwell="3s", allow_pump_only=False, line_loss=None)
    assert (s.design.min_loaded_dwell, s.design.min_unloaded_dwell) == (3.0, 3.0)
    assert s.design.allow_pump_only is False and s.design.line_loss == DesignSettings().line_loss
    s = stowflow.settings(min_dwell=3, min_unloaded_dwell="1s", temperature=300.0)
    assert (s.design.min_loaded_dwell, s.design.min_unloaded_dwell) == (3.0, 1.0)
    assert s.design.t_min == s.design.t_max == 300.0
    assert stowflow.settings(cycles_per_hour=120).costs.cycle_time == 30.0
    assert stowflow.settings(max_load_events="none").design.max_load_events_per_hour is None


def test_an_unknown_keyword_is_named_with_close_matches():
    with pytest.raises(SettingsError, match=r"unknown setting 'temprature'; did you mean "):
        stowflow.settings(temprature="10..50")
    with pytest.raises(SettingsError) as err:
        stowflow.design(PRESS, line_los="5bar")
    assert "'line_loss'" in str(err.value)
    with pytest.raises(SettingsError, match="unknown setting 'colour'; known: "):
        stowflow.settings(colour="red")


@pytest.mark.parametrize(
    ("values", "match"),
    [
        ({"line_loss": "5"}, "no unit"),
        ({"line_loss": "5L"}, "pressure"),
        ({"line_loss": True}, "not a number"),
        ({"line_loss": float("nan")}, "not a finite number"),
        ({"gas": 1.0}, "not text"),
        ({"temperature": (1, 2, 3)}, "temperature"),
        ({"temperature": (323.15, 283.15)}, "above the hottest"),
        ({"flow_margin": 0.9}, "flow-margin.*below 50 %"),
        ({"allow_pump_only": "no"}, "True or False"),
        ({"max_count": 2.5}, "whole number"),
    ],
)
def test_bad_values_raise_one_line(values, match):
    with pytest.raises((SettingsError, UnitsError), match=match) as err:
        stowflow.settings(**values)
    assert "\n" not in str(err.value)


# -- design ----------------------------------------------------------------------------------


def test_design_equals_the_demo_command(press, run_cli, tmp_path):
    code, _, _ = run_cli("demo", "--out", tmp_path / "demo")
    assert code == 0
    demo = json.loads((tmp_path / "demo" / "design.json").read_text(encoding="utf-8"))
    ours = press.to_dict()
    assert ours["accumulator"] == demo["accumulator"]
    assert (ours["pump"], ours["motor"], ours["setpoints"]) == (
        demo["pump"],
        demo["motor"],
        demo["setpoints"],
    )
    assert _steady(ours) == _steady(demo)
    assert press.summary["motor_rated_kw"] == demo["motor"]["rated_kw"]
    assert press.summary["precharge_bar"] == demo["accumulator"]["precharge_bar_at_20c"]


def test_to_dict_is_what_write_puts_in_design_json(press, tmp_path):
    paths = press.write(tmp_path / "out")
    assert set(paths) == {"report.html", "design.json", "schedule.csv", "spec.csv"}
    written = json.loads(paths["design.json"].read_text(encoding="utf-8"))
    assert _steady(press.to_dict()) == _steady(written)
    assert press.to_dict() == press.to_dict() and press.to_dict() is not press.to_dict()
    schedule = pd.read_csv(paths["schedule.csv"], comment="#").set_index("time [s]")
    assert list(schedule.columns) == list(press.schedule.columns)
    numbers = press.schedule.select_dtypes("number").columns
    pd.testing.assert_frame_equal(
        schedule[numbers], press.schedule[numbers], check_dtype=False, rtol=0, atol=0
    )


def test_design_tables(press):
    d = press.to_dict()
    s = press.summary
    assert s["status"] == d["status"] and s["accumulator_count"] == d["accumulator"]["count"]
    assert s["total_gas_volume_l"] == d["accumulator"]["total_gas_volume_l"]
    assert s["verified"] is True and s["controller"] == d["verification"]["controller"]
    assert s["capex"] == d["costs"]["capex"] and s["currency"] == d["costs"]["currency"]
    assert press.schedule.index.name == "time [s]"
    assert press.schedule.shape == (press.study.cycle.n_steps, 11)
    assert list(press.costs.index) == [
        "design", "fixed", "compensated", "variable-speed", "load-sensing"
    ]  # fmt: skip
    assert press.costs.loc["design", "capex"] == d["costs"]["capex"]
    kind = d["costs"]["payback_against"]
    assert press.costs["strongest"].sum() == 1 and press.costs.loc[kind, "strongest"]
    years = press.costs.loc[kind, "payback_years"]
    expected = d["costs"]["payback_years"]
    assert pd.isna(years) if expected is None else years == expected
    assert press.costs.loc[kind, "verdict_note"] == d["costs"]["verdict_note"] == s["verdict"]
    assert s["pump_only_kind"] == kind
    v = press.verification
    assert len(v) == len(d["verification"]["runs"]) and v["recommended"].any()
    assert v["passed"][v["recommended"]].all()
    runs = press.study.verification.runs
    assert len(press.traces) == sum(len(r.trace) for r in runs)
    kw = f"{press.study.design.motor.rated_power / 1e3:g} kW"
    assert press.feasible and press.name == "demo" and kw in repr(press)


def test_design_refuses_read_options_for_a_cycle_already_read():
    cycle = stowflow.read_cycle(PRESS)
    with pytest.raises(SettingsError, match="read_cycle"):
        stowflow.design(cycle, min_pressure="100bar")


def test_design_of_a_dataframe_without_verification_with_cost_settings():
    frame = pd.DataFrame({"duration [s]": [2.0, 8.0], "flow [L/min]": [60.0, 0.0]})
    r = stowflow.design(
        frame, min_pressure="100bar", verify=False, energy_price="0.3/kWh", currency="USD"
    )
    assert r.study.verification is None and r.summary["verified"] is None
    assert r.verification.empty and r.traces.empty
    assert r.summary["currency"] == "USD"
    assert r.study.cost_settings.energy_price == pytest.approx(0.3 / 3.6e6, rel=1e-15)


# -- simulate --------------------------------------------------------------------------------


def test_simulate_a_design_result_and_its_design_json(press, tmp_path):
    again = stowflow.simulate(press)
    v = press.study.verification
    assert again.passed == v.passed and again.raw.controller == v.controller
    assert again.raw.min_margin == pytest.approx(v.min_margin, abs=1e3)  # within 0.01 bar
    paths = press.write(tmp_path / "press")
    from_file = stowflow.simulate(paths["design.json"], PRESS)
    assert from_file.passed and from_file.raw.controller == v.controller
    assert from_file.summary["load_below_bar"] == pytest.approx(
        press.summary["load_below_bar"], abs=1e-3
    )
    cols = ["controller", "temperature_c", "passed"]
    assert from_file.verification[cols].equals(again.verification[cols])
    assert again.traces.columns[:4].tolist() == [
        "controller",
        "temperature [°C]",
        "pump_flow_state",
        "time [s]",
    ]
    assert "passed" in repr(again)


def test_simulate_settings_and_controllers(press):
    sim = stowflow.simulate(press, temperature="0..60", controllers=["pressure-switch"])
    # Both temperature ends, at catalogue and at worn pump flow.
    assert sim.verification["temperature_c"].tolist() == [0.0, 60.0, 0.0, 60.0]
    assert sim.summary["temperature_min_c"] == 0.0 and sim.settings.t_max == 333.15
    with pytest.raises(SettingsError, match="unknown setting 'energy_price'"):
        stowflow.simulate(press, energy_price="0.3/kWh")
    with pytest.raises(SettingsError, match="controller"):
        stowflow.simulate(press, controllers=["valve"])


def test_simulate_refuses_what_cannot_be_simulated(tmp_path):
    with pytest.raises(SettingsError, match="give the duty cycle"):
        stowflow.simulate(tmp_path / "design.json")
    with pytest.raises(DesignFileError, match="file not found"):
        stowflow.simulate(tmp_path / "design.json", PRESS)
    with pytest.raises(SettingsError, match="neither"):
        stowflow.simulate(42, PRESS)
    tiny = stowflow.load_catalogue()
    from dataclasses import replace

    small = replace(tiny, motors=tiny.motors[:1], accumulators=())
    r = stowflow.design(PRESS, small)
    assert not r.feasible
    with pytest.raises(SettingsError, match="only a feasible design"):
        stowflow.simulate(r)


# -- size ------------------------------------------------------------------------------------


def test_size_takes_units_or_si_and_gives_a_series():
    text = stowflow.size(
        "5L", "100bar", "200bar", temperature="10..50", max_allowable_pressure="330bar"
    )
    si = stowflow.size(
        5e-3, 100e5, 200e5, temperature=(283.15, 323.15), max_allowable_pressure=330e5
    )
    assert isinstance(text, pd.Series)
    pd.testing.assert_series_equal(text, si, rtol=1e-12)
    assert text["oil_volume_l"] == pytest.approx(5.0, rel=1e-12)
    assert text["min_pressure_bar"] == pytest.approx(100.0, rel=1e-12)
    assert "pressure_equipment_category" in text
    assert text["governing_type"] in text["admissible_types"]
    absolute = stowflow.size("5L", 100e5 + 101325, 200e5 + 101325, absolute=True)
    gauge = stowflow.size("5L", "100bar", "200bar")
    assert absolute["required_gas_volume_l"] == pytest.approx(
        gauge["required_gas_volume_l"], rel=1e-12
    )


def test_size_matches_the_sizing_function():
    from stowflow.duties.sizing import size_accumulator

    s = stowflow.size("5L", "100bar", "200bar", precharge="80bar", process="isothermal")
    ref = size_accumulator(5e-3, 100e5 + 101325, 200e5 + 101325, precharge=80e5 + 101325,
                           process="isothermal")  # fmt: skip
    assert s["required_gas_volume_l"] == pytest.approx(ref.required_gas_volume * 1e3, rel=1e-9)
    assert s["precharge_by_rule"] is False and s["process"] == "isothermal"
