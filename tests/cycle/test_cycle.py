"""Duty-cycle ingestion: CSV forms, the uniform grid, the summary, and every bad input."""

from __future__ import annotations

import dataclasses
import math
import re
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from stowflow.cycle.csvtable import read_table
from stowflow.cycle.duty import (
    cycle_from_arrays,
    load_cycle,
    parse_cycle_bytes,
    parse_cycle_text,
    summarize,
)
from stowflow.errors import CycleError, StowflowError
from stowflow.units import P_AMBIENT, parse_unit

BAD = Path(__file__).parents[1] / "data" / "bad_cycles"
LPM = 1e-3 / 60.0  # 1 L/min in m³/s, exact by the definition of the litre and the minute
BAR = 1e5  # 1 bar in Pa, exact by definition

PHASES = """# a phase table
duration [s], flow [L/min], pressure [bar], label
2, 120, 200, press
8, 0, 50, dwell
"""


# -- reading: forms, units, layout ------------------------------------------------------------


def test_phase_table_exact_grid_reproduces_the_phases():
    c = parse_cycle_text(PHASES)
    assert (c.n_steps, c.dt, c.grid, c.form) == (5, 2.0, "exact", "phases")
    assert c.flow.tolist() == pytest.approx([120 * LPM, 0, 0, 0, 0], rel=1e-14)
    assert c.pressure.tolist() == [200 * BAR + P_AMBIENT] + [50 * BAR + P_AMBIENT] * 4
    assert c.labels == ("press", "dwell", "dwell", "dwell", "dwell")
    assert c.duration == 10.0 and c.time.tolist() == [0, 2, 4, 6, 8]
    assert c.volume_per_cycle == pytest.approx(4e-3, rel=1e-12)
    assert c.name == "cycle" and c.source == "<memory>" and c.notes == ()


def test_table_keeps_the_input_rows_in_si():
    t = parse_cycle_text(PHASES).table
    assert list(t.columns) == [
        "line",
        "start [s]",
        "duration [s]",
        "flow [m³/s]",
        "pressure [Pa]",
        "label",
    ]
    assert t["line"].tolist() == [3, 4]
    assert t["pressure [Pa]"].tolist() == [200 * BAR + P_AMBIENT, 50 * BAR + P_AMBIENT]


def test_frame_is_in_trade_units_indexed_by_time():
    f = parse_cycle_text(PHASES).to_frame()
    assert f.index.name == "time [s]"
    assert list(f.columns) == ["flow [L/min]", "required_pressure [bar]", "label"]
    assert f["flow [L/min]"].iloc[0] == pytest.approx(120.0, rel=1e-12)
    assert f["required_pressure [bar]"].tolist() == pytest.approx([200, 50, 50, 50, 50])


def test_phases_on_a_50ms_grid_give_the_gcd_step():
    text = "duration [ms], flow [L/min]\n150, 10\n350, 20\n1500, 0\n"
    c = parse_cycle_text(text)
    assert c.dt == pytest.approx(0.05, rel=1e-15) and c.n_steps == 40 and c.grid == "exact"
    assert np.count_nonzero(np.isclose(c.flow, 20 * LPM, rtol=1e-12, atol=0)) == 7


def test_layout_tolerance_bom_crlf_comments_case_spaces_quotes():
    text = (
        "\ufeff# leading comment\r\n\r\n  DURATION  [ s ] ,  Flow [l/min] , Label \r\n"
        "# a comment between rows\r\n"
        '1, 60, "clamp, close"\r\n   \r\n1, 0, dwell\r\n# trailing comment'
    )
    c = parse_cycle_text(text)
    assert c.labels == ("clamp, close", "dwell") and c.flow[0] == pytest.approx(60 * LPM)
    assert c.table["line"].tolist() == [5, 7]


@pytest.mark.parametrize("sep", [";", "\t"])
def test_semicolon_and_tab_separators(sep):
    text = sep.join(["duration [s]", "flow [L/min]"]) + "\n" + sep.join(["1.5", "10"]) + "\n"
    assert parse_cycle_text(text).duration == pytest.approx(1.5)


@pytest.mark.parametrize(
    ("header", "cell", "si"),
    [
        ("flow [L/s]", "2", 2e-3),
        ("flow [m³/h]", "3.6", 1e-3),
        ("flow [m3/h]", "3.6", 1e-3),
        ("flow [lpm]", "60", 1e-3),
        ("duration [min]", "1.5", 90.0),
        ("duration [ms]", "250", 0.25),
        ("pressure [kPa]", "100", 1e5 + P_AMBIENT),
        ("pressure [MPa]", "20", 2e7 + P_AMBIENT),
    ],
)
def test_units_are_converted_to_si(header, cell, si):
    cols = {"duration [s]": "1", "flow [L/min]": "1", "pressure [bar]": "1"}
    key = header.split("[")[0] + "["
    cols = {k: v for k, v in cols.items() if not k.startswith(key)}
    cols[header] = cell
    c = parse_cycle_text(",".join(cols) + "\n" + ",".join(cols.values()) + "\n")
    column = {"flow": "flow [m³/s]", "duration": "duration [s]", "pressure": "pressure [Pa]"}
    assert c.table[column[key[:-2].strip()]].iloc[0] == pytest.approx(si, rel=1e-12)


