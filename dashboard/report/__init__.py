"""The self-contained HTML report of one test (see ``docs/reports.md``)."""

from dashboard.report.html_report import CAUTIONS, ReportContext, build_report_html, headline_rows, zone_rows

__all__ = ["CAUTIONS", "ReportContext", "build_report_html", "headline_rows", "zone_rows"]
