"""Coach view: what a share link lets its holder see, read-only.

Rendered by ``app.py`` alone (no navigation) when the URL carries ``?link=TOKEN``. Shows only
the tests in the link's scope: headline numbers, thresholds, zones, charts and the report
download. Nothing can be changed; no other person is reachable; the person is named by their
pseudonymous code unless the reviewer chose to show the display name.

An expired, revoked, malformed or unknown token gets exactly the same plain page
(:func:`render_invalid`), with no data and no hint which case applied.
"""

from __future__ import annotations

import logging
import re
from typing import TYPE_CHECKING, Any

import pandas as pd
import streamlit as st

from analysis.progress import TestRecord as ProgressRecord
from analysis.results import TestResults
from dashboard import data, lab, state
from dashboard.report import CAUTIONS, headline_rows, zone_rows
from dashboard.report.assemble import build_test_report, report_figures, report_file_name
from dashboard.report.html_report import threshold_display
from dashboard.views._flags_panel import render_flags
from dashboard.views._test_choice import test_settings

if TYPE_CHECKING:
    from store import LabIdentity, ShareScope, Store, TestSummary

log = logging.getLogger("tidemark.dashboard")

#: The only text shown for a link that does not open (any reason).
INVALID_TEXT = (
    "This link is not valid. It may have expired or been withdrawn; ask the lab that sent it for a new one."
)

#: Token shape accepted before asking the store (URL-safe base64, as ``secrets.token_urlsafe``).
_TOKEN_SHAPE = re.compile(r"^[A-Za-z0-9_-]{16,128}$")

#: Session-state flag: this browser session's view of the link has been counted.
VIEW_LOGGED_KEY = "tm_coach_view_logged"

#: What a share may show; a scope without sections shows all of them.
SECTIONS: tuple[str, ...] = ("headline", "zones", "charts", "report")


def resolve_scope(store: Store, token: Any, *, log_view: bool = True) -> ShareScope | None:
    """The store's share scope for ``token``, or ``None`` for any token that does not open.

    Malformed tokens are refused before the store is asked; store errors are logged and also
    give ``None`` so that the page cannot tell the cases apart. The link is checked again on
    every run, so a revoked or expired link stops working at once.
    """
    if not isinstance(token, str) or not _TOKEN_SHAPE.match(token):
        return None
    try:
        scope = store.resolve_share(token, log_view=log_view)
    except Exception:  # same plain page for every failure, details in the log
        log.exception("share link could not be resolved")
        return None
    if scope is None or not tuple(getattr(scope, "test_ids", ()) or ()):
        return None
    return scope


#: Session-state key of the test last shown under a link (a change is logged as a view).
LOGGED_TEST_KEY = "tm_coach_logged_test"


def log_use(store: Store, scope: ShareScope, kind: str, test_id: int) -> None:
    """Log one use of a link (``test``: another test chosen; ``report``: report downloaded).

    A failure is logged for the server and never shown on the public page.
    """
    try:
        store.log_share_view(scope.share_id, kind=kind, test_id=test_id)
    except Exception:  # the coach still sees the page; the server log has the details
        log.exception("share link use could not be logged")


def render_invalid() -> None:
    """The one page every unusable link gets."""
    st.title("Tidemark")
    st.write(INVALID_TEXT)


def _allowed(scope: ShareScope, section: str) -> bool:
    sections = tuple(getattr(scope, "sections", ()) or ())
    return not sections or section in sections


def _coach_label(summary: TestSummary, *, show_name: bool) -> str:
    if show_name and summary.display_name:
        return str(summary.display_name)
    return str(summary.person_code)


def render() -> None:
    """Render the coach view for the token in the URL (or session state)."""
    token = state.share_token()
    if token is None:
        token = st.query_params.get("link")
    try:
        store = data.get_store()
    except Exception:  # never reveal server problems on a public link
        log.exception("store could not be opened for a coach link")
        render_invalid()
        return
    # One view is counted per browser session, not per rerun (choosing another test, ...).
    first_view = not st.session_state.get(VIEW_LOGGED_KEY)
    scope = resolve_scope(store, token, log_view=first_view)
    if scope is None:
        render_invalid()
        return
    st.session_state[VIEW_LOGGED_KEY] = True
    render_scope(store, scope)