def test_gauge_is_converted_with_the_given_ambient_pressure():
    c = parse_cycle_text(PHASES, p_ambient=95_000.0)
    assert c.pressure[0] == 200 * BAR + 95_000.0 and c.p_ambient == 95_000.0


def test_no_pressure_column_gives_none_and_the_summary_says_so():
    c = parse_cycle_text("duration [s], flow [L/min]\n1, 10\n1, 0\n")
    assert c.pressure is None
    s = summarize(c)
    assert s.peak_required_pressure is None and s.mean_hydraulic_power is None
    assert any("no required pressure" in n for n in s.notes)
    assert s.as_dict()["pump_only_hydraulic_power_kw"] is None


def test_min_pressure_fills_a_missing_pressure_column():
    c = parse_cycle_text("duration [s], flow [L/min]\n1, 10\n1, 0\n", min_pressure=100 * BAR)
    assert c.pressure.tolist() == [100 * BAR + P_AMBIENT] * 2
    assert c.min_pressure == 100 * BAR and "min_pressure" in c.notes[0]


def test_min_pressure_with_a_pressure_column_takes_the_larger_per_step():
    c = parse_cycle_text(PHASES, min_pressure=120 * BAR)
    assert c.pressure[0] == 200 * BAR + P_AMBIENT
    assert c.pressure[1] == 120 * BAR + P_AMBIENT
    assert "raised to at least 120 bar" in c.notes[0] and "in 1 of 2 rows" in c.notes[0]


def test_load_cycle_names_the_cycle_after_the_file(tmp_path):
    path = tmp_path / "my_press.csv"
    path.write_text(PHASES, encoding="utf-8")
    c = load_cycle(path)
    assert c.name == "my_press" and c.source == str(path)
    assert load_cycle(path, name="other").name == "other"


# -- sample tables ---------------------------------------------------------------------------

SAMPLES = """time [s], flow [L/min], pressure [bar], label
0, 0, 100, rise
1, 60, 200, fall
2, 0, 100,
"""


def test_samples_step_mean_flow_and_max_pressure_by_hand():
    # Hand computation: flow rises 0 -> 60 L/min over 1 s and falls back; on 0.5 s steps the
    # step means are 15, 45, 45, 15 L/min; pressure 100 -> 200 -> 100 bar, step maxima
    # 150, 200, 200, 150 bar.
    c = parse_cycle_text(SAMPLES, step=0.5)
    assert c.grid == "interpolated" and c.n_steps == 4
    assert c.flow / LPM == pytest.approx([15, 45, 45, 15], rel=1e-12)
    assert (c.pressure - P_AMBIENT) / BAR == pytest.approx([150, 200, 200, 150], rel=1e-12)
    assert c.labels == ("rise", "rise", "fall", "fall")


def test_samples_default_step_is_the_closest_spacing():
    c = parse_cycle_text("time [s], flow [L/min]\n0, 1\n0.25, 1\n1, 3\n2, 1\n")
    assert c.dt == pytest.approx(0.25) and c.n_steps == 8


def test_samples_start_time_and_negative_time_stamps():
    c = parse_cycle_text("time [s], flow [L/min]\n-1.0, 10\n0.0, 20\n3.0, 10\n")
    assert c.duration == pytest.approx(4.0)
    assert c.volume_per_cycle == pytest.approx((15 * 1 + 15 * 3) * LPM, rel=1e-12)


def test_samples_pressure_peak_inside_a_step_is_kept():
    text = (
        "time [s], flow [L/min], pressure [bar]\n0, 10, 50\n0.3, 10, 250\n0.6, 10, 50\n"
        "1.0, 10, 50\n"
    )
    c = parse_cycle_text(text, step=0.5)
    assert (c.pressure[0] - P_AMBIENT) / BAR == pytest.approx(250.0)


def test_samples_wrap_jump_is_noted():
    c = parse_cycle_text("time [s], flow [L/min]\n0, 0\n1, 10\n")
    assert any("wraps from the last sample" in n for n in c.notes)


def test_jittery_samples_still_fill_the_cycle():
    t = np.cumsum([0, 0.0101, 0.0099, 0.0102, 0.0098, 0.01])
    text = "time [s], flow [L/min]\n" + "".join(f"{x:.4f}, {5 + i}\n" for i, x in enumerate(t))
    c = parse_cycle_text(text)
    assert c.n_steps * c.dt == pytest.approx(t[-1], rel=1e-12)
    assert c.dt <= 0.0098 + 1e-12


# -- the grid: step option, fallback, caps ---------------------------------------------------


def test_step_option_dividing_every_phase_keeps_the_grid_exact():
    c = parse_cycle_text(PHASES, step=0.5)
    assert c.n_steps == 20 and c.grid == "exact"
    assert np.count_nonzero(c.flow) == 4


