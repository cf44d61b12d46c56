"""A real lab's path once, in a real browser (system Chromium, Playwright), on a fresh non-demo store.

admin sets the lab name → a reviewer (arriving by a deep link) imports a semicolon export whose
preamble holds the test date and body mass, confirms them, sets age and sex in the form →
Review shows VO2/kg and % predicted (the stored result's values) → edits body mass (the audit
trail holds who, old and new value and why; VO2/kg recomputed) → signs off → downloads the PDF
and the HTML report (PDF: one page plus the appendix page, the lab's name, no demo name; HTML
under 500 kB) → creates a person share link that starts with the configured public URL and
opens the coach's progress view. Every request the browser makes goes to the dashboard itself.
"""

from __future__ import annotations

import re
import shutil
import subprocess
from pathlib import Path

import pytest

from analysis.io import read_session
from analysis.simulation.simulate import LAB_NAME
from tests.browser.conftest import (
    REQUIRE_ENV,
    answering_server,
    chromium_path,
    stop_server,
    wait_for_app,
)
from tests.support import ARTIFACTS, ROOT, skip_or_fail

LAB = "Harbour Sports Lab"
PUBLIC = "https://tests.harbour.example"
PASSWORD = "harbour-tide-2026!"
SOURCE = ROOT / "demo_sessions" / "SEL-0107_2026-02-03_cycle-ramp.session.csv"


def semicolon_export(path: Path) -> Path:
    """A cart-like export: key/value preamble (date, body mass), German headers, decimal commas."""
    b = read_session(SOURCE.read_bytes(), file_name=SOURCE.name).breaths
    lines = ["Test date:;10.02.2026", "Body mass (kg);71,5", "Room temperature;21", "",
             "Zeit (s);V'O2 (l/min);V'CO2 (l/min);V'E (l/min);HF (1/min);Last (W)"]
    for r in b.itertuples(index=False):
        cells = [f"{r.t_s:.1f}", f"{r.vo2_ml_min / 1000:.3f}", f"{r.vco2_ml_min / 1000:.3f}", f"{r.ve_l_min:.1f}",
                 f"{r.hr_bpm:.0f}", f"{r.work_w:.0f}"]
        lines.append(";".join(c.replace(".", ",") for c in cells))
    path.write_text("\r\n".join(lines) + "\r\n", encoding="cp1252")
    return path


@pytest.fixture()
def lab_server(tmp_path, monkeypatch):
    if chromium_path() is None:
        skip_or_fail("system Chromium not found (set TIDEMARK_CHROMIUM)", require_env=REQUIRE_ENV)
    from store import open_store
    from store.records import LOCAL_OPERATOR

    url = f"sqlite:///{tmp_path / 'lab.sqlite'}"
    store = open_store(url)
    try:
        assert not store.is_demo_store()
        store.create_user("ada", role="admin", actor=LOCAL_OPERATOR, password=PASSWORD)
        store.create_user("rhea", role="reviewer", actor=LOCAL_OPERATOR, password=PASSWORD)
    finally:
        store.close()
    monkeypatch.setenv("TIDEMARK_PUBLIC_URL", PUBLIC)
    proc, base = answering_server(url, log_path=tmp_path / "streamlit.log")
    yield base, url
    stop_server(proc)


def _stored_headline(url: str) -> dict[str, str]:
    """The headline metrics (label -> shown text) of the one test under its stored settings, as the
    analysis computes them (``analyze_session``) and Review formats them."""
    from analysis.pipeline import analyze_session
    from analysis.settings import AnalysisSettings
    from dashboard.report.html_report import headline_rows
    from dashboard.views.review import metric_text
    from store import open_store

    store = open_store(url)
    try:
        (test,) = store.list_tests()
        settings, _ = store.get_settings(test.id)
        results = analyze_session(store.load_session(test.id), AnalysisSettings.from_dict(settings))
        return dict(metric_text(row) for row in headline_rows(results))
    finally:
        store.close()


def _audit(url: str, field: str) -> list:
    from store import open_store

    store = open_store(url)
    try:
        (test,) = store.list_tests()
        return [e for e in store.audit_log(test.id) if e.field == field]
    finally:
        store.close()


def _metric(page, label: str) -> str:  # noqa: ANN001 - Playwright Page
    metric = page.locator("[data-testid='stMetric']").filter(
        has=page.locator("[data-testid='stMetricLabel']", has_text=re.compile(rf"^\s*{re.escape(label)}\s*$")))
    return metric.first.locator("[data-testid='stMetricValue']").inner_text().strip()


