"""Exports: design.json, schedule.csv and spec.csv follow DESIGN.md "Outputs (contract)".

Unit conversions are checked against the unit definitions themselves: 1 bar = 1e5 Pa and
1 L = 1e-3 m³ (SI Brochure, BIPM, 9th ed., Table 8: non-SI units accepted for use with the SI),
1 min = 60 s, 1 kW = 1e3 W.
"""

from __future__ import annotations

import csv
import io
import json
import math

import numpy as np
import pandas as pd
import pytest
from _report_studies import (
    ACC_NAME,
    AT_LABEL,
    FORMULA_LABEL,
    PUMP_NAME,
    SCRIPT_LABEL,
    forming_press,
    forming_press_verified,
    hostile,
    infeasible,
)
from stowflow.report import OUTPUTS, design_record, schedule_frame, spec_rows, write_study
from stowflow.report.exports import SCHEDULE_COLUMNS, SCHEMA, neutralise, spec_csv

BAR = 1e5  # Pa per bar (definition)
LITRE = 1e-3  # m³ per L (definition)
LPM = 1e-3 / 60  # m³/s per L/min
KW = 1e3  # W per kW
TOL = 1e-9  # relative, for our own conversions

CONTRACT = {
    "schema": str,
    "status": str,
    "mip_gap": (float, type(None)),
    "reason": (str, type(None)),
    "gas_model": str,
    "process": str,
    "polytropic_index": (float, type(None)),
    "temperature_c": dict,
    "accumulator": (dict, type(None)),
    "pump": (dict, type(None)),
    "motor": (dict, type(None)),
    "setpoints": dict,
    "baseline": dict,
    "verification": dict,
    "costs": dict,
}
NESTED = {
    "temperature_c": {"min", "max", "precharge_reference"},
    "accumulator": {
        "type", "nominal_volume_l", "count", "total_gas_volume_l", "precharge_bar_at_20c",
        "min_pressure_bar", "max_pressure_bar",
    },
    "pump": {"displacement_cm3", "speed_rpm", "flow_lpm"},
    "motor": {"rated_kw"},
    "setpoints": {"load_below_bar", "unload_above_bar"},
    "verification": {"passed", "min_margin_bar"},
    "costs": {"capex", "energy_per_year", "baseline_capex", "baseline_energy_per_year"},
}  # fmt: skip


def _strict_json(text: str):
    def refuse(name):
        raise ValueError(f"non-standard JSON constant {name}")

    return json.loads(text, parse_constant=refuse)


@pytest.fixture(scope="module")
def written(tmp_path_factory):
    out = tmp_path_factory.mktemp("exports") / "nested" / "press"
    return forming_press(), write_study(forming_press(), out)


def test_write_study_writes_four_files_into_a_new_folder(written):
    _, paths = written
    assert tuple(paths) == OUTPUTS == ("report.html", "design.json", "schedule.csv", "spec.csv")
    for name, path in paths.items():
        assert path.name == name and path.is_file() and path.stat().st_size > 0
    assert not list(paths["report.html"].parent.glob("*.part"))


def test_design_json_has_the_contract_keys_and_types(written):
    result, paths = written
    rec = _strict_json(paths["design.json"].read_text(encoding="utf-8"))
    for key, kind in CONTRACT.items():
        assert key in rec, key
        assert isinstance(rec[key], kind), (key, rec[key])
    for key, keys in NESTED.items():
        assert keys <= set(rec[key]), (key, keys - set(rec[key]))
    assert rec["schema"] == SCHEMA == "stowflow.design/1"
    assert rec["status"] in ("optimal", "feasible")
    assert rec["gas_model"] in ("real", "ideal")
    assert rec["process"] in ("adiabatic", "isothermal", "polytropic")
    assert rec["temperature_c"] == {"min": 10.0, "max": 50.0, "precharge_reference": 20.0}
    assert {"pump", "motor"} <= set(rec["baseline"])
    assert "flow_lpm" in rec["baseline"]["pump"] and "rated_kw" in rec["baseline"]["motor"]
    assert isinstance(rec["accumulator"]["count"], int)
    assert rec == design_record(result)


