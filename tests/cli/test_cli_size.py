"""``stowflow size`` through the real command-line entry point."""

from __future__ import annotations

import json

import pytest
import stowflow.cli as cli
from stowflow.units import parse_quantity

GALLON_L = parse_quantity("1gal", "volume") * 1e3  # US liquid gallon in L
ESPOSITO = [
    "size", "--volume", "2827in3", "--precharge", "1200psi", "--min-pressure", "1800psi",
    "--max-pressure", "3000psi", "--absolute", "--process", "isothermal", "--gas", "ideal",
    "--temperature", "20",
]  # fmt: skip


@pytest.fixture(autouse=True)
def _size_command(monkeypatch):
    # Register only this command, whatever else the shell lists.
    monkeypatch.setattr(cli, "COMMANDS", ("size",))


def run(argv, capsys):
    code = cli.main(argv)
    out = capsys.readouterr()
    return code, out.out, out.err


def test_esposito_via_the_cli(capsys):
    # sources.ESPOSITO_2009, car-crusher accumulator (from memory): 45.9 gal, printed to three
    # digits.
    code, out, err = run([*ESPOSITO, "--json"], capsys)
    assert code == 0 and err == ""
    data = json.loads(out)
    assert data["required_gas_volume_l"] / GALLON_L == pytest.approx(45.9, abs=0.05)
    assert data["gas_model"] == "ideal" and data["process"] == "isothermal"
    assert data["polytropic_index"] == 1.0
    assert data["rejected_types"].keys() == {"gas-over-oil"}


def test_human_output_has_units_and_the_memory_caveat(capsys):
    argv = ["size", "--volume", "5L", "--min-pressure", "100bar", "--max-pressure", "200bar",
            "--temperature", "10..50", "--ps", "330bar"]  # fmt: skip
    code, out, _ = run(argv, capsys)
    assert code == 0
    assert "required gas volume V0 (worst case)" in out and "bar gauge" in out
    assert "oil at p1 [L]" in out and "T [°C]" in out
    assert "from memory" in out and "pressure-equipment category" in out
    assert "nitrogen only" in out


def test_gauge_is_the_default(capsys):
    gauge = ["size", "--volume", "5L", "--min-pressure", "100bar", "--max-pressure", "200bar",
             "--precharge", "80bar", "--json"]  # fmt: skip
    _, out, _ = run(gauge, capsys)
    absolute = [*gauge, "--absolute"]
    _, out_abs, _ = run(absolute, capsys)
    d, d_abs = json.loads(out), json.loads(out_abs)
    assert d["min_pressure_bar"] == pytest.approx(100.0)
    assert d_abs["min_pressure_bar"] == pytest.approx(100.0 - 1.01325)


@pytest.mark.parametrize(
    ("extra", "match"),
    [
        (["--precharge", "150bar"], "must be below the minimum working pressure"),
        (
            ["--process", "polytropic"],
            "--process: 'polytropic' has no index; expected isothermal, adiabatic or "
            "polytropic:N, e.g. polytropic:1.3",
        ),
        (
            ["--process", "auto"],
            "--process: 'auto' is not a gas process; expected isothermal, adiabatic or "
            "polytropic:N, e.g. polytropic:1.3",
        ),
        (
            ["--temperature", "50..10"],
            "--temperature: '50..10' runs from hot to cold; expected the colder end first, "
            "10..50 (°C)",
        ),
        (
            ["--temperature", "10..300"],
            "--temperature: '10..300' has 300 °C, outside the plausible -60 … 200 °C; expected "
            "temperatures in °C from -60 to 200, e.g. 10..50",
        ),
        (
            ["--ps", "330"],
            "--ps: '330' has no unit; expected a gauge pressure with its unit, e.g. 100bar",
        ),
    ],
)
def test_errors_are_one_line_exit_2(capsys, extra, match):
    argv = ["size", "--volume", "5L", "--min-pressure", "100bar", "--max-pressure", "200bar"]
    code, out, err = run([*argv, *extra], capsys)
    assert code == 2 and out == ""
    assert err.startswith("stowflow: error: ") and match in err and err.count("\n") == 1


def test_bad_unit_names_the_option(capsys):
    argv = ["size", "--volume", "5bar", "--min-pressure", "100bar", "--max-pressure", "200bar"]
    code, _, err = run(argv, capsys)
    assert code == 2
    assert err == (
        "stowflow: error: --volume: '5bar' has the pressure unit 'bar'; expected a volume "
        "≥ 0 L with its unit, e.g. 5L\n"
    )


