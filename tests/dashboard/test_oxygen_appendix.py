"""The report's oxygen appendix: static, escaped HTML with the curves, Fick table, cascade and what-if table."""

from __future__ import annotations

import dataclasses
import html
import re

import pytest

from analysis.oxygen.scenarios import SCENARIO_CODES
from analysis.pipeline import analyze_session
from analysis.records import to_json
from analysis.simulation import DEMO_TESTS, simulate_session
from dashboard.report.oxygen_appendix import (
    APPENDIX_CAUTION,
    SCENARIO_WORDS,
    oxygen_appendix_html,
    scenario_words,
    svg_chart,
)


@pytest.fixture(scope="module")
def oxygen():
    demo = DEMO_TESTS[0]
    return to_json(analyze_session(simulate_session(demo.profile, demo.protocol, seed=demo.seed)))["oxygen"]


def test_appendix_holds_every_part(oxygen):
    text = oxygen_appendix_html(oxygen)
    assert text.startswith('<section class="oxygen-appendix">') and text.endswith("</section>")
    assert text.count("<svg") == 2  # curves and cascade, static
    assert "<script" not in text and "plotly" not in text.lower()
    assert set(SCENARIO_WORDS) == set(SCENARIO_CODES)  # every scenario in words, no code shown
    for code in SCENARIO_CODES:
        assert f"<td>{html.escape(scenario_words(code))}</td>" in text and f"<td>{code}</td>" not in text
    assert "consistent with" in text and "model estimate" in text.lower() and "not a medical device" in text
    assert "mixed venous" in text.lower()
    assert "Convective (Fick) line" in text and "Diffusive line" in text and "Meeting point" in text


def test_appendix_baseline_row_is_the_measured_vo2peak(oxygen):
    text = oxygen_appendix_html(oxygen)
    baseline = re.escape(html.escape(scenario_words("baseline")))
    row = re.search(rf"<tr><td>{baseline}</td><td>([^<]+)</td><td>([^<]+)</td>", text)
    assert row is not None
    peak_vo2 = oxygen["states"][-1]["vo2_ml_min"]
    assert float(row.group(1).replace("\u2009", "")) == pytest.approx(peak_vo2, abs=0.5)
    assert row.group(2) == "+0.0"


def test_data_text_is_escaped(oxygen):
    bad = dict(oxygen)
    pathway = {
        "lines": {"pvo2_mmhg": [1.0, 20.0], "convective_vo2_ml_min": [3000.0, 1000.0],
                  "diffusive_vo2_ml_min": [100.0, 3000.0], "meeting_pvo2_mmhg": 15.0, "meeting_vo2_ml_min": 2000.0},
        "peak": {"pao2_alveolar_mmhg": 110, "pao2_mmhg": 95, "sao2": 0.96, "cao2_ml_dl": 19, "o2_delivery_ml_min": 4000,
                 "pvo2_mmhg": 20, "svo2": 0.2, "mean_capillary_po2_mmhg": 40},
        "q_l_min": 20.0, "q_estimated": True, "dmo2_ml_min_mmhg": 60.0,
        "what_if": [{"scenario": "<img src=x>", "vo2_peak_ml_min": 2000.0, "change_pct": 0.0, "note": "a & b"}],
        "limiting": "<script>alert(1)</script>", "assumptions": ["x < y"], "notes": ["<b>n</b>"], "caution": "c",
    }
    text = oxygen_appendix_html(bad, pathway=pathway)
    assert "<script>" not in text and "<img" not in text and "<b>n</b>" not in text
    assert "&lt;script&gt;" in text and "&lt;img src=x&gt;" in text and "x &lt; y" in text


def test_no_oxygen_no_appendix():
    assert oxygen_appendix_html(None) == ""
    assert oxygen_appendix_html({"states": []}) == ""


def test_svg_chart_escapes_and_scales():
    svg = svg_chart(
        [{"name": "<n>", "x": [0.0, 10.0], "y": [0.0, 10.0], "colour": "#000000"}],
        title="T & <t>", x_label="x", y_label="y", x_range=(0.0, 10.0), y_range=(0.0, 10.0), width=200, height=150,
    )
    assert "&lt;n&gt;" in svg and "T &amp; &lt;t&gt;" in svg
    # the line spans the plot area: from the lower left to the upper right corner
    assert 'points="64.0,98.0 184.0,34.0"' in svg
    assert APPENDIX_CAUTION.startswith("Every figure")


def test_report_hook_reads_the_typed_result():
    # dashboard.report.assemble calls appendix_html(results, session) with the typed result.
    from dashboard.report.oxygen_appendix import appendix_html

    demo = DEMO_TESTS[0]
    results = analyze_session(simulate_session(demo.profile, demo.protocol, seed=demo.seed))
    body = appendix_html(results, None)
    assert body is not None and "<h2>" not in body and html.escape(scenario_words("baseline")) in body
    # a cascade note the result's data-quality notes already carry is not printed twice
    for warning in results.warnings:
        if warning.startswith("Oxygen: "):
            assert body.count(html.escape(warning.removeprefix("Oxygen: "))) == 0
    bare = dataclasses.replace(results, oxygen=None, oxygen_cascade=None)
    assert appendix_html(bare) is None


def test_svg_chart_legend_in_columns():
    series = [{"name": f"s{i}", "x": [0.0, 1.0], "y": [0.0, 1.0], "colour": "#000000"} for i in range(5)]
    svg = svg_chart(series, title="t", x_label="x", y_label="y", x_range=(0.0, 1.0), y_range=(0.0, 1.0),
                    width=308, height=150, legend_columns=3)
    # five entries in three columns of (308 - 8) / 3 = 100 units from x = 8: two rows, filled down
    labels = re.findall(r'<text x="([\d.]+)" y="([\d.]+)" font-size="11">(s\d)</text>', svg)
    assert [(float(x), float(y), n) for x, y, n in labels] == [
        (38.0, 156.0, "s0"), (38.0, 174.0, "s1"), (138.0, 156.0, "s2"), (138.0, 174.0, "s3"), (238.0, 156.0, "s4")]
    assert 'viewBox="0 0 308 186"' in svg  # plot height + two legend rows of 18
