"""The report as a PDF, printed by a headless Chromium when one is installed.

The report's own print style sheet decides the pages (each section starts on a new page, no
chart is cut, no interactive chrome); this module only asks a browser to print it.  Nothing is
downloaded: without a browser :func:`render_pdf` says how to get one, and the caller writes
the other outputs as usual.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import tempfile
from pathlib import Path

__all__ = [
    "BROWSER_NAMES",
    "HOW_TO_GET_ONE",
    "PAPERS",
    "PRINT_WIDTH_PX",
    "find_browser",
    "render_pdf",
]

#: Program names of a Chromium-based browser that prints headless, tried in this order.
BROWSER_NAMES: tuple[str, ...] = (
    "chromium",
    "chromium-browser",
    "google-chrome",
    "google-chrome-stable",
    "chrome",
    "microsoft-edge",
)
#: Environment variable that names the browser to use (a path or a program name).
BROWSER_ENV = "STOWFLOW_BROWSER"
#: The paper sizes ``--paper`` takes, as CSS ``@page`` sizes.
PAPERS: dict[str, str] = {"a4": "A4", "letter": "letter"}
#: Width the browser lays the page out at before printing, [CSS px]: about the printable
#: width of A4 and Letter with the report's 12 mm side margins.
PRINT_WIDTH_PX = 760
#: Longest a browser may take to print the report, [s] (plotly.js is 4.8 MB of script).
TIMEOUT_S = 120
#: What to do without a browser (printed by ``stowflow design --pdf``).
HOW_TO_GET_ONE = (
    "no headless Chromium found (looked for "
    + ", ".join(BROWSER_NAMES)
    + f" and ${BROWSER_ENV}); install one (Debian/Ubuntu: apt-get install chromium), or set "
    f"{BROWSER_ENV} to its path, or open report.html in a browser and print it to PDF"
)


def find_browser() -> str | None:
    """The path of a Chromium-based browser: ``$STOWFLOW_BROWSER``, else the first of
    :data:`BROWSER_NAMES` on the PATH, else ``/usr/bin/chromium``; None when there is none."""
    named = os.environ.get(BROWSER_ENV, "").strip()
    if named:
        return shutil.which(named)
    for name in BROWSER_NAMES:
        found = shutil.which(name)
        if found:
            return found
    return "/usr/bin/chromium" if os.access("/usr/bin/chromium", os.X_OK) else None


def render_pdf(
    html_text: str, paper: str = "a4", *, browser: str | None = None
) -> tuple[bytes | None, str | None]:
    """Print a report to PDF with a headless browser.

    Parameters
    ----------
    html_text : str
        The report (:func:`stowflow.report.render_html`).
    paper : {"a4", "letter"}
        Paper size.
    browser : str, optional
        The browser's path (default :func:`find_browser`).

    Returns
    -------
    pdf : bytes or None
        The PDF, or None when it could not be printed.
    why_not : str or None
        Why there is no PDF (no browser, or the browser's failure), in one line.
    """
    browser = browser or find_browser()
    if browser is None:
        return None, HOW_TO_GET_ONE
    page = f"<style>@page {{ size: {PAPERS[paper]}; }}</style>"
    text = html_text.replace("</head>", page + "</head>", 1)
    with tempfile.TemporaryDirectory(prefix="stowflow-pdf-") as tmp:
        src, out = Path(tmp) / "report.html", Path(tmp) / "report.pdf"
        src.write_text(text, encoding="utf-8")
        cmd = [
            browser,
            "--headless",
            "--disable-gpu",
            "--no-first-run",
            "--disable-extensions",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--hide-scrollbars",
            f"--user-data-dir={Path(tmp) / 'profile'}",
            f"--window-size={PRINT_WIDTH_PX},1100",
            "--virtual-time-budget=15000",  # let the plots draw before the page prints
            "--no-pdf-header-footer",
            "--print-to-pdf-no-header",  # the older browsers' name of the flag above
            f"--print-to-pdf={out}",
            src.as_uri(),
        ]
        if hasattr(os, "geteuid") and os.geteuid() == 0:
            cmd.insert(1, "--no-sandbox")  # the browser refuses to run as root without it
        try:
            done = subprocess.run(
                cmd, capture_output=True, text=True, timeout=TIMEOUT_S, check=False
            )
        except (OSError, subprocess.TimeoutExpired) as exc:
            return None, f"the browser {browser} could not print the report: {exc}"
        if not out.is_file() or out.stat().st_size == 0:
            tail = (done.stderr or "").strip().splitlines()[-1:] or ["no message"]
            return None, (
                f"the browser {browser} printed no PDF (exit {done.returncode}: {tail[0]})"
            )
        return out.read_bytes(), None