def _metric_when(page, label: str, expected: str, *, polls: int = 240) -> str:  # noqa: ANN001
    """The metric's text once it reads ``expected`` (the page may still be redrawing the previous
    run's elements), or its last text after ``polls`` looks a quarter of a second apart."""
    text = _metric(page, label)
    for _ in range(polls):
        if text == expected:
            break
        page.wait_for_timeout(250)
        text = _metric(page, label)
    return text


def _sign_in(page, name: str) -> None:  # noqa: ANN001 - Playwright Page
    page.get_by_label("User name").fill(name)
    page.get_by_label("Password", exact=True).fill(PASSWORD)
    page.get_by_role("button", name="Sign in").click()


def _nav(page, title: str) -> None:  # noqa: ANN001
    page.locator("[data-testid='stSidebarNav']").get_by_text(title, exact=True).click()
    page.get_by_role("heading", name=title, exact=True).wait_for(timeout=60_000)
    wait_for_app(page)


def _choose(page, label: str, option: str) -> None:  # noqa: ANN001
    box = page.locator("[data-testid='stSelectbox']").filter(has=page.locator(f"input[aria-label='{label}']")).first
    box.locator("button[aria-label='Open']").click()
    page.locator("[role='option']").filter(has_text=re.compile(rf"^\s*{re.escape(option)}\s*$")).first.click()
    wait_for_app(page)