def test_step_option_across_phase_boundaries_averages_and_says_so():
    text = "duration [s], flow [L/min], pressure [bar]\n1, 60, 100\n3, 0, 20\n"
    c = parse_cycle_text(text, step=0.8)
    assert c.grid == "averaged" and "does not divide every phase boundary" in c.notes[0]
    # step 2 is [0.8, 1.6): 0.2 s at 60 L/min and 0.6 s at 0 -> mean 15 L/min, max 100 bar
    assert c.flow[1] / LPM == pytest.approx(15.0, rel=1e-12)
    assert (c.pressure[1] - P_AMBIENT) / BAR == pytest.approx(100.0)
    assert c.volume_per_cycle == pytest.approx(1e-3, rel=1e-12)


def test_unaligned_phases_fall_back_to_a_step_no_longer_than_the_shortest_phase():
    text = "duration [s], flow [L/min], pressure [bar]\n0.3333, 120, 200\n8, 0, 50\n"
    c = parse_cycle_text(text)
    assert c.grid == "averaged" and c.dt <= 0.3333
    assert c.volume_per_cycle == pytest.approx(0.3333 * 120 * LPM, rel=1e-12)
    assert "share no common step" in c.notes[0]


def test_step_cap_averages_a_short_peak_and_the_summary_keeps_the_true_peak():
    text = "duration [s], flow [L/min], pressure [bar]\n0.05, 600, 200\n9.95, 10, 50\n"
    c = parse_cycle_text(text, max_steps=20)
    assert c.n_steps == 20 and c.dt == pytest.approx(0.5)
    assert any("shorter than the step" in n for n in c.notes)
    s = summarize(c)
    assert s.peak_flow / LPM == pytest.approx(600.0)
    assert s.peak_step_flow / LPM == pytest.approx((0.05 * 600 + 0.45 * 10) / 0.5)
    assert any("true peak" in n for n in s.notes)
    assert (c.pressure[0] - P_AMBIENT) / BAR == pytest.approx(200.0)


@pytest.mark.parametrize(
    ("kwargs", "match"),
    [
        ({"step": 20.0}, r"step 20 s is longer than the cycle \(10 s\)"),
        ({"step": 0.3}, r"step 0.3 s does not divide the cycle duration 10 s"),
        ({"step": 0.0001}, r"gives 100000 steps; expected at most 20000"),
        ({"step": 0.0}, r"step is 0 s; expected a finite value > 0"),
        ({"step": float("nan")}, r"step is nan s"),
        ({"min_pressure": -1.0}, r"min_pressure is -1e-05 bar; expected a finite value >= 0"),
        ({"min_pressure": 1e9}, r"absurd min_pressure, found 10000 bar"),
        ({"max_steps": 0}, r"max_steps 0; expected at least 1"),
    ],
)
def test_bad_options(kwargs, match):
    with pytest.raises(CycleError, match=match):
        parse_cycle_text(PHASES, source="opts.csv", **kwargs)


# -- the summary -----------------------------------------------------------------------------


def test_summary_phase_table_by_hand():
    # Hand computation: 2 s at 120 L/min and 200 bar, 8 s at 0 and 50 bar.
    d = summarize(parse_cycle_text(PHASES)).as_dict()
    assert d["duration_s"] == 10.0 and d["steps"] == 5 and d["step_s"] == 2.0
    assert d["peak_flow_lpm"] == pytest.approx(120.0, rel=1e-12)
    assert d["mean_flow_lpm"] == pytest.approx(24.0, rel=1e-12)
    assert d["rms_flow_lpm"] == pytest.approx(math.sqrt(120**2 * 0.2), rel=1e-12)
    assert d["volume_per_cycle_l"] == pytest.approx(4.0, rel=1e-12)
    assert d["peak_required_pressure_bar"] == pytest.approx(200.0, rel=1e-12)
    assert d["min_required_pressure_bar"] == pytest.approx(50.0, rel=1e-12)
    # 120 L/min × 200 bar = 2e-3 m³/s × 2e7 Pa = 40 kW
    assert d["peak_hydraulic_power_kw"] == pytest.approx(40.0, rel=1e-12)
    assert d["mean_hydraulic_power_kw"] == pytest.approx(8.0, rel=1e-12)
    assert d["pump_only_flow_lpm"] == pytest.approx(120.0, rel=1e-12)
    assert d["pump_only_hydraulic_power_kw"] == pytest.approx(40.0, rel=1e-12)
    assert d["mean_to_peak_ratio"] == pytest.approx(0.2, rel=1e-12)
    assert d["grid"] == "exact" and d["notes"] == []


def test_summary_peak_power_inside_a_sample_segment():
    # Hand computation: q = 100·s L/min and p = 200·(1 − s) bar on 0 ≤ s ≤ 1 s: the product
    # peaks at s = 0.5 with 50 L/min × 100 bar = 8.333 kW; its integral is 100·200/6 L/min·bar·s.
    text = "time [s], flow [L/min], pressure [bar]\n0, 0, 200\n1, 100, 0\n2, 100, 0\n"
    d = summarize(parse_cycle_text(text)).as_dict()
    assert d["peak_hydraulic_power_kw"] == pytest.approx(50 * LPM * 100 * BAR / 1e3, rel=1e-12)
    assert d["mean_hydraulic_power_kw"] == pytest.approx(
        100 * LPM * 200 * BAR / 6 / 2 / 1e3, rel=1e-12
    )
    assert d["pump_only_hydraulic_power_kw"] == pytest.approx(100 * LPM * 200 * BAR / 1e3)


