"""The one-file HTML report: headline values, cautions, methods, static SVG charts, no script, no external source."""

from __future__ import annotations

import re
from html.parser import HTMLParser

import pytest

from dashboard.report import CAUTIONS, ReportContext, build_report_html, headline_rows
from dashboard.report.html_report import format_number, threshold_source


class _Sources(HTMLParser):
    """Collect every src/href attribute of real tags (script bodies are data, not tags)."""

    def __init__(self) -> None:
        super().__init__()
        self.sources: list[tuple[str, str, str]] = []
        self.scripts = 0

    def handle_starttag(self, tag, attrs):
        if tag == "script":
            self.scripts += 1
        for name, value in attrs:
            if name in {"src", "href"} and value:
                self.sources.append((tag, name, value))


def _sources(doc: str) -> _Sources:
    p = _Sources()
    p.feed(doc)
    return p


SYNTHETIC = {
    "vo2_peak_ml_min": 3210.4,
    "vo2_peak_ml_kg_min": 45.06,
    "rer_peak": 1.153,
    "hr_peak_bpm": 182.0,
    "ve_vco2_slope": 27.34,
    "oues": 3105.0,
    "vt1": {"vo2_ml_min": 1900.0, "time_s": 400.0, "hr_bpm": 140.0, "work_w": 150.0, "method": "V-slope", "source": "manual"},
    "vt2": {"vo2_ml_min": 2700.0, "time_s": 640.0, "hr_bpm": 168.0, "work_w": 230.0, "method": "VE/VCO2 rise", "source": "auto"},
    "methods": {"vo2_peak": "highest 30-s rolling average", "ve_vco2_slope": "least squares of VE on VCO2 to VT2"},
    "warnings": ["=HYPERLINK(\"x\") <b>bold</b> note"],
    "maximality": {"verdict": "VO2peak (no plateau)", "reasons": ["RER peak 1.15 ≥ 1.10"]},
    "zones": [
        {"name": "Zone 1", "hr_low_bpm": None, "hr_high_bpm": 140.0},
        {"name": "Zone 2", "hr_low_bpm": 140.0, "hr_high_bpm": 168.0},
        {"name": "Zone 3", "hr_low_bpm": 168.0, "hr_high_bpm": None},
    ],
}


@pytest.fixture(scope="module")
def doc() -> str:
    from dashboard.report.svg_chart import Chart, Series

    chart = Chart(300, 200, "VO2 against time", "time (m:ss)", "VO2 (mL/min)")
    chart.add(Series([0.0, 60.0], [500.0, 900.0], "VO2 <i>", "#0072B2"))
    charts = [("VO2 against time", chart.svg())]
    ctx = ReportContext(
        person_label="SEL-014",
        version=3,
        signed_off_by="rev.amara",
        signed_off_at="2026-11-30",
        threshold_setters={"vt1": "rev.amara on 2026-11-29: V-slope break clearer at 400 s"},
        generated_at="2026-12-01 09:00 UTC",
    )
    return build_report_html(SYNTHETIC, None, charts=charts, context=ctx)


def test_headline_values_and_methods(doc):
    # Values are formatted from the results dict, with the method beside them.
    for text in ("3\u2009210", "45.1", "1.15", "182", "27.3", "highest 30-s rolling average"):
        assert text in doc
    assert "least squares of VE on VCO2 to VT2" in doc
    assert "Maximality: VO2peak (no plateau)" in doc


def test_cautions_and_review_state(doc):
    for caution in CAUTIONS:
        assert caution in doc
    assert "Signed off by rev.amara on 2026-11-30" in doc
    assert "version 3" in doc


def test_thresholds_marked_manual_with_who(doc):
    assert "MANUAL — rev.amara on 2026-11-29: V-slope break clearer at 400 s" in doc
    assert "automatic" in doc
    assert "1\u2009900" in doc and "2\u2009700" in doc


def test_zones_table(doc):
    assert "below 140" in doc and "140–168" in doc and "above 168" in doc


def test_user_text_is_escaped(doc):
    assert "<b>bold</b>" not in doc
    assert "&lt;b&gt;bold&lt;/b&gt;" in doc


def test_static_svg_charts_no_script_and_no_external_sources(doc):
    parsed = _sources(doc)
    external = [s for s in parsed.sources if re.match(r"(?i)\s*(https?:)?//", s[2])]
    assert external == []
    assert parsed.scripts == 0  # static vector charts, no plotly.js
    assert doc.count("<svg") == 1 and "VO2 &lt;i&gt;" in doc  # chart text escaped


def test_print_css(doc):
    assert "@page" in doc and "size: A4" in doc
    assert "break-inside: avoid" in doc
    assert 'class="page appendix"' in doc and "break-before: page" in doc  # methods on the second page


def test_draft_when_not_signed():
    doc = build_report_html({"vo2_peak_ml_min": 2000.0}, None)
    assert "Draft — not signed off" in doc
    assert "<script" not in doc


def test_helpers():
    assert format_number(None, 1) == "–"
    assert format_number(float("nan"), 1) == "–"
    assert format_number(1234.56, 1) == "1\u2009234.6"
    assert threshold_source({"source": "manual"}) == "manual"
    assert threshold_source({"source": "auto"}) == "automatic"
    assert threshold_source(None) == ""
    rows = headline_rows({"vo2_peak_ml_min": 3000.0, "rer_peak": None})
    assert [r["label"] for r in rows] == ["VO2peak"]


def test_column_titles_name_each_unit_once():
    from dashboard.report.html_report import column_title, threshold_display

    assert column_title("VO2", "mL/min") == "VO2 (mL/min)"
    assert column_title("% of VO2peak", "%") == "% of VO2peak"
    assert column_title("VE/VCO2 slope", "") == "VE/VCO2 slope"
    (vt1, _) = threshold_display({"vt1": {"time_s": 600.0, "pct_vo2_peak": 55.0, "source": "auto"}})
    assert vt1["% of VO2peak"] == "55" and vt1["Time (m:ss)"] == "10:00"


def test_methods_named_in_words_without_program_references():
    from dashboard.report.html_report import _methods_list

    items = _methods_list({"methods": {
        "hr_peak_bpm": "highest averaged heart rate during exercise",
        "oxygen": "Fick a-vO2 difference against the dissociation curve (analysis.oxygen.oxygen_comparison)",
        "vt2": "not found (see thresholds.reasons)",
        "some_new_entry": "text",
        "ve_vco2_slope": "least squares of VE on VCO2 to VT2 (analysis.indices.x)",
        "ve_vco2_slope_to_vt2": "least squares of VE on VCO2 to VT2",
        "substrate_oxidation": "Frayn 1983",
    }})
    # only results the one-page report shows, in its order, each method text once (the VE/VCO2
    # slope is not listed twice; substrate oxidation and unknown entries are not shown, so not listed)
    assert items == [
        "Heart rate peak: highest averaged heart rate during exercise",
        "VE/VCO2 slope: least squares of VE on VCO2 to VT2",
        "VT2 / RCP: not found (see the threshold notes)",
    ]


def test_every_method_the_analysis_names_has_a_readable_name(demo_store):
    from dashboard.report.html_report import METHOD_NAMES
    from tests.dashboard.pages_helpers import analysis_json

    methods = analysis_json(demo_store.store, demo_store.test_ids[0])["methods"]
    assert set(methods) <= set(METHOD_NAMES), sorted(set(methods) - set(METHOD_NAMES))
