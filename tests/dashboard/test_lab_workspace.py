"""A real (non-demo) store in the dashboard: lab settings by an admin, the lab's name on the
sign-in page, coach view and share links from the configured public URL, person links with a
progress view, and the password field's autocomplete."""

from __future__ import annotations

import re
from collections.abc import Iterator
from dataclasses import dataclass
from typing import Any

import pytest
from streamlit.testing.v1 import AppTest

from dashboard import app, state
from dashboard.views.sharing import share_url
from store.lab import PUBLIC_URL_ENV
from tests.dashboard.conftest import APPTEST_TIMEOUT_S, demo_paths, make_user, store_for_pages
from tests.dashboard.pages_helpers import page_text, signed_in
from tests.support import ROOT

APP = str(ROOT / "dashboard" / "app.py")
LAB = "Harbour Sports Lab"


@dataclass
class RealStore:
    url: str
    store: Any
    admin: Any
    reviewer: Any
    test_ids: list[int]


@pytest.fixture(scope="module")
def real_store(tmp_path_factory: pytest.TempPathFactory) -> Iterator[RealStore]:
    url = f"sqlite:///{tmp_path_factory.mktemp('real-store') / 'lab.sqlite'}"
    with store_for_pages(url) as store:
        admin = make_user(store, "ada.admin", "admin")
        reviewer = make_user(store, "rhea.reviewer", "reviewer")
        ids = []
        # two tests of one person (a person link covers both)
        for path in demo_paths():
            ids.append(store.import_test(path.read_bytes(), file_name=path.name, actor=reviewer, person_code="HSL-01").test_id)
        yield RealStore(url, store, admin, reviewer, ids)


def _lab_settings():
    from dashboard.views import lab_settings

    lab_settings.render()


def _sharing():
    from dashboard.views import sharing

    sharing.render()


def _coach():
    from dashboard.views import coach

    coach.render()


def test_sign_in_page_names_no_lab_until_an_admin_sets_one_and_password_autocompletes(real_store):
    at = AppTest.from_file(APP, default_timeout=APPTEST_TIMEOUT_S).run()
    assert not at.exception, at.exception
    assert at.caption[0].value == "Breath-by-breath exercise test review"
    password = at.text_input[1]
    assert password.proto.type == password.proto.PASSWORD
    assert password.proto.autocomplete == "current-password"
    assert app.sign_in_subtitle(LAB) == f"Breath-by-breath exercise test review — {LAB}"


def test_sign_in_answers_every_page_address():
    """A deep link (/library) opens the sign-in form instead of a "Page not found" dialog."""
    names = {name for name, _title, _icon in app.PAGES}
    at = AppTest.from_function(_sign_in_paths, default_timeout=APPTEST_TIMEOUT_S).run()
    assert not at.exception, at.exception
    assert set(at.session_state["paths"]) == names | {""}  # the default page answers "/"


def _sign_in_paths():
    import streamlit as st

    from dashboard import app as shell

    st.session_state["paths"] = [p.url_path for p in shell.sign_in_pages(store=None)]


def test_admin_sets_the_lab_settings_and_a_reviewer_cannot(real_store, page_test):
    at = page_test(_lab_settings, **signed_in(real_store.reviewer))
    at.run()
    assert any("Only administrators" in i.value for i in at.info)
    assert not at.text_input

    at = page_test(_lab_settings, **signed_in(real_store.admin))
    at.run()
    assert not at.exception, at.exception
    at.text_input[0].input(LAB)
    at.text_input[1].input("2 Quay Road, Porthaven")
    at.text_area[0].input("Accredited lab no. 12")
    at.button(key="FormSubmitter:lab_settings-Save the lab settings").click().run()
    assert not at.exception, at.exception
    assert any("Lab settings saved" in s.value for s in at.success)
    identity = real_store.store.lab_identity()
    assert (identity.name, identity.address, identity.report_footer) == (LAB, "2 Quay Road, Porthaven", "Accredited lab no. 12")
    fields = {e.field for e in real_store.store.audit_log() if e.action == "lab_settings"}
    assert {"lab.name", "lab.address", "lab.report_footer"} <= fields

    # the sign-in page now names the lab
    at = AppTest.from_file(APP, default_timeout=APPTEST_TIMEOUT_S).run()
    assert at.caption[0].value == f"Breath-by-breath exercise test review — {LAB}"


def test_lab_settings_page_is_in_the_navigation_of_admins_only(real_store):
    for user, expected in ((real_store.admin, True), (real_store.reviewer, False)):
        at = AppTest.from_file(APP, default_timeout=APPTEST_TIMEOUT_S)
        at.session_state[state.USER] = user
        at.session_state[state.DEMO_MODE] = False
        at.run()
        assert not at.exception, at.exception
        assert any(t.value == "Library" for t in at.title)
        assert ("lab_settings" in app.state._PAGES) is expected


def test_share_link_starts_with_the_configured_public_url_and_person_link_shows_progress(real_store, page_test, monkeypatch):
    monkeypatch.setenv(PUBLIC_URL_ENV, "tests.harbour.example")
    at = page_test(_sharing, **signed_in(real_store.reviewer))
    at.run()
    at.radio(key="share_kind").set_value("All tests of one person").run()
    at.button(key="FormSubmitter:new_share-Create link").click().run()
    assert not at.exception, at.exception
    url = at.code[0].value
    match = re.match(r"^https://tests\.harbour\.example/\?link=([A-Za-z0-9_-]{43})$", url)
    assert match, url

    coach = AppTest.from_function(_coach, default_timeout=APPTEST_TIMEOUT_S)
    coach.session_state[state.SHARE_TOKEN] = match.group(1)
    coach.run()
    assert not coach.exception, coach.exception
    texts = page_text(coach)
    assert any(t == "Progress across the 2 shared tests" for t in texts)
    assert any(t.startswith("Read-only view shared by ") for t in texts)
    progress = coach.dataframe[0].value
    assert set(progress["Result"]) >= {"VO2peak"} and (progress["Change from baseline"] == "baseline").sum() >= 1
    assert not any("Saltmarsh" in t for t in texts)


def test_share_url_without_a_public_url_uses_the_address_the_reviewer_used():
    assert share_url("abc", host="10.0.0.5:8630", environ={}) == "http://10.0.0.5:8630/?link=abc"
    assert share_url("abc", host="x", environ={PUBLIC_URL_ENV: "http://plain.example"}) == "http://plain.example/?link=abc"