def test_help_has_an_example(capsys):
    with pytest.raises(SystemExit) as exc:
        cli.main(["size", "--help"])
    assert exc.value.code == 0
    assert "stowflow size --volume 5L" in capsys.readouterr().out


def test_slow_charge_is_the_default_and_fast_is_an_option(capsys):
    # 3 L, 126 bar precharge, 140 → 210 bar gauge, ideal gas, adiabatic discharge: by hand,
    # Boyle's law to p2 then pV^1.4 = const to p1 (sources.CENGEL_BOLES_2015):
    # V0 = ΔV / [(p0/p2)·((p2/p1)^(1/1.4) − 1)] = 14.94 L (absolute pressures); both strokes
    # along the adiabat from the precharge: ΔV / [(p0/p1)^(1/1.4) − (p0/p2)^(1/1.4)] = 12.92 L.
    pa = 1.01325
    p0, p1, p2 = 126 + pa, 140 + pa, 210 + pa
    argv = ["size", "--volume", "3L", "--precharge", "126bar", "--min-pressure", "140bar",
            "--max-pressure", "210bar", "--gas", "ideal", "--json"]  # fmt: skip
    _, out, _ = run(argv, capsys)
    slow = json.loads(out)
    assert slow["charge"] == "slow" and slow["process"] == "adiabatic"
    hand = 3 / ((p0 / p2) * ((p2 / p1) ** (1 / 1.4) - 1))
    assert slow["required_gas_volume_l"] == pytest.approx(hand, rel=1e-9)
    _, out, _ = run([*argv, "--charge", "fast"], capsys)
    fast = json.loads(out)
    assert fast["charge"] == "fast"
    hand_fast = 3 / ((p0 / p1) ** (1 / 1.4) - (p0 / p2) ** (1 / 1.4))
    assert fast["required_gas_volume_l"] == pytest.approx(hand_fast, rel=1e-9)


def test_help_explains_the_charge(capsys):
    with pytest.raises(SystemExit):
        cli.main(["size", "--help"])
    out = capsys.readouterr().out
    assert "--charge {slow,fast}" in out and "isothermal" in out and "--charge fast" in out


def test_charge_belongs_to_storage(capsys):
    argv = ["size", "--duty", "reserve", "--motion", "a,1L,100bar,2s", "--charge-pressure",
            "180bar", "--charge", "slow"]  # fmt: skip
    code, _, err = run(argv, capsys)
    assert code == 2 and "--charge belongs to --duty storage, not reserve" in err


def _table_temperatures(out: str) -> list[float]:
    """The first column of the per-temperature table, [°C]."""
    lines = out.splitlines()
    start = next(k for k, line in enumerate(lines) if line.startswith("T [°C]")) + 2
    rows = []
    for line in lines[start:]:
        if not line.strip():
            break
        rows.append(float(line.split()[0]))
    return rows


@pytest.mark.parametrize(
    ("extra", "expected"),
    [
        ([], [10.0, 15.0, 20.0, 25.0, 30.0, 35.0, 40.0, 45.0, 50.0]),  # 5 K by default
        (["--step", "10"], [10.0, 20.0, 30.0, 40.0, 50.0]),
        (["--step", "15"], [10.0, 20.0, 25.0, 40.0, 50.0]),  # 20 °C and the top end added
    ],
)
def test_temperature_table_step(capsys, extra, expected):
    argv = ["size", "--volume", "5L", "--min-pressure", "100bar", "--max-pressure", "200bar",
            "--temperature", "10..50", *extra]  # fmt: skip
    code, out, _ = run(argv, capsys)
    assert code == 0
    assert _table_temperatures(out) == expected


def test_temperature_step_keeps_the_worst_case(capsys):
    # The worst temperature is refined between the rows: the step changes the table only.
    base = ["size", "--volume", "5L", "--min-pressure", "100bar", "--max-pressure", "200bar",
            "--temperature", "-20..60", "--json"]  # fmt: skip
    _, fine, _ = run([*base, "--step", "1"], capsys)
    _, coarse, _ = run(base, capsys)
    a, b = json.loads(fine), json.loads(coarse)
    assert b["required_gas_volume_l"] == pytest.approx(a["required_gas_volume_l"], rel=1e-9)
    assert len(a["temperatures"]) == 81 and len(b["temperatures"]) == 17


@pytest.mark.parametrize("step", ["0", "-5", "0.001"])
def test_a_bad_temperature_step_is_one_line(capsys, step):
    argv = ["size", "--volume", "5L", "--min-pressure", "100bar", "--max-pressure", "200bar",
            "--temperature", "10..50", "--step", step]  # fmt: skip
    code, _, err = run(argv, capsys)
    assert code == 2 and "--step" in err and err.count("\n") == 1
