"""Share links page and coach view (AppTest).

- Reviewers create a link (the address is shown once), see it listed with its state and view
  count, and revoke it; viewers cannot create links.
- The coach view shows exactly the shared test's numbers (equal to the analysis) read-only.
- Expired, revoked, malformed and unknown tokens render identical pages with no data.
"""

from __future__ import annotations

import dataclasses
import re
import secrets
from datetime import datetime, timedelta, timezone

import pytest
from streamlit.testing.v1 import AppTest

from dashboard import state
from dashboard.views.coach import INVALID_TEXT
from dashboard.views.sharing import share_state, share_url
from tests.dashboard.conftest import APPTEST_TIMEOUT_S, make_user
from tests.dashboard.pages_helpers import analysis_json, page_text, parse_number, signed_in
from tests.support import ROOT, demo_result


def _sharing():
    from dashboard.views import sharing

    sharing.render()


def _coach():
    from dashboard.views import coach

    coach.render()


TOKEN_IN_URL = re.compile(r"^http://[^/]+/\?link=([A-Za-z0-9_-]{43})$")


def test_reviewer_creates_link_shown_once_and_listed(demo_store, page_test):
    store, test_id = demo_store.store, demo_store.test_ids[0]
    at = page_test(_sharing, **signed_in(demo_store.user), **{state.TEST_ID: test_id})
    at.run()
    assert not at.exception
    at.number_input[0].set_value(30)
    at.button(key="FormSubmitter:new_share-Create link").click().run()
    assert not at.exception
    url = at.code[0].value
    match = TOKEN_IN_URL.match(url)
    assert match, url
    scope = store.resolve_share(match.group(1), log_view=False)
    assert scope is not None and scope.test_ids == (test_id,)
    assert not scope.show_name
    assert scope.expires_at - datetime.now(timezone.utc) > timedelta(days=29)
    listed = at.dataframe[0].value
    assert listed.iloc[0]["State"] == "active" and listed.iloc[0]["Views"] == 0
    assert listed.iloc[0]["Name shown"] == "code only"
    assert listed.iloc[0]["Shows"] == "headline and thresholds, zones, charts, report"
    assert list(listed.columns[:4]) == ["Link", "State", "Covers", "Expires (UTC)"]
    # Shown once: the next run of the page no longer carries the address.
    at.run()
    assert len(at.code) == 0


def test_revoke_from_the_page(demo_store, page_test):
    store, test_id = demo_store.store, demo_store.test_ids[1]
    token, share_id = store.create_share(actor=demo_store.user, test_id=test_id, expires_in_days=7)
    at = page_test(_sharing, **signed_in(demo_store.user))
    at.run()
    revoke_box = [s for s in at.selectbox if s.label == "Link to revoke"][0]
    revoke_box.set_value(share_id)
    at.button(key="FormSubmitter:revoke_share-Revoke link").click().run()
    assert not at.exception
    assert store.resolve_share(token, log_view=False) is None
    info = {s.id: s for s in store.list_shares()}[share_id]
    assert share_state(info) == "revoked"


def test_viewer_cannot_create_links(demo_store, page_test):
    viewer = make_user(demo_store.store, f"viewer.{secrets.token_hex(4)}", "viewer")
    at = page_test(_sharing, **signed_in(viewer))
    at.run()
    assert not at.exception
    assert any("Only reviewers and administrators" in i.value for i in at.info)
    assert not [b for b in at.button if "Create link" in str(b.label)]


def test_share_url_shape():
    assert share_url("abc", host="lab.example:8630") == "http://lab.example:8630/?link=abc"
    assert share_url("abc").startswith("http://localhost:8630/?link=")


def _coach_run(token: str) -> AppTest:
    at = AppTest.from_function(_coach, default_timeout=APPTEST_TIMEOUT_S)
    at.session_state[state.SHARE_TOKEN] = token
    at.run()
    return at


def test_coach_view_shows_only_the_shared_test(demo_store):
    store = demo_store.store
    shared, other = demo_store.test_ids[0], demo_store.test_ids[1]
    token, _ = store.create_share(actor=demo_store.user, test_id=shared, expires_in_days=3)
    at = _coach_run(token)
    assert not at.exception
    expected = analysis_json(store, shared)
    metrics = {m.label: m.value for m in at.metric}
    assert parse_number(metrics["VO2peak (mL/min)"]) == pytest.approx(expected["vo2_peak_ml_min"], abs=0.5)
    code_shared = store.get_test(shared).summary.person_code
    code_other = store.get_test(other).summary.person_code
    text = "\n".join(page_text(at))
    assert code_shared in at.title[0].value.replace("\\", "")  # shown escaped
    assert code_other not in text
    assert len(at.selectbox) == 0  # one test: nothing to choose, nobody else reachable
    assert not at.text_input and not at.number_input and not at.checkbox  # read-only
    assert [b.proto.label for b in at.get("download_button")] == ["Download the report (HTML)"]
    assert any("not a medical device" in w.value for w in at.warning)


def test_coach_view_without_display_name_shows_the_code_only(demo_store):
    store, test_id = demo_store.store, demo_store.test_ids[0]
    summary = store.get_test(test_id).summary
    token, _ = store.create_share(actor=demo_store.user, test_id=test_id, expires_in_days=3, show_name=False)
    at = _coach_run(token)
    if summary.display_name:
        assert summary.display_name not in "\n".join(page_text(at))
    assert summary.person_code in at.title[0].value.replace("\\", "")  # shown escaped


