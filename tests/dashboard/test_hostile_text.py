"""Markdown injection: text from files, people and sign-in reaches every page only escaped.

A store is filled with hostile metadata - an image link in the file's ``# protocol:`` line, a
``=HYPERLINK(...)`` person code, HTML in the display name, a link in the file name - and every
page is run (AppTest) as an administrator and through a share link. No element that Streamlit
renders as markdown may hold an image, link or HTML element that came from the data: no
``](`` that is not escaped, no ``<img``/``<a``/``<script`` tag, no bare address (autolink).
"""

from __future__ import annotations

import re
from collections.abc import Iterator
from typing import Any

import pytest
from streamlit.testing.v1 import AppTest

from tests.dashboard.conftest import APPTEST_TIMEOUT_S, demo_paths, make_user, store_for_pages

EVIL = "evil.example"
CODE = '=HYPERLINK("http://evil.example/code","open")'
DISPLAY = '<img src="http://evil.example/name.png" onerror="alert(1)"> Ann'
PROTOCOL = "ramp ![beacon](http://evil.example/beacon.png) [click](http://evil.example/p) <a href=x>a</a>"
FILE_NAME = "[file](http://evil.example/f).csv"
PAGES = ("library", "review", "oxygen", "progress", "reports", "sharing", "lab_settings")

_UNESCAPED_LINK = re.compile(r"(?<!\\)\]\(")
_HTML_TAG = re.compile(r"(?<!\\)<\s*/?\s*(img|a|script|iframe|svg|style|object)\b", re.I)
_AUTOLINK = re.compile(r"https?://|www\.", re.I)


@pytest.fixture(scope="module")
def hostile_store(tmp_path_factory) -> Iterator[dict[str, Any]]:
    from store.records import LOCAL_OPERATOR

    path = tmp_path_factory.mktemp("hostile") / "hostile.sqlite"
    with store_for_pages(f"sqlite:///{path}") as store:
        admin = make_user(store, "ada.admin", "admin")
        raw = demo_paths()[0].read_bytes()
        raw = re.sub(rb"# protocol: [^\n]*", ("# protocol: " + PROTOCOL).encode(), raw)
        res = store.import_test(raw, file_name=FILE_NAME, actor=admin, person_code=CODE, display_name=DISPLAY)
        token, _ = store.create_share(actor=admin, test_id=res.test_id, expires_in_days=3, show_name=True)
        store.lab_identity()  # the store answers; lab settings stay empty
        yield {"store": store, "admin": admin, "test_id": res.test_id, "token": token, "operator": LOCAL_OPERATOR}


def _page(name: str) -> None:
    import importlib as _il

    _il.import_module(f"dashboard.views.{name}").render()


def _app_test(name: str) -> AppTest:
    from dashboard.views.review import PAGE_DRAWN

    at = AppTest.from_function(_page, args=(name,), default_timeout=APPTEST_TIMEOUT_S)
    at.session_state[PAGE_DRAWN] = True  # the whole Review page, as after the browser drew the overview
    return at


def _markdown_texts(at: AppTest) -> list[str]:
    """Every string of the run that Streamlit renders as markdown (bodies and widget labels)."""
    out: list[str] = []
    for kind in ("title", "header", "subheader", "markdown", "caption", "info", "warning", "error", "success"):
        out += [str(e.value) for e in getattr(at, kind)]
    for kind in ("expander", "tabs"):
        out += [str(getattr(e, "label", "")) for e in getattr(at, kind)]
    for kind in ("metric", "button", "checkbox", "toggle", "text_input", "number_input", "selectbox", "radio",
                 "multiselect", "text_area", "slider", "select_slider", "date_input", "time_input"):
        for e in at.get(kind):
            out.append(str(getattr(e, "label", "") or getattr(getattr(e, "proto", None), "label", "")))
            if kind == "radio":
                out += [str(o) for o in getattr(e, "options", [])]
    return out


def _assert_no_markup_from_data(texts: list[str], where: str) -> int:
    checked = 0
    for text in texts:
        if EVIL not in text.replace("\\", ""):
            continue
        checked += 1
        assert not _UNESCAPED_LINK.search(text), (where, text)
        assert not _HTML_TAG.search(text), (where, text)
        assert not _AUTOLINK.search(text), (where, text)
    return checked


@pytest.mark.parametrize("page", PAGES)
def test_every_page_shows_hostile_metadata_only_escaped(hostile_store, page):
    from dashboard import state

    at = _app_test(page)
    at.session_state[state.USER] = hostile_store["admin"]
    at.session_state[state.DEMO_MODE] = False
    at.session_state[state.TEST_ID] = hostile_store["test_id"]
    at.run()
    assert not at.exception, at.exception
    _assert_no_markup_from_data(_markdown_texts(at), page)


def test_review_page_really_shows_the_hostile_values(hostile_store):
    # the walk above is only meaningful if the values reach the page: here they do, escaped
    from dashboard import state

    at = _app_test("review")
    at.session_state[state.USER] = hostile_store["admin"]
    at.session_state[state.DEMO_MODE] = False
    at.session_state[state.TEST_ID] = hostile_store["test_id"]
    at.run()
    assert _assert_no_markup_from_data(_markdown_texts(at), "review") >= 2


def test_coach_view_shows_hostile_metadata_only_escaped(hostile_store):
    from dashboard import state

    at = _app_test("coach")
    at.session_state[state.SHARE_TOKEN] = hostile_store["token"]
    at.run()
    assert not at.exception
    assert _assert_no_markup_from_data(_markdown_texts(at), "coach") >= 1


def test_sidebar_and_errors_escape_what_came_from_data():
    from analysis.errors import ImportRejected, Problem
    from dashboard.errors import _escaped

    exc = ImportRejected(Problem(f"cell {PROTOCOL!r} is not a number", "fix it", FILE_NAME, 3, "VO2"))
    shown = _escaped(exc, str(exc), head=f"Import of {FILE_NAME}: ")
    _assert_no_markup_from_data([shown], "error")
    assert shown.startswith("Import of \\[file\\]") and "\n- " in shown
