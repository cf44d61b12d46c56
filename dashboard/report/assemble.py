"""Gather what a report needs from the store records and the analysis results.

Used by the Reports page and the coach view so both produce the same file. Reads records the
store returns (sign-offs, audit entries) and the charts of :mod:`dashboard.charts`; computes no
result itself.
"""

from __future__ import annotations

import logging
from collections.abc import Sequence
from typing import TYPE_CHECKING, Any

from analysis.results import TestResults
from analysis.session import Session
from dashboard.report.html_report import ReportContext, build_report_html

if TYPE_CHECKING:
    from store import Store, TestSummary

log = logging.getLogger("tidemark.dashboard")

THRESHOLD_KINDS: tuple[str, ...] = ("vt1", "vt2")


def threshold_setters(audit: Sequence[Any]) -> dict[str, str]:
    """``{"vt1": "<actor> on <date>: <reason>"}`` from the latest audit entry touching each threshold.

    Parameters
    ----------
    audit : sequence of store ``AuditEntry``
        The test's audit log (any order).
    """
    latest: dict[str, Any] = {}
    for entry in audit:
        field = str(getattr(entry, "field", "") or "").lower()
        for kind in THRESHOLD_KINDS:
            if kind in field:
                prev = latest.get(kind)
                if prev is None or entry.at >= prev.at:
                    latest[kind] = entry
    out = {}
    for kind, entry in latest.items():
        when = entry.at.strftime("%Y-%m-%d %H:%M") if hasattr(entry.at, "strftime") else str(entry.at)
        text = f"{entry.actor} on {when}"
        if getattr(entry, "reason", ""):
            text += f": {entry.reason}"
        out[kind] = text
    return out


def report_figures(results: TestResults, session: Session) -> list[tuple[str, Any]]:
    """The charts of the report: time course and V-slope (Dashboard-core's chart functions).

    Parameters
    ----------
    results : TestResults
        Its averaged frame, threshold report and excluded breaths are drawn.
    session : Session
        Its raw breaths are drawn as faint dots behind the averaged lines.

    A chart that cannot be drawn for this test is left out and logged; the report still builds.
    """
    from dashboard.charts import time_course_figure, vslope_figure
    from dashboard.charts.vslope import exercise_rows

    report = results.thresholds
    picks = {"vt1": report.vt1, "vt2": report.vt2}
    rows = [e.source_row for e in results.excluded_breaths]
    makers = (
        (
            "Gas exchange over time",
            lambda: time_course_figure(
                results.averaged,
                breaths=session.breaths,
                excluded_rows=rows,
                thresholds=picks,
                averaging_label=results.settings.averaging.label,
            ),
        ),
        (
            "V-slope: VCO2 against VO2",
            lambda: vslope_figure(
                exercise_rows(results.averaged),
                fit=report.vslope,
                candidates=report.vt1_candidates,
                vt1=report.vt1,
                vt2=report.vt2,
            ),
        ),
    )
    figures: list[tuple[str, Any]] = []
    for title, make in makers:
        try:
            figures.append((title, make()))
        except Exception:  # report without this chart, logged
            log.exception("chart %r could not be drawn for the report", title)
    return figures


def report_context(
    store: Store,
    test_id: int,
    *,
    version: int | None,
    show_name: bool = True,
) -> ReportContext:
    """Person label, version, sign-off, threshold setters and the lab's letterhead of a stored test."""
    from dashboard import lab

    identity = lab.read_identity(store)
    record = store.get_test(test_id)
    summary = record.summary
    label = str(summary.person_code)
    if show_name and summary.display_name:
        label = f"{summary.display_name} ({summary.person_code})"
    signed = [s for s in record.sign_offs if version is not None and s.version == version]
    try:
        audit = store.audit_log(test_id)
    except Exception:  # a report without the audit names is still correct
        log.exception("audit log of test %s could not be read", test_id)
        audit = []
    return ReportContext(
        person_label=label,
        lab_name=str(getattr(identity, "name", "") or ""),
        lab_address=str(getattr(identity, "address", "") or ""),
        lab_logo_url=lab.logo_data_url(identity),
        report_footer=str(getattr(identity, "report_footer", "") or ""),
        version=version,
        signed_off_by=signed[-1].signed_by if signed else None,
        signed_off_at=signed[-1].signed_at.strftime("%Y-%m-%d %H:%M") if signed else None,
        threshold_setters=threshold_setters(audit),
    )


def report_file_name(summary: TestSummary, *, show_name: bool = False, suffix: str = ".html") -> str:
    """``tidemark_<code>_<date>.html`` (or ``.pdf``) with only safe characters (display name never used)."""
    stem = f"tidemark_{summary.person_code}_{summary.test_date or summary.id}"
    return "".join(ch if ch.isalnum() or ch in "-_" else "_" for ch in stem) + suffix


def appendix_sections(results: TestResults, session: Session) -> list[tuple[str, str]]:
    """Further appendix sections: the oxygen path when its report module is installed.

    The oxygen engineer's module (``dashboard.report.oxygen_appendix`` with
    ``appendix_html(results, session) -> str | None``) is used when present; a failure is logged and
    the report is built without it.
    """
    try:
        from dashboard.report import oxygen_appendix
    except ImportError:
        return []
    try:
        body = oxygen_appendix.appendix_html(results, session)
    except Exception:
        log.exception("oxygen appendix could not be written")
        return []
    return [("Oxygen path (estimates)", body)] if body else []


def build_test_report(
    store: Store,
    test_id: int,
    results: TestResults,
    session: Session,
    *,
    version: int | None,
    show_name: bool = True,
) -> str:
    """The complete HTML report of a stored test under the given results (one page + appendix)."""
    from dashboard.report.report_charts import report_charts

    ctx = report_context(store, test_id, version=version, show_name=show_name)
    try:
        charts = report_charts(results)
    except Exception:
        log.exception("report charts could not be drawn for test %s", test_id)
        charts = []
    return build_report_html(results, session, charts=charts, context=ctx, appendix=appendix_sections(results, session))