def test_invalid_links_all_render_the_same_plain_page(demo_store):
    store, test_id = demo_store.store, demo_store.test_ids[0]
    # expired: created by a store whose clock stood 10 days ago, valid for 1 day
    from store import open_store

    past = datetime.now(timezone.utc) - timedelta(days=10)
    old_clock_store = open_store(demo_store.url, clock=lambda: past)
    try:
        expired, _ = old_clock_store.create_share(actor=demo_store.user, test_id=test_id, expires_in_days=1)
    finally:
        old_clock_store.close()
    revoked, revoked_id = store.create_share(actor=demo_store.user, test_id=test_id, expires_in_days=5)
    store.revoke_share(revoked_id, actor=demo_store.user)
    malformed = "not a token; DROP TABLE share_links"
    unknown = secrets.token_urlsafe(32)

    pages = {}
    for name, token in (("expired", expired), ("revoked", revoked), ("malformed", malformed), ("unknown", unknown)):
        at = _coach_run(token)
        assert not at.exception, name
        pages[name] = (
            page_text(at),
            len(at.metric),
            len(at.dataframe),
            len(at.get("download_button")),
            len(at.get("plotly_chart")),
            len(at.selectbox),
        )
    first = pages["expired"]
    assert all(p == first for p in pages.values()), pages
    assert first == (["Tidemark", INVALID_TEXT], 0, 0, 0, 0, 0)


def test_app_with_invalid_link_shows_no_navigation(demo_store):
    """Through the app entry script: ``?link=`` with an unknown token gives only the plain page."""
    at = AppTest.from_file(str(ROOT / "dashboard" / "app.py"), default_timeout=APPTEST_TIMEOUT_S)
    at.query_params["link"] = secrets.token_urlsafe(32)
    at.run()
    assert not at.exception
    assert page_text(at) == ["Tidemark", INVALID_TEXT]
    assert len(at.sidebar) == 0


def test_person_link_with_chosen_sections(demo_store, page_test):
    store, test_id = demo_store.store, demo_store.test_ids[0]
    person_id = store.get_test(test_id).summary.person_id
    at = page_test(_sharing, **signed_in(demo_store.user))
    at.run()
    at.radio(key="share_kind").set_value("All tests of one person").run()
    at.multiselect[0].set_value(["headline", "report"])
    at.button(key="FormSubmitter:new_share-Create link").click().run()
    assert not at.exception
    token = TOKEN_IN_URL.match(at.code[0].value).group(1)
    scope = store.resolve_share(token, log_view=False)
    assert set(scope.test_ids) == {t.id for t in store.list_tests(person_id)}
    assert set(scope.sections) == {"headline", "report"}
    coach = _coach_run(token)
    assert not coach.exception
    assert len(coach.get("plotly_chart")) == 0  # charts not shared
    assert not [m for m in page_text(coach) if m == "**Training zones**"]
    assert len(coach.metric) > 0
    assert [b.proto.label for b in coach.get("download_button")] == ["Download the report (HTML)"]


def test_one_view_counted_per_session_and_revocation_is_immediate(demo_store):
    store, test_id = demo_store.store, demo_store.test_ids[0]
    token, share_id = store.create_share(actor=demo_store.user, test_id=test_id, expires_in_days=2)
    at = _coach_run(token)
    at.run()
    at.run()
    views = {s.id: s for s in store.list_shares()}[share_id].n_views
    assert views == 1
    store.revoke_share(share_id, actor=demo_store.user)
    at.run()  # the same browser session, after revocation
    assert page_text(at) == ["Tidemark", INVALID_TEXT]
    assert len(at.metric) == 0


def test_coach_threshold_table_has_one_column_per_threshold():
    from dashboard.views.coach import threshold_frame

    r = demo_result()
    vt1 = dataclasses.replace(r.vt1, t_s=725.0, vo2_ml_min=2972.0, source="auto", method="consensus")
    frame = threshold_frame(dataclasses.replace(r, vt1=vt1, vt2=None))
    assert list(frame.columns) == ["", "VT1", "VT2 / RCP"]
    rows = dict(zip(frame[""], frame["VT1"]))
    assert rows["Time (m:ss)"] == "12:05" and rows["VO2 (mL/min)"] == "2\u2009972" and rows["Set"] == "automatic"
    assert dict(zip(frame[""], frame["VT2 / RCP"]))["Set"] == "not found"


def test_person_link_logs_test_switches_and_report_downloads(demo_store):
    from dashboard.views.coach import log_use

    store, first = demo_store.store, demo_store.test_ids[0]
    code = store.get_test(first).summary.person_code
    again = demo_store.files[0].read_bytes().replace(b"# test_date: 2026-02-03", b"# test_date: 2026-03-03")
    second = store.import_test(again, file_name="second.csv", actor=demo_store.user, person_code=code).test_id
    person_id = store.get_test(first).summary.person_id
    token, share_id = store.create_share(actor=demo_store.user, person_id=person_id, expires_in_days=2)
    at = _coach_run(token)
    assert not at.exception
    box = at.selectbox(key="coach_test")
    shown = box.value
    other = first if shown == second else second
    box.set_value(other).run()
    assert at.selectbox(key="coach_test").value == other
    at.run()  # a rerun without a change logs nothing more
    assert [(k, t) for k, t, _ in store.share_views(share_id)] == [("open", None), ("test", other)]
    log_use(store, store.resolve_share(token, log_view=False), "report", other)  # what the download button calls
    assert [k for k, _, _ in store.share_views(share_id)][-1] == "report"
    assert {s.id: s for s in store.list_shares()}[share_id].n_views == 3
