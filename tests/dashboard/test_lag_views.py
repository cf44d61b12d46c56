"""The ramp's steady-state equivalent loads on Review's threshold table and in the report (values
from ``interpretation.lag``; Whipp et al. 1981, load − ramp rate × mean response time)."""

from __future__ import annotations

import dataclasses

import pytest

from analysis.pipeline import analyze_session
from analysis.simulation import simulate_case
from dashboard.report.html_report import build_report_html, steady_state_load, zone_rows
from dashboard.views.review import threshold_rows


@pytest.fixture(scope="module")
def ramp():
    return analyze_session(simulate_case("recreational", 0, noise=0.0, clean=True), with_oxygen=False)


def test_steady_state_loads_beside_the_ramp_values(ramp):
    lag = ramp.interpretation.lag
    assert lag.load == "work_w"
    # the correction is ramp rate x MRT below the ramp value
    assert lag.vt1_corrected == pytest.approx(ramp.vt1.work_w - lag.ramp_rate_per_min * lag.mean_response_time_s / 60)
    text = steady_state_load(ramp, "vt1")
    assert text == f"{lag.vt1_corrected:,.0f} W"
    row = threshold_rows(ramp)[0]
    assert row["Load"] == f"{ramp.vt1.work_w:,.0f} W (steady-state {text})"
    # the zones' work bounds are the steady-state loads
    zones = zone_rows(ramp)
    assert zones[0]["Work rate (W)"] == f"below {lag.vt1_corrected:,.0f}"
    assert zones[1]["Work rate (W)"] == f"{lag.vt1_corrected:,.0f}–{lag.vt2_corrected:,.0f}"


def test_report_prints_the_steady_state_row_and_the_zone_note(ramp):
    page = build_report_html(ramp)
    lag = ramp.interpretation.lag
    assert "Steady-state load (lag-corrected) (W)" in page
    assert f'<td class="num">{lag.vt1_corrected:,.0f}</td>' in page
    assert "steady-state equivalents" in page and "Whipp et al. 1981" in page


def test_no_steady_state_text_without_a_ramp(ramp):
    steps = dataclasses.replace(ramp, interpretation=dataclasses.replace(ramp.interpretation, lag=None))
    assert steady_state_load(steps, "vt1") == ""
    assert "steady-state" not in threshold_rows(steps)[0]["Load"]
    assert "Steady-state load" not in build_report_html(steps)
