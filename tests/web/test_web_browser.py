"""``stowflow serve`` in a real browser: the real server, headless Chromium, the page's own form.

Starts ``stowflow serve`` (uvicorn, worker processes, the lot) on a free loopback port in a
subprocess, with a private TMPDIR that must be empty after Ctrl+C, and drives the system
Chromium (``/usr/bin/chromium``) with Playwright: choose a cycle file in the form, pick the
ideal-gas model and one accumulator type (to keep the design short), press the button, follow
the progress view, and check that the result view shows the report with its plots drawn inside
its sandboxed frame, its summary and its procurement specification table visible, and the four
downloads.  A screenshot of the whole result page is saved in the test's ``tmp_path`` and
copied to the folder that ``$STOWFLOW_SCREENSHOT_DIR`` names, when it is set (for example
``STOWFLOW_SCREENSHOT_DIR=reports/screenshots``).  Any uncaught script error or console error
on our pages or in the report's frame (a Content-Security-Policy violation shows up as one)
fails the test.  The cycle is invented; nothing here checks the physics.

Skips with a message when Chromium or Playwright is absent.  Playwright downloads no browser
here: it is pointed at the system one.
"""

from __future__ import annotations

import os
import re
import shutil
from pathlib import Path

import pytest
from _web_server import TINY, start_serve, stop_serve

pytestmark = pytest.mark.browser

CHROMIUM = "/usr/bin/chromium"
if not os.path.exists(CHROMIUM):
    pytest.skip(
        f"headless Chromium not found at {CHROMIUM} (Debian package 'chromium')",
        allow_module_level=True,
    )
sync_api = pytest.importorskip(
    "playwright.sync_api", reason="Playwright not installed (pip install -e '.[test]')"
)

#: Seconds for the design to finish on a busy two-core machine, [s].
DESIGN_S = 120
#: Folder that also receives the result page's screenshot, when set (default: only tmp_path).
SCREENSHOT_ENV = "STOWFLOW_SCREENSHOT_DIR"
#: Browser window of the screenshot, [px].
VIEWPORT = {"width": 1280, "height": 900}


@pytest.fixture(scope="module")
def server(tmp_path_factory):
    """``stowflow serve`` on a free loopback port with a private TMPDIR; Ctrl+C at the end."""
    private = tmp_path_factory.mktemp("serve-tmp")
    served = start_serve("--workers", "1", tmpdir=private)
    yield served.url
    out = stop_serve(served)
    assert "listening on 127.0.0.1 only" in out
    assert "Traceback" not in out, out
    left = sorted(p.name for p in private.iterdir())
    assert left == [], f"the server left {left} in its temporary folder"


@pytest.fixture(scope="module")
def browser():
    with sync_api.sync_playwright() as p:
        b = p.chromium.launch(
            executable_path=CHROMIUM,
            headless=True,
            args=["--no-sandbox", "--disable-gpu", "--disable-dev-shm-usage"],
        )
        yield b
        b.close()


def _watch(page, expected: tuple[int, ...] = ()) -> list[str]:
    """Collect script errors, console errors and failed requests (but ``expected`` codes)."""
    problems: list[str] = []
    page.on("pageerror", lambda exc: problems.append(f"pageerror: {exc}"))

    def console(msg) -> None:
        # A failed request is logged as "Failed to load resource"; the response hook below
        # names its address instead.
        if msg.type == "error" and not msg.text.startswith("Failed to load resource"):
            problems.append(f"console: {msg.text}")

    def response(r) -> None:
        if r.status >= 400 and r.status not in expected:
            problems.append(f"HTTP {r.status}: {r.url}")

    page.on("console", console)
    page.on("response", response)
    return problems


def _screenshot(page, tmp_path: Path) -> Path:
    """The whole result page as PNG in ``tmp_path``; copied to $STOWFLOW_SCREENSHOT_DIR if set."""
    shot = tmp_path / "web_result.png"
    page.screenshot(path=str(shot), full_page=True)
    assert shot.stat().st_size > 10_000, "the screenshot is (nearly) empty"
    folder = os.environ.get(SCREENSHOT_ENV)
    if folder:
        Path(folder).mkdir(parents=True, exist_ok=True)
        shutil.copyfile(shot, Path(folder) / shot.name)
    return shot


