"""``--units us`` end to end: check, precharge and design answer in US customary units.

Expected numbers come from the NIST factors (NIST SP 811, 2008, appendix B.8: 1 psi =
6894.757 Pa, 1 hp = 745.6999 W; NIST Handbook 44, appendix C: 1 US gal = 3.785411784 L);
the metric figures they convert are the program's own metric answers, not outside values.
"""

from __future__ import annotations

import contextlib
import csv
import io
import json
import re
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[2]
PRESS = REPO / "duty_cycles" / "forming_press.csv"
PSI = 6894.757  # Pa per psi (NIST SP 811, 2008, B.8)
US_GAL_L = 3.785411784  # L per US gal (NIST Handbook 44, appendix C)
HP = 745.6999  # W per hp, 550 ft·lbf/s (NIST SP 811, 2008, B.8)


def _row(out: str, name: str) -> list[str]:
    line = next(x for x in out.splitlines() if x.startswith(name))
    return re.split(r"\s{2,}", line.strip())


def test_check_answers_in_us_units(run_cli):
    code, metric, _ = run_cli("check", PRESS)
    code_us, us, err = run_cli("check", "--units", "us", PRESS)
    assert code == code_us == 0 and err == ""
    assert "L/min" not in us and " bar" not in us
    peak_lpm = float(_row(metric, "peak demand (input)")[1].replace(",", ""))
    _, value, unit = _row(us, "peak demand (input)")
    assert unit == "gpm"
    assert float(value) == pytest.approx(peak_lpm / US_GAL_L, rel=1e-3)
    p_bar = float(_row(metric, "peak required pressure (gauge)")[1].replace(",", ""))
    _, value, unit = _row(us, "peak required pressure (gauge)")
    assert unit == "psi"
    assert float(value.replace(",", "")) == pytest.approx(p_bar * 1e5 / PSI, rel=1e-3)
    kw = float(_row(metric, "peak hydraulic power")[1])
    _, value, unit = _row(us, "peak hydraulic power")
    assert unit == f"hp ({kw:g} kW)"  # hp beside kW
    assert float(value) == pytest.approx(kw * 1e3 / HP, rel=1e-3)


def test_check_json_keeps_its_metric_keys_and_adds_the_chosen_units(run_cli):
    _, metric, _ = run_cli("check", PRESS, "--json")
    _, us, _ = run_cli("check", PRESS, "--json", "--units", "us")
    m, u = json.loads(metric), json.loads(us)
    shown = u.pop("display_units")
    assert u == m  # every metric key, unchanged
    assert shown["system"] == "us"
    assert shown["peak_flow_lpm"]["unit"] == "gpm"
    assert shown["peak_flow_lpm"]["value"] == pytest.approx(m["peak_flow_lpm"] / US_GAL_L)


def test_precharge_in_psi_answers_in_psi_and_fahrenheit(run_cli):
    code, out, err = run_cli(
        "precharge", "1900psi", "--units", "us", "--temperature", "50degF..122degF"
    )
    assert code == 0 and err == ""
    assert out.startswith("precharge 1,900 psi gauge at 68 °F, real gas")
    assert "temperature [°F]  gauge [psi]  absolute [psia]" in out
    rows = {r[0]: r[1:] for r in (_row(out, t) for t in ("50", "68", "122"))}
    assert rows["68"][0] == "1,900"  # the stated precharge at 20 °C = 68 °F
    assert int(rows["50"][0].replace(",", "")) < 1900 < int(rows["122"][0].replace(",", ""))
    # absolute = gauge + 1 atm = 14.696 psi (101325 Pa / 6894.757 Pa/psi, NIST SP 811)
    assert int(rows["68"][1].replace(",", "")) == round(1900 + 101325 / PSI)


def test_precharge_json_keeps_bar_and_adds_psi(run_cli):
    _, out, _ = run_cli("precharge", "1900psi", "--units", "us", "--json")
    data = json.loads(out)
    assert data["precharge_bar_at_20c"] == pytest.approx(1900 * PSI / 1e5, rel=1e-4)
    rows = data["display_units"]["rows"]
    assert {"temperature [°F]", "gauge [psi]", "absolute [psia]"} == set(rows[0])
    at_68 = next(r for r in rows if abs(r["temperature [°F]"] - 68.0) < 1e-6)
    assert at_68["gauge [psi]"] == pytest.approx(1900.0, rel=1e-6)


def test_a_bare_fahrenheit_looking_range_is_refused_by_size(run_cli):
    code, _, err = run_cli(
        "size", "--volume", "5L", "--min-pressure", "100bar", "--max-pressure", "200bar",
        "--temperature", "30..110",
    )  # fmt: skip
    assert code == 2
    assert "'30..110' is read as °C and has 110 °C" in err and "30degF..110degF" in err


def _keys(obj, path=""):
    """Every key path of a JSON document (lists by their first element)."""
    if isinstance(obj, dict):
        out = set()
        for k, v in obj.items():
            out |= {f"{path}/{k}"} | _keys(v, f"{path}/{k}")
        return out
    if isinstance(obj, list) and obj:
        return _keys(obj[0], path + "[]")
    return set()


@pytest.fixture(scope="module")
def us_and_metric(tmp_path_factory):
    from stowflow.cli import main

    folders = {}
    for units in ("metric", "us"):
        out = tmp_path_factory.mktemp(units)
        printed = io.StringIO()
        with contextlib.redirect_stdout(printed):
            code = main(["design", "--units", units, str(PRESS), "--out", str(out)])
        assert code in (0, 1)
        (out / "printed.txt").write_text(printed.getvalue(), encoding="utf-8")
        folders[units] = out
    return folders


