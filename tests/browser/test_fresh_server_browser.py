"""A bookmarked page URL opens that page on a freshly started server.

Streamlit treats ``dashboard/pages/`` as file-based pages until the app calls ``st.navigation``;
the page modules hand over to the app when run that way (see docs/dashboard.md). This starts its
own server (plain ``streamlit run``, as a user might) and opens ``/review`` first.
"""

from __future__ import annotations

from tests.browser.conftest import start_server, stop_server, wait_for_app, wait_for_health


def test_bookmarked_review_url_on_a_fresh_server(browser_store_url, browser, screenshot, tmp_path):
    log_path = tmp_path / "fresh.log"
    proc, base = start_server(browser_store_url, log_path=log_path)
    try:
        wait_for_health(base, timeout_s=90, proc=proc)
        context = browser.new_context(viewport={"width": 1366, "height": 900})
        page = context.new_page()
        page.set_default_timeout(60_000)
        page.goto(f"{base}/review")
        page.get_by_role("heading", name="Review", exact=True).wait_for()
        page.locator("[data-testid='stMarkdownContainer']", has_text="VT1:").first.wait_for()
        wait_for_app(page)
        nav = [t.split("\n")[-1].strip() for t in page.locator("[data-testid='stSidebarNav'] a").all_inner_texts()]
        assert nav[:2] == ["Library", "Review"]
        assert not {"app", "coach", "library", "review", "test choice"} & set(nav)  # no folder pages
        screenshot(page, "review-fresh-server")
        context.close()
    finally:
        stop_server(proc)