def test_summary_min_pressure_floor_is_integrated_exactly():
    # Hand computation: 60 L/min throughout, pressure 0 -> 200 bar over 1 s, floor 100 bar:
    # mean of max(p, 100) over the second is 0.5·100 + 0.5·150 = 125 bar -> 1e-3·125e5 W.
    text = "time [s], flow [L/min], pressure [bar]\n0, 60, 0\n1, 60, 200\n"
    s = summarize(parse_cycle_text(text, min_pressure=100 * BAR))
    assert s.mean_hydraulic_power == pytest.approx(1e-3 * 125 * BAR, rel=1e-12)
    assert s.min_required_pressure == pytest.approx(100 * BAR + P_AMBIENT, rel=1e-12)


def test_summary_falls_back_to_the_steps_when_the_table_is_stale():
    c = parse_cycle_text(PHASES)
    doubled = dataclasses.replace(c, flow=2 * c.flow)
    s = summarize(doubled)
    assert s.mean_flow == pytest.approx(2 * summarize(c).mean_flow, rel=1e-12)
    assert any("does not match the steps" in n for n in s.notes)


# -- DutyCycle and cycle_from_arrays ---------------------------------------------------------


def test_cycle_is_immutable():
    c = parse_cycle_text(PHASES)
    with pytest.raises(dataclasses.FrozenInstanceError):
        c.dt = 1.0
    with pytest.raises(ValueError, match="read-only"):
        c.flow[0] = 1.0


def test_cycle_from_arrays():
    c = cycle_from_arrays(0.1, [1e-3, 0, 0], [2e7, 1e6, 1e6], labels=["a", "b", "c"])
    assert c.n_steps == 3 and c.form == "phases" and c.labels == ("a", "b", "c")
    assert summarize(c).mean_flow == pytest.approx(1e-3 / 3, rel=1e-12)


@pytest.mark.parametrize(
    ("args", "kwargs", "match"),
    [
        ((0.1, [1e-3, -1e-4]), {}, r"step 2, flow: negative, found -6 L/min"),
        ((0.1, [1e-3, np.nan]), {}, r"step 2, flow: not finite"),
        ((0.1, [1e-3, 1e3]), {}, r"step 2, flow: absurd, found 6e\+07 L/min"),
        ((0.1, [0.0, 0.0]), {}, r"every flow is 0"),
        ((0.1, [[1e-3]]), {}, r"flow has shape \(1, 1\); expected \(N,\)"),
        ((0.0, [1e-3]), {}, r"dt is 0 s; expected a finite value > 0"),
        ((0.1, [1e-3], [2e7, 2e7]), {}, r"pressure has shape \(2,\); expected \(1,\)"),
        ((0.1, [1e-3], [5e4]), {}, r"step 1, pressure: negative, found -0.51325 bar"),
        ((0.1, ["a"]), {}, r"flow is not numeric; expected an array of numbers"),
        ((0.1, 1e-3), {}, r"flow has shape \(\); expected \(N,\)"),
        ((0.1, [1e-3]), {"labels": ["a", "b"]}, r"2 labels; expected one per step \(1\)"),
    ],
)
def test_cycle_from_arrays_refuses_bad_arrays(args, kwargs, match):
    with pytest.raises(CycleError, match=r"<memory> \(cycle 'array'\).*" + match):
        cycle_from_arrays(*args, **kwargs)


# -- bad input files: one clear line each ----------------------------------------------------

