"""``--max-steps`` on ``stowflow design`` and ``Study.max_steps``: the grid's step limit.

Internal checks (no outside source; demo data is never an expected value here).
"""

from __future__ import annotations

import json
from pathlib import Path

from stowflow.cycle.duty import DEFAULT_MAX_STEPS, STEP_MAX_STEPS
from stowflow.pipeline import Study, run

REPO = Path(__file__).resolve().parents[2]
PRESS = REPO / "duty_cycles" / "forming_press.csv"  # 32 s on a 50 ms grid: 640 steps


def test_an_explicit_step_beyond_the_limit_names_the_option(run_cli, tmp_path):
    code, _, err = run_cli("design", PRESS, "--step", "0.1ms", "--out", tmp_path / "r")
    assert code == 2
    assert f"gives 320000 steps; expected at most {STEP_MAX_STEPS}" in err
    assert "--max-steps" in err
    code, _, err = run_cli("design", PRESS, "--step", "1ms", "--max-steps", "20000")
    assert code == 2 and "gives 32000 steps; expected at most 20000" in err


def test_a_given_step_may_give_more_steps_than_the_automatic_grid(run_cli):
    # 32 s at 1 ms: 32,000 steps, more than the automatic grid's limit
    code, out, err = run_cli("check", PRESS, "--step", "1ms", "--json")
    assert code == 0, err
    assert json.loads(out)["steps"] == 32_000 > DEFAULT_MAX_STEPS
    code, _, err = run_cli("check", PRESS, "--step", "1ms", "--max-steps", "20000")
    assert code == 2 and "expected at most 20000" in err


def test_max_steps_coarsens_the_automatic_grid_of_a_design(run_cli, tmp_path):
    out = tmp_path / "r"
    code, _, err = run_cli("design", PRESS, "--max-steps", "160", "--no-verify", "--out", out)
    assert code == 0, err
    data = json.loads((out / "design.json").read_text(encoding="utf-8"))
    assert data["cycle"]["steps"] <= 160


def test_max_steps_refuses_what_is_not_a_whole_number(run_cli, tmp_path):
    code, _, err = run_cli("design", PRESS, "--max-steps", "many", "--out", tmp_path / "r")
    assert code == 2 and "--max-steps: 'many' is not a whole number" in err


def test_a_study_takes_the_limit():
    r = run(Study(PRESS, max_steps=100, verify=False))
    assert r.cycle.n_steps <= 100
