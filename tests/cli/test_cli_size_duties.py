"""``stowflow size --duty reserve|shock|thermal`` through the command-line entry point."""

from __future__ import annotations

import json

import pytest
import stowflow.cli as cli

RESERVE = [
    "size",
    "--duty",
    "reserve",
    "--motion",
    "close guard,1.2L,120bar,2s",
    "--motion",
    "retract,3L,100bar,4s",
    "--charge-pressure",
    "180bar",
    "--leakage",
    "0.05L/min",
    "--standby",
    "10min",
    "--temperature",
    "10..50",
]
SHOCK = [
    "size",
    "--duty",
    "shock",
    "--pipe-length",
    "20m",
    "--pipe-diameter",
    "25mm",
    "--wall",
    "3mm",
    "--velocity",
    "4m/s",
    "--pressure",
    "150bar",
    "--peak-limit",
    "180bar",
]
THERMAL = [
    "size",
    "--duty",
    "thermal",
    "--oil-volume",
    "20L",
    "--temperature",
    "20..60",
    "--start-pressure",
    "50bar",
    "--pressure-limit",
    "200bar",
    "--type",
    "diaphragm",
]


@pytest.fixture(autouse=True)
def _size_command(monkeypatch):
    monkeypatch.setattr(cli, "COMMANDS", ("size",))


def run(argv, capsys):
    code = cli.main(argv)
    out = capsys.readouterr()
    return code, out.out, out.err


def test_reserve_json(capsys, repo_root):
    code, out, err = run([*RESERVE, "--json", "--ps", "330bar"], capsys)
    assert code == 0 and err == ""
    d = json.loads(out)
    assert d["schema"] == "stowflow.reserve/1" and d["process"] == "adiabatic"
    assert [s["step"] for s in d["states"]] == ["after stand-by", "close guard", "retract"]
    assert d["gas_volume_if_adiabatic_l"] > d["gas_volume_if_isothermal_l"]
    assert d["limits"]["pressure_equipment"]["category"] in {"I", "II", "III", "IV"}
    demo = repo_root / "duty_cycles" / "motions" / "motions_demo.csv"
    code, out, _ = run(
        [
            "size",
            "--duty",
            "reserve",
            "--motions",
            str(demo),
            "--charge-pressure",
            "180bar",
            "--json",
        ],
        capsys,
    )
    assert code == 0 and len(json.loads(out)["states"]) == 4


def test_shock_json_and_flow_form(capsys):
    code, out, _ = run([*SHOCK, "--json"], capsys)
    assert code == 0
    d = json.loads(out)
    # Hand calculation in tests/duties/test_duties.py: a = 1352.97 m/s, Δp = 47.083 bar.
    assert d["wave_speed_m_s"] == pytest.approx(1352.97, rel=5e-5)
    assert d["surge_without_accumulator_bar"] == pytest.approx(47.083, rel=5e-5)
    assert d["accumulator_needed"] and d["required_gas_volume_l"] > 0
    # The same velocity as a flow: 4 m/s · π/4 · (25 mm)² = 1.9635 L/s = 117.81 L/min.
    flow = [a if a != "4m/s" else "117.8097L/min" for a in SHOCK]
    flow[flow.index("--velocity")] = "--flow"
    code, out, _ = run([*flow, "--json"], capsys)
    assert json.loads(out)["velocity_m_s"] == pytest.approx(4.0, rel=1e-6)


def test_thermal_json(capsys):
    code, out, _ = run([*THERMAL, "--json"], capsys)
    assert code == 0
    d = json.loads(out)
    assert d["expansion_l"] == pytest.approx(0.5312, rel=1e-12)  # hand calculation
    assert d["pressure_rise_without_accumulator_bar"] == pytest.approx(451.52, rel=1e-12)
    assert d["limits"]["type"] == "diaphragm" and d["limits"]["admissible"]


@pytest.mark.parametrize(
    ("argv", "title"),
    [(RESERVE, "emergency reserve"), (SHOCK, "shock absorption"), (THERMAL, "thermal expansion")],
)
def test_human_output_carries_units_and_cautions(capsys, argv, title):
    code, out, _ = run(argv, capsys)
    assert code == 0 and f"stowflow size: {title}" in out
    assert "bar gauge" in out and "nitrogen only" in out and "competent person" in out


def test_help_lists_the_duties(capsys):
    with pytest.raises(SystemExit) as exc:
        cli.main(["size", "--help"])
    assert exc.value.code == 0
    text = capsys.readouterr().out
    assert "--duty {storage,reserve,shock,thermal}" in text
    assert "stowflow size --duty shock" in text and "stowflow size --volume 5L" in text


def test_storage_stays_the_default(capsys):
    argv = [
        "size",
        "--volume",
        "5L",
        "--min-pressure",
        "100bar",
        "--max-pressure",
        "200bar",
        "--json",
    ]
    code, out, _ = run(argv, capsys)
    assert code == 0 and json.loads(out)["schema"] == "stowflow.size/1"


@pytest.mark.parametrize(
    ("argv", "match"),
    [
        (
            ["size", "--min-pressure", "100bar", "--max-pressure", "200bar"],
            "--duty storage needs --volume",
        ),
        ([*RESERVE, "--volume", "5L"], "--volume belongs to --duty storage, not reserve"),
        ([*SHOCK, "--process", "isothermal"], "--process does not apply to --duty shock"),
        (
            [
                "size",
                "--volume",
                "5L",
                "--min-pressure",
                "100bar",
                "--max-pressure",
                "200bar",
                "--type",
                "piston",
            ],
            "--type does not apply to --duty storage",
        ),
        ([*RESERVE[:3], "--charge-pressure", "180bar"], "needs --motions FILE"),
        ([*RESERVE, "--charge-pressure", "110bar"], "not below the charge pressure"),
        ([*SHOCK, "--flow", "100L/min"], "exactly one of --velocity and --flow"),
        ([*SHOCK, "--peak-limit", "140bar"], "must exceed the operating pressure"),
        ([*SHOCK[:-2], "--peak-limit", "180"], "has no unit"),
        ([*SHOCK, "--velocity", "4bar"], "--velocity: unknown or wrong unit"),
        ([*THERMAL[:6], "20", *THERMAL[7:]], "needs --temperature T1..T2"),
        ([*THERMAL, "--pressure-limit", "40bar"], "must exceed the start pressure"),
        ([*THERMAL, "--oil-expansion", "7e-4"], "not a number with a unit"),
    ],
)
def test_errors_are_one_line_exit_2(capsys, argv, match):
    code, out, err = run(argv, capsys)
    assert code == 2 and out == ""
    assert err.startswith("stowflow: error: ") and match in err and err.count("\n") == 1
