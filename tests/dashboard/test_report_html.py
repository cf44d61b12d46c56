"""The one-file HTML report: headline values, cautions, methods, static SVG charts, no script, no external source."""

from __future__ import annotations

import dataclasses
import re
from html.parser import HTMLParser

import pytest

from analysis.zones import Zone, ZoneSet
from dashboard.report import CAUTIONS, ReportContext, build_report_html, headline_rows
from dashboard.report.html_report import format_number, threshold_source
from tests.support import demo_result


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


@pytest.fixture(scope="module")
def record():
    """A real result (cycling demo) with a manual VT1, known method texts, a note to escape and
    three heart-rate zones: the report must print the record's own values."""
    r = demo_result()
    assert r.vt1 is not None and r.vt2 is not None
    return dataclasses.replace(
        r,
        vt1=dataclasses.replace(r.vt1, source="manual", method="V-slope"),
        vt2=dataclasses.replace(r.vt2, source="auto", method="VE/VCO2 rise"),
        methods={"vo2_peak": "highest 30-s rolling average", "ve_vco2_slope": "least squares of VE on VCO2 to VT2"},
        warnings=("=HYPERLINK(\"x\") <b>bold</b> note",),
        maximality=dataclasses.replace(r.maximality, label="VO2peak (no plateau)", reasons=("RER peak 1.15 ≥ 1.10",)),
        zones=ZoneSet(zones=(
            Zone(1, "Zone 1", "easy", hr_low_bpm=None, hr_high_bpm=140.0),
            Zone(2, "Zone 2", "steady", hr_low_bpm=140.0, hr_high_bpm=168.0),
            Zone(3, "Zone 3", "hard", hr_low_bpm=168.0, hr_high_bpm=None),
        )),
    )


@pytest.fixture(scope="module")
def doc(record) -> str:
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
    return build_report_html(record, None, charts=charts, context=ctx)


def test_headline_values_and_methods(doc, record):
    # Values are formatted from the result record, with the method beside them.
    for value, digits in ((record.vo2_peak_ml_min, 0), (record.vo2_peak_ml_kg_min, 1), (record.rer_peak, 2),
                          (record.hr_peak_bpm, 0), (record.ve_vco2_slope, 1)):
        assert f">{format_number(value, digits)}<" in doc
    assert "highest 30-s rolling average" in doc
    assert "least squares of VE on VCO2 to VT2" in doc
    assert "Maximality: VO2peak (no plateau)" in doc


def test_cautions_and_review_state(doc):
    for caution in CAUTIONS:
        assert caution in doc
    assert "Signed off by rev.amara on 2026-11-30" in doc
    assert "version 3" in doc


def test_thresholds_marked_manual_with_who(doc, record):
    assert "MANUAL — rev.amara on 2026-11-29: V-slope break clearer at 400 s" in doc
    assert "automatic (confidence" in doc
    assert f">{format_number(record.vt1.vo2_ml_min, 0)}<" in doc and f">{format_number(record.vt2.vo2_ml_min, 0)}<" in doc


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


def test_draft_when_not_signed(record):
    doc = build_report_html(record, None)
    assert "Draft — not signed off" in doc
    assert "<script" not in doc


def test_helpers(record):
    assert format_number(None, 1) == "–"
    assert format_number(float("nan"), 1) == "–"
    assert format_number(1234.56, 1) == "1\u2009234.6"
    assert threshold_source(record.vt1) == "manual"
    assert threshold_source(record.vt2) == "automatic"
    assert threshold_source(None) == ""
    labels = [r["label"] for r in headline_rows(record)]
    assert "RER peak" in labels and "VO2peak" in labels
    no_rer = dataclasses.replace(record, maximality=dataclasses.replace(record.maximality, rer_peak=None))
    assert "RER peak" not in [r["label"] for r in headline_rows(no_rer)]  # a missing value gets no row


def test_column_titles_name_each_unit_once(record):
    from dashboard.report.html_report import column_title, threshold_display

    assert column_title("VO2", "mL/min") == "VO2 (mL/min)"
    assert column_title("% of VO2peak", "%") == "% of VO2peak"
    assert column_title("VE/VCO2 slope", "") == "VE/VCO2 slope"
    vt1_at_600 = dataclasses.replace(record.vt1, t_s=600.0, pct_vo2_peak=55.0)
    (vt1, _) = threshold_display(dataclasses.replace(record, vt1=vt1_at_600))
    assert vt1["% of VO2peak"] == "55" and vt1["Time (m:ss)"] == "10:00"


def test_methods_named_in_words_without_program_references():
    from dashboard.report.html_report import _methods_list

    items = _methods_list({
        "hr_peak_bpm": "highest averaged heart rate during exercise",
        "oxygen": "Fick a-vO2 difference against the dissociation curve (analysis.oxygen.oxygen_comparison)",
        "vt2": "not found (see thresholds.reasons)",
        "some_new_entry": "text",
        "ve_vco2_slope": "least squares of VE on VCO2 to VT2 (analysis.indices.x)",
        "ve_vco2_slope_to_vt2": "least squares of VE on VCO2 to VT2",
        "substrate_oxidation": "Frayn 1983",
    })
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