# (fixture file, message pattern, line named in the message or None, column header or None)
BAD_FILES = [
    ("missing_flow.csv", r"no 'flow' column; expected a column such as 'flow \[L/min\]'", 2, None),
    ("time_and_duration.csv", r"both 'time' \(column 1\) and 'duration' \(column 2\)", 1, None),
    ("no_time_column.csv", r"no 'duration' or 'time' column", 1, None),
    ("duplicate_column.csv", r"duplicate column 'flow' \(also column 2\)", 1, "Flow [gpm]"),
    ("unknown_unit.csv", r"unknown unit 'lpmm'.*expected a flow unit", 1, "flow [lpmm]"),
    ("wrong_dimension.csv", r"'bar' is a pressure unit, expected a flow unit", 1, "flow [bar]"),
    ("missing_unit.csv", r"no unit; expected it in brackets, e.g. 'flow \[L/min\]'", 1, "flow"),
    ("nan_cell.csv", r"missing value, found 'NaN'; expected a number in L/min", 3, "flow [L/min]"),
    ("empty_cell.csv", r"empty cell; expected a number in L/min", 3, "flow [L/min]"),
    ("non_numeric.csv", r"not a number, found 'fast'", 3, "flow [L/min]"),
    ("infinite_value.csv", r"not finite, found 'inf'", 2, "flow [L/min]"),
    (
        "decimal_comma.csv",
        r"decimal comma, found '1,5'; expected a decimal point: 1.5",
        2,
        "duration [s]",
    ),
    ("negative_flow.csv", r"negative flow, found -3 L/min; expected >= 0", 5, "flow [L/min]"),
    (
        "zero_duration.csv",
        r"duration is not positive, found 0 s; expected a duration > 0",
        3,
        "duration [s]",
    ),
    (
        "negative_duration.csv",
        r"duration is not positive, found -50 ms \(= -0.05 s\)",
        3,
        "duration [ms]",
    ),
    (
        "time_not_increasing.csv",
        r"time not increasing, found 1.2 s after 1.5 s on line 3",
        4,
        "time [s]",
    ),
    ("duplicate_time.csv", r"duplicate time, found 1.5 s \(also on line 3\)", 4, "time [s]"),
    ("one_sample.csv", r"a sample table needs at least 2 rows, found 1 \(line 3\)", 3, None),
    (
        "absurd_flow.csv",
        r"absurd flow, found 1e9 L/min; expected at most 100000 L/min",
        3,
        "flow [L/min]",
    ),
    (
        "absurd_pressure.csv",
        r"absurd pressure, found 1e6 bar; expected at most 2000 bar",
        3,
        "pressure [bar]",
    ),
    (
        "absurd_duration.csv",
        r"absurd duration, found 3000 min \(= 1.8e\+05 s\)",
        3,
        "duration [min]",
    ),
    (
        "negative_pressure.csv",
        r"negative required pressure, found -15 psi \(= -1.034 bar\)",
        3,
        "pressure [psi]",
    ),
    ("wrong_field_count.csv", r"found 4 fields; expected 3 as in the header on line 1", 3, None),
    ("unknown_column.csv", r"unknown column 'flwo' \(did you mean 'flow'\?\)", 1, "flwo [L/min]"),
    ("unit_in_parentheses.csv", r"write the unit in square brackets", 1, "flow (L/min)"),
    ("label_with_unit.csv", r"'label' takes no unit, found '\[s\]'", 1, "label [s]"),
    (
        "bad_header_cell.csv",
        r"cannot read the header cell; expected 'name \[unit\]'",
        1,
        "flow [L/min",
    ),
    ("single_column.csv", r"header has one column.*expected comma-separated columns", 1, None),
    ("mixed_separators.csv", r"header mixes separators, found ',' and ';'", 1, None),
    ("unbalanced_quote.csv", r"cannot split the row", 2, None),
    ("header_only.csv", r"no data rows after the header on line 2", None, None),
    ("empty.csv", r"empty file; expected a CSV with a header", None, None),
    ("comments_only.csv", r"empty file \(only comments or blank lines\)", None, None),
    ("all_zero_flow.csv", r"every flow is 0; expected some demand > 0", None, "flow [L/min]"),
]


def _assert_one_clear_line(message: str, name: str, line: int | None, column: str | None):
    assert "\n" not in message
    assert name in message
    if line is not None:
        assert f"line {line}" in message
    if column is not None:
        assert f"'{column}'" in message
    assert "expected" in message


@pytest.mark.parametrize(("name", "match", "line", "column"), BAD_FILES)
def test_bad_cycle_file(name, match, line, column, run_cli):
    path = BAD / name
    with pytest.raises(CycleError, match=match) as info:
        load_cycle(path)
    _assert_one_clear_line(str(info.value), name, line, column)
    code, out, err = run_cli("check", path)
    assert code == 2 and out == ""
    assert err.count("\n") == 1 and "Traceback" not in err
    assert re.search(match, err)


def test_every_bad_fixture_is_listed():
    assert {p.name for p in BAD.glob("*.csv")} == {row[0] for row in BAD_FILES}


# Faults that are bytes rather than text, or need no file at all.
GENERATED = [
    (
        "latin1.csv",
        b"duration [s], flow [L/min], label\n1, 10, caf\xe9\n",
        r"line 2: not UTF-8 text, found byte 0xE9; expected UTF-8",
        2,
    ),
    (
        "nul.csv",
        b"duration [s], flow [L/min]\n1, 10\x00\n",
        r"line 2: binary file, found a NUL byte at byte 32",
        2,
    ),
    (
        "sheet.csv",
        b"PK\x03\x04\x14\x00\x06\x00rest-of-a-workbook",
        r"binary file, found a ZIP container \(an .xlsx or .ods workbook\?\)",
        None,
    ),
    (
        "utf16.csv",
        "duration [s], flow [L/min]\n1, 10\n".encode("utf-16"),
        r"found UTF-16 text; expected UTF-8",
        None,
    ),
    (
        "control.csv",
        b"duration [s], flow [L/min]\n1, 1\x1b0\n",
        r"line 2: binary or garbled text, found control character U\+001B",
        2,
    ),
]


@pytest.mark.parametrize(("name", "data", "match", "line"), GENERATED)
def test_bad_bytes(tmp_path, name, data, match, line, run_cli):
    path = tmp_path / name
    path.write_bytes(data)
    with pytest.raises(CycleError, match=match) as info:
        load_cycle(path)
    _assert_one_clear_line(str(info.value), name, line, None)
    code, out, err = run_cli("check", path)
    assert code == 2 and out == "" and err.count("\n") == 1 and "Traceback" not in err


