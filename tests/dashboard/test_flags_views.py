"""Flags on Review and in the coach view (AppTest), and the flag rows the report reads."""

from __future__ import annotations

import dataclasses

import pytest
from streamlit.testing.v1 import AppTest

from analysis.interpretation.flags import Flag
from analysis.pipeline import analyze_session
from analysis.simulation import simulate_case
from dashboard.flag_rows import flag_groups, pattern_summary
from tests.dashboard.pages_helpers import page_text
from tests.dashboard.conftest import APPTEST_TIMEOUT_S


@pytest.fixture(scope="module")
def lung():
    # simulated lung-limited test: desaturation and a low breathing reserve (analysis.simulation truth)
    return analyze_session(simulate_case("lung_limited", 0, noise=1.0), with_oxygen=False)


def _panel(results, sport_only):
    from dashboard.views._flags_panel import render_flags

    render_flags(results, sport_only=sport_only)


def _run(results, *, sport_only: bool) -> AppTest:
    at = AppTest.from_function(_panel, args=(results, sport_only), default_timeout=APPTEST_TIMEOUT_S)
    return at.run()


def test_flag_rows_grouped_with_limit_and_source(lung):
    groups = dict(flag_groups(lung))
    gas = {r["Flag"]: r for r in groups["Gas exchange"]}
    assert gas["desaturation"]["Limit"] == "fall ≥ 4 points or SpO2 ≤ 88 %"
    assert gas["desaturation"]["Source"] == "ATS/ACCP 2003 (from memory)"
    assert groups["Ventilation"][0]["Flag"] == "low breathing reserve"
    texts, caution, statement = pattern_summary(lung)
    assert any(t.startswith("Consistent with ventilatory limitation") for t in texts)
    assert "not a diagnosis" in caution and "ATS/ACCP" in statement


def test_review_panel_shows_every_flag_and_the_patterns(lung):
    at = _run(lung, sport_only=False)
    assert not at.exception, at.exception
    text = "\n".join(page_text(at))
    assert "Flags and patterns" in text
    from dashboard.lab import markdown_text

    assert lung.flags
    for f in lung.flags:  # each flag with its limit and source (escaped markdown)
        assert markdown_text(f.limit) in text and markdown_text(f.source) in text
    assert "**desaturation**" in text and "**low breathing reserve**" in text
    assert "Consistent with ventilatory limitation" in text
    assert any("not a diagnosis" in c.value for c in at.caption)


def test_coach_panel_shows_sport_relevant_flags_only(lung):
    at = _run(lung, sport_only=True)
    assert not at.exception, at.exception
    text = "\n".join(page_text(at))
    sport = [f for f in lung.flags if f.sport_relevant]
    clinical = [f for f in lung.flags if not f.sport_relevant]
    assert {f.code for f in sport} >= {"desaturation", "breathing_reserve_low"}
    assert clinical, "the lung test also raises clinical flags, which the coach must not see"
    assert "**desaturation**" in text and "**low breathing reserve**" in text
    from analysis.interpretation.flags import FLAG_NAMES

    for f in clinical:
        assert FLAG_NAMES[f.code] not in text
    assert "Consistent with" not in text  # no pattern summary for coaches


def test_data_derived_text_is_escaped(lung):
    flag = Flag(code="desaturation", severity="abnormal", text="<b>x</b> *y* [z](http://evil)", value=5.0,
                limit="fall ≥ 4", source="s", unit="%", sport_relevant=True)
    data = dataclasses.replace(lung, interpretation=dataclasses.replace(lung.interpretation, flags=(flag,)))
    at = _run(data, sport_only=False)
    md = "\n".join(m.value for m in at.markdown)
    assert "\\<b\\>x\\</b\\> \\*y\\* \\[z\\]\\(http\\:" in md


def test_review_page_has_the_flags_section(demo_store, page_test):
    from tests.dashboard.test_review_page import _review_script

    at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=demo_store.test_ids[0]).run()
    assert not at.exception, at.exception
    assert "Flags and patterns" in [s.value for s in at.subheader]


def test_coach_view_has_the_training_findings(demo_store):
    from tests.dashboard.test_sharing_and_coach import _coach_run

    store = demo_store.store
    token, _ = store.create_share(actor=demo_store.user, test_id=demo_store.test_ids[0], expires_in_days=3)
    at = _coach_run(token)
    assert not at.exception, at.exception
    assert "Findings for training" in [s.value for s in at.subheader]
