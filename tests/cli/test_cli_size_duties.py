"""``stowflow size --duty reserve|shock|thermal`` through the command-line entry point."""

from __future__ import annotations

import json
import re

import pytest
import stowflow.cli as cli
from stowflow.cli._size_duties import motion_from_text
from stowflow.errors import SettingsError, UnitsError
from stowflow.units import P_AMBIENT

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
        (
            [*SHOCK[:-2], "--peak-limit", "180"],
            "--peak-limit: '180' has no unit; expected a gauge pressure with its unit, e.g. 100bar",
        ),
        (
            [*SHOCK, "--velocity", "4bar"],
            "--velocity: '4bar' has the pressure unit 'bar'; expected a velocity ≥ 0 m/s with "
            "its unit, e.g. 4m/s",
        ),
        (
            [*SHOCK, "--oil-density", "870kg"],
            "--oil-density: '870kg' has the unit 'kg', which is not a density unit; expected "
            "a density > 0 kg/m3 with its unit, e.g. 870kg/m3",
        ),
        (
            [*SHOCK, "--constraint", "x"],
            "--constraint: 'x' is not a number; expected a number > 0",
        ),
        ([*THERMAL[:6], "20", *THERMAL[7:]], "needs --temperature T1..T2"),
        ([*THERMAL, "--pressure-limit", "40bar"], "must exceed the start pressure"),
        (
            [*THERMAL, "--oil-expansion", "7e-4"],
            "--oil-expansion: '7e-4' has no unit; expected an expansion coefficient ≥ 0/K with "
            "its unit, e.g. 7e-4/K",
        ),
        (
            [*RESERVE, "--process", "polytropic:0.5"],
            "--process: 'polytropic:0.5' is refused: polytropic index n = 0.5 is outside 1…3 "
            "(n < 1 needs heat added while compressing); expected isothermal, adiabatic or "
            "polytropic:N, e.g. polytropic:1.3",
        ),
    ],
)
def test_errors_are_one_line_exit_2(capsys, argv, match):
    code, out, err = run(argv, capsys)
    assert code == 2 and out == ""
    assert err.startswith("stowflow: error: ") and match in err and err.count("\n") == 1


def test_motion_option():
    m = motion_from_text("close guard, 1200mL, 1740psi, 2000ms")
    assert m.name == "close guard"
    assert m.volume == pytest.approx(1.2e-3)
    # 1 psi = 6894.757293168 Pa (NIST SP 811, 2008, Appendix B)
    assert m.min_pressure == pytest.approx(1740 * 6894.757293168 + P_AMBIENT)
    assert m.time == pytest.approx(2.0)
    absolute = motion_from_text("a,1L,100bar,1s", absolute=True)
    assert absolute.min_pressure == pytest.approx(100e5)


@pytest.mark.parametrize(
    ("text", "error", "message"),
    [
        (
            "close guard, 1.2L",
            SettingsError,
            "--motion: 'close guard, 1.2L' is not four comma-separated fields; expected "
            "NAME,VOLUME,MIN_PRESSURE,TIME, e.g. 'close guard,1.2L,120bar,2s'",
        ),
        (
            "close guard,1.2bar,120bar,2s",
            UnitsError,
            "--motion 'close guard': '1.2bar' has the pressure unit 'bar'; expected a volume "
            "≥ 0 L with its unit, e.g. 5L",
        ),
        (
            "close guard,1.2L,120bar,-2s",
            SettingsError,
            "--motion 'close guard': '-2s' is below 0 s; expected a time ≥ 0 s with its unit, "
            "e.g. 1s",
        ),
    ],
)
def test_motion_option_errors(text, error, message):
    with pytest.raises(error, match=f"^{re.escape(message)}$"):
        motion_from_text(text)