def test_design_json_units(written):
    result, paths = written
    rec = _strict_json(paths["design.json"].read_text(encoding="utf-8"))
    d, p_amb = result.design, result.settings.p_ambient
    acc = rec["accumulator"]
    assert acc["type"] == d.bank.type
    assert acc["count"] == d.bank.count
    assert acc["nominal_volume_l"] == pytest.approx(d.bank.option.nominal_volume / LITRE, rel=TOL)
    assert acc["total_gas_volume_l"] == pytest.approx(d.bank.gas_volume / LITRE, rel=TOL)
    # gauge pressures: absolute minus the ambient pressure, in bar
    assert acc["precharge_bar_at_20c"] == pytest.approx((d.bank.precharge - p_amb) / BAR, abs=1e-3)
    assert acc["min_pressure_bar"] == pytest.approx((d.p_min - p_amb) / BAR, abs=1e-3)
    assert acc["max_pressure_bar"] == pytest.approx((d.p_max - p_amb) / BAR, abs=1e-3)
    assert rec["relief_bar"] == pytest.approx((d.relief - p_amb) / BAR, abs=1e-3)
    assert rec["pump"]["flow_lpm"] == pytest.approx(d.pump.flow / LPM, abs=1e-4)
    assert rec["pump"]["displacement_cm3"] == pytest.approx(d.pump.displacement * 1e6, rel=TOL)
    assert rec["pump"]["speed_rpm"] == pytest.approx(d.pump.speed * 60, rel=TOL)
    assert rec["motor"]["rated_kw"] == pytest.approx(d.motor.rated_power / KW, rel=TOL)
    c = result.comparison
    # "baseline" and costs.baseline_* are the strongest alternative (the least TCO), the one
    # costs.payback_against names.
    best = next(b for b in d.baselines if b.kind == c.strongest.key)
    assert rec["costs"]["payback_against"] == best.kind == rec["baseline"]["kind"]
    assert rec["baseline"]["motor"]["rated_kw"] == pytest.approx(best.installed_power / KW)
    assert rec["baseline"]["pump"]["flow_lpm"] == pytest.approx(best.pump.flow / LPM, abs=1e-4)
    assert rec["costs"]["capex"] == pytest.approx(c.option("design").capex, abs=0.01)
    # energy per year in kWh: J / 3.6e6 (1 kWh = 3.6 MJ by definition)
    e_kwh = c.option("design").energy_per_year / 3.6e6
    assert rec["costs"]["energy_per_year"] == pytest.approx(e_kwh, abs=1e-3)
    assert rec["costs"]["baseline_capex"] == pytest.approx(c.strongest.capex, abs=0.01)
    assert rec["costs"]["baseline_tco"] == pytest.approx(c.strongest.tco, abs=0.01)
    assert rec["costs"]["energy_unit"] == "kWh"
    assert rec["installed_to_lower_bound_ratio"] >= 1.0
    # precharge table: 20 °C row is the design precharge
    row20 = [r for r in acc["precharge_table"] if r["temperature_c"] == 20.0]
    assert row20[0]["precharge_bar"] == pytest.approx(acc["precharge_bar_at_20c"], abs=1e-3)


def test_design_json_of_an_unverified_design_has_null_setpoints(written):
    result, paths = written
    rec = _strict_json(paths["design.json"].read_text(encoding="utf-8"))
    assert result.verification is None
    assert rec["setpoints"]["load_below_bar"] is None
    assert rec["verification"] == {"passed": None, "min_margin_bar": None}


def test_design_json_of_an_infeasible_study():
    result = infeasible()
    assert result.design.status == "infeasible"
    rec = _strict_json(json.dumps(design_record(result), allow_nan=False))
    assert rec["status"] == "infeasible" and rec["reason"] == result.design.reason
    assert rec["accumulator"] is None and rec["pump"] is None and rec["motor"] is None
    assert rec["costs"]["capex"] is None and rec["costs"]["energy_per_year"] is None
    for key in NESTED["costs"]:
        assert key in rec["costs"]