def test_design_json_has_the_us_figures(us_and_metric):
    folder = us_and_metric["us"]
    data = json.loads((folder / "design.json").read_text(encoding="utf-8"))
    shown = data["display_units"]
    assert shown["system"] == "us"
    acc = data["accumulator"]
    assert shown["accumulator"]["precharge_at_20c"]["unit"] == "psi"
    assert shown["accumulator"]["precharge_at_20c"]["value"] == pytest.approx(
        acc["precharge_bar_at_20c"] * 1e5 / PSI, rel=1e-3
    )
    assert shown["accumulator"]["total_gas_volume"]["value"] == pytest.approx(
        acc["total_gas_volume_l"] / US_GAL_L, rel=1e-6
    )
    assert shown["motor_rated_power"]["unit"] == "hp"
    assert shown["motor_rated_power"]["beside"]["unit"] == "kW"
    assert shown["motor_rated_power"]["value"] == pytest.approx(
        data["motor"]["rated_kw"] * 1e3 / HP, rel=1e-6
    )
    assert shown["temperature_min"] == {"value": pytest.approx(50.0), "unit": "°F"}


def test_design_json_keeps_every_metric_key_under_us_units(us_and_metric):
    docs = {
        u: json.loads((f / "design.json").read_text(encoding="utf-8"))
        for u, f in us_and_metric.items()
    }
    assert "display_units" not in docs["metric"]
    us = dict(docs["us"])
    us.pop("display_units")
    assert _keys(us) == _keys(docs["metric"])
    assert us["accumulator"] == docs["metric"]["accumulator"]  # same numbers, still bar and L


def test_spec_csv_and_report_show_psi_gpm_and_hp(us_and_metric):
    folder = us_and_metric["us"]
    rows = list(csv.DictReader(io.StringIO((folder / "spec.csv").read_text(encoding="utf-8"))))
    by_item = {r["item"]: r for r in rows}
    assert "psi" in by_item["relief valve"]["description"]
    assert "gpm" in by_item["relief valve"]["description"]
    assert " bar" not in by_item["relief valve"]["description"]
    assert "hp (" in by_item["motor"]["description"] and "kW)" in by_item["motor"]["description"]
    assert "°F" in by_item["accumulator"]["description"]
    # the catalogue's own name is quoted as the catalogue writes it
    assert re.search(r"catalogue: \S.* bar", by_item["accumulator"]["notes"])
    html = (folder / "report.html").read_text(encoding="utf-8")
    text = re.sub(r"<script.*?</script>", "", html, flags=re.S)
    assert " psi" in text and " gpm" in text and " hp (" in text and "°F" in text
    assert not re.search(r"hp \([^)]*hp", text)  # the kW beside hp is not converted again
    assert "installed power [hp]" in text and "gas volume [US gal]" in text  # runners-up
    metric_html = (us_and_metric["metric"] / "report.html").read_text(encoding="utf-8")
    assert " psi" not in re.sub(r"<script.*?</script>", "", metric_html, flags=re.S)


def test_design_table_is_in_us_units(us_and_metric):
    out = (us_and_metric["us"] / "printed.txt").read_text(encoding="utf-8")
    assert _row(out, "working window")[-1] == "psi"
    assert _row(out, "total gas volume")[-1] == "US gal"
    assert _row(out, "motor")[-1].startswith("hp (") and _row(out, "motor")[-1].endswith("kW)")
    assert "precharge at 68 °F" in out


def test_report_figures_have_us_axes_and_scaled_lines(us_and_metric):
    us = (us_and_metric["us"] / "report.html").read_text(encoding="utf-8")
    metric = (us_and_metric["metric"] / "report.html").read_text(encoding="utf-8")
    assert '"text":"pressure [psi]"' in us and '"text":"pressure [bar]"' not in us
    assert '"text":"pressure [bar]"' in metric
    # the relief line is drawn at the relief setting in psi (bar × 1e5 / 6894.757, NIST SP 811)
    relief_bar = json.loads((us_and_metric["metric"] / "design.json").read_text())["relief_bar"]
    lines = [
        float(y)
        for y in re.findall(r'"dash":"dashdot","width":1\},"type":"line".*?"y0":([\d.]+)', us)
    ]
    assert any(abs(y - relief_bar * 1e5 / PSI) < 1.0 for y in lines)


def test_tables_convert_unit_columns_headers_and_ranges_once():
    from stowflow.io.numbers import using
    from stowflow.report.table_units import table_in_system

    rows = [
        ["working pressure", "100", "bar gauge"],
        ["temperature range", "10 … 50", "°C"],
        ["already shown", "1,450", "psi"],
    ]
    with using("us"):
        out, headers = table_in_system(rows, ("quantity", "value", "unit"))
        assert out[0][1:] == ["1,450", "psi gauge"]  # 1e7 Pa / 6894.757 Pa/psi (NIST SP 811)
        assert out[1][1:] == ["50 … 122", "°F"]  # × 9/5 + 32 (NIST SP 811)
        assert out[2][1:] == ["1,450", "psi"]  # not converted twice
        out, headers = table_in_system([["3.0 … 15.4", "2"]], ("gas T [°C]", "V [L]"))
        assert headers == ["gas T [°F]", "V [US gal]"]
        assert out == [["37 … 60", "0.528"]]  # 2 L / 3.785411784 L/gal (NIST Handbook 44)
    assert table_in_system(rows, ("quantity", "value", "unit"))[0] == rows  # metric: as is
