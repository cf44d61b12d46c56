"""The report's oxygen appendix: static, escaped HTML with the curves, Fick table, cascade and what-if
table, read from the typed result of a real demo session (its oxygen records)."""

from __future__ import annotations

import dataclasses
import html
import re

import pytest

from analysis.oxygen.pathway import oxygen_pathway
from analysis.oxygen.scenarios import SCENARIO_CODES
from dashboard.report.oxygen_appendix import (
    APPENDIX_CAUTION,
    SCENARIO_WORDS,
    appendix_html,
    oxygen_appendix_html,
    scenario_words,
    svg_chart,
)
from tests.support import demo_result


@pytest.fixture(scope="module")
def results():
    r = demo_result(with_oxygen=True)
    assert r.oxygen is not None and r.oxygen_cascade is not None
    return r


def _cell_number(text: str) -> float:
    return float(text.replace("\u2009", ""))


def test_appendix_holds_every_part(results):
    text = oxygen_appendix_html(results.oxygen, pathway=results.oxygen_cascade)
    assert text.startswith('<section class="oxygen-appendix">') and text.endswith("</section>")
    assert text.count("<svg") == 2  # curves and cascade, static
    assert "<script" not in text and "plotly" not in text.lower()
    assert set(SCENARIO_WORDS) == set(SCENARIO_CODES)  # every scenario in words, no code shown
    for code in SCENARIO_CODES:
        assert f"<td>{html.escape(scenario_words(code))}</td>" in text and f"<td>{code}</td>" not in text
    assert "consistent with" in text and "model estimate" in text.lower() and "not a medical device" in text
    assert "mixed venous" in text.lower()
    assert "Convective (Fick) line" in text and "Diffusive line" in text and "Meeting point" in text
    assert html.escape(results.oxygen_cascade.limiting) in text


def test_fick_table_rows_are_the_records_states(results):
    text = oxygen_appendix_html(results.oxygen, pathway=results.oxygen_cascade)
    labels = {"rest": "Rest", "vt1": "VT1", "vt2": "VT2", "peak": "Peak"}
    for state in results.oxygen.states:
        row = re.search(rf"<tr><td>{labels[state.name]}</td><td>([^<]+)</td><td>([^<]+)</td>", text)
        assert row is not None, state.name
        assert _cell_number(row.group(1)) == pytest.approx(state.vo2_ml_min, abs=0.5)
        assert _cell_number(row.group(2)) == pytest.approx(state.q_l_min, abs=0.05)


def test_peak_line_and_co2_table_are_the_cascade_record(results):
    pathway = results.oxygen_cascade
    text = oxygen_appendix_html(results.oxygen, pathway=pathway)
    line = re.search(r"mixed venous PO2 <strong>([^<]+)</strong> mmHg", text)
    assert line is not None and _cell_number(line.group(1)) == pytest.approx(pathway.peak.pvo2_mmhg, abs=0.05)
    dmo2 = re.search(r"DmO2 <strong>([^<]+)</strong>", text)
    assert dmo2 is not None and _cell_number(dmo2.group(1)) == pytest.approx(pathway.dmo2_ml_min_mmhg, abs=0.5)
    assert pathway.q_estimated and "cardiac output (estimate)" in text
    assert pathway.co2  # the CO2 side is part of the cascade record
    peak_co2 = next(c for c in pathway.co2 if c.state == "peak")
    row = re.search(r"<tr><td>Peak</td><td>([^<]+)</td><td>[^<]+</td><td>[^<]+</td><td>[^<]+</td><td>([^<]+)</td></tr>", text)
    assert row is not None
    assert _cell_number(row.group(1)) == pytest.approx(peak_co2.avco2_ml_dl, abs=0.005)
    assert _cell_number(row.group(2)) == pytest.approx(peak_co2.haldane_ml_dl, abs=0.005)


def test_appendix_baseline_row_is_the_measured_vo2peak(results):
    text = oxygen_appendix_html(results.oxygen, pathway=results.oxygen_cascade)
    baseline = re.escape(html.escape(scenario_words("baseline")))
    row = re.search(rf"<tr><td>{baseline}</td><td>([^<]+)</td><td>([^<]+)</td>", text)
    assert row is not None
    assert _cell_number(row.group(1)) == pytest.approx(results.oxygen.state("peak").vo2_ml_min, abs=0.5)
    assert row.group(2) == "+0.0"