def test_schedule_csv_columns_and_rows(written):
    result, paths = written
    df = pd.read_csv(paths["schedule.csv"], encoding="utf-8", comment="#")
    assert tuple(df.columns[: len(SCHEDULE_COLUMNS)]) == SCHEDULE_COLUMNS
    cyc = result.cycle
    assert len(df) == cyc.n_steps
    assert np.allclose(df["time [s]"], np.arange(cyc.n_steps) * cyc.dt, atol=1e-9)
    assert set(df["pump_loaded"].unique()) <= {0, 1}
    assert np.allclose(df["demand [L/min]"], cyc.flow / LPM, atol=1e-6)
    sch, p_amb = result.design.schedule, result.settings.p_ambient
    assert np.allclose(
        df["pressure [bar]"], (sch["pressure_cold [Pa]"].to_numpy() - p_amb) / BAR, atol=1e-5
    )
    assert np.allclose(
        df["required_pressure [bar]"],
        (sch["required_pressure [Pa]"].to_numpy() - p_amb) / BAR,
        atol=1e-5,
    )
    assert np.allclose(
        df["accumulator_oil [L]"], sch["accumulator_oil [m³]"].to_numpy() / LITRE, atol=1e-5
    )
    # pump flow: at most the full flow while loaded, none while unloaded
    full = result.design.pump.flow / LPM
    assert np.all(df["pump_flow [L/min]"] <= df["pump_loaded"] * full + 1e-6)
    # the oil balance of DESIGN.md / solution.py holds in the exported units:
    # ΔV [L] = (pump flow − relief flow − demand) [L/min] × Δt [s] / 60 [s/min]
    net = df["pump_flow [L/min]"] - df["relief_flow [L/min]"] - df["demand [L/min]"]
    oil = df["accumulator_oil [L]"].to_numpy()
    assert np.allclose(oil - np.roll(oil, 1), net * cyc.dt / 60, atol=1e-5)


def test_schedule_of_an_infeasible_study_keeps_the_cycle():
    result = infeasible()
    df = schedule_frame(result)
    assert tuple(df.columns[: len(SCHEDULE_COLUMNS)]) == SCHEDULE_COLUMNS
    assert len(df) == result.cycle.n_steps
    assert df["pressure [bar]"].isna().all() and df["required_pressure [bar]"].notna().all()


@pytest.mark.parametrize("start", ["=", "+", "-", "@", "\t", "\r", "＝"])
def test_neutralise_prefixes_formula_starts(start):
    # OWASP, "CSV Injection": prefix cells beginning with = + - @ tab or CR with a quote.
    assert neutralise(start + "1+1") == "'" + start + "1+1"


def test_neutralise_leaves_plain_cells():
    assert neutralise("pump") == "pump"
    assert neutralise(-3.5) == -3.5  # numbers stay numbers
    assert neutralise(None) is None


def _cells(text: str) -> list[list[str]]:
    return list(csv.reader(io.StringIO(text)))


def test_spec_csv_is_spreadsheet_safe():
    result = hostile()
    text = spec_csv(result)
    rows = _cells(text)
    header = rows[0]
    assert header[:3] == ["item", "description", "quantity [-]"]
    assert header[3].startswith("unit_price [") and header[4].startswith("total [")
    for row in rows:
        for cell in row:
            assert not cell.startswith(("=", "+", "-", "@", "\t", "\r")), cell
    assert f"catalogue: {PUMP_NAME}" in text  # names inside a cell stay readable
    assert ACC_NAME in text


