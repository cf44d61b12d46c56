"""The whole review path once, in a real browser (system Chromium, Playwright).

Sign-in is the demo mode of a demo store; a third demo file is uploaded on the Library page,
opened in Review, VT1 is moved by typing a time and then by clicking a point on the V-slope
chart (both kept unsaved until the explicit Save, which stores them as one version), and the report downloaded from Reports must carry the new (manual) VT1 and the cautions.
Screenshots of every page go to test-artifacts/screenshots/.
"""

from __future__ import annotations

import re

import pytest

from dashboard.report.html_report import format_number
from dashboard.timefmt import clock_text
from tests.browser.conftest import SCREENSHOTS, wait_for_app
from tests.support import ROOT

UPLOAD = ROOT / "demo_sessions" / "SEL-0425_2026-01-21_cycle-ramp.session.csv"
#: "VT1: 2 741 mL/min at 11:55 — automatic (consensus)": thin-space thousands, the time as m:ss.
VT1_LINE = re.compile(r"VT1:\s*([\d\u2009 ]+) mL/min at (\d+:\d\d) — (.*)")


def _vt1(page) -> tuple[int, int, str]:  # noqa: ANN001 - Playwright Page
    """``(VO2 mL/min, time s, how)`` of the VT1 line."""
    text = page.locator("[data-testid='stMarkdownContainer']", has_text="VT1:").first.inner_text()
    m = VT1_LINE.search(text)
    assert m, text
    return int(re.sub(r"\D", "", m.group(1))), _seconds(m.group(2)), m.group(3)


def _wait_vt1_change(page, before: tuple[int, int, str], timeout_ms: int = 60_000) -> tuple[int, int, str]:  # noqa: ANN001
    page.wait_for_function(
        """(before) => {
            const el = [...document.querySelectorAll('[data-testid="stMarkdownContainer"]')]
                .find(e => e.innerText.includes('VT1:'));
            return el && !el.innerText.includes(before);
        }""",
        arg=f"{format_number(before[0], 0)} mL/min at {clock_text(before[1])} — {before[2]}",
        timeout=timeout_ms,
    )
    wait_for_app(page)
    return _vt1(page)


#: Time panels of the grid: their x axes are "x" or match it.
_TIME_AXES_JS = """Object.keys(el.layout).filter(k => k.startsWith('xaxis')
    && (k === 'xaxis' || el.layout[k].matches === 'x'))"""
_N_TIME_PANELS = f"el => ({_TIME_AXES_JS}).length"
_TIME_RANGES = f"el => ({_TIME_AXES_JS}).map(k => el.layout[k].range)"


def _time_ranges(page) -> list:  # noqa: ANN001 - Playwright Page
    """The x ranges of the grid's time panels, read once the (re)drawn grid has its layout."""
    return page.wait_for_function(
        f"""() => {{ const el = document.querySelector('.js-plotly-plot');
                     return el && el.layout && el.layout.xaxis ? ({_TIME_RANGES})(el) : null; }}""",
        timeout=60_000,
    ).json_value()


def _vslope_subplot(grid) -> str:  # noqa: ANN001 - Playwright Locator
    """``"x4y4"``: the plotly subplot class of the grid's V-slope panel."""
    i = grid.evaluate("el => el.layout.meta.panels.indexOf('vslope')")
    assert i >= 0
    return "xy" if i == 0 else f"x{i + 1}y{i + 1}"


def _vslope_trace(grid) -> int:  # noqa: ANN001
    """Index of the V-slope panel's averaged points (the first trace on its axes)."""
    return grid.evaluate(
        """el => { const i = el.layout.meta.panels.indexOf('vslope'); const ax = i === 0 ? 'x' : 'x' + (i + 1);
                   return el.data.findIndex(t => (t.xaxis || 'x') === ax && t.customdata); }"""
    )


