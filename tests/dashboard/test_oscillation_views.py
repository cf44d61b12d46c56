"""The detected ventilation oscillation drawn on Review (AppTest) and in the report appendix.

A simulated heart-failure test with sustained oscillation (analysis.simulation kind
``hf_oscillation``; the detector's definition: Leite et al. 2003, Corrà et al. 2006, from memory).
"""

from __future__ import annotations

import json

import pytest
from streamlit.testing.v1 import AppTest

from analysis.pipeline import analyze_session
from analysis.simulation import simulate_case
from dashboard.charts.oscillation import oscillation_caption, oscillation_figure, oscillation_of
from dashboard.report.html_report import build_report_html
from tests.dashboard.conftest import APPTEST_TIMEOUT_S


@pytest.fixture(scope="module")
def hf():
    return analyze_session(simulate_case("hf_oscillation", 0, noise=0.5), with_oxygen=False)


@pytest.fixture(scope="module")
def healthy():
    return analyze_session(simulate_case("recreational", 0, noise=0.5), with_oxygen=False)


def _panel(results):
    from dashboard.views._flags_panel import render_flags

    render_flags(results)


def test_figure_draws_the_record(hf):
    osc = oscillation_of(hf)
    assert osc is not None and osc.present and osc.cycles >= 3
    fig = oscillation_figure(osc)
    names = [t.name for t in fig.data]
    assert names == ["VE (smoothed)", "trend", "counted cycle"]
    assert list(fig.data[0].y) == pytest.approx(list(osc.series_ve_l_min))
    assert list(fig.data[1].y) == pytest.approx(list(osc.series_trend_l_min))
    shapes = fig.layout.shapes
    assert [(s.x0, s.x1) for s in shapes] == [tuple(span) for span in osc.cycle_spans_s]
    text = oscillation_caption(osc)
    assert text.startswith(f"Oscillation present: {osc.cycles} cycles counted over {osc.fraction_of_exercise:.0%} of exercise")
    assert f"period {osc.period_s:.0f} s" in text and f"amplitude {osc.amplitude_pct:.0f} % of the trend" in text


def test_review_panel_draws_the_oscillation(hf):
    at = AppTest.from_function(_panel, args=(hf,), default_timeout=APPTEST_TIMEOUT_S).run()
    assert not at.exception, at.exception
    (exp,) = [e for e in at.expander if e.label == "Ventilation oscillation (drawn)"]
    assert exp.proto.expanded is True  # open when present
    assert any(c.value == oscillation_caption(oscillation_of(hf)) for c in at.caption)
    spec = json.loads(at.get("plotly_chart")[0].proto.spec)
    assert spec["layout"]["title"]["text"] == "Ventilation oscillation"
    assert len(spec["layout"]["shapes"]) == oscillation_of(hf).cycles


def test_review_panel_folds_it_when_absent(healthy):
    at = AppTest.from_function(_panel, args=(healthy,), default_timeout=APPTEST_TIMEOUT_S).run()
    assert not at.exception, at.exception
    exps = [e for e in at.expander if e.label == "Ventilation oscillation (drawn)"]
    assert len(exps) == 1 and exps[0].proto.expanded is False
    assert any(c.value.startswith("Oscillation not present") for c in at.caption)


def test_report_appendix_carries_the_drawing_only_when_present(hf, healthy):
    page = build_report_html(hf)
    assert '<figure class="chart oscillation">' in page
    figure = page.split('<figure class="chart oscillation">', 1)[1].split("</figure>", 1)[0]
    assert figure.startswith("<svg") and 'aria-label="Ventilation oscillation"' in figure
    assert oscillation_caption(oscillation_of(hf)) in figure
    assert "<script" not in figure
    assert '<figure class="chart oscillation">' not in build_report_html(healthy)
