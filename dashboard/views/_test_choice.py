"""Helpers shared by the Oxygen path, Progress, Reports and Share links pages.

Choosing a test or a person from the store, and reading the settings a test is analysed with
(the reviewer's working settings when there are any, else the stored ones). No numbers are
computed here.
"""

from __future__ import annotations

import logging
from typing import TYPE_CHECKING, Any

import streamlit as st

from dashboard import data, state

if TYPE_CHECKING:
    from store import PersonSummary, Store, TestSummary

log = logging.getLogger("tidemark.dashboard")


def person_label(summary: TestSummary | PersonSummary, *, show_name: bool = True) -> str:
    """``"SEL-014 (Ann Example)"`` or just the pseudonymous code."""
    code = str(getattr(summary, "person_code", None) or getattr(summary, "code", "") or "")
    name = getattr(summary, "display_name", None)
    return f"{code} ({name})" if show_name and name else code


def test_label(summary: TestSummary, *, show_name: bool = True) -> str:
    """One line naming a test: person, date, protocol."""
    bits = [person_label(summary, show_name=show_name), str(summary.test_date or "no date")]
    if getattr(summary, "protocol", None):
        bits.append(str(summary.protocol))
    return " · ".join(bits)


def default_test_id(ids: Any, current: int | None) -> int | None:
    """The test every page opens with: the current test when there is one, else the newest
    import (highest test number). One rule for Library, Review, Oxygen path, Progress, Reports
    and Share links, so each page starts on the same test.

    Examples
    --------
    >>> default_test_id([3, 1, 7], None)
    7
    >>> default_test_id([3, 1, 7], 1)
    1
    """
    ids = [int(i) for i in ids]
    if not ids:
        return None
    return int(current) if current is not None and int(current) in ids else max(ids)


def current_or_default(ids: Any) -> int | None:
    """:func:`default_test_id` for this browser session; the default becomes the current test."""
    chosen = default_test_id(ids, state.current_test_id())
    if chosen is not None and chosen != state.current_test_id():
        state.set_current_test(chosen)
    return chosen


def choose_test(store: Store, *, key: str, label: str = "Test") -> TestSummary | None:
    """A select box of the stored tests (current test first); returns the chosen summary.

    Choosing a test here also makes it the current test for the other pages.
    """
    tests = list(store.list_tests())
    if not tests:
        st.info("No tests in the library yet. Import one on the Library page.")
        return None
    ids = [t.id for t in tests]
    current = current_or_default(ids)
    index = ids.index(current) if current in ids else 0
    by_id = {t.id: t for t in tests}
    chosen = st.selectbox(label, ids, index=index, format_func=lambda i: test_label(by_id[i]), key=key)
    if chosen != current:
        state.set_current_test(chosen)
    return by_id[chosen]


def test_settings(store: Store, test_id: int) -> tuple[dict[str, Any], int | None]:
    """The settings dict and store version a test is shown with.

    The reviewer's unsaved working settings (from the Review page) win; otherwise the stored
    settings; otherwise the analysis defaults.
    """
    _fold_finished_saves(test_id)
    working = state.working_settings(test_id)
    if working is not None:
        return dict(working.settings), working.version
    try:
        settings, version = store.get_settings(test_id)
    except Exception:  # fall back to defaults, logged
        log.exception("settings of test %s could not be read; using defaults", test_id)
        return data.default_settings_dict(), None
    return dict(settings or data.default_settings_dict()), version


def _fold_finished_saves(test_id: int) -> None:
    """Let the Review page's background saves that have finished update the working settings
    (so a change saved from Review shows here with its new version, not as unsaved)."""
    try:
        from dashboard.views.review import sync_saves
    except ImportError:
        return
    try:
        sync_saves(test_id)
    except Exception:  # the working settings stay as they are; logged
        log.exception("background saves of test %s could not be folded in", test_id)


def settings_json(settings: dict[str, Any]) -> str:
    """The cache key text of a settings dict."""
    return state.settings_key(settings)
