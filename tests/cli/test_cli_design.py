"""``stowflow design`` and the shell around every command: help, option values, argv."""

from __future__ import annotations

import argparse
import re
import subprocess
import sys

import pytest
import stowflow.cli as cli
from _hostile import CYCLE as TINY
from stowflow.cli import build_parser, join_dash_values
from stowflow.cli.design import settings_from_args
from stowflow.errors import StowflowError, UnitsError

#: 0 °C on the kelvin scale (ITS-90 offset), [K].
ZERO_C = 273.15


@pytest.mark.parametrize("command", cli.COMMANDS)
def test_every_command_has_help(command, capsys):
    # Regression: design/demo help crashed with "ValueError: incomplete format" on "10%".
    with pytest.raises(SystemExit) as exc:
        cli.main([command, "--help"])
    assert exc.value.code == 0
    out = capsys.readouterr().out
    assert out.startswith("usage: stowflow " + command)
    assert "%%" not in out


def test_design_help_shows_percent_examples(capsys):
    with pytest.raises(SystemExit):
        cli.main(["design", "--help"])
    out = capsys.readouterr().out
    assert "e.g. 10%" in out and "0 disables" in out


def _design_args(*options: str) -> argparse.Namespace:
    argv = join_dash_values(["design", "cycle.csv", *options], build_parser())
    return build_parser().parse_args(argv)


@pytest.mark.parametrize("zero", ["0", "0.0", "-0"])
def test_min_dwell_zero_needs_no_unit(zero):
    # Regression: "--min-dwell 0" was refused ("'0' has no unit") though the help says
    # "0 disables".
    s = settings_from_args(_design_args("--min-dwell", zero, "--line-loss", "0"))
    assert s.min_loaded_dwell == 0.0 and s.min_unloaded_dwell == 0.0
    assert s.line_loss == 0.0


def test_other_bare_numbers_still_need_a_unit():
    message = "--min-dwell: '1' has no unit; expected a time ≥ 0 s with its unit, e.g. 1s"
    with pytest.raises(UnitsError, match=f"^{re.escape(message)}$"):
        settings_from_args(_design_args("--min-dwell", "1"))


@pytest.mark.parametrize(
    ("options", "message"),
    [
        (
            # Regression: named the settings' field min_loaded_dwell, without a unit.
            ("--min-dwell", "-1s"),
            "--min-dwell: '-1s' is below 0 s; expected a time ≥ 0 s with its unit, e.g. 1s",
        ),
        (
            ("--min-loaded-dwell", "-1s"),
            "--min-loaded-dwell: '-1s' is below 0 s; expected a time ≥ 0 s with its unit, e.g. 1s",
        ),
        (
            ("--time-constant", "0"),
            "--time-constant: '0' is not above 0 s; expected a time > 0 s with its unit, e.g. 1s",
        ),
        (
            ("--temperature", "180"),
            "--temperature: design settings: operating temperatures must lie between −73 °C "
            "and 177 °C",
        ),
        (
            ("--max-load-events", "often"),
            "--max-load-events: 'often' is not a rate; expected a rate ≥ 1 per hour, e.g. "
            "360/h or 6/min, or none",
        ),
        (
            ("--years", "2.5"),
            "--years: '2.5' is not a whole number; expected a whole number ≥ 1",
        ),
    ],
)
def test_refusals_name_the_option_typed(run_cli, options, message):
    code, stdout, stderr = run_cli("design", "cycle.csv", *options)
    assert (code, stdout, stderr) == (2, "", f"stowflow: error: {message}\n")


@pytest.mark.parametrize(
    ("given", "joined"),
    [
        (["--temperature", "-20..60"], ["--temperature=-20..60"]),
        (["--temperature", "-20°C..60°C"], ["--temperature=-20°C..60°C"]),
        (["--line-loss", "-.5bar"], ["--line-loss=-.5bar"]),
        (["--temperature", "10..50"], ["--temperature", "10..50"]),
        (["--json", "-5"], ["--json", "-5"]),  # a flag takes no value
        (["--", "--temperature", "-20..60"], ["--", "--temperature", "-20..60"]),
        (["--temperature", "--json"], ["--temperature", "--json"]),
    ],
)
def test_join_dash_values(given, joined):
    assert join_dash_values(["design", "c.csv", *given], build_parser()) == [
        "design",
        "c.csv",
        *joined,
    ]


def test_cold_temperature_range_in_design():
    # Regression: "--temperature -20..60" gave argparse's "expected one argument".
    s = settings_from_args(_design_args("--temperature", "-20..60"))
    assert (s.t_min, s.t_max) == pytest.approx((ZERO_C - 20, ZERO_C + 60))


_FILL = (
    "--volume 10L --precharge 90bar --bottles 1 --bottle-volume 50L --bottle-pressure 200bar"
).split()


