"""``stowflow design --pdf``: report.pdf from a headless Chromium, or a clear message and exit
code 3 with every other output written."""

from __future__ import annotations

import os

import pytest
from _web_server import TINY
from stowflow.cli.design import PDF_MISSING_EXIT
from stowflow.report import OUTPUTS, write_study


@pytest.fixture
def cycle(tmp_path):
    path = tmp_path / "tiny.csv"
    path.write_text(TINY, encoding="utf-8")
    return path


def test_without_a_browser_the_outputs_are_written_and_the_exit_code_says_so(
    run_cli, cycle, tmp_path, monkeypatch
):
    monkeypatch.setenv("STOWFLOW_BROWSER", str(tmp_path / "no-such-browser"))
    out = tmp_path / "out"
    code, stdout, err = run_cli("design", cycle, "--gas", "ideal", "--pdf", "--out", out)
    assert code == PDF_MISSING_EXIT == 3
    assert sorted(p.name for p in out.iterdir()) == sorted(OUTPUTS)
    assert "report.pdf not written" in err and "apt-get install chromium" in err
    assert err.count("\n") == 1
    assert "report.html:" in stdout


def test_a_stale_pdf_goes_with_the_report_it_printed(tmp_path):
    from _report_studies import forming_press

    out = tmp_path / "out"
    write_study(forming_press(), out)
    (out / "report.pdf").write_bytes(b"%PDF-1.4 old")
    write_study(forming_press(), out)  # a new set without a PDF: the old PDF must not stay
    assert sorted(p.name for p in out.iterdir()) == sorted(OUTPUTS)


@pytest.mark.browser
@pytest.mark.parametrize("paper", ["a4", "letter"])
def test_pdf_is_printed_with_the_set(run_cli, cycle, tmp_path, paper):
    if not os.path.exists("/usr/bin/chromium"):
        pytest.skip("headless Chromium not found at /usr/bin/chromium (Debian package 'chromium')")
    pypdf = pytest.importorskip("pypdf")
    out = tmp_path / "out"
    code, stdout, err = run_cli(
        "design", cycle, "--gas", "ideal", "--pdf", "--paper", paper, "--out", out
    )
    assert code in (0, 1), err
    data = (out / "report.pdf").read_bytes()
    assert data.startswith(b"%PDF")
    assert f"report.pdf: {out / 'report.pdf'}" in stdout
    reader = pypdf.PdfReader(out / "report.pdf")
    width_pt = float(reader.pages[0].mediabox.width)
    # A4 is 210 mm = 595 pt wide, Letter 8.5 in = 612 pt (1 pt = 1/72 in)
    assert width_pt == pytest.approx(595.3 if paper == "a4" else 612.0, abs=1.5)