def test_spec_csv_totals_and_items(written):
    result, paths = written
    rows = _cells(paths["spec.csv"].read_text(encoding="utf-8"))
    header, body = rows[0], rows[1:]
    items = [r[0] for r in body]
    assert items[:3] == ["accumulator", "pump", "motor"]
    assert "relief valve" in items and items[-1] == "total"
    total_col = header.index(next(h for h in header if h.startswith("total [")))
    priced = [float(r[total_col]) for r in body[:-1] if r[total_col]]
    assert sum(priced) == pytest.approx(float(body[-1][total_col]), rel=TOL)
    assert float(body[-1][total_col]) == pytest.approx(result.comparison.option("design").capex)
    acc = body[0]
    assert int(acc[2]) == result.design.bank.count
    assert float(acc[3]) == result.design.bank.option.price


def test_spec_rows_installation_line():
    from dataclasses import replace

    from stowflow.costs.comparison import CostSettings, compare

    result = forming_press()
    s = CostSettings(installation_factor=1.5)
    comparison = compare(result.design, None, result.cycle, s)
    r2 = replace(result, comparison=comparison, cost_settings=s)
    rows = spec_rows(r2)
    inst = [r for r in rows if r["item"] == "installation"]
    assert len(inst) == 1
    cur = next(k for k in rows[0] if k.startswith("total ["))
    assert rows[-1][cur] == pytest.approx(1.5 * result.design.capex, rel=TOL)
    assert math.isclose(inst[0][cur], 0.5 * result.design.capex, rel_tol=TOL)


def test_schedule_labels_are_neutralised():
    df = schedule_frame(hostile())
    labels = set(df["label"])
    assert "'" + FORMULA_LABEL in labels and "'" + AT_LABEL in labels
    assert SCRIPT_LABEL in labels  # not a formula: kept as text in the CSV
    text = df.to_csv(index=False)
    for row in _cells(text)[1:]:
        assert not row[-1].startswith(("=", "+", "-", "@"))


def test_design_json_of_a_verified_study():
    result = forming_press_verified()
    if result is None:
        pytest.skip("the time-domain verification is not available in this tree")
    rec = _strict_json(json.dumps(design_record(result), allow_nan=False))
    v, p_amb = result.verification, result.settings.p_ambient
    assert rec["verification"]["passed"] is bool(v.passed)
    assert rec["verification"]["min_margin_bar"] == pytest.approx(v.min_margin / BAR, abs=1e-3)
    assert rec["verification"]["controller"] == v.controller
    assert len(rec["verification"]["runs"]) == len(v.runs)
    if "load_below" in v.setpoints:
        expect = (v.setpoints["load_below"] - p_amb) / BAR
        assert rec["setpoints"]["load_below_bar"] == pytest.approx(expect, abs=1e-3)
        expect = (v.setpoints["unload_above"] - p_amb) / BAR
        assert rec["setpoints"]["unload_above_bar"] == pytest.approx(expect, abs=1e-3)
        assert rec["setpoints"]["load_below_bar"] < rec["setpoints"]["unload_above_bar"]
    if result.design.feasible:
        source = rec["costs"]["options"]["design"]["energy_source"]
        assert source.startswith("time-domain verification")


def test_schedule_csv_header_says_what_each_pressure_column_is_for(tmp_path):
    # The comment lines name the temperature of each pressure column, the cut-out, the pump
    # flow the schedule is planned for and its verdict; design.json says the schedule is timed.
    result = forming_press_verified()
    paths = write_study(result, tmp_path / "verified")
    text = paths["schedule.csv"].read_text(encoding="utf-8")
    head = [line[2:] for line in text.splitlines() if line.startswith("# ")]
    s = result.settings
    cold, hot = (f"{T - 273.15:g} °C" for T in (s.t_min, s.t_max))
    joined = " ".join(head)
    assert f"simulated at {cold}" in joined or f"pressure_cold are at {cold}" in joined
    assert f"pressure_hot at {hot}" in joined
    assert "cut-out" in joined and "worn pump" in joined
    assert "passes" in joined
    record = json.loads(paths["design.json"].read_text(encoding="utf-8"))
    assert record["schedule_kind"] == "timed"
    worn = result.design.pump.flow * (1 - s.flow_margin) / LPM
    assert record["schedule_pump_flow_lpm"] == pytest.approx(worn, rel=1e-6)