@pytest.mark.parametrize(
    ("argv", "dest"),
    [
        (["design", "c.csv", "--temperature"], "opt_temperature"),
        (["demo", "--temperature"], "opt_temperature"),
        (["simulate", "d.json", "c.csv", "--temperature"], "temperature"),
        (["size", "--temperature"], "temperature"),
        (["precharge", "90bar", "--temperature"], "temperature"),
        (["fill", *_FILL, "--ambient", "15", "--table"], "table"),
        (["fill", *_FILL, "--table", "0..40", "--ambient"], "ambient"),
    ],
    ids=lambda v: v[0] if isinstance(v, list) else v,
)
def test_cold_values_parse_after_an_option_in_every_command(argv, dest):
    value = "-5" if dest == "ambient" else "-20..60"
    args = build_parser().parse_args(join_dash_values([*argv, value], build_parser()))
    assert getattr(args, dest) == value


def test_design_keeps_pyomo_from_importing_scipy_stats(tmp_path):
    # stowflow._deps: Pyomo's scipy hook imports scipy.sparse only (about 0.5 s of start-up);
    # the design, its Pyomo model and its verification still run.
    code = (
        "import sys, numpy as np\n"
        "import stowflow\n"
        "from stowflow.cycle.duty import cycle_from_arrays\n"
        "from stowflow.pipeline import Study, run\n"
        "flow = np.array([60.0, 0, 10, 0]) / 6e4\n"
        "cyc = cycle_from_arrays(2.0, flow, np.full(4, 120e5 + 101325))\n"
        "r = run(Study(cycle=cyc))\n"
        "assert r.design.feasible and r.verification is not None\n"
        "print('scipy.stats' in sys.modules, 'scipy.sparse' in sys.modules)\n"
    )
    out = subprocess.run(
        [sys.executable, "-c", code], capture_output=True, text=True, check=True, cwd=tmp_path
    )
    assert out.stdout.split() == ["False", "True"]


def test_installed_program_returns_the_command_exit_code(tmp_path):
    # stowflow.cli.entry (the `stowflow` program and `python -m stowflow`) keeps main's code.
    bad = tmp_path / "bad.csv"
    bad.write_text("time [s], flow\n0, 1\n", encoding="utf-8")
    out = subprocess.run(
        [sys.executable, "-m", "stowflow", "check", str(bad)], capture_output=True, text=True
    )
    assert out.returncode == 2 and out.stderr.startswith("stowflow: error:")


# -- regressions of the hardening (issue: inputs, messages, --debug) --------------------------


@pytest.mark.parametrize("where", ["before", "after"])
def test_debug_is_honoured_before_and_after_the_command(run_cli, tmp_path, where):
    # Regression: `stowflow --debug design ...` ignored --debug (the command's own default
    # overwrote the value given before the command).
    cycle = tmp_path / "bad.csv"
    cycle.write_text("duration [s], flow [L/min]\n1, -5\n", encoding="utf-8")
    argv = ["--debug", "design", cycle] if where == "before" else ["design", cycle, "--debug"]
    with pytest.raises(StowflowError, match=r"negative flow"):
        run_cli(*argv)
    code, _, err = run_cli("design", cycle)
    assert code == 2 and err.count("\n") == 1


def test_a_vanishing_flow_keeps_the_table_narrow(run_cli, tmp_path):
    # Regression: a flow of 1e-300 L/min made "installed power / lower bound" a 300-digit
    # number that pushed every value out of the table.
    cycle = tmp_path / "tiny_flow.csv"
    cycle.write_text(
        "duration [s], flow [L/min], pressure [bar]\n1, 1e-300, 100\n1, 0, 100\n",
        encoding="utf-8",
    )
    code, out, err = run_cli("design", cycle, "--gas", "ideal", "--out", tmp_path / "o")
    assert code in (0, 1), err
    prose = ("note:", "report", "recommendation:", "least possible power:")
    table = [line for line in out.splitlines() if not line.startswith(prose)]
    assert max(len(line) for line in table) < 120, max(table, key=len)
    # the ratio is shown compactly in ×10 form, with its plain label and unit word
    assert re.search(r"installed over least possible power\s+[0-9.]+×10\S+\s+times", out)
    assert not re.search(r"\d[eE][-+]?\d", "\n".join(table))


def test_every_input_is_read_before_the_design_runs(run_cli, tmp_path, monkeypatch):
    # A bad catalogue or output folder is refused before the pipeline's seconds of work.
    import stowflow.pipeline

    monkeypatch.setattr(stowflow.pipeline, "run", lambda *a, **k: pytest.fail("design ran"))
    cycle = tmp_path / "tiny.csv"
    cycle.write_text(TINY, encoding="utf-8")
    nested = tmp_path / "nested.toml"
    nested.write_text("x = " + "[" * 5000 + "]" * 5000 + "\n", encoding="utf-8")
    code, _, err = run_cli("design", cycle, "--catalogue", nested)
    assert code == 2
    assert err == (
        f"stowflow: error: {nested}, line 1: arrays, tables or objects nested more than 32 "
        "deep; expected at most 32 levels\n"
    )
