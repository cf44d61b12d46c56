"""One threshold, one value: every chart line, marker, table cell and headline of the Review page,
the report, the Library row, Progress and the CSV summary shows the number in the result record."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from analysis.exports import summary_row
from analysis.io import read_session
from analysis.pipeline import analyze_session
from analysis.progress import metric_value
from analysis.records import to_json
from dashboard.charts.equivalents import equivalents_from_results
from dashboard.charts.time_course import time_course_from_results
from dashboard.charts.vslope import vslope_from_results
from dashboard.report.html_report import build_report_html, format_number, headline_rows, threshold_display
from dashboard.report.report_charts import equivalents_chart, gas_exchange_chart, vslope_chart
from dashboard.timefmt import clock_text
from dashboard.views.review import threshold_rows
from store.analysis_bridge import AnalysisBridge

ROOT = Path(__file__).resolve().parents[2]
DEMOS = ["SEL-0107_2026-02-03_cycle-ramp", "SEL-0212_2026-02-10_treadmill-ramp", "SEL-0318_2025-11-12_rehab-baseline"]


@pytest.fixture(scope="module", params=DEMOS)
def analysed(request):
    path = ROOT / "demo_sessions" / f"{request.param}.session.csv"
    session = read_session(path.read_bytes(), file_name=path.name)
    results = analyze_session(session)
    return session, results, to_json(results)


def _line_xs(fig) -> set[float]:
    return {round(float(s.x0), 6) for s in fig.layout.shapes if s.type == "line" and s.yref == "paper"}


def _number(text: str) -> float:
    return float(re.sub(r"[^0-9.\-]", "", text.replace(",", "")))


def test_chart_lines_sit_at_the_record_values(analysed):
    session, r, _ = analysed
    found = [t for t in (r.vt1, r.vt2) if t is not None]
    assert found
    times = {round(t.t_s, 6) for t in found}
    vo2s = {round(t.vo2_ml_min, 6) for t in found}
    assert times <= _line_xs(time_course_from_results(r, session))
    assert times <= _line_xs(equivalents_from_results(r, session))
    assert vo2s <= _line_xs(vslope_from_results(r, session))


def test_report_charts_mark_the_record_values(analysed):
    _, r, data = analysed
    found = [t for t in (r.vt1, r.vt2) if t is not None]
    for make, attr in ((gas_exchange_chart, "t_s"), (equivalents_chart, "t_s"), (vslope_chart, "vo2_ml_min")):
        chart = make(r.averaged, r)
        assert chart is not None
        assert {round(v.x, 6) for v in chart.vlines} == {round(getattr(t, attr), 6) for t in found}


def test_tables_headline_and_report_show_the_record_values(analysed):
    session, r, data = analysed
    review = {row["Threshold"].split(" ")[0]: row for row in threshold_rows(r)}
    shown = {row["Threshold"].split(" ")[0]: row for row in threshold_display(r)}
    html = build_report_html(r, session)
    for kind, name in (("vt1", "VT1"), ("vt2", "VT2")):
        t = getattr(r, kind)
        if t is None:
            continue
        # Review table and the report table cells
        assert _number(review[name]["VO2"]) == round(t.vo2_ml_min)
        assert _number(review[name]["Heart rate"]) == round(t.hr_bpm)
        assert shown[name]["VO2 (mL/min)"] == format_number(t.vo2_ml_min, 0)
        assert shown[name]["Time (m:ss)"] == clock_text(t.t_s)
        assert f">{format_number(t.vo2_ml_min, 0)}<" in html
        # zones, oxygen state, Library headline, Progress and the CSV summary
        zones = r.zones.zones
        if kind == "vt1" and zones:
            assert zones[0].vo2_high_ml_min == zones[1].vo2_low_ml_min == t.vo2_ml_min
            assert zones[0].hr_high_bpm == t.hr_bpm
        if r.oxygen is not None:
            assert r.oxygen.state(kind).vo2_ml_min == t.vo2_ml_min
        assert summary_row(r, file="x")[f"{kind}_vo2_ml_min"] == t.vo2_ml_min
    if r.vt1 is not None:
        assert AnalysisBridge().headline(data).vt1_vo2_ml_min == r.vt1.vo2_ml_min
        assert metric_value(r, "vt1_vo2_ml_min") == r.vt1.vo2_ml_min
    # headline VO2peak in the report and the Library column
    heads = {row["label"]: row["value"] for row in headline_rows(r)}
    assert heads["VO2peak"] == format_number(r.vo2_peak_ml_min, 0)
    assert AnalysisBridge().headline(data).vo2peak_ml_min == r.vo2_peak_ml_min


def test_library_reads_the_stored_record_when_a_column_is_empty(analysed):
    # an older stored row without the headline columns: the Library reads the stored results,
    # decoded once by the codec (dashboard.data.stored_results), and shows the record's values
    from types import SimpleNamespace

    from dashboard.views.library import stored_headline

    _, r, data = analysed

    class _Stored:
        def get_results(self, test_id, *, version=None):
            return data

    summary = SimpleNamespace(id=1, vo2peak_ml_min=None, vt1_vo2_ml_min=None, ve_vco2_slope=None, results_error=None)
    out = stored_headline(_Stored(), summary)
    assert out["vo2_peak_ml_min"] == r.vo2_peak_ml_min
    assert out["vt1_vo2_ml_min"] == (None if r.vt1 is None else r.vt1.vo2_ml_min)
    assert out["ve_vco2_slope"] == r.ve_vco2_slope
