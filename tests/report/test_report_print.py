"""The report printed to PDF in a real browser: A4 and Letter pages, each section from the top
of a page, no page shrunk to fit something too wide, and ``stowflow design --pdf``.

Needs the Debian package ``chromium`` (``/usr/bin/chromium``) and Playwright; the tests skip
with a message when either is missing (no browser is ever downloaded).
"""

from __future__ import annotations

import io
import os
import re
import unicodedata

import pytest
from _report_studies import forming_press, forming_press_verified
from stowflow.report import render_html
from stowflow.report.html import SECTIONS
from stowflow.report.pdf import PRINT_WIDTH_PX

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
pypdf = pytest.importorskip("pypdf", reason="pypdf not installed (pip install -e '.[test]')")

#: Pages the demo report may take: one per section at least; a runaway layout (a table
#: split into slivers, a page per row) would take far more.
MOST_PAGES = 24
#: A printed page's width in CSS pixels, A4 less the report's 2 × 12 mm side margins.
A4_PRINTABLE_PX = (210 - 24) / 25.4 * 96


def _demo():
    return forming_press_verified() or forming_press()


def _headings(page: str) -> list[str]:
    """Each section's heading as printed: its number, a space and its title."""
    out = []
    for sid, _, _ in SECTIONS:
        m = re.search(rf"<section id='{sid}'><h2>(.*?)</h2>", page)
        assert m, sid
        num = re.search(r"<span class='num'>(\d+)</span>", m.group(1))
        title = re.sub(r"<[^>]+>", "", m.group(1))[len(num.group(1)) if num else 0 :]
        out.append(f"{num.group(1)} {title}" if num else title)
    return out


def _plain(text: str) -> str:
    return re.sub(r"\s+", " ", unicodedata.normalize("NFKC", text)).strip()


@pytest.fixture(scope="module")
def printed(tmp_path_factory):
    """The demo report printed on A4 and on Letter: (html, {paper: [page texts]}, widths)."""
    page_html = render_html(_demo())
    path = tmp_path_factory.mktemp("print") / "report.html"
    path.write_text(page_html, encoding="utf-8")
    texts, widths = {}, {}
    with sync_api.sync_playwright() as p:
        b = p.chromium.launch(
            executable_path=CHROMIUM,
            headless=True,
            args=["--no-sandbox", "--disable-gpu", "--disable-dev-shm-usage"],
        )
        page = b.new_page(viewport={"width": PRINT_WIDTH_PX, "height": 1000})
        page.goto(path.as_uri())
        page.wait_for_function("document.querySelectorAll('.js-plotly-plot .main-svg').length > 0")
        page.emulate_media(media="print")
        # at the printable width nothing may stick out (the browser would shrink every page)
        page.set_viewport_size({"width": int(A4_PRINTABLE_PX), "height": 1000})
        page.wait_for_timeout(500)
        widths = page.evaluate(
            "[document.documentElement.clientWidth, document.documentElement.scrollWidth]"
        )
        for paper in ("A4", "Letter"):
            pdf = page.pdf(format=paper, print_background=True)
            reader = pypdf.PdfReader(io.BytesIO(pdf))
            texts[paper] = [_plain(pg.extract_text() or "") for pg in reader.pages]
        b.close()
    return page_html, texts, widths


def test_nothing_is_wider_than_the_printed_page(printed):
    _, _, (client, scroll) = printed
    assert scroll <= client, f"the page is {scroll} px wide at {client} px"


@pytest.mark.parametrize("paper", ["A4", "Letter"])
def test_each_section_starts_on_its_own_page(printed, paper):
    html_text, texts, _ = printed
    pages = texts[paper]
    assert len(SECTIONS) <= len(pages) <= MOST_PAGES, len(pages)
    heads = _headings(html_text)
    # the recommendation is on the first page, under the masthead
    assert heads[0] in pages[0]
    starts = []
    for head in heads[1:]:
        found = [k for k, text in enumerate(pages) if text.startswith(_plain(head))]
        assert found, f"no page starts with {head!r}"
        starts.append(found[0])
    assert starts == sorted(starts) and len(set(starts)) == len(starts)
    assert starts[0] > 0
    # the cautions are printed
    assert any("nitrogen only" in text for text in pages)