def test_upload_through_the_page_and_read_the_report(server, browser, tmp_path):
    cycle = tmp_path / "small_press.csv"
    cycle.write_text(TINY, encoding="utf-8")
    page = browser.new_page(accept_downloads=True, viewport=VIEWPORT)
    problems = _watch(page)

    page.goto(f"{server}/")
    assert page.title() == "New study · stowflow"
    page.set_input_files("#cycle", str(cycle))
    assert "small_press.csv" in page.inner_text("#drop-file")
    page.select_option("#d_gas", "ideal")
    page.fill("#d_temperature", "10..50")
    page.fill("#c_hours_per_year", "4000")
    page.fill("#c_energy_price", "0.25/kWh")
    page.click("details.more > summary")
    page.fill("#d_types", "bladder")
    page.click("#submit")

    page.wait_for_url(re.compile(r".*/studies/[0-9a-f]{16}$"))
    study_url = page.url
    assert page.inner_text("h1") == "small_press"
    # The progress view follows the job and swaps itself for the result.
    page.wait_for_selector("#verdict", timeout=DESIGN_S * 1000)
    verdict = page.inner_text("#verdict")
    assert re.search(
        r"proved this the best design|Best design found within the time limit|No supply found",
        verdict,
    )

    # The report, inline: its plots draw inside the sandboxed frame.
    frame = page.frame_locator("#report")
    frame.locator(".js-plotly-plot").first.wait_for(timeout=60_000)
    frame.locator("svg.main-svg").first.wait_for(timeout=30_000)
    assert frame.locator(".js-plotly-plot").count() >= 2
    assert frame.locator("main section").count() >= 3
    # The summary (the page's verdict and the report's recommendation) and the procurement
    # specification table are shown, not just present.
    expect = sync_api.expect
    expect(page.locator("#verdict")).to_be_visible()
    expect(frame.locator("#summary")).to_be_visible()
    expect(frame.locator("#summary .glance")).to_be_visible()
    # the recommendation and key figures, above the report on the study page itself
    expect(page.locator("#recommendation")).to_be_visible()
    expect(page.locator("#key-figures")).to_be_visible()
    spec = frame.locator("#specification table").first
    expect(spec).to_be_visible()
    assert spec.locator("tbody tr").count() >= 1
    _screenshot(page, tmp_path)

    names = page.locator(".downloads a[download]").all_inner_texts()
    assert names == ["report.html", "design.json", "schedule.csv", "spec.csv"]
    with page.expect_download() as info:
        page.click(".downloads a:has-text('design.json')")
    download = info.value
    assert download.suggested_filename == "small_press-design.json"
    assert '"schema": "stowflow.design/1"' in Path(download.path()).read_text(encoding="utf-8")

    page.goto(f"{server}/studies")
    assert study_url.rsplit("/", 1)[1] in page.inner_html("#studies")
    assert problems == [], problems


def test_demo_button_shows_progress_and_refusals_show_one_line(server, browser, tmp_path):
    page = browser.new_page()
    problems = _watch(page, expected=(422,))

    # A refused file: the form comes back with one line and keeps the typed settings.
    bad = tmp_path / "notes.csv"
    bad.write_bytes(b"\x00\x01\x02 not a table")
    page.goto(f"{server}/")
    page.set_input_files("#cycle", str(bad))
    page.fill("#c_energy_price", "0.30/kWh")
    page.click("#submit")
    page.wait_for_selector("#error")
    assert re.fullmatch(
        r"Not started: notes\.csv, line 1: binary file, found a NUL byte at byte 0; "
        r"expected a CSV text file",
        page.inner_text("#error").strip(),
    )
    assert page.input_value("#c_energy_price") == "0.30/kWh"

    # The demo button: a study starts and the page reports its progress as it runs.
    page.goto(f"{server}/")
    page.click("#demo")
    page.wait_for_url(re.compile(r".*/studies/[0-9a-f]{16}$"))
    assert page.inner_text("h1") == "demo"
    if page.locator("#progress").count():
        page.wait_for_function(
            "() => { const s = document.getElementById('stage');"
            " return !s || !/^(waiting|starting)/.test(s.textContent); }",
            timeout=DESIGN_S * 1000,
        )
    assert problems == [], problems