def test_lab_path_from_fresh_store_to_report_and_coach_link(lab_server, browser, screenshot, tmp_path):
    base, url = lab_server
    context = browser.new_context(viewport={"width": 1366, "height": 900}, accept_downloads=True)
    requests: list[str] = []
    context.on("request", lambda r: requests.append(r.url))
    page = context.new_page()
    page.set_default_timeout(60_000)
    sockets: list[str] = []
    page.on("websocket", lambda ws: sockets.append(ws.url))
    try:
        # --- admin sets the lab name
        page.goto(base)
        _sign_in(page, "ada")
        page.get_by_role("heading", name="Library", exact=True).wait_for()
        _nav(page, "Lab settings")
        page.get_by_label("Lab name (report letterhead, sign-in page, coach view)").fill(LAB)
        page.get_by_role("button", name="Save the lab settings").click()
        page.get_by_text("Lab settings saved.").wait_for()
        screenshot(page, "lab-settings")
        page.get_by_role("button", name="Sign out").click()

        # --- a reviewer opens a deep link: the sign-in form, then that page (no "Page not found")
        page.goto(f"{base}/library")
        page.get_by_label("User name").wait_for()
        wait_for_app(page)
        assert page.get_by_text("Page not found").count() == 0
        assert page.get_by_text(f"Breath-by-breath exercise test review — {LAB}").count() == 1
        _sign_in(page, "rhea")
        page.get_by_role("heading", name="Library", exact=True).wait_for()
        wait_for_app(page)
        assert page.get_by_text("Page not found").count() == 0

        # --- import a semicolon export; confirm the preamble; age and sex in the form
        export = semicolon_export(tmp_path / "harbour-export.csv")
        page.locator("[data-testid='stFileUploaderDropzoneInput']").set_input_files(str(export))
        page.get_by_text("Read from the lines above the table").wait_for()
        wait_for_app(page)
        # the form starts from the values read above the table (the preview grid is drawn on a canvas)
        assert float(page.get_by_label("Body mass (kg)").input_value()) == 71.5
        page.get_by_label("Person code (pseudonymous)").fill("HSL-01")
        page.get_by_label("Age (years)").fill("29")
        page.get_by_label("Height (cm)").fill("181")  # FRIEND's prediction needs height as well
        page.get_by_label("Height (cm)").press("Tab")
        wait_for_app(page)
        _choose(page, "Sex", "male")
        page.get_by_text("The values read from the file are right").click()
        screenshot(page, "lab-import-form")
        page.get_by_role("button", name="Import into the library").click()
        page.get_by_text(re.compile(r"stored as test \d+")).wait_for()
        wait_for_app(page)
        page.get_by_role("button", name="Open the imported test in Review").click()

        # --- Review: VO2/kg and % predicted; edit body mass (audited); sign off
        page.get_by_role("heading", name=re.compile("HSL-01 — 2026-02-10")).wait_for()
        wait_for_app(page)
        shown = _stored_headline(url)  # what the page must show: the stored result, formatted
        assert _metric_when(page, "VO2peak per kg", shown["VO2peak per kg"]) == shown["VO2peak per kg"]
        assert _metric_when(page, "VO2peak, % predicted", shown["VO2peak, % predicted"]) == shown["VO2peak, % predicted"]
        kg_before = float(re.sub(r"[^\d.]", "", shown["VO2peak per kg"]))
        screenshot(page, "lab-review")
        page.get_by_text("Subject and test details (date, body mass").click()
        mass = page.get_by_label("Body mass (kg)")
        mass.fill("70")
        page.get_by_label("Reason for the change (audit trail)").fill("weighed again on the day")
        page.get_by_role("button", name="Save the details").click()
        page.get_by_text(re.compile(r"Details saved as version \d+")).wait_for()
        wait_for_app(page)
        events = _audit(url, "meta.body_mass_kg")  # the edit is in the audit trail: who, old, new, why
        assert [(e.actor, float(e.old_value), float(e.new_value), e.reason) for e in events] == [
            ("rhea", 71.5, 70.0, "weighed again on the day")]
        shown = _stored_headline(url)
        assert _metric_when(page, "VO2peak per kg", shown["VO2peak per kg"]) == shown["VO2peak per kg"]  # with 70 kg
        assert float(re.sub(r"[^\d.]", "", shown["VO2peak per kg"])) == pytest.approx(kg_before * 71.5 / 70, abs=0.06)
        page.get_by_role("button", name="Sign off this version").click()
        page.get_by_text(re.compile(r"Version \d+ signed off")).wait_for()
        wait_for_app(page)

        # --- Reports: PDF and HTML
        _nav(page, "Reports")
        with page.expect_download(timeout=120_000) as html_dl:
            page.get_by_role("button", name="Download the report (HTML)").click()
        html_path = tmp_path / "report.html"
        html_dl.value.save_as(html_path)
        wait_for_app(page)
        with page.expect_download(timeout=120_000) as pdf_dl:
            page.get_by_role("button", name="Download the report (PDF)").click()
        pdf_path = tmp_path / "report.pdf"
        pdf_dl.value.save_as(pdf_path)
        html = html_path.read_text(encoding="utf-8")
        assert len(html.encode("utf-8")) < 500_000
        assert LAB in html and LAB_NAME.split()[0] not in html
        out = ARTIFACTS / "report"
        out.mkdir(parents=True, exist_ok=True)
        shutil.copy(pdf_path, out / "lab-path-report.pdf")
        pdfinfo, pdftotext = shutil.which("pdfinfo"), shutil.which("pdftotext")
        if pdfinfo is None or pdftotext is None:
            skip_or_fail("poppler-utils (pdfinfo, pdftotext) not installed", require_env=REQUIRE_ENV)
        info = subprocess.run([pdfinfo, str(pdf_path)], capture_output=True, text=True, check=True).stdout
        assert re.search(r"^Pages:\s+2$", info, re.M), info  # the page and the appendix page
        text = subprocess.run([pdftotext, "-layout", str(pdf_path), "-"], capture_output=True, text=True, check=True).stdout
        first_page, appendix_page = text.split("\f")[:2]
        assert LAB in first_page and "Signed off" in first_page and "Exercise test report" in first_page
        assert "Appendix: methods and notes" in appendix_page
        assert LAB_NAME.split()[0] not in text
        assert "Body mass: 70.0 kg" in text  # the edited value

        # --- a person share link from the public URL opens the coach's progress view
        _nav(page, "Share links")
        page.get_by_text("All tests of one person").click()
        wait_for_app(page)
        page.get_by_role("button", name="Create link").click()
        code = page.locator("[data-testid='stCode']").first
        code.wait_for()
        link = code.inner_text().strip()
        assert link.startswith(f"{PUBLIC}/?link="), link
        token = link.split("?link=", 1)[1]
        coach = context.new_page()
        coach.on("websocket", lambda ws: sockets.append(ws.url))
        coach.goto(f"{base}/?link={token}")  # the public address is the proxy's; here the server itself
        coach.get_by_text(re.compile(r"Progress: one shared test so far|Progress across the \d+ shared tests")).wait_for()
        wait_for_app(coach)
        assert coach.get_by_text(f"Read-only view shared by {LAB}.").count() == 1
        screenshot(coach, "lab-coach-progress")
    finally:
        context.close()

    # --- no request to any host but the dashboard's own
    host = base.split("://", 1)[1]
    outside = [u for u in requests if not (u.startswith(base) or u.startswith(("data:", "blob:", "about:")))]
    outside += [u for u in sockets if u.split("://", 1)[1].split("/", 1)[0] != host]
    assert outside == []
    assert len(requests) > 10
