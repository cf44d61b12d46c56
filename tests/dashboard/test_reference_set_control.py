"""Review's reference-set control: every % predicted follows the chosen set and names it, and a
change is saved as a new version (AppTest on the demo store; values from analyze_session)."""

from __future__ import annotations

import pytest

from collections.abc import Iterator

from analysis.pipeline import analyze_session
from analysis.settings import AnalysisSettings
from dashboard import data
from dashboard.report.html_report import PCT_PREDICTED_LABEL, build_report_html, format_number
from tests.dashboard.conftest import DemoStore, demo_store_of
from tests.support import ROOT

#: A demo cycle test of a 67-year-old (inside Hansen et al. 1984's ages, 34-74 years).
CYCLE_67 = "SEL-0425_2026-01-21_cycle-ramp.session.csv"


@pytest.fixture(scope="module")
def demo_store(tmp_path_factory: pytest.TempPathFactory) -> Iterator[DemoStore]:
    with demo_store_of([ROOT / "demo_sessions" / CYCLE_67], tmp_path_factory.mktemp("reference-set-store")) as demo:
        yield demo


def _review_script() -> None:
    from dashboard.views.review import render

    render()


def _analysis(demo_store, test_id, settings):
    return analyze_session(demo_store.store.load_session(test_id), AnalysisSettings.from_dict(settings))


@pytest.fixture(scope="module")
def hansen_test(demo_store):
    """A demo test Hansen et al. 1984 covers (cycle, age 34-74): its analysis under both sets."""
    for test_id in demo_store.test_ids:
        settings, _ = demo_store.store.get_settings(test_id)
        hansen = _analysis(demo_store, test_id, {**settings, "reference_set": "hansen1984"})
        if hansen.interpretation.predicted.pct_vo2_peak is not None:
            return test_id, _analysis(demo_store, test_id, settings), hansen
    pytest.fail("no demo test inside the Hansen 1984 derivation range")


def _metric(at, label):
    return next(m.value for m in at.metric if m.label == label)


def test_choosing_hansen_recomputes_names_and_saves_a_version(demo_store, page_test, hansen_test):
    test_id, friend, hansen = hansen_test
    _, version_before = demo_store.store.get_settings(test_id)
    at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=test_id).run()
    assert not at.exception, at.exception
    box = at.selectbox(key=f"reference_set_{test_id}")
    assert box.value == "friend2018"
    # FRIEND: the headline is interpretation.predicted's (= core's FRIEND share, de Souza e Silva 2018)
    assert friend.interpretation.predicted.pct_vo2_peak == pytest.approx(friend.predicted.pct_predicted_vo2max)
    assert _metric(at, PCT_PREDICTED_LABEL) == format_number(friend.interpretation.predicted.pct_vo2_peak, 0) + " %"
    assert any(c.value.startswith("Reference set: FRIEND 2018") for c in at.caption)

    box.set_value("hansen1984").run()
    assert not at.exception, at.exception
    assert demo_store.store.get_settings(test_id)[1] == version_before  # unsaved until the reviewer's Save
    at.button(key=f"save_{test_id}").click().run()  # one version per Save (dashboard/views/review.py)
    data.wait_for_saves()
    at.run()
    settings, version = demo_store.store.get_settings(test_id)
    assert settings["reference_set"] == "hansen1984" and version == version_before + 1
    audit = demo_store.store.audit_log(test_id)
    assert any(e.reason == "reference set for % predicted changed to Hansen 1984" for e in audit)
    pct = hansen.interpretation.predicted.pct_vo2_peak
    assert pct != pytest.approx(friend.interpretation.predicted.pct_vo2_peak, abs=0.5)
    assert _metric(at, PCT_PREDICTED_LABEL) == format_number(pct, 0) + " %"
    assert any(c.value.startswith("Reference set: Hansen, Sue & Wasserman 1984") for c in at.caption)


def test_report_names_the_set_beside_the_share(hansen_test):
    _, friend, hansen = hansen_test
    pred = hansen.interpretation.predicted
    page = build_report_html(hansen)
    assert f"{pred.pct_vo2_peak:.0f} % of {format_number(pred.vo2_peak_ml_min, 0)} mL/min (Hansen 1984)" in page
    assert "(FRIEND 2018)" in build_report_html(friend)