@pytest.mark.parametrize(
    ("cell", "digit"),
    [("１０", "U+FF11"), ("٣", "U+0663"), ("1٠", "U+0660"), ("𝟙", "U+1D7D9")],
)
def test_digits_other_than_ascii_are_refused(cell, digit, run_cli, tmp_path):
    # Regression: full-width and Arabic-Indic digits were read as numbers (float() does).
    # One rule for every reader: numbers are written with 0-9 (stowflow.io.rawtext).
    path = tmp_path / "digits.csv"
    path.write_text(f"duration [s], flow [L/min]\n1, {cell}\n2, 0\n", encoding="utf-8")
    pattern = rf"digits.csv, line 2, column 2 'flow \[L/min\]': '{cell}' has a digit other than 0-9"
    with pytest.raises(CycleError, match=pattern + rf" \('.', {re.escape(digit)}\)"):
        load_cycle(path)
    code, out, err = run_cli("check", path)
    assert code == 2 and out == "" and err.count("\n") == 1


def test_quoted_line_break_in_a_label_is_kept():
    # Regression: valid CSV with a line break inside a quoted label was refused.
    text = 'duration [s], flow [L/min], label\n1, 10, "clamp,\nclose"\n2, 0, open\n'
    cycle = parse_cycle_text(text)
    assert cycle.n_steps == 3
    table = read_table(text, "q.csv")
    assert table.labels == ("clamp,\nclose", "open")
    assert list(table.lines) == [2, 4]  # each row keeps the line it starts on


def test_unclosed_quote_names_the_line_it_starts_on():
    text = 'duration [s], flow [L/min], label\n1, 10, "open\n2, 0, b\n'
    with pytest.raises(CycleError, match=r"q.csv, line 2: cannot split the row"):
        read_table(text, "q.csv")


def test_file_not_found_and_folder(tmp_path, run_cli):
    with pytest.raises(CycleError, match=r"nope.csv: file not found; expected a duty-cycle CSV"):
        load_cycle(tmp_path / "nope.csv")
    with pytest.raises(CycleError, match=r": is a folder; expected a duty-cycle CSV file"):
        load_cycle(tmp_path)
    code, _, err = run_cli("check", tmp_path / "nope.csv")
    assert code == 2 and err.count("\n") == 1 and "file not found" in err


def test_upload_row_limit():
    data = ("time [s], flow [L/min]\n" + "".join(f"{i}, 1\n" for i in range(5))).encode()
    with pytest.raises(
        CycleError, match=r"up.csv, line 5: too many rows, found 5; expected at most 3"
    ):
        parse_cycle_bytes(data, source="up.csv", max_rows=3)
    assert parse_cycle_bytes(data, source="up.csv", max_rows=5).n_steps == 4


def test_phase_shorter_than_a_microsecond_is_refused():
    with pytest.raises(CycleError, match=r"line 3, column 1 'duration \[s\]': duration too short"):
        parse_cycle_text("duration [s], flow [L/min]\n1, 1\n1e-9, 2\n")


def test_absurdly_short_cycle_is_refused():
    with pytest.raises(
        CycleError, match=r"expected steps of at least 1e-06 s \(check the time unit\)"
    ):
        parse_cycle_text("time [ms], flow [L/min]\n0, 1\n1e-5, 2\n")


# -- outside-source checks -------------------------------------------------------------------


def test_esposito_car_crusher_pump_flows():
    # sources.ESPOSITO_2009, accumulator chapter, car-crusher example (inputs and results from
    # memory): a 6 in bore × 100 in stroke cylinder extends in
    # 10 s, one stroke every 5 min.  We read "every 5 min" as a 300 s cycle (10 s extend, 290 s
    # idle): that is what makes the printed 2.45 gpm (2827 in³ per 300 s).  Printed: 73.4 gpm
    # pump-only and 2.45 gpm with the accumulator.  The flow is written in in³/s from the
    # geometry, a phase table in US units.
    extend = math.pi / 4 * 6.0**2 * 100.0 / 10.0  # in³/s
    text = f"duration [s], flow [in³/s]\n10, {extend:.6f}\n290, 0\n"
    s = summarize(parse_cycle_text(text, source="car_crusher.csv"))
    gpm = parse_unit("gpm", "flow")
    # Tolerance: half a unit in the last printed digit (3 significant digits).
    assert s.peak_flow / gpm == pytest.approx(73.4, abs=0.05)
    assert s.mean_flow / gpm == pytest.approx(2.45, abs=0.005)
    assert s.volume_per_cycle / parse_unit("in³", "volume") == pytest.approx(2827, abs=0.5)


def test_us_gallon_conversion_nist():
    # sources.NIST_HB44, Appendix C: 1 US gallon = 3.785 411 784 L exactly.  Checked through a
    # CSV column, for both spellings the reader accepts.
    for unit in ("US gal/min", "gpm"):
        c = parse_cycle_text(f"duration [s], flow [{unit}]\n1, 1\n")
        assert c.flow[0] == pytest.approx(3.785411784e-3 / 60.0, rel=1e-12)


def test_psi_conversion_nist():
    # sources.NIST_SP811, Appendix B: 1 psi = 6.894 757 E+03 Pa; tolerance half a unit in the
    # last printed digit (0.0005 Pa).
    c = parse_cycle_text("duration [s], flow [L/min], pressure [psi]\n1, 1, 1\n")
    assert c.pressure[0] - P_AMBIENT == pytest.approx(6894.757, abs=0.0005)


