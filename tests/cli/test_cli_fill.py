"""``stowflow fill`` and ``stowflow precharge`` through the command-line entry point."""

from __future__ import annotations

import argparse
import json
import re

import pytest
import stowflow.cli as cli
from stowflow.cli import fill as fill_cmd
from stowflow.cli import precharge as precharge_cmd

FILL = [
    "fill",
    "--volume",
    "50L",
    "--precharge",
    "180bar",
    "--ambient",
    "15",
    "--bottles",
    "4",
    "--bottle-volume",
    "50L",
    "--bottle-pressure",
    "200bar",
]


@pytest.fixture(autouse=True)
def _commands(monkeypatch):
    # Register only these commands, whatever the shell lists (the lead adds them to COMMANDS).
    monkeypatch.setattr(cli, "COMMANDS", ("fill", "precharge"))


def run(argv, capsys):
    code = cli.main(argv)
    out = capsys.readouterr()
    return code, out.out, out.err


def test_register_on_a_fresh_parser():
    common = argparse.ArgumentParser(add_help=False)
    parser = argparse.ArgumentParser(prog="stowflow")
    sub = parser.add_subparsers(dest="command")
    fill_cmd.register(sub, common)
    precharge_cmd.register(sub, common)
    args = parser.parse_args([*FILL, "--json"])
    assert args.func is fill_cmd.run and args.bottles == "4"  # read by the command
    args = parser.parse_args(["precharge", "90bar", "--temperature", "-10..50"])
    assert args.func is precharge_cmd.run and args.temperature == "-10..50"


def test_fill_json(capsys):
    code, out, err = run([*FILL, "--json", "--table", "-10..40", "--step", "10"], capsys)
    assert code == 0 and err == ""
    d = json.loads(out)
    assert d["schema"] == "stowflow.fill/1" and d["reached"] and d["bottles_used"] == 4
    assert d["target_precharge_bar_at_20c"] == pytest.approx(180.0)
    assert len(d["steps"]) == 4 and len(d["precharge_table"]) == 6
    assert any("never air or oxygen" in s for s in d["safety"])


def test_fill_options_and_human_output(capsys):
    argv = [
        "fill",
        "--volume",
        "50L",
        "--precharge",
        "250bar",
        "--ambient",
        "15",
        "--bottles",
        "3",
        "--bottle-volume",
        "50L",
        "--bottle-pressure",
        "200bar",
        "--booster-ratio",
        "4",
        "--booster-stroke",
        "0.2L",
        "--transfer-volume",
        "10L",
        "--oil-pressure",
        "300bar",
        "--ps",
        "330bar",
    ]
    code, out, _ = run(argv, capsys)
    assert code == 0
    assert "cascade: each fresh bottle alone in turn" in out and "left in bottle [bar]" in out
    assert "option: gas booster 1:4" in out and "option: piston accumulator 10 L" in out
    assert "target reached" in out and "Never fill from the oil side" in out


def test_precharge_json_and_table(capsys):
    code, out, err = run(
        ["precharge", "90bar", "--temperature", "-10..50", "--step", "5", "--json"], capsys
    )
    assert code == 0 and err == ""
    d = json.loads(out)
    assert len(d["rows"]) == 13 and d["precharge_bar_at_20c"] == pytest.approx(90.0, rel=1e-5)
    code, out, _ = run(["precharge", "90bar", "--gas", "ideal"], capsys)
    assert code == 0 and "what to read" in out and "oil side vented" in out


@pytest.mark.parametrize("command", ["fill", "precharge"])
def test_help(capsys, command):
    with pytest.raises(SystemExit) as exc:
        cli.main([command, "--help"])
    assert exc.value.code == 0
    assert f"stowflow {command}" in capsys.readouterr().out


@pytest.mark.parametrize(
    ("argv", "match"),
    [
        ([*FILL, "--initial", "200bar"], "already holds"),
        ([*FILL[:-1], "200L"], "--bottle-pressure"),
        ([*FILL, "--ambient", "10..20"], "one temperature"),
        ([*FILL, "--booster-ratio", "4"], "needs both --booster-ratio and --booster-stroke"),
        ([*FILL, "--ps", "150bar"], "exceeds the accumulator's PS"),
    ],
)
def test_errors_are_one_line_exit_2(capsys, argv, match):
    code, out, err = run(argv, capsys)
    assert code == 2 and out == ""
    assert err.startswith("stowflow: error: ") and match in err and err.count("\n") == 1


@pytest.mark.parametrize(
    ("argv", "message"),
    [
        (
            ["precharge", "90bar", "--step", "0"],
            "--step: '0' is not above 0 K; expected a step > 0 K, e.g. 5 or 5K",
        ),
        (
            ["precharge", "90bar", "--step", "0.01"],
            "--step: '0.01' gives 6001 rows from --temperature '-10..50'; expected a step that "
            "gives at most 1000 rows",
        ),
        (
            ["precharge", "90L"],
            "precharge: '90L' has the volume unit 'L'; expected a gauge pressure with its unit, "
            "e.g. 100bar",
        ),
        (
            ["precharge", "0.5bar", "--absolute"],
            "precharge: '0.5bar' is not above ambient; expected a precharge > 1.01325 bar "
            "absolute, e.g. 90bar",
        ),
        (
            [*FILL, "--ambient", "10..20"],
            "--ambient: '10..20' is a range; expected one temperature in °C, e.g. 15",
        ),
        (
            [*FILL[:8], "four", *FILL[9:]],
            "--bottles: 'four' is not a whole number; expected a whole number ≥ 1",
        ),
        (
            [*FILL, "--booster-ratio", "1", "--booster-stroke", "0.2L"],
            "--booster-ratio: '1' is not above 1; expected a number > 1",
        ),
        (
            [*FILL, "--table", "0..40", "--step", "５"],
            "--step: '５' has a digit other than 0-9 ('５', U+FF15); expected a step > 0 K, "
            "e.g. 5 or 5K",
        ),
    ],
)
def test_error_messages(capsys, argv, message):
    code, out, err = run(argv, capsys)
    assert (code, out, err) == (2, "", f"stowflow: error: {message}\n")


def test_every_cascade_column_is_labelled_and_the_pressures_explained(capsys):
    code, out, _ = run(FILL, capsys)
    assert code == 0
    lines = out.splitlines()
    k = next(i for i, line in enumerate(lines) if line.startswith("bottle "))
    header, rule = lines[k], lines[k + 1]
    # as many labels as columns (each column's rule of dashes has a label above it)
    assert len(rule.split()) == len(re.split(r"\s{2,}", header.strip())) == 7
    assert header.rstrip().endswith("target reached")
    assert fill_cmd.PRESSURES_TEXT in out
    assert fill_cmd.PRESSURES_TEXT.count("\n") == 0
    for word in ("settled:", "warm:", "cooled if shut at once:"):
        assert word in fill_cmd.PRESSURES_TEXT