def _leave_warned(page) -> bool:  # noqa: ANN001
    """Whether leaving the page now would ask first (the page's beforeunload handler cancels)."""
    return page.evaluate(
        "() => { const e = new Event('beforeunload', {cancelable: true}); window.dispatchEvent(e); "
        "return e.defaultPrevented; }"
    )


def _versions(person_code: str, store_url: str) -> list[dict]:
    """The stored versions of the person's test, read from the store the server uses."""
    from store import open_store

    store = open_store(store_url)
    try:
        test_id = next(t.id for t in store.list_tests() if t.person_code == person_code)
        return store.list_versions(test_id)
    finally:
        store.close()


def _seconds(text: str) -> int:
    m, s = text.split(":")
    return int(m) * 60 + int(s)


def test_upload_review_override_and_report(app_server, browser_store_url, page, screenshot, tmp_path):
    if not UPLOAD.is_file():
        pytest.fail(f"demo file missing: {UPLOAD}")
    page.set_viewport_size({"width": 1440, "height": 900})  # a laptop screen: the overview fits it
    page.goto(app_server)
    page.get_by_role("heading", name="Library", exact=True).wait_for()
    wait_for_app(page)
    page.get_by_text("Demo mode").first.wait_for(timeout=60_000)
    screenshot(page, "library")

    # --- Library: upload, check, import
    page.locator("[data-testid='stFileUploaderDropzoneInput']").set_input_files(str(UPLOAD))
    page.get_by_role("button", name="Import into the library").wait_for(timeout=60_000)
    wait_for_app(page)
    # the check's figures render with the button but may arrive a moment after it: wait, do not count
    page.get_by_text("Breaths", exact=True).first.wait_for(timeout=60_000)
    screenshot(page, "library-import-check")
    page.get_by_role("button", name="Import into the library").click()
    page.get_by_text(re.compile(r"stored as test \d+")).wait_for(timeout=60_000)
    page.get_by_role("button", name="Open the imported test in Review").click()

    # --- Review: read VT1
    page.get_by_role("heading", name=re.compile("SEL-0425 — 2026-01-21")).wait_for(timeout=60_000)
    page.locator("[data-testid='stMarkdownContainer']", has_text="VT1:").first.wait_for(timeout=60_000)
    grid = page.locator(".js-plotly-plot").first
    grid.wait_for(timeout=60_000)
    wait_for_app(page)
    first = _vt1(page)
    assert "automatic" in first[2]
    # the overview grid fits one 1440x900 screen: its bottom edge is above the fold
    page.evaluate("() => (document.querySelector('[data-testid=\"stMain\"]') || document.body).scrollTo(0, 0)")
    page.wait_for_timeout(300)
    page.screenshot(path=str(SCREENSHOTS / "review-first-screen.png"))  # what the reviewer sees on opening
    box = grid.bounding_box()
    assert box["y"] + box["height"] <= 900, box
    panels = grid.evaluate("el => el.layout.meta.panels")
    assert {"gas_time", "gas_work", "vslope", "equivalents", "end_tidal", "rer", "ve_vco2"} <= set(panels)
    screenshot(page, "review")

    # --- flags grouped with limit and source, and the pattern summary with its caution
    # (this demo heart-failure test raises a high VE/VCO2 slope: >= 36.0, Arena et al. 2007)
    # the first Review run of this browser session drew the overview first; the browser's report
    # that it is drawn brought the sections under it (no reviewer action needed)
    flags = page.get_by_role("heading", name="Flags and patterns")
    flags.wait_for(timeout=60_000)
    page.get_by_role("heading", name="Versions, audit trail and sign-off").wait_for(timeout=60_000)
    assert page.get_by_text("follow below once the overview is drawn").count() == 0
    line = page.locator("[data-testid='stMarkdownContainer'] li", has_text="high VE/VCO2 slope").first
    assert "Limit ≥ 36.0 — Arena et al. 2007" in line.inner_text()
    page.get_by_text("Gas exchange", exact=True).first.wait_for(timeout=60_000)
    page.locator("[data-testid='stMarkdownContainer'] li", has_text="Consistent with").first.wait_for(timeout=60_000)
    page.get_by_text(re.compile("not a diagnosis")).first.wait_for(timeout=60_000)
    flags.scroll_into_view_if_needed()
    screenshot(page, "review-flags")

    # --- type a new VT1 time
    typed_t = first[1] + 90
    page.get_by_label("Reason (kept in the audit trail)").fill("typed in the browser test")
    page.get_by_role("textbox", name="Time (m:ss or seconds)").fill(clock_text(typed_t))  # as the charts show it
    page.get_by_role("button", name="Set VT1").click()
    typed = _wait_vt1_change(page, first)
    assert "manual" in typed[2]
    assert abs(typed[1] - typed_t) <= 10  # nearest 10 s averaged row
    screenshot(page, "review-typed-vt1")

    # --- click a point on the V-slope panel of the grid
    reason = page.get_by_label("Reason (kept in the audit trail)")
    reason.fill("")
    reason.press("Enter")  # committed before the click, so the click's own reason is used
    wait_for_app(page)
    grid = page.locator(".js-plotly-plot").first
    grid.scroll_into_view_if_needed()
    sub = _vslope_subplot(grid)
    points = grid.locator(f".subplot.{sub} .scatterlayer .trace").first.locator("path.point")
    n = points.count()
    assert n > 10
    target = n // 3
    trace = _vslope_trace(grid)
    t_clicked = grid.evaluate(f"el => el.data[{trace}].customdata[{target}][0]")
    box = points.nth(target).bounding_box()
    page.mouse.click(box["x"] + box["width"] / 2, box["y"] + box["height"] / 2)
    clicked = _wait_vt1_change(page, typed)
    assert "manual" in clicked[2]
    assert abs(clicked[1] - float(t_clicked)) <= 1
    screenshot(page, "review-clicked-vt1")

    # --- both changes are unsaved until the explicit Save, which stores them as ONE version
    unsaved = page.get_by_text(re.compile(r"Unsaved changes \(2\), not stored yet"))
    unsaved.wait_for(timeout=60_000)
    assert "typed in the browser test; VT1 picked on the overview" in unsaved.inner_text()
    assert _leave_warned(page)  # closing or reloading the tab now asks first
    versions_before = _versions("SEL-0425", browser_store_url)
    save = page.get_by_role("button", name=re.compile(r"^Save as version \d+$"))
    assert save.inner_text().strip() == f"Save as version {versions_before[-1]['version'] + 1}"
    save.click()
    page.wait_for_function(
        "() => !document.body.innerText.includes('Unsaved changes') && !document.body.innerText.includes('Saving')",
        timeout=60_000,
    )
    wait_for_app(page)
    versions = _versions("SEL-0425", browser_store_url)
    assert len(versions) == len(versions_before) + 1  # two chart edits, one new version
    assert versions[-1]["reason"] == "typed in the browser test; VT1 picked on the overview"
    assert _vt1(page) == clicked and not _leave_warned(page)
    screenshot(page, "review-saved")

    # --- box-select breaths on the V-slope panel: their span is shaded on every time panel
    grid = page.locator(".js-plotly-plot").first
    grid.scroll_into_view_if_needed()
    grid.hover()
    grid.locator(".modebar-btn[data-title='Box Select']").click()
    sub, trace = _vslope_subplot(grid), _vslope_trace(grid)
    points = grid.locator(f".subplot.{sub} .scatterlayer .trace").first.locator("path.point")
    n = points.count()
    a, b = points.nth(n // 4).bounding_box(), points.nth(n // 2).bounding_box()
    t_lo, t_hi = grid.evaluate(f"el => [el.data[{trace}].customdata[{n // 4}][0], el.data[{trace}].customdata[{n // 2}][0]]")
    x0, x1 = min(a["x"], b["x"]) - 3, max(a["x"], b["x"]) + b["width"] + 3
    y0, y1 = min(a["y"], b["y"]) - 3, max(a["y"], b["y"]) + b["height"] + 3
    page.mouse.move(x0, y1)
    page.mouse.down()
    page.mouse.move((x0 + x1) / 2, (y0 + y1) / 2, steps=5)
    page.mouse.move(x1, y0, steps=5)
    page.mouse.up()
    note = page.get_by_text(re.compile(r"Highlighted on all charts: breaths selected at \d+:\d\d–\d+:\d\d"))
    note.wait_for(timeout=60_000)
    wait_for_app(page)
    lo, hi = (_seconds(v) for v in re.findall(r"(\d+:\d\d)–(\d+:\d\d)", note.inner_text())[0])
    assert lo <= round(float(t_lo)) and hi >= round(float(t_hi))  # the box took in at least those breaths
    assert _vt1(page) == clicked  # a box selection moves no threshold
    grid = page.locator(".js-plotly-plot").first
    bands = grid.evaluate(
        "el => (el.layout.shapes || []).filter(s => s.fillcolor === 'rgba(127, 127, 127, 0.20)').map(s => [s.xref, s.x0, s.x1])"
    )
    n_time = grid.evaluate(_N_TIME_PANELS)
    assert len(bands) == n_time and len({b[0] for b in bands}) == n_time  # one band on each time panel
    assert all(abs(b[1] - lo) <= 1 and abs(b[2] - hi) <= 1 for b in bands)
    screenshot(page, "review-highlighted-span")

    # --- narrow the time window: every time panel follows
    thumb = page.get_by_role("slider").first
    thumb.focus()
    for _ in range(30):
        thumb.press("ArrowRight")
    page.wait_for_function(
        """() => { const el = document.querySelector('.js-plotly-plot');
                   return el && el.layout.xaxis.range && el.layout.xaxis.range[0] >= 200; }""",
        timeout=60_000,
    )
    wait_for_app(page)
    ranges = _time_ranges(page)
    assert len(ranges) >= 4 and all(r == ranges[0] for r in ranges)
    screenshot(page, "review-time-window")

    # --- zoom every time panel to the highlighted span (one 10 s step of margin each side)
    page.get_by_role("button", name="Zoom the time panels to it").click()
    # wait for the zoom itself: the narrowed window may already start before ``lo``
    page.wait_for_function(
        """(lo) => { const el = document.querySelector('.js-plotly-plot');
                     const r = el && el.layout.xaxis.range;
                     return r && r[0] < lo && r[0] >= lo - 20; }""",
        arg=lo, timeout=60_000,
    )
    wait_for_app(page)
    for r in _time_ranges(page):
        assert lo - 20 <= r[0] < lo and hi < r[1] <= hi + 20
    page.locator(".js-plotly-plot").first.scroll_into_view_if_needed()
    screenshot(page, "review-zoomed-to-span")

    # --- the other pages, then the report
    for title, slug in (("Oxygen path", "oxygen"), ("Progress", "progress"), ("Share links", "sharing"), ("Reports", "reports")):
        link = page.locator("[data-testid='stSidebarNav'] a", has_text=title)
        if link.count() == 0:
            continue
        link.first.click()
        page.wait_for_url(re.compile(f"/{slug}"), timeout=60_000)
        wait_for_app(page)
        page.wait_for_timeout(500)
        screenshot(page, slug)
    if page.locator("[data-testid='stSidebarNav'] a", has_text="Reports").count() == 0:
        pytest.skip("the Reports page is not available yet")
    button = page.get_by_role("button", name="Download the report (HTML)")
    button.wait_for(timeout=60_000)
    with page.expect_download(timeout=60_000) as info:
        button.click()
    path = tmp_path / "report.html"
    info.value.save_as(str(path))
    html = path.read_text(encoding="utf-8")
    assert f"{clicked[0]:,}".replace(",", "\u2009") in html or f"{clicked[0]}" in html
    assert "manual" in html.lower()
    assert "not a medical device" in html
    assert "Flags:" in html and "high VE/VCO2 slope" in html and "Flags: limits and sources" in html