def test_missing_cascade_is_built_from_the_typed_comparison(results):
    # Without the result's cascade part the appendix asks the analysis' own step for it.
    built, notes = oxygen_pathway(results.oxygen)
    assert built is not None and notes == built.notes
    assert oxygen_appendix_html(results.oxygen) == oxygen_appendix_html(results.oxygen, pathway=results.oxygen_cascade)


def test_cascade_that_cannot_be_made_says_why(results):
    no_peak = dataclasses.replace(results.oxygen, states=[s for s in results.oxygen.states if s.name != "peak"])
    text = oxygen_appendix_html(no_peak)
    assert text.count("<svg") == 1  # the curves only
    assert "Oxygen cascade not made: the test has no peak state." in text
    assert "Meeting point" not in text and "<h3>Fick against the curve</h3>" in text


def test_data_text_is_escaped(results):
    pathway = results.oxygen_cascade
    what_if = (dataclasses.replace(pathway.what_if[0], scenario="<img src=x>"), *pathway.what_if[1:])
    bad = dataclasses.replace(
        pathway, what_if=what_if, limiting="<script>alert(1)</script>", assumptions=("x < y",), notes=("<b>n</b>",)
    )
    text = oxygen_appendix_html(results.oxygen, pathway=bad)
    assert "<script>" not in text and "<img" not in text and "<b>n</b>" not in text
    assert "&lt;script&gt;" in text and "&lt;img src=x&gt;" in text and "x &lt; y" in text
    assert "&lt;b&gt;n&lt;/b&gt;" in text


def test_no_oxygen_no_appendix(results):
    assert oxygen_appendix_html(None) == ""
    assert oxygen_appendix_html(dataclasses.replace(results.oxygen, states=[])) == ""


def test_svg_chart_escapes_and_scales():
    svg = svg_chart(
        [{"name": "<n>", "x": [0.0, 10.0], "y": [0.0, 10.0], "colour": "#000000"}],
        title="T & <t>", x_label="x", y_label="y", x_range=(0.0, 10.0), y_range=(0.0, 10.0), width=200, height=150,
    )
    assert "&lt;n&gt;" in svg and "T &amp; &lt;t&gt;" in svg
    # the line spans the plot area: from the lower left to the upper right corner
    assert 'points="64.0,98.0 184.0,34.0"' in svg
    assert APPENDIX_CAUTION.startswith("Every figure")


def test_report_hook_reads_the_typed_result(results):
    # dashboard.report.assemble calls appendix_html(results, session) with the typed result.
    body = appendix_html(results, None)
    assert body is not None and "<h2>" not in body and html.escape(scenario_words("baseline")) in body
    # a cascade note the result's data-quality notes already carry is not printed twice
    repeated = [w.removeprefix("Oxygen: ") for w in results.warnings if w.startswith("Oxygen: ")]
    assert repeated  # the cycling demo's estimated cardiac output note
    for note in repeated:
        assert body.count(html.escape(note)) == 0
    bare = dataclasses.replace(results, oxygen=None, oxygen_cascade=None)
    assert appendix_html(bare) is None
    without_cascade = dataclasses.replace(results, oxygen_cascade=None)
    assert appendix_html(without_cascade) == body


def test_svg_chart_legend_in_columns():
    series = [{"name": f"s{i}", "x": [0.0, 1.0], "y": [0.0, 1.0], "colour": "#000000"} for i in range(5)]
    svg = svg_chart(series, title="t", x_label="x", y_label="y", x_range=(0.0, 1.0), y_range=(0.0, 1.0),
                    width=308, height=150, legend_columns=3)
    # five entries in three columns of (308 - 8) / 3 = 100 units from x = 8: two rows, filled down
    labels = re.findall(r'<text x="([\d.]+)" y="([\d.]+)" font-size="11">(s\d)</text>', svg)
    assert [(float(x), float(y), n) for x, y, n in labels] == [
        (38.0, 156.0, "s0"), (38.0, 174.0, "s1"), (138.0, 156.0, "s2"), (138.0, 174.0, "s3"), (238.0, 156.0, "s4")]
    assert 'viewBox="0 0 308 186"' in svg  # plot height + two legend rows of 18
