"""A bookmarked page URL opens that page on a freshly started server.

Streamlit serves the modules of a ``pages/`` folder beside the entry script as pages of their
own; Tidemark's page modules live in ``dashboard/views/`` so that never happens. This starts its
own server (plain ``streamlit run``, as a user might), opens ``/oxygen`` as the very first
request, then ``/review`` in a second browser session.
"""

from __future__ import annotations

from tests.browser.conftest import start_server, stop_server, wait_for_app, wait_for_health

#: What Streamlit's folder pages would add to the sidebar (raw module names).
MODULE_NAMES = {"app", "coach", "library", "review", "oxygen", "progress", "reports", "sharing", "test choice"}


def _nav(page) -> list[str]:  # noqa: ANN001 - Playwright Page
    return [t.split("\n")[-1].strip() for t in page.locator("[data-testid='stSidebarNav'] a").all_inner_texts()]


def test_bookmarked_urls_on_a_fresh_server(browser_store_url, browser, screenshot, tmp_path):
    log_path = tmp_path / "fresh.log"
    proc, base = start_server(browser_store_url, log_path=log_path)
    try:
        wait_for_health(base, timeout_s=90, proc=proc)
        context = browser.new_context(viewport={"width": 1366, "height": 900})
        page = context.new_page()
        page.set_default_timeout(90_000)
        page.goto(f"{base}/oxygen")  # the first request this server sees
        page.get_by_role("heading", name="Oxygen path", exact=True).wait_for()
        page.get_by_text("Fick against the curve").wait_for()
        wait_for_app(page)
        nav = _nav(page)
        assert nav[:3] == ["Library", "Review", "Oxygen path"]
        assert not MODULE_NAMES & set(nav)  # no folder pages
        # The viewer toolbar (dashboard/.streamlit/config.toml): no "Deploy" button.
        assert page.locator("[data-testid='stAppDeployButton']").count() == 0
        assert page.get_by_role("button", name="Deploy").count() == 0
        screenshot(page, "oxygen-fresh-server")
        context.close()

        context = browser.new_context(viewport={"width": 1366, "height": 900})
        page = context.new_page()
        page.set_default_timeout(90_000)
        page.goto(f"{base}/review")
        page.get_by_role("heading", name="Review", exact=True).wait_for()
        page.locator("[data-testid='stMarkdownContainer']", has_text="VT1:").first.wait_for()
        wait_for_app(page)
        assert _nav(page)[:2] == ["Library", "Review"]
        screenshot(page, "review-fresh-server")
        context.close()
    finally:
        stop_server(proc)
