"""The report printed to PDF by the system Chromium: one page plus the appendix page (methods,
flags table, notes and the oxygen path), the lab's letterhead, no demo name, small files; rendered
to PNG for a look (test-artifacts/report/). Every demo test, on A4 and on Letter."""

from __future__ import annotations

import re
import shutil
import subprocess

import pytest

from analysis.io import read_session
from analysis.pipeline import analyze_session
from analysis.settings import AnalysisSettings
from analysis.simulation.simulate import LAB_NAME
from dashboard.report.assemble import appendix_sections
from dashboard.report.html_report import ReportContext, build_report_html
from dashboard.report.pdf import html_to_pdf
from dashboard.report.report_charts import report_charts
from tests.browser.conftest import REQUIRE_ENV, chromium_path
from tests.support import ARTIFACTS, ROOT, skip_or_fail

OUT = ARTIFACTS / "report"


def pdf_pages(pdf: bytes) -> int:
    """Pages of a PDF: its page objects (``/Type /Page``, not ``/Pages``) — PDF 1.7 §7.7.3.3."""
    return len(re.findall(rb"/Type\s*/Page(?![a-zA-Z])", pdf))


def _tool(name: str) -> str:
    path = shutil.which(name)
    if path is None:
        skip_or_fail(f"{name} (Debian poppler-utils) not installed", require_env=REQUIRE_ENV)
    return str(path)


@pytest.mark.parametrize("paper", ["A4", "Letter"])
@pytest.mark.parametrize("name", sorted(p.name for p in (ROOT / "demo_sessions").glob("*.session.csv")))
def test_every_demo_report_prints_on_one_page_plus_the_appendix(name, paper):
    if chromium_path() is None:
        skip_or_fail("system Chromium not found (set TIDEMARK_CHROMIUM)", require_env=REQUIRE_ENV)
    session = read_session((ROOT / "demo_sessions" / name).read_bytes(), file_name=name)
    results = analyze_session(session, AnalysisSettings())
    ctx = ReportContext(person_label="HSL-01", lab_name="Harbour Sports Lab", lab_address="2 Quay Road, Porthaven",
                        version=2, report_footer="Accredited lab no. 12", signed_off_by="rhea",
                        signed_off_at="2026-12-03 14:00")
    appendix = appendix_sections(results, session)  # the oxygen path, as the Reports page adds it
    assert [title for title, _ in appendix] == ["Oxygen path (estimates)"]
    html = build_report_html(results, session, charts=report_charts(results), context=ctx, appendix=appendix)
    assert len(html.encode("utf-8")) < 500_000
    pdf = html_to_pdf(html, paper=paper)
    assert pdf.startswith(b"%PDF") and len(pdf) < 500_000
    OUT.mkdir(parents=True, exist_ok=True)
    path = OUT / f"{name.split('.')[0]}-{paper}.pdf"
    path.write_bytes(pdf)
    info = subprocess.run([_tool("pdfinfo"), str(path)], capture_output=True, text=True, check=True).stdout
    assert re.search(r"^Pages:\s+2$", info, re.M), info  # page 1: the report; page 2: the appendix
    assert pdf_pages(pdf) == 2
    text = subprocess.run([_tool("pdftotext"), "-layout", str(path), "-"], capture_output=True, text=True, check=True).stdout
    first, second = text.split("\f")[:2]
    assert "Harbour Sports Lab" in first and "Signature" in first and "Exercise test report" in first
    assert "Appendix: methods and notes" in second and "Signature" not in second
    # the whole appendix on page 2: methods, the flags table, the oxygen path to its last table
    assert "Flags: limits and sources" in second and "Oxygen path (estimates)" in second
    assert "Fick against the curve" in second and "What if (one input changed)" in second
    assert "Assumptions of the model" in second
    n_flags = len(results.interpretation.flags)
    if name.startswith("SEL-0425"):  # the demo with the most flags (heart failure pattern)
        assert n_flags == 7 and "high VE/VCO2 slope" in second and "blunted PETCO2 rise" in second.replace("\n", " ")
    assert LAB_NAME.split()[0] not in text
    if name.startswith("SEL-0107") and paper == "A4":  # one page to look at
        subprocess.run([_tool("pdftoppm"), "-r", "80", "-png", str(path), str(OUT / "report-page")], check=True)
