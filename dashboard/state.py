"""Session-state keys of the dashboard and small helpers around them.

All pages read and write the reviewer's context through these functions, never through raw
``st.session_state`` keys, so the names live in one place:

- the signed-in user (a store account, or the built-in demo reviewer in demo mode),
- the test under review,
- the working analysis settings of each opened test (a JSON-safe dict plus the store version
  it was based on),
- the coach-link token when the app was opened through a share link.
"""

from __future__ import annotations

import json
from collections.abc import Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import streamlit as st

if TYPE_CHECKING:
    from store import User

USER = "tm_user"
DEMO_MODE = "tm_demo_mode"
TEST_ID = "tm_test_id"
SETTINGS_PREFIX = "tm_settings_"
PENDING_PREFIX = "tm_pending_"
SHARE_TOKEN = "tm_share_token"
FLASH = "tm_flash"
SAVES = "tm_saves"

#: Roles that may change settings and thresholds (store roles).
EDIT_ROLES = frozenset({"admin", "reviewer"})


@dataclass(frozen=True)
class WorkingSettings:
    """The settings a reviewer is looking at for one test.

    ``settings`` is the JSON-safe dict of :class:`analysis.settings.AnalysisSettings`;
    ``version`` is the store version it was loaded from or last saved as (``None`` when the
    store has none yet); ``saved`` is False while a change could not be stored (e.g. a viewer
    exploring, or an edit conflict).
    """

    settings: dict[str, Any]
    version: int | None
    saved: bool = True

    @property
    def key(self) -> str:
        """Canonical JSON of the settings (the cache key of the analysis)."""
        return settings_key(self.settings)


def settings_key(settings: dict[str, Any]) -> str:
    """Canonical JSON text of a settings dict (sorted keys, no spaces)."""
    return json.dumps(settings, sort_keys=True, separators=(",", ":"), default=str)


# --- user ----------------------------------------------------------------------------------


def current_user() -> User | None:
    """The signed-in account (store ``User``), or ``None``."""
    return st.session_state.get(USER)


def acting_user() -> User:
    """The signed-in account a store change is recorded under (raises ``PermissionDenied``
    with a plain message when nobody is signed in)."""
    from store import PermissionDenied

    user = current_user()
    if user is None:
        raise PermissionDenied("To change a stored test you must be signed in.")
    return user


def set_current_user(user: User | None, *, demo: bool = False) -> None:
    st.session_state[USER] = user
    st.session_state[DEMO_MODE] = bool(demo) if user is not None else False


def in_demo_mode() -> bool:
    return bool(st.session_state.get(DEMO_MODE, False))


def user_name(user: User | None = None) -> str:
    """The account's user name (the signed-in one by default; ``""`` when nobody is signed in)."""
    user = current_user() if user is None else user
    return "" if user is None else user.username


def user_role(user: User | None = None) -> str:
    """The account's store role (the signed-in one by default; ``""`` when nobody is signed in)."""
    user = current_user() if user is None else user
    return "" if user is None else user.role


def can_edit(user: User | None = None) -> bool:
    """True when the user's role may change thresholds, exclusions and settings."""
    return user_role(user) in EDIT_ROLES


def sign_out() -> None:
    for key in list(st.session_state.keys()):
        if str(key).startswith("tm_"):
            del st.session_state[key]


# --- current test --------------------------------------------------------------------------


def current_test_id() -> int | None:
    value = st.session_state.get(TEST_ID)
    return int(value) if value is not None else None


def set_current_test(test_id: int | None) -> None:
    st.session_state[TEST_ID] = int(test_id) if test_id is not None else None


# --- working settings per test -------------------------------------------------------------


def working_settings(test_id: int) -> WorkingSettings | None:
    return st.session_state.get(f"{SETTINGS_PREFIX}{int(test_id)}")


def set_working_settings(test_id: int, working: WorkingSettings) -> None:
    st.session_state[f"{SETTINGS_PREFIX}{int(test_id)}"] = working


def forget_working_settings(test_id: int) -> None:
    st.session_state.pop(f"{SETTINGS_PREFIX}{int(test_id)}", None)
    forget_pending_changes(test_id)


# --- unsaved changes per test (one stored version per Save) ---------------------------------


def pending_changes(test_id: int) -> list[str]:
    """What the reviewer changed on Review since the last save, in words, oldest first.

    Kept per test in the browser session (switching page or test keeps them); the explicit
    Save stores them together as one version whose reason lists every entry.
    """
    return list(st.session_state.get(f"{PENDING_PREFIX}{int(test_id)}", []))


def add_pending_change(test_id: int, description: str) -> None:
    st.session_state.setdefault(f"{PENDING_PREFIX}{int(test_id)}", []).append(str(description))


def forget_pending_changes(test_id: int) -> None:
    st.session_state.pop(f"{PENDING_PREFIX}{int(test_id)}", None)


def version_reason(changes: Sequence[str], *, note: str = "") -> str:
    """The reason of a saved version: every change in it, in order, a repeated one counted once
    with its number (``"VT1 picked on the overview (2 times); averaging changed to 20 s bins"``),
    after the reviewer's own ``note`` when given."""
    counts: dict[str, int] = {}
    for change in changes:
        text = " ".join(str(change).split())
        if text:
            counts[text] = counts.get(text, 0) + 1
    listed = "; ".join(c if n == 1 else f"{c} ({n} times)" for c, n in counts.items())
    note = " ".join(note.split())
    if note and listed:
        return f"{note}: {listed}"
    return note or listed


def tests_with_pending_changes() -> list[int]:
    """Tests of this browser session with unsaved Review changes."""
    return sorted(int(str(k)[len(PENDING_PREFIX):]) for k, v in st.session_state.items()
                  if str(k).startswith(PENDING_PREFIX) and v)


# --- coach link ----------------------------------------------------------------------------


def share_token() -> str | None:
    return st.session_state.get(SHARE_TOKEN)


def set_share_token(token: str | None) -> None:
    st.session_state[SHARE_TOKEN] = token


# --- one-shot messages across a rerun -------------------------------------------------------


def flash(message: str, *, kind: str = "success") -> None:
    """Queue a message to show once after the next rerun (e.g. after switching page)."""
    st.session_state.setdefault(FLASH, []).append((kind, message))


def pop_flashes() -> list[tuple[str, str]]:
    return st.session_state.pop(FLASH, [])


# --- navigation ----------------------------------------------------------------------------

#: Page name (module name under dashboard/views) -> the st.Page object of this run.
_PAGES: dict[str, Any] = {}


def register_pages(pages: dict[str, Any]) -> None:
    """Remember the navigation's page objects (called by ``app.run`` on every run)."""
    _PAGES.clear()
    _PAGES.update(pages)


def go_to(page: str) -> bool:
    """Switch to the page named after its module (e.g. ``"review"``).

    Returns False (and stays) when that page is not part of the running navigation, e.g. when a
    page is rendered on its own in a test.
    """
    target = _PAGES.get(page)
    if target is None:
        return False
    st.switch_page(target)
    return True


# --- background saves -----------------------------------------------------------------------


def save_tracker() -> Any:
    """This browser session's :class:`dashboard.data.SaveTracker` (created on first use)."""
    from dashboard.data import SaveTracker

    tracker = st.session_state.get(SAVES)
    if tracker is None:
        tracker = SaveTracker()
        st.session_state[SAVES] = tracker
    return tracker
