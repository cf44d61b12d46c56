"""Reports page (AppTest): headline numbers equal the analysis, downloads offered, overrides shown."""

from __future__ import annotations

import json
import re

import pytest

from analysis.io.result_exports import export_files
from analysis.records import to_json
from dashboard import state
from dashboard.views.review import with_override
from dashboard.report.assemble import build_test_report
from dashboard.timefmt import clock_text
from tests.dashboard.pages_helpers import analysis_json, parse_number, signed_in


def _reports():
    from dashboard.views import reports

    reports.render()


@pytest.fixture(scope="module")
def first_test(demo_store):
    return demo_store.test_ids[0]


def test_headline_numbers_equal_analysis(demo_store, page_test, first_test):
    at = page_test(_reports, **signed_in(demo_store.user), **{state.TEST_ID: first_test})
    at.run()
    assert not at.exception
    expected = analysis_json(demo_store.store, first_test)
    shown = {m.label: m.value for m in at.metric}
    assert parse_number(shown["VO2peak (mL/min)"]) == pytest.approx(expected["vo2_peak_ml_min"], abs=0.5)
    assert parse_number(shown["VE/VCO2 slope"]) == pytest.approx(expected["ve_vco2_slope"], abs=0.05)
    assert parse_number(shown["RER peak"]) == pytest.approx(expected["rer_peak"], abs=0.005)
    from dashboard.report.pdf import unavailable_reason

    labels = [b.proto.label for b in at.get("download_button")]
    no_pdf = unavailable_reason()
    pdf = [] if no_pdf else ["Download the report (PDF)"]  # printed by the server's system Chromium
    assert labels == ["Download the report (HTML)", *pdf, "Processed breaths (CSV)", "Results (JSON)",
                      "Averaged data (CSV)"]
    if no_pdf:
        assert any("Chromium" in i.value for i in at.info)
    # the cautions are on the page
    assert any("not a medical device" in w.value for w in at.warning)


def test_manual_vt1_is_shown_and_marked(demo_store, page_test, first_test):
    store = demo_store.store
    settings, version = store.get_settings(first_test)
    auto = analysis_json(store, first_test)
    new_t = float(auto["vt1"]["time_s"]) + 60.0
    moved = with_override(settings, kind="vt1", t_s=new_t, reason="test: later break")
    working = state.WorkingSettings(moved, version, saved=False)
    at = page_test(
        _reports,
        **signed_in(demo_store.user),
        **{state.TEST_ID: first_test, f"{state.SETTINGS_PREFIX}{first_test}": working},
    )
    at.run()
    assert not at.exception
    table = at.dataframe[0].value.set_index("Threshold")
    expected = analysis_json(store, first_test, moved)
    assert table.loc["VT1", "Set"] == "manual"
    assert parse_number(table.loc["VT1", "VO2 (mL/min)"]) == pytest.approx(expected["vt1"]["vo2_ml_min"], abs=0.5)
    assert table.loc["VT1", "Time (m:ss)"] != clock_text(auto["vt1"]["time_s"])
    assert any("unsaved" in i.value for i in at.info)


def test_report_file_matches_analysis(demo_store, first_test):
    """The file the button offers is build_test_report on the same results (checked directly)."""
    from analysis.pipeline import analyze_session
    from analysis.settings import AnalysisSettings

    store = demo_store.store
    settings, version = store.get_settings(first_test)
    session = store.load_session(first_test)
    results = analyze_session(session, AnalysisSettings.from_dict(settings))
    doc = build_test_report(store, first_test, results, session, version=version, show_name=False)
    data = to_json(results)
    vo2 = f"{data['vo2_peak_ml_min']:,.0f}".replace(",", "\u2009")
    assert vo2 in doc
    assert "not a medical device" in doc
    assert "Gas exchange over time" in doc and "V-slope: VCO2 against VO2" in doc
    # four charts on the first page, two in the oxygen appendix (dissociation curves, O2 cascade)
    assert "Ventilatory equivalents" in doc and doc.count("<svg") == 6
    assert "O2 cascade at peak" in doc and "Hb 10 % lower" in doc and "hb_minus_10pct" not in doc  # words, not codes
    assert "<script" not in doc and len(doc.encode("utf-8")) < 500_000
    assert re.search(r"<(script|link)[^>]+(src|href)=[\"']https?://", doc) is None
    files = export_files(results, session, stem="x")
    assert json.loads(files["results_json"].data)["vo2_peak_ml_min"] == pytest.approx(data["vo2_peak_ml_min"])
    header = files["breaths_csv"].data.decode().splitlines()[0].split(",")
    assert header[0] == "t_s" and "excluded_reason" in header
    assert len(files["breaths_csv"].data.decode().splitlines()) == len(session.breaths) + 1


def test_saved_manual_vt1_names_who_set_it_and_sign_off(demo_store, page_test):
    """A VT1 saved through the store: the report names the reviewer and reason (audit trail),
    and after sign-off it carries the signed state instead of 'Draft'."""
    from analysis.pipeline import analyze_session
    from analysis.settings import AnalysisSettings

    store, user = demo_store.store, demo_store.user
    test_id = demo_store.test_ids[1]
    settings, version = store.get_settings(test_id)
    auto = analysis_json(store, test_id)
    moved = with_override(settings, kind="vt1", t_s=float(auto["vt1"]["time_s"]) - 60.0, reason="clearer break earlier")
    new_version = store.save_settings(test_id, moved, actor=user, reason="clearer break earlier", expected_version=version)
    session = store.load_session(test_id)
    results = analyze_session(session, AnalysisSettings.from_dict(moved))
    doc = build_test_report(store, test_id, results, session, version=new_version)
    assert f"MANUAL — {user.username} on " in doc and "clearer break earlier" in doc
    assert "Draft — not signed off" in doc
    store.sign_off(test_id, actor=user)
    signed = build_test_report(store, test_id, results, session, version=new_version)
    assert f"Signed off by {user.username}" in signed and "Draft — not signed off" not in signed
    at = page_test(_reports, **signed_in(user), **{state.TEST_ID: test_id})
    at.run()
    assert not at.exception
    assert any(f"Version {new_version}, signed off by {user.username}" in i.value for i in at.info)
