"""Share links page: reviewers create read-only links for coaches, list them and revoke them.

A link covers one test or all tests of one person, expires after a chosen number of days, and
shows the pseudonymous code unless the reviewer ticks "show display name". The token is shown
once, right after creation; the store keeps only its hash.
"""

from __future__ import annotations

import logging
from datetime import UTC, datetime
from typing import TYPE_CHECKING, Any

import pandas as pd
import streamlit as st

from dashboard import data, lab, state
from dashboard.views._test_choice import current_or_default, person_label, test_label

if TYPE_CHECKING:
    from store import LabIdentity, Store, User

log = logging.getLogger("tidemark.dashboard")

DEFAULT_EXPIRY_DAYS = 14
MAX_EXPIRY_DAYS = 365
SCOPE_TEST = "One test"
SCOPE_PERSON = "All tests of one person"

#: What a link may show (the store's section names) and how the form names them.
SECTION_LABELS: dict[str, str] = {
    "headline": "Headline numbers and thresholds",
    "zones": "Training zones",
    "charts": "Charts",
    "report": "Report download",
}


#: The sections in the list of links (short words).
SECTION_SHORT: dict[str, str] = {"headline": "headline and thresholds", "zones": "zones", "charts": "charts",
                                 "report": "report"}


def share_url(token: str, *, host: str | None = None, identity: LabIdentity | None = None,
              environ: dict[str, str] | None = None) -> str:
    """The address a coach opens: ``<public URL>/?link=<token>`` when a public URL is configured
    (``TIDEMARK_PUBLIC_URL`` or the lab settings; https unless it says otherwise), else
    ``http://<host the reviewer used>/?link=<token>``."""
    return lab.share_url(token, base_url=lab.share_base_url(identity, request_host=host, environ=environ))


def request_host() -> str | None:
    """Host (and port) the reviewer reached the dashboard on, from the request headers."""
    try:
        host = st.context.headers.get("host")
    except Exception:  # noqa: BLE001 - not available outside a browser session (tests)
        return None
    return str(host) if host else None


def share_state(info: Any, *, now: datetime | None = None) -> str:
    """"active", "revoked" or "expired" for a store ``ShareInfo``."""
    if getattr(info, "revoked_at", None) is not None:
        return "revoked"
    now = now or datetime.now(UTC)
    expires = info.expires_at
    if expires.tzinfo is None:
        expires = expires.replace(tzinfo=UTC)
    if expires <= now or not getattr(info, "active", True):
        return "expired"
    return "active"


def shares_frame(shares: list[Any], *, tests: dict[int, Any], people: dict[int, Any]) -> pd.DataFrame:
    """The list of links for display (newest first)."""
    rows = []
    for s in sorted(shares, key=lambda s: s.created_at, reverse=True):
        if s.test_id is not None and s.test_id in tests:
            scope = "test: " + test_label(tests[s.test_id])
        elif s.person_id is not None and s.person_id in people:
            scope = "person: " + person_label(people[s.person_id])
        else:
            scope = f"{len(s.test_ids)} test(s)"
        rows.append(  # what a reviewer checks first comes first (the table may scroll sideways)
            {
                "Link": s.id,
                "State": share_state(s),
                "Covers": scope,
                "Expires (UTC)": s.expires_at.strftime("%Y-%m-%d %H:%M"),
                "Shows": ", ".join(SECTION_SHORT.get(x, x) for x in s.sections),
                "Views": int(s.n_views),
                "Last viewed (UTC)": s.last_viewed_at.strftime("%Y-%m-%d %H:%M") if s.last_viewed_at else "never",
                "Name shown": "yes" if s.show_name else "code only",
                "Created by": s.created_by,
                "Created (UTC)": s.created_at.strftime("%Y-%m-%d %H:%M"),
            }
        )
    return pd.DataFrame(rows)


def render() -> None:
    st.title("Share links")
    st.caption(
        "A share link lets a coach see one test or one person's tests — headline numbers, zones, "
        "charts and the report — read-only, until it expires or is revoked."
    )
    store = data.get_store()
    user = state.current_user()
    may_share = state.can_edit(user)

    people = {p.id: p for p in store.list_people()}
    tests = {t.id: t for t in store.list_tests()}
    if not tests:
        st.info("No tests in the library yet. Import one on the Library page.")
        return

    st.subheader("New link")
    if not may_share or user is None:
        st.info("Only reviewers and administrators can create or revoke links.")
    else:
        create_form(store, user, tests=tests, people=people)

    st.subheader("Links")
    shares = list(store.list_shares())
    if not shares:
        st.write("No links yet.")
        return
    st.dataframe(shares_frame(shares, tests=tests, people=people), hide_index=True, width="stretch",
                 column_config={"Covers": st.column_config.TextColumn("Covers", width="large"),
                                "Shows": st.column_config.TextColumn("Shows", width="medium")})
    active = [s for s in shares if share_state(s) == "active"]
    if may_share and active:
        with st.form("revoke_share"):
            share_id = st.selectbox(
                "Link to revoke",
                [s.id for s in active],
                format_func=lambda i: f"Link {i} (expires {next(s for s in active if s.id == i).expires_at:%Y-%m-%d})",
            )
            if st.form_submit_button("Revoke link"):
                store.revoke_share(int(share_id), actor=state.acting_user())
                st.success(f"Link {share_id} revoked. It no longer opens.")
                st.rerun()


def create_form(store: Store, user: User, *, tests: dict[int, Any], people: dict[int, Any]) -> None:
    """The form that creates a link and shows its address once."""
    kind = st.radio("Covers", [SCOPE_TEST, SCOPE_PERSON], horizontal=True, key="share_kind")
    with st.form("new_share"):
        if kind == SCOPE_TEST:
            ids = list(tests)
            current = current_or_default(ids)
            target = st.selectbox(
                "Test", ids, index=ids.index(current) if current in ids else 0, format_func=lambda i: test_label(tests[i])
            )
        else:
            ids = list(people)
            target = st.selectbox("Person", ids, format_func=lambda i: person_label(people[i]))
        days = st.number_input(
            "Expires after (days)", min_value=1, max_value=MAX_EXPIRY_DAYS, value=DEFAULT_EXPIRY_DAYS, step=1
        )
        sections = st.multiselect(
            "What the coach sees",
            list(SECTION_LABELS),
            default=list(SECTION_LABELS),
            format_func=lambda k: SECTION_LABELS[k],
        )
        show_name = st.checkbox("Show the display name (otherwise only the pseudonymous code)", value=False)
        submitted = st.form_submit_button("Create link", type="primary")
    if not submitted:
        return
    if not sections:
        st.error("Choose at least one thing the coach may see.")
        return
    token, share_id = store.create_share(
        actor=user, test_id=int(target) if kind == SCOPE_TEST else None,
        person_id=None if kind == SCOPE_TEST else int(target),
        expires_in_days=int(days), show_name=bool(show_name), sections=tuple(sections),
    )
    identity = lab.read_identity(store)
    st.success(f"Link {share_id} created. Copy it now: the address is shown only this once.")
    st.code(share_url(token, host=request_host(), identity=identity), language=None)
    if not lab.public_url_configured(identity):
        st.caption(
            "No public address is configured, so the link uses the address you reached the dashboard on. "
            "An administrator can set the lab's public address on the Lab settings page."
        )