# -- regression: our own values --------------------------------------------------------------


def test_regression_forming_press_summary(repo_root):
    # REGRESSION PIN, our own full-precision values for the invented demo cycle (not an
    # outside source): they change only when the reader or the demo file changes.
    d = summarize(load_cycle(repo_root / "duty_cycles" / "forming_press.csv")).as_dict()
    expected = {
        "duration_s": 32.0,
        "steps": 640,
        "step_s": 0.05,
        "peak_flow_lpm": 200.0,
        "mean_flow_lpm": 26.359375,
        "rms_flow_lpm": 64.11196261229257,
        "volume_per_cycle_l": 14.058333333333334,
        "peak_required_pressure_bar": 200.0,
        "min_required_pressure_bar": 30.0,
        "peak_hydraulic_power_kw": 27.0,
        "mean_hydraulic_power_kw": 4.14140625,
        "pump_only_hydraulic_power_kw": 66.66666666666667,
        "mean_to_peak_ratio": 0.131796875,
    }
    for key, value in expected.items():
        assert d[key] == pytest.approx(value, rel=1e-12), key


# -- property tests --------------------------------------------------------------------------

FUZZ = settings(max_examples=200, deadline=None, suppress_health_check=[HealthCheck.too_slow])


def _input_volume_and_duration(c) -> tuple[float, float]:
    """Volume [m³] and duration [s] of the input rows, straight from the table."""
    t = c.table
    q = t["flow [m³/s]"].to_numpy(float)
    if c.form == "phases":
        d = t["duration [s]"].to_numpy(float)
        return float(np.sum(q * d)), float(np.sum(d))
    time = t["time [s]"].to_numpy(float)
    return float(np.sum(np.diff(time) * (q[1:] + q[:-1]) / 2)), float(time[-1] - time[0])


def _check_invariants(c) -> None:
    volume, duration = _input_volume_and_duration(c)
    assert c.n_steps * c.dt == pytest.approx(duration, rel=1e-9)
    assert c.volume_per_cycle == pytest.approx(volume, rel=1e-9, abs=1e-18)
    assert np.all(np.isfinite(c.flow)) and np.all(c.flow >= 0)
    assert len(c.labels) == c.n_steps
    if c.pressure is not None:
        assert np.all(c.pressure >= c.p_ambient)
    s = summarize(c)
    assert not any("does not match" in n for n in s.notes)
    assert s.peak_flow >= s.peak_step_flow * (1 - 1e-9)  # float noise of the step edges


_NAMES = ["time", "duration", "flow", "pressure", "label", "flwo", "", "Flow", " TIME "]
_UNITS = ["s", "ms", "min", "L/min", "gpm", "m³/h", "bar", "psi", "MPa", "", "xyz", None]
_GOOD_UNITS = {
    "duration": ["s", "ms", "min"],
    "time": ["s", "ms"],
    "flow": ["L/min", "gpm", "m³/h", "L/s"],
    "pressure": ["bar", "psi", "MPa"],
}
_PRINTABLE = st.characters(blacklist_categories=("Cc", "Cs"))
_GARBAGE = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.integers(-5, 10**12).map(str),
    st.sampled_from(["", "NaN", "abc", "1,5", '"q"', "-0", "1e400", "+.5"]),
    st.text(_PRINTABLE, max_size=6),
)
_VALUE = st.floats(0, 500, allow_nan=False).map(lambda x: f"{x:.3f}")
_POSITIVE = st.floats(0.001, 500, allow_nan=False).map(lambda x: f"{x:.3f}")


@st.composite
def _messy_csv(draw) -> str:
    """A CSV that is mostly right: a valid header and rows, then a few random faults."""
    sep = draw(st.sampled_from([",", ";", "\t"]))
    axis = draw(st.sampled_from(["duration", "time"]))
    columns = [(axis, draw(st.sampled_from(_GOOD_UNITS[axis])))]
    columns.append(("flow", draw(st.sampled_from(_GOOD_UNITS["flow"]))))
    if draw(st.booleans()):
        columns.append(("pressure", draw(st.sampled_from(_GOOD_UNITS["pressure"]))))
    if draw(st.booleans()):
        columns.append(("label", None))
    columns = draw(st.permutations(columns))
    if draw(st.integers(0, 4)) == 0:  # break the header
        k = draw(st.integers(0, len(columns) - 1))
        columns[k] = (draw(st.sampled_from(_NAMES)), draw(st.sampled_from(_UNITS)))
    lines = [sep.join(n if u is None else f"{n} [{u}]" for n, u in columns)]
    n_rows = draw(st.integers(0, 8))
    stamps = np.cumsum(draw(st.lists(st.integers(1, 900), min_size=n_rows, max_size=n_rows)))
    for r in range(n_rows):
        cells = []
        for name, _ in columns:
            if name == "label":
                cells.append(draw(st.text(st.sampled_from("ab c-"), max_size=5)))
            elif name == "time" and draw(st.integers(0, 9)) > 0:
                cells.append(str(stamps[r]))
            elif draw(st.integers(0, 14)) == 0:
                cells.append(draw(_GARBAGE))
            else:
                cells.append(draw(_POSITIVE if name == "duration" else _VALUE))
        if draw(st.integers(0, 14)) == 0:
            cells = cells[:-1] if draw(st.booleans()) else [*cells, "7"]
        lines.append(sep.join(cells))
        if draw(st.integers(0, 4)) == 0:
            lines.append("# comment")
    return "\n".join(lines)


