"""``stowflow batch``: a fleet on Dask gives what single designs give, and a batch survives.

Internal consistency checks (no outside source): the batch's designs are compared with the
same cycles designed one at a time by ``stowflow design`` (the same components and kW, not
a value of the demo data); the demo cycles are inputs only, never expected values.
"""

from __future__ import annotations

import json
import re
import shutil
from pathlib import Path

import pandas as pd
import pytest
from _dask import dask_processes

REPO = Path(__file__).resolve().parents[2]
DEMO = REPO / "duty_cycles"
DEMO_CYCLES = sorted(p.stem for p in DEMO.glob("*.csv"))


def _components(record: dict) -> dict:
    """What a design is made of: bank, pump, motor and installed kW (design.json)."""
    acc = record["accumulator"] or {}
    return {
        "status": record["status"],
        "accumulator": (acc.get("name"), acc.get("count"), acc.get("precharge_bar_at_20c")),
        "pump": (record["pump"] or {}).get("name"),
        "motor": (record["motor"] or {}).get("name"),
        "kW": record["installed_power_kw"],
    }


def _record(folder: Path) -> dict:
    return json.loads((folder / "design.json").read_text(encoding="utf-8"))


@pytest.fixture(scope="module")
def cluster(tmp_path_factory):
    """A real ``dask scheduler`` and two ``dask worker`` processes on 127.0.0.1."""
    with dask_processes(2, cwd=tmp_path_factory.mktemp("workers")) as address:
        yield address


@pytest.mark.slow
def test_batch_through_a_scheduler_equals_single_designs(cluster, run_cli, tmp_path):
    """Every demo cycle through ``--scheduler``: the same components and kW as ``design``."""
    out = tmp_path / "fleet"
    code, _, stderr = run_cli("batch", DEMO, "--out", out, "--scheduler", cluster)
    assert code == 0, stderr
    summary = pd.read_csv(out / "summary.csv")
    assert summary["cycle"].tolist() == DEMO_CYCLES
    assert set(summary["run"]) == {"designed"}
    for name in DEMO_CYCLES:
        single = tmp_path / "single" / name
        code, _, stderr = run_cli("design", DEMO / f"{name}.csv", "--out", single)
        assert code == 0, stderr
        assert _components(_record(out / name)) == _components(_record(single)), name
        row = summary.set_index("cycle").loc[name]
        assert row["motor [kW]"] == _record(single)["motor"]["rated_kw"]
        assert row["capex"] == _record(single)["costs"]["capex"]
    html = (out / "fleet.html").read_text(encoding="utf-8")
    assert all(f"href='{n}/report.html'" in html for n in DEMO_CYCLES)
    assert "<script" in html and not re.search(r"<(script|link)[^>]+(src|href)=", html)


def test_scheduler_address_is_checked(run_cli, tmp_path):
    code, _, stderr = run_cli("batch", DEMO, "--out", tmp_path, "--scheduler", "localhost")
    assert code == 2
    assert "tcp://HOST:PORT" in stderr and stderr.count("\n") == 1


def _fleet(tmp_path: Path) -> Path:
    """A fleet folder: one demo cycle, the same under another name, and a broken cycle."""
    folder = tmp_path / "cycles"
    folder.mkdir()
    shutil.copy(DEMO / "forming_press.csv", folder / "press_a.csv")
    shutil.copy(DEMO / "forming_press.csv", folder / "press_b.csv")
    (folder / "broken.csv").write_text("time [s],flow [L/min]\n0,abc\n", encoding="utf-8")
    return folder


@pytest.mark.slow
def test_a_failing_cycle_is_a_row_and_a_rerun_skips_unchanged_cycles(run_cli, tmp_path):
    import stowflow

    folder, out = _fleet(tmp_path), tmp_path / "out"
    code, stdout, _ = run_cli("batch", folder, "--out", out, "--workers", "2")
    assert code == 1  # a cycle failed: a result, not an error
    first = pd.read_csv(out / "summary.csv").set_index("cycle")
    assert first.loc["broken", "status"] == "failed"
    assert "line 2" in first.loc["broken", "reason"]
    assert set(first.loc[["press_a", "press_b"], "run"]) == {"designed"}
    assert "broken" in stdout
    stamp = (out / "press_a" / "report.html").stat().st_mtime_ns
    # Same inputs: nothing designed again; a changed override designs that cycle only.
    overrides = tmp_path / "overrides.csv"
    overrides.write_text("cycle,line_loss\npress_b,8bar\n", encoding="utf-8")
    frame = stowflow.batch(folder, out, overrides=overrides, workers=1)
    again = frame.set_index("cycle")
    assert again.loc["press_a", "run"] == "unchanged"
    assert again.loc["press_b", "run"] == "designed"
    assert (out / "press_a" / "report.html").stat().st_mtime_ns == stamp
    assert _record(out / "press_b")["settings"] != _record(out / "press_a")["settings"]
    # The frame the API returns is the summary.csv written.
    written = pd.read_csv(out / "summary.csv")
    pd.testing.assert_frame_equal(frame, written)


@pytest.mark.parametrize(
    ("table", "message"),
    [
        ("cycle,line_los\npress_a,5bar\n", "unknown column"),
        ("name,line_loss\npress_a,5bar\n", "no 'cycle' column"),
        ("cycle,line_loss\nnowhere,5bar\n", "no cycle named 'nowhere'"),
        ("cycle,line_loss\npress_a,5bar\npress_a,6bar\n", "given twice"),
        ("", "cannot read the overrides table"),
        ("cycle,line_loss\npress_a,\xff\n", "cannot read the overrides table"),
    ],
)
def test_bad_overrides_are_refused_before_any_work(run_cli, tmp_path, table, message):
    folder = _fleet(tmp_path)
    overrides = tmp_path / "o.csv"
    overrides.write_bytes(table.encode("latin-1"))  # \xff: not UTF-8
    code, _, stderr = run_cli("batch", folder, "--out", tmp_path / "o", "--overrides", overrides)
    assert code == 2, stderr
    assert message in stderr and stderr.count("\n") == 1
    assert not (tmp_path / "o").exists()


def test_a_missing_overrides_file_is_refused(run_cli, tmp_path):
    folder = _fleet(tmp_path)
    code, _, stderr = run_cli("batch", folder, "--overrides", tmp_path / "none.csv")
    assert code == 2 and "file not found" in stderr and stderr.count("\n") == 1


def test_nothing_to_design_is_refused(run_cli, tmp_path):
    code, _, stderr = run_cli("batch", tmp_path / "none*.csv", "--out", tmp_path / "o")
    assert code == 2 and "no duty-cycle CSV found" in stderr
