"""Oxygen path, Progress, Reports, Share links and the coach link in a real browser.

A reviewer (demo mode) creates a share link on the Share links page; the address opens the
coach view with no navigation; an unknown token opens the plain "not valid" page. The report
downloaded from Reports is self-contained (static SVG charts, no script, nothing fetched). Screenshots go to test-artifacts/screenshots/.
"""

from __future__ import annotations

import re
import secrets
from html.parser import HTMLParser

from dashboard.views.coach import INVALID_TEXT
from tests.browser.conftest import wait_for_app
from tests.support import ARTIFACTS

LINK_RE = re.compile(r"http://[^/\s]+/\?link=([A-Za-z0-9_-]{43})")


class _Sources(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.external: list[str] = []

    def handle_starttag(self, tag, attrs):
        for name, value in attrs:
            if name in {"src", "href"} and value and re.match(r"(?i)\s*(https?:)?//", value):
                self.external.append(f"{tag} {name}={value}")


def _open(page, base: str, title: str) -> None:  # noqa: ANN001 - Playwright Page
    """Open the app and go to a page through the navigation (as a reviewer would)."""
    page.goto(base)
    page.get_by_role("heading", name="Library", exact=True).wait_for(timeout=90_000)
    wait_for_app(page)
    page.locator("[data-testid='stSidebarNav']").get_by_text(title, exact=True).click()
    page.get_by_role("heading", name=title, exact=True).wait_for(timeout=90_000)
    wait_for_app(page)


def test_pages_render(app_server, page, screenshot):
    _open(page, app_server, "Oxygen path")
    page.get_by_text("Fick against the curve").wait_for(timeout=90_000)
    page.locator(".js-plotly-plot").first.wait_for(timeout=60_000)
    wait_for_app(page)
    page.get_by_text("Model estimates, not measurements").first.wait_for(timeout=60_000)
    screenshot(page, "oxygen-path")

    _open(page, app_server, "Progress")
    page.get_by_text("Change from baseline").first.wait_for(timeout=60_000)
    page.locator(".js-plotly-plot").first.wait_for(timeout=60_000)
    wait_for_app(page)
    screenshot(page, "progress")


def test_report_download_is_self_contained(app_server, page, screenshot, tmp_path):
    _open(page, app_server, "Reports")
    button = page.get_by_role("button", name="Download the report (HTML)")
    button.wait_for(timeout=90_000)
    screenshot(page, "reports")
    with page.expect_download(timeout=90_000) as info:
        button.click()
    path = tmp_path / "report.html"
    info.value.save_as(path)
    doc = path.read_text(encoding="utf-8")
    assert "not a medical device" in doc
    assert "Headline results" in doc and "Methods" in doc
    # self-contained: the charts are static SVG drawn into the file, no script runs, no style fetches
    assert doc.count("<svg") >= 4 and "<script" not in doc.lower()
    assert "@import" not in doc and not re.search(r"(?i)url\(\s*['\"]?(https?:)?//", doc)
    parser = _Sources()
    parser.feed(doc)
    assert parser.external == []
    # open the downloaded file offline and look at it as a reader would
    page.goto(path.as_uri())
    page.locator(".chart svg").first.wait_for(timeout=60_000)
    screenshot(page, "report-file")
    # Print: every chart lies inside the printable width of A4 (210 - 2 x 12 mm) and Letter
    # (215.9 - 2 x 12 mm) at 96 px per inch (CSS reference pixel, W3C CSS Values).
    page.emulate_media(media="print")
    for paper, width_mm in (("A4", 210.0), ("Letter", 215.9)):
        printable_px = int((width_mm - 24.0) / 25.4 * 96)
        page.set_viewport_size({"width": printable_px, "height": 1100})
        boxes = page.eval_on_selector_all(
            ".chart svg", "els => els.map(e => { const r = e.getBoundingClientRect(); return [r.left, r.right]; })"
        )
        assert boxes, "no charts in the report"
        assert all(left >= 0 and right <= printable_px + 0.5 for left, right in boxes), (paper, boxes)
        page.pdf(path=str(ARTIFACTS / f"report-{paper.lower()}.pdf"), format=paper, print_background=True)


def test_share_link_opens_coach_view_only(app_server, browser, page, screenshot):
    _open(page, app_server, "Share links")
    page.get_by_role("button", name="Create link").click()
    code = page.locator("[data-testid='stCode']").first
    code.wait_for(timeout=60_000)
    match = LINK_RE.search(code.inner_text())
    assert match, code.inner_text()
    wait_for_app(page)
    screenshot(page, "share-links")

    coach = browser.new_context(viewport={"width": 1024, "height": 1366}, accept_downloads=True).new_page()
    try:
        coach.goto(f"{app_server}/?link={match.group(1)}")
        coach.get_by_role("heading", name=re.compile("^Exercise test results")).wait_for(timeout=90_000)
        coach.locator(".js-plotly-plot").first.wait_for(timeout=60_000)
        wait_for_app(coach)
        assert coach.locator("[data-testid='stSidebarNav']").count() == 0
        assert coach.get_by_text("Library", exact=True).count() == 0
        assert coach.get_by_role("button", name="Download the report (HTML)").count() == 1
        screenshot(coach, "coach-view")

        coach.goto(f"{app_server}/?link={secrets.token_urlsafe(32)}")
        coach.get_by_text(INVALID_TEXT).wait_for(timeout=60_000)
        wait_for_app(coach)
        assert coach.locator("[data-testid='stSidebarNav']").count() == 0
        body = coach.locator("[data-testid='stMain']").inner_text()
        assert body.split() == f"Tidemark {INVALID_TEXT}".split()
        screenshot(coach, "coach-invalid-link")
    finally:
        coach.context.close()
