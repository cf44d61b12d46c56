"""Reports page: the one-file HTML report, processed data as CSV and the results as JSON.

All content comes from ``analyze_session(...)`` on the chosen test under the settings the
reviewer is looking at (working settings from the Review page, else the stored ones).
"""

from __future__ import annotations

import logging
from typing import Any

import pandas as pd
import streamlit as st

from analysis.io.result_exports import export_files
from dashboard import data, state
from dashboard.report import CAUTIONS, headline_rows
from dashboard.report.assemble import build_test_report, report_file_name
from dashboard.report.html_report import threshold_display
from dashboard.report.pdf import PAPER, html_to_pdf, unavailable_reason
from dashboard.views._test_choice import choose_test, settings_json, test_settings

log = logging.getLogger("tidemark.dashboard")

EXPORT_LABELS: dict[str, str] = {
    "breaths_csv": "Processed breaths (CSV)",
    "averages_csv": "Averaged data (CSV)",
    "results_json": "Results (JSON)",
}


def review_state_text(record: Any, version: int | None, *, saved: bool, changes: int = 0) -> str:
    """One line on the review state: version, sign-off, unsaved changes (``changes``: how many)."""
    if not saved:
        what = f"{changes} unsaved {'change' if changes == 1 else 'changes'}" if changes else "unsaved changes"
        return (f"Review holds {what} to this test: the report shows them and says 'unsaved settings'. "
                "Save them on Review to report a stored version.")
    if version is None:
        return "No stored analysis version yet."
    signed = [s for s in record.sign_offs if s.version == version]
    if signed:
        s = signed[-1]
        return f"Version {version}, signed off by {s.signed_by} on {s.signed_at:%Y-%m-%d %H:%M}."
    return f"Version {version}, not signed off yet (the report is marked as a draft)."


def render() -> None:
    st.title("Reports")
    st.caption("Download a one-page report (HTML or PDF), the processed breath data and the results of a test.")
    store = data.get_store()
    summary = choose_test(store, key="reports_test")
    if summary is None:
        return
    test_id = summary.id
    settings, version = test_settings(store, test_id)
    working = state.working_settings(test_id)
    saved = working.saved if working is not None else True
    key = settings_json(settings)
    results = data.analyze(test_id, key)
    session = data.load_session(test_id)
    record = store.get_test(test_id)

    st.info(review_state_text(record, version, saved=saved, changes=len(state.pending_changes(test_id))))
    rows = headline_rows(results)
    if rows:
        cols = st.columns(min(3, len(rows)))  # three across: labels with their units are not cut off
        for i, row in enumerate(rows):
            label = f"{row['label']} ({row['unit']})" if row["unit"] else row["label"]
            cols[i % len(cols)].metric(label, row["value"], help=row["method"] or None)

    st.markdown("**Ventilatory thresholds in this report (estimates)**")
    st.dataframe(pd.DataFrame(threshold_display(results)).fillna("–"), hide_index=True, width="stretch")

    show_name = st.checkbox("Show the display name in the report (otherwise the pseudonymous code)", value=False, key="reports_show_name")
    report_version = version if saved else None

    def report_html() -> str:
        return build_test_report(store, test_id, results, session, version=report_version, show_name=show_name)

    def report_bytes() -> bytes:  # built on click, off the page run (one page plus appendix, some 40 kB)
        return report_html().encode("utf-8")

    c_html, c_pdf = st.columns(2)
    c_html.download_button(
        "Download the report (HTML)",
        report_bytes,
        file_name=report_file_name(summary),
        mime="text/html",
        type="primary",
        key="reports_html",
        on_click="ignore",  # no rerun while the browser fetches the file
    )
    no_pdf = unavailable_reason()
    if no_pdf:
        c_pdf.info(no_pdf)
    else:
        paper = c_pdf.radio("Paper", list(PAPER), horizontal=True, key="reports_paper")

        def pdf_bytes() -> bytes:  # printed by the server's Chromium on click (a few seconds)
            return html_to_pdf(report_html(), paper=str(paper))

        c_pdf.download_button(
            "Download the report (PDF)",
            pdf_bytes,
            file_name=report_file_name(summary, suffix=".pdf"),
            mime="application/pdf",
            key="reports_pdf",
            on_click="ignore",
        )
    st.caption("One page (A4 or Letter) with the lab's letterhead and a signature line; methods and notes on a "
               "second page. Times are shown as m:ss; the CSV exports keep seconds.")
    stem = report_file_name(summary).removesuffix(".html")
    files = export_files(results, session, stem=stem)
    cols = st.columns(len(files))
    for col, (name, f) in zip(cols, files.items(), strict=True):
        col.download_button(EXPORT_LABELS.get(name, name), f.data, file_name=f.file_name, mime=f.mime, key=f"reports_{name}",
                             on_click="ignore")
    st.caption(
        "CSV cells that start with =, +, - or @ are neutralised so that a spreadsheet does not run them as formulas."
    )
    st.warning(" ".join(CAUTIONS))