def render_scope(store: Store, scope: ShareScope) -> None:
    """The read-only results of the tests a valid share covers."""
    show_name = bool(getattr(scope, "show_name", False))
    summaries = store.list_tests(test_ids=tuple(scope.test_ids))
    summaries = [s for s in summaries if s.id in set(scope.test_ids)]
    if not summaries:
        render_invalid()
        return
    summaries.sort(key=lambda s: (str(s.test_date or ""), s.id))
    by_id = {s.id: s for s in summaries}

    st.title(f"Exercise test results — {lab.markdown_text(_coach_label(summaries[0], show_name=show_name))}")
    st.caption(shared_by_text(lab.read_identity(store)))
    st.warning(" ".join(CAUTIONS))
    person_link = bool(getattr(scope, "for_person", False)) or len(summaries) > 1
    if person_link and _allowed(scope, "headline"):  # progress across the shared tests (one test: its baseline)
        render_progress(store, summaries, charts=_allowed(scope, "charts") and len(summaries) > 1)
        st.subheader("One test in detail")
    if len(summaries) > 1:
        test_id = st.selectbox(
            "Test",
            [s.id for s in summaries],
            index=len(summaries) - 1,
            format_func=lambda i: " · ".join(x for x in (str(by_id[i].test_date or "no date"), by_id[i].protocol or "") if x),
            key="coach_test",
        )
    else:
        test_id = summaries[0].id
    if st.session_state.get(LOGGED_TEST_KEY) not in (None, test_id):
        log_use(store, scope, "test", test_id)  # another test chosen inside a person link
    st.session_state[LOGGED_TEST_KEY] = test_id
    summary = by_id[test_id]
    if len(summaries) == 1:
        st.subheader(lab.markdown_text(" · ".join(x for x in (str(summary.test_date or ""), summary.protocol or "") if x) or "Test"))

    settings, version = stored_settings(store, test_id)
    results = data.analyze(test_id, state.settings_key(settings))

    if _allowed(scope, "headline"):
        rows = headline_rows(results)
        cols = st.columns(min(3, max(1, len(rows))))  # three across: labels with units fit on a tablet
        for i, row in enumerate(rows):
            cols[i % len(cols)].metric(
                f"{row['label']} ({row['unit']})" if row["unit"] else row["label"], row["value"], help=row["method"] or None
            )
        st.markdown("**Ventilatory thresholds (estimates)**")
        st.dataframe(threshold_frame(results), hide_index=True, width="stretch")
        render_flags(results, sport_only=True)
    if _allowed(scope, "zones"):
        zones = zone_rows(results)
        st.markdown("**Training zones**")
        if zones:
            st.dataframe(pd.DataFrame(zones), hide_index=True, width="stretch")
            if results.zones.load_basis == "steady_state_equivalent":
                st.caption(lab.markdown_text(results.zones.note))
        else:
            st.write("No zones for this test (thresholds not found).")
    session = data.load_session(test_id)
    if _allowed(scope, "charts"):
        for title, fig in report_figures(results, session):
            st.plotly_chart(fig, width="stretch", key=f"coach_chart_{title}")
    if _allowed(scope, "report"):
        def report_bytes() -> bytes:  # built on click, off the page run
            log_use(store, scope, "report", test_id)
            return build_test_report(store, test_id, results, session, version=version, show_name=show_name).encode("utf-8")

        st.download_button(
            "Download the report (HTML)",
            report_bytes,
            file_name=report_file_name(summary),
            mime="text/html",
            key="coach_report",
            on_click="ignore",  # no rerun while the browser fetches the file
        )


def shared_by_text(identity: LabIdentity | None) -> str:
    """The caption under the coach view's title, naming the lab when its name is set (escaped)."""
    name = str(getattr(identity, "name", "") or "").strip()
    return f"Read-only view shared by {lab.markdown_text(name)}." if name else "Read-only view shared by the lab."


def progress_records(store: Store, summaries: list[TestSummary]) -> list[ProgressRecord]:
    """One :class:`analysis.progress.TestRecord` per shared test, from the reviewer's stored settings."""
    records = []
    for s in summaries:
        settings, _ = stored_settings(store, s.id)
        label = " · ".join(x for x in (str(s.test_date or "no date"), s.protocol or "") if x)
        records.append(ProgressRecord(s.id, str(s.test_date or ""), data.analyze(s.id, state.settings_key(settings)), label=label))
    return records


def render_progress(store: Store, summaries: list[TestSummary], *, charts: bool = True) -> None:
    """Progress across the tests a person link covers: change from the first test, with charts."""
    from analysis.progress import BAND_METHOD, METRICS, progress_table
    from dashboard.charts.progress import progress_figure
    from dashboard.views.progress import change_display

    st.subheader(f"Progress across the {len(summaries)} shared tests" if len(summaries) > 1
                 else "Progress: one shared test so far")
    table = progress_table(progress_records(store, summaries))
    st.caption(f"Change from the first shared test. Band: {BAND_METHOD}. Estimates, not measurements of biology.")
    st.dataframe(change_display(table), hide_index=True, width="stretch")
    present = [m for m in METRICS if table.loc[table["metric"] == m, "value"].notna().any()]
    if present and charts:
        tabs = st.tabs([METRICS[m].label for m in present])
        for tab, metric in zip(tabs, present, strict=True):
            with tab:
                st.plotly_chart(progress_figure(table, metric), width="stretch", key=f"coach_progress_{metric}")


def stored_settings(store: Store, test_id: int) -> tuple[dict[str, Any], int | None]:
    """The reviewer's stored settings (a coach never has working settings of their own)."""
    try:
        settings, version = store.get_settings(test_id)
    except Exception:  # fall back to the analysis defaults
        log.exception("settings of shared test %s could not be read", test_id)
        return test_settings(store, test_id)
    return dict(settings or data.default_settings_dict()), version


def threshold_frame(results: TestResults) -> pd.DataFrame:
    """VT1 and VT2 as columns, quantities as rows (reads on a tablet without sideways scrolling;
    values from :func:`dashboard.report.html_report.threshold_display`)."""
    frame = pd.DataFrame(threshold_display(results)).fillna("–").set_index("Threshold").T
    frame.index.name = ""
    return frame.reset_index()