@FUZZ
@given(data=st.binary(max_size=300))
def test_fuzz_garbage_bytes(data):
    try:
        c = parse_cycle_bytes(data, source="fuzz.csv")
    except StowflowError as exc:
        assert "\n" not in str(exc)
        return
    _check_invariants(c)


@FUZZ
@given(text=_messy_csv())
def test_fuzz_malformed_csv_text(text):
    try:
        c = parse_cycle_text(text, source="fuzz.csv")
    except StowflowError as exc:
        assert "\n" not in str(exc) and "fuzz.csv" in str(exc)
        return
    _check_invariants(c)


@FUZZ
@given(
    rows=st.lists(
        st.tuples(
            st.integers(1, 400),
            st.floats(0, 500).map(lambda q: round(q, 6)),
            st.floats(0, 300).map(lambda p: round(p, 6)),
        ),
        min_size=1,
        max_size=12,
    ).filter(lambda rows: any(q > 0 for _, q, _ in rows))
)
def test_phases_on_a_ms_grid_are_reproduced_exactly(rows):
    text = "duration [ms], flow [L/min], pressure [bar]\n" + "".join(
        f"{d}, {q!r}, {p!r}\n" for d, q, p in rows
    )
    c = parse_cycle_text(text)
    assert c.grid == "exact"
    assert c.dt * 1e3 == pytest.approx(math.gcd(*[d for d, _, _ in rows]), rel=1e-12)
    expected = np.repeat([q * LPM for _, q, _ in rows], c.table["duration [s]"] / c.dt + 0.5)
    np.testing.assert_allclose(c.flow, expected, rtol=1e-15, atol=0)
    _check_invariants(c)


@FUZZ
@given(
    gaps=st.lists(st.integers(1, 50), min_size=1, max_size=10),
    flows=st.lists(st.floats(0, 300).map(lambda q: round(q, 6)), min_size=11, max_size=11),
    pressures=st.lists(st.floats(0, 300).map(lambda p: round(p, 6)), min_size=11, max_size=11),
    steps=st.integers(1, 60),
)
def test_samples_conserve_volume_and_bound_pressure(gaps, flows, pressures, steps):
    t = np.concatenate(([0], np.cumsum(gaps))) * 0.01
    n = t.size
    if not any(q > 0 for q in flows[:n]):
        flows = [1.0] * 11
    text = "time [s], flow [L/min], pressure [bar]\n" + "".join(
        f"{float(t[i])!r}, {flows[i]!r}, {pressures[i]!r}\n" for i in range(n)
    )
    duration = float(t[-1])
    c = parse_cycle_text(text, step=duration / steps)
    _check_invariants(c)
    edges = np.arange(c.n_steps + 1) * c.dt
    p_bar = (c.pressure - P_AMBIENT) / BAR
    # conservative: each step requires at least the interpolated pressure at its ends and
    # middle, and at least every sample inside it; never more than the highest sample
    for k in range(c.n_steps):
        probe = np.array([edges[k], (edges[k] + edges[k + 1]) / 2, edges[k + 1]])
        inside = [pressures[i] for i in range(n) if edges[k] <= t[i] <= edges[k + 1]]
        need = max(np.interp(probe, t, pressures[:n]).max(), *inside, -np.inf)
        assert p_bar[k] >= need - 1e-9 * max(need, 1)
    assert p_bar.max() <= max(pressures[:n]) * (1 + 1e-12) + 1e-12


@FUZZ
@given(
    rows=st.lists(
        st.tuples(
            st.integers(1, 400),
            st.floats(0, 500).map(lambda q: round(q, 6)),
            st.floats(0, 300).map(lambda p: round(p, 6)),
        ),
        min_size=1,
        max_size=8,
    ).filter(lambda rows: any(q > 0 for _, q, _ in rows)),
    steps=st.integers(1, 300),
)
def test_phases_on_any_step_conserve_volume_and_keep_every_pressure(rows, steps):
    text = "duration [ms], flow [L/min], pressure [bar]\n" + "".join(
        f"{d}, {q!r}, {p!r}\n" for d, q, p in rows
    )
    total = sum(d for d, _, _ in rows) / 1e3
    c = parse_cycle_text(text, step=total / steps)
    _check_invariants(c)
    start = np.concatenate(([0], np.cumsum([d for d, _, _ in rows])[:-1])) / 1e3
    end = start + np.array([d for d, _, _ in rows]) / 1e3
    p_bar = (c.pressure - P_AMBIENT) / BAR
    for k in range(c.n_steps):
        a, b = k * c.dt, (k + 1) * c.dt
        overlapping = [
            p
            for (s, e, (_, _, p)) in zip(start, end, rows, strict=True)
            if min(b, e) - max(a, s) > 1e-9
        ]
        assert p_bar[k] >= max(overlapping) - 1e-9
        assert p_bar[k] <= max(p for _, _, p in rows) + 1e-9
