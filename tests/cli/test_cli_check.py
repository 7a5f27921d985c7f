"""``stowflow check``: the demo cycles pass, options parse with units, bad input exits 2."""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest
from stowflow.cycle.duty import load_cycle

REPO = Path(__file__).resolve().parents[2]
DEMOS = sorted((REPO / "duty_cycles").glob("*.csv"))
KEYS = {
    "schema", "name", "source", "form", "duration_s", "steps", "step_s", "peak_flow_lpm",
    "peak_step_flow_lpm", "mean_flow_lpm", "rms_flow_lpm", "volume_per_cycle_l",
    "peak_required_pressure_bar", "min_required_pressure_bar", "peak_hydraulic_power_kw",
    "mean_hydraulic_power_kw", "pump_only_flow_lpm", "pump_only_hydraulic_power_kw",
    "mean_to_peak_ratio", "grid", "notes",
}  # fmt: skip


def test_there_are_demo_cycles_of_both_forms():
    assert len(DEMOS) >= 3
    assert {load_cycle(p).form for p in DEMOS} == {"phases", "samples"}


@pytest.mark.parametrize("path", DEMOS, ids=lambda p: p.name)
def test_demo_cycle_passes_check(path, run_cli):
    code, out, err = run_cli("check", path)
    assert code == 0 and err == ""
    assert f"duty cycle '{path.stem}'" in out
    assert "peak demand (input)" in out and "L/min" in out and "kW" in out


@pytest.mark.parametrize("path", DEMOS, ids=lambda p: p.name)
def test_demo_cycle_json_and_shape(path, run_cli):
    code, out, _ = run_cli("check", path, "--json")
    data = json.loads(out)
    assert code == 0 and set(data) == KEYS and data["schema"] == "stowflow.check/1"
    # the demos are meant to show an accumulator paying off, with pressures of the trade
    assert data["peak_flow_lpm"] >= 3 * data["mean_flow_lpm"]
    assert 150 <= data["peak_required_pressure_bar"] <= 250
    assert 300 <= data["steps"] <= 2500
    header = path.read_text(encoding="utf-8").split("\n", 3)[:3]
    assert any("INVENTED" in line for line in header)


def test_one_demo_has_at_least_600_steps_on_its_natural_grid():
    exact = [load_cycle(p) for p in DEMOS]
    assert any(c.grid == "exact" and c.n_steps >= 600 for c in exact)


def test_min_pressure_and_step_options(tmp_path, run_cli):
    path = tmp_path / "no_pressure.csv"
    path.write_text("duration [s], flow [L/min]\n0.5, 100\n1.5, 0\n", encoding="utf-8")
    code, out, _ = run_cli("check", path, "--json")
    data = json.loads(out)
    assert code == 0 and data["peak_required_pressure_bar"] is None
    code, out, _ = run_cli("check", path, "--json", "--min-pressure", "1450psi", "--step", "100ms")
    data = json.loads(out)
    assert code == 0 and data["steps"] == 20 and data["step_s"] == pytest.approx(0.1)
    # 1450 psi × 6894.757 Pa/psi (sources.NIST_SP811) = 99.974 bar gauge
    assert data["peak_required_pressure_bar"] == pytest.approx(99.974, abs=5e-4)
    code, out, _ = run_cli("check", path, "--min-pressure", "100 bar")
    assert code == 0 and "note: required pressure 100 bar gauge in every step" in out


@pytest.mark.parametrize(
    ("options", "match"),
    [
        (
            ["--step", "10"],
            r"--step: '10' has no unit; expected a time > 0 s with its unit, e\.g\. 1s$",
        ),
        (
            ["--step", "10bar"],
            r"--step: '10bar' has the pressure unit 'bar'; expected a time > 0 s with its unit, "
            r"e\.g\. 1s$",
        ),
        (["--step", "0.3s"], r"step 0.3 s does not divide the cycle duration 32 s"),
        (
            ["--min-pressure", "100"],
            r"--min-pressure: '100' has no unit; expected a pressure ≥ 0 bar with its unit, "
            r"e\.g\. 100bar$",
        ),
        (
            ["--min-pressure", "fast"],
            r"--min-pressure: 'fast' is not a number with a unit; expected a pressure ≥ 0 bar "
            r"with its unit, e\.g\. 100bar$",
        ),
        (
            ["--min-pressure=-3bar"],
            r"--min-pressure: '-3bar' is below 0 bar; expected a pressure ≥ 0 bar with its unit, "
            r"e\.g\. 100bar$",
        ),
        (
            ["--max-steps", "many"],
            r"--max-steps: 'many' is not a whole number; expected a whole number ≥ 1$",
        ),
    ],
)
def test_bad_options_exit_2_with_one_line(options, match, run_cli):
    code, out, err = run_cli("check", REPO / "duty_cycles" / "forming_press.csv", *options)
    assert code == 2 and out == "" and err.count("\n") == 1 and "Traceback" not in err
    assert err.startswith("stowflow: error: ")
    assert re.search(match, err)


def test_step_cap_is_a_note_not_an_error(run_cli):
    code, out, _ = run_cli(
        "check", REPO / "duty_cycles" / "forming_press.csv", "--max-steps", "100"
    )
    assert code == 0 and "note: phase boundaries share no common step giving at most 100" in out


def test_help_has_an_example(run_cli, capsys):
    with pytest.raises(SystemExit) as info:
        run_cli("check", "--help")
    assert info.value.code == 0
    assert "stowflow check duty_cycles/forming_press.csv" in capsys.readouterr().out
