"""Every page starts on the same test: the current one, else the newest import."""

from __future__ import annotations

import pytest

from dashboard.views._test_choice import default_test_id
from tests.dashboard.pages_helpers import signed_in


def test_default_rule():
    assert default_test_id([4, 9, 2], None) == 9
    assert default_test_id([4, 9, 2], 2) == 2
    assert default_test_id([4, 9, 2], 5) == 9  # a current test that is gone: the newest
    assert default_test_id([], None) is None


def _review():
    from dashboard.views import review

    review.render()


def _reports():
    from dashboard.views import reports

    reports.render()


def _oxygen():
    from dashboard.views import oxygen

    oxygen.render()


def _library():
    from dashboard.views import library

    library.render()


PAGES = {"review": _review, "reports": _reports, "oxygen": _oxygen, "library": _library}


def _page(name: str):
    return PAGES[name]


@pytest.mark.parametrize("name", ["review", "reports", "oxygen"])
def test_pages_open_the_newest_test_when_none_is_current(demo_store, page_test, name):
    newest = max(demo_store.test_ids)
    at = page_test(_page(name), **signed_in(demo_store.user))
    at.run()
    assert not at.exception, at.exception
    assert at.session_state["tm_test_id"] == newest
    assert next(s for s in at.selectbox if s.label == "Test").value == newest


def test_library_offers_the_same_test(demo_store, page_test):
    at = page_test(_page("library"), **signed_in(demo_store.user))
    at.run()
    assert at.selectbox(key="lib_open_choice").value == max(demo_store.test_ids)
