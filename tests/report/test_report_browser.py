"""The report in a real browser: headless Chromium opens it offline, runs it, draws the plots.

Needs the Debian package ``chromium`` (``/usr/bin/chromium``); the tests skip with a message
when it is absent.  The page is opened from a copy with a small probe script put first in its
``<head>``: it records every uncaught error, unhandled rejection and ``console.error`` and,
after the load event, writes them with the count of drawn plots (and their widths once a
``beforeprint`` event has been sent) into the DOM, which ``--dump-dom`` prints.  Network
access is off (``--disable-background-networking``, a proxy that goes nowhere), so anything
the page tried to fetch would fail and be recorded.
"""

from __future__ import annotations

import json
import os
import re
import shutil
import subprocess
from pathlib import Path

import pytest
from _report_studies import forming_press, forming_press_verified, hostile, infeasible
from stowflow.report import write_study

pytestmark = pytest.mark.browser

CHROMIUM = next(
    (p for p in ("/usr/bin/chromium", shutil.which("chromium") or "") if p and os.path.exists(p)),
    None,
)
FLAGS = (
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--disable-extensions",
    "--proxy-server=127.0.0.1:9",  # nothing listens: any network fetch fails (and is logged)
    "--hide-scrollbars",
)
#: Seconds Chromium may take (plotly.js is 4.8 MB of script to parse).
TIMEOUT_S = 120

_PROBE = """<script>
window.__probe = {errors: []};
window.addEventListener('error', function (ev) {
  window.__probe.errors.push('error: ' + (ev.message || (ev.target && ev.target.src) || ev));
}, true);
window.addEventListener('unhandledrejection', function (ev) {
  window.__probe.errors.push('rejection: ' + ev.reason);
});
(function () {
  var orig = console.error;
  console.error = function () {
    window.__probe.errors.push('console: ' + Array.prototype.join.call(arguments, ' '));
    return orig.apply(console, arguments);
  };
})();
window.addEventListener('load', function () {
  setTimeout(function () {
    var p = window.__probe;
    p.plots = document.querySelectorAll('.js-plotly-plot').length;
    p.svgs = document.querySelectorAll('svg.main-svg').length;
    p.traces = document.querySelectorAll('g.trace').length;
    p.sections = document.querySelectorAll('main section').length;
    window.dispatchEvent(new Event('beforeprint'));
    setTimeout(function () {
      p.printWidths = Array.prototype.map.call(
        document.querySelectorAll('.js-plotly-plot'),
        function (el) { return el._fullLayout ? el._fullLayout.width : null; });
      var out = document.createElement('pre');
      out.id = '__probe';
      out.textContent = JSON.stringify(p);
      document.body.appendChild(out);
    }, 300);
  }, 300);
});
</script>"""


def _chromium(*args: str, profile: Path) -> subprocess.CompletedProcess:
    cmd = [CHROMIUM, *FLAGS, f"--user-data-dir={profile}", *args]
    return subprocess.run(cmd, capture_output=True, text=True, timeout=TIMEOUT_S, check=False)


def _probe(report: Path, tmp: Path) -> tuple[dict, str]:
    """Open a probed copy of ``report``; return the probe's findings and Chromium's log."""
    html = report.read_text(encoding="utf-8")
    probed = tmp / "probed.html"
    probed.write_text(html.replace("<head>", "<head>" + _PROBE, 1), encoding="utf-8")
    done = _chromium(
        "--enable-logging=stderr",
        "--v=0",
        "--virtual-time-budget=15000",
        "--dump-dom",
        probed.as_uri(),
        profile=tmp / "profile-dom",
    )
    m = re.search(r"<pre id=\"__probe\">(.*?)</pre>", done.stdout, re.S)
    assert m, f"the probe did not report (exit {done.returncode}): {done.stderr[-2000:]}"
    text = m.group(1).replace("&lt;", "<").replace("&gt;", ">").replace("&amp;", "&")
    return json.loads(text), done.stderr


def _console_errors(log: str) -> list[str]:
    """Lines of Chromium's log that report a page error (console or uncaught)."""
    return [
        line
        for line in log.splitlines()
        if "CONSOLE" in line and ("Uncaught" in line or ":ERROR:" in line or "Error" in line)
    ]


@pytest.fixture(scope="module")
def chromium():
    if CHROMIUM is None:
        pytest.skip(
            "headless Chromium not found: install the Debian package 'chromium' "
            "(apt-get install -y chromium) to run the browser tests"
        )
    return CHROMIUM


@pytest.mark.parametrize(
    ("study", "plots"),
    [
        # cycle, design at work, comparison bars, energy breakdown, cost over time
        (forming_press, 5),
        (hostile, 5),
        (infeasible, 1),  # the cycle only: neither a design nor a baseline to draw
    ],
    ids=["forming-press", "hostile-strings", "infeasible"],
)
def test_report_runs_without_errors_and_draws_its_plots(chromium, tmp_path, study, plots):
    paths = write_study(study(), tmp_path / "out")
    probe, log = _probe(paths["report.html"], tmp_path)
    assert probe["errors"] == [], probe["errors"]
    assert _console_errors(log) == []
    assert probe["plots"] == plots
    assert probe["svgs"] >= 2 * plots  # Plotly draws at least two main SVG layers per plot
    assert probe["traces"] > 0
    assert probe["sections"] == 8
    # before printing, every plot is redrawn at the printable width of A4 portrait
    assert probe["printWidths"] == [700] * plots


def test_verified_report_in_the_browser(chromium, tmp_path):
    result = forming_press_verified()
    if result is None:
        pytest.skip("the time-domain verification is not available in this tree")
    paths = write_study(result, tmp_path / "out")
    probe, log = _probe(paths["report.html"], tmp_path)
    assert probe["errors"] == [] and _console_errors(log) == []
    assert probe["plots"] == (5 if result.design.feasible else 2)


def test_report_screenshot(chromium, tmp_path):
    """Render the first screen to a PNG (kept in the test's temp folder for a human to see)."""
    paths = write_study(forming_press(), tmp_path / "out")
    shot = tmp_path / "report.png"
    done = _chromium(
        "--window-size=1280,2400",
        "--virtual-time-budget=15000",
        f"--screenshot={shot}",
        paths["report.html"].as_uri(),
        profile=tmp_path / "profile-shot",
    )
    assert shot.is_file(), done.stderr[-2000:]
    data = shot.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    # a blank page compresses to a few kB; text, tables and plots take far more
    assert len(data) > 100_000
