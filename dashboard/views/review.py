"""Review page: one test — headline results, linked charts, thresholds, exclusions, sign-off.

The page only renders and collects input. Every number comes from
:func:`analysis.pipeline.analyze_session` (through :mod:`dashboard.data`); a reviewer's change
becomes new :class:`analysis.settings.AnalysisSettings`, which are re-analysed at once and saved
through the store (audited, versioned). The small pure functions at the top turn user input
into settings and can be tested without Streamlit.
"""

from __future__ import annotations

import dataclasses
import functools
import logging
import math
from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING, Any, Literal

import pandas as pd
import streamlit as st

from analysis.breaths import METHODS as AVERAGING_METHODS
from analysis.breaths import AveragingSpec
from analysis.errors import TidemarkError
from analysis.indices.threshold_values import ThresholdResult
from analysis.results import TestResults
from analysis.settings import AnalysisSettings, ThresholdOverride
from analysis.thresholds import pick_from_chart_point
from dashboard import data, state
from dashboard.charts.linking import (
    clamp_window,
    is_area_selection,
    selected_time_span,
    span_text,
    window_around,
    window_bounds,
    window_range,
)
from dashboard.charts.overview_grid import overview_figure
from dashboard.charts.time_course import VO2_TRACE
from dashboard.charts.vslope import DATA_TRACE
from dashboard.errors import show_error
from dashboard.lab import markdown_text
from dashboard.timefmt import clock_text
from dashboard.views._flags_panel import render_flags
from dashboard.views._subject_panel import details_panel
from dashboard.views._test_choice import current_or_default

if TYPE_CHECKING:
    from analysis.session import Session
    from store import Store, TestRecord

log = logging.getLogger("tidemark.dashboard")

#: Plain names of the averaging methods (the choice list of the selector).
AVERAGING_NAMES: dict[str, str] = {
    "time_bin": "Time bins (s)",
    "rolling_time": "Rolling time window (s)",
    "breaths": "Rolling mean of breaths",
    "middle_of_n": "Middle of n breaths",
}
#: Suggested sizes per method (within what AveragingSpec accepts).
AVERAGING_SIZES: dict[str, tuple[float, ...]] = {
    "time_bin": (5, 10, 15, 20, 30, 60),
    "rolling_time": (10, 15, 20, 30, 60),
    "breaths": (5, 7, 9, 11, 15, 21),
    "middle_of_n": (5, 7, 9, 11),
}
#: Label of the window selector per method (the unit of the size).
WINDOW_LABELS: dict[str, str] = {
    "time_bin": "Window (s)",
    "rolling_time": "Window (s)",
    "breaths": "Window (breaths)",
    "middle_of_n": "Window (breaths)",
}
THRESHOLD_NAMES = {"vt1": "VT1", "vt2": "VT2"}
#: Session-state key of the saves waiting for the end of the page run.
SAVE_QUEUE = "tm_review_save_queue"
#: Step of the time-window slider (s).
WINDOW_STEP_S = 10.0


def span_key(test_id: int) -> str:
    """Session-state key of the span highlighted on the charts (``(start_s, end_s)`` or absent)."""
    return f"tm_span_{test_id}"


def window_key(test_id: int) -> str:
    """Session-state key of the time window shared by every time panel (``(start_s, end_s)``)."""
    return f"time_window_{test_id}"


#: The charts a threshold can be picked on ("grid": any averaged point of the overview grid).
ChartName = Literal["vslope", "time", "grid"]

# --- pure helpers: user input -> settings --------------------------------------------------


def with_override(
    settings: Mapping[str, Any], *, kind: str, t_s: float | None = None, vo2_ml_min: float | None = None, reason: str = ""
) -> dict[str, Any]:
    """Settings dict with VT1 or VT2 placed by the reviewer (by time or by VO2)."""
    s = AnalysisSettings.from_dict(dict(settings))
    override = ThresholdOverride(t_s=t_s, vo2_ml_min=vo2_ml_min, reason=reason)
    if _kind(kind) == "vt1":
        return dataclasses.replace(s, vt1_override=override).to_dict()
    return dataclasses.replace(s, vt2_override=override).to_dict()


def without_override(settings: Mapping[str, Any], *, kind: str) -> dict[str, Any]:
    """Settings dict with the reviewer's VT1 or VT2 removed (back to the automatic pick)."""
    s = AnalysisSettings.from_dict(dict(settings))
    if _kind(kind) == "vt1":
        return dataclasses.replace(s, vt1_override=None).to_dict()
    return dataclasses.replace(s, vt2_override=None).to_dict()


def with_averaging(settings: Mapping[str, Any], *, method: str, size: float) -> dict[str, Any]:
    """Settings dict with another averaging (validated by :class:`AveragingSpec`)."""
    s = AnalysisSettings.from_dict(dict(settings))
    return dataclasses.replace(s, averaging=AveragingSpec.from_text(method, size)).to_dict()


def with_reference_set(settings: Mapping[str, Any], *, reference_set: str) -> dict[str, Any]:
    """Settings dict with another reference set for every % predicted (validated by
    :class:`AnalysisSettings`: ``friend2018``, ``hansen1984`` or ``jones1985``)."""
    s = AnalysisSettings.from_dict(dict(settings))
    return dataclasses.replace(s, reference_set=reference_set).to_dict()


def with_exclusions(
    settings: Mapping[str, Any], *, restored_rows: Sequence[int] | None = None, excluded_rows: Sequence[int] | None = None
) -> dict[str, Any]:
    """Settings dict with the reviewer's restored and/or extra excluded breaths (source rows)."""
    s = AnalysisSettings.from_dict(dict(settings))
    changes: dict[str, Any] = {}
    if restored_rows is not None:
        changes["restored_rows"] = tuple(int(r) for r in restored_rows)
    if excluded_rows is not None:
        changes["excluded_rows"] = tuple(int(r) for r in excluded_rows)
    return dataclasses.replace(s, **changes).to_dict()


def _kind(kind: str) -> str:
    if kind not in THRESHOLD_NAMES:
        from analysis.errors import InvalidParameter

        raise InvalidParameter("kind", "'vt1' or 'vt2'", kind)
    return kind


def selected_point(event: Any, *, trace_names: Sequence[str]) -> dict[str, Any] | None:
    """The first selected point of one of ``trace_names`` from a ``st.plotly_chart`` event.

    Returns a plain dict with ``x``, ``y``, ``point_index`` and ``customdata`` (what
    :func:`analysis.thresholds.pick_from_chart_point` reads), or ``None`` when nothing usable was
    selected. The event is the object returned by ``st.plotly_chart(..., on_select="rerun")``.
    """
    if not event:
        return None
    selection = event.get("selection") if isinstance(event, Mapping) else getattr(event, "selection", None)
    if not selection:
        return None
    points = selection.get("points") if isinstance(selection, Mapping) else getattr(selection, "points", None)
    for point in points or []:
        if not isinstance(point, Mapping):
            continue
        name = point.get("curve_name") or point.get("name")
        if trace_names and name is not None and name not in trace_names:
            continue
        if "x" not in point and "customdata" not in point:
            continue
        return {k: point.get(k) for k in ("x", "y", "point_index", "customdata") if k in point}
    return None


def grid_point(event: Any) -> dict[str, Any] | None:
    """The first selected point of the overview grid that carries ``[t_s, row]`` in its customdata
    (an averaged point of any panel); ``None`` for a click on a breath dot or a reference line."""
    if not event:
        return None
    selection = event.get("selection") if isinstance(event, Mapping) else getattr(event, "selection", None)
    points = (selection.get("points") if isinstance(selection, Mapping) else getattr(selection, "points", None)) or []
    for point in points:
        custom = point.get("customdata") if isinstance(point, Mapping) else None
        if isinstance(custom, Sequence) and not isinstance(custom, str) and len(custom) >= 2:
            return {k: point.get(k) for k in ("x", "y", "point_index", "customdata") if k in point}
    return None


def chart_pick(event: Any, *, chart: ChartName, avg: pd.DataFrame) -> dict[str, Any] | None:
    """A chart selection turned into ``{"t_s", "vo2_ml_min", "index"}`` (or ``None``).

    On the overview grid every averaged point carries its time first, so a click on any panel
    places the threshold at that point's time."""
    if chart == "grid":
        point = grid_point(event)
        return None if point is None else pick_from_chart_point(point, chart="time", avg=avg)
    names = (DATA_TRACE,) if chart == "vslope" else (VO2_TRACE,)
    point = selected_point(event, trace_names=names)
    if point is None:
        return None
    return pick_from_chart_point(point, chart=chart, avg=avg)


# --- state: the settings the reviewer is working on -----------------------------------------


def ensure_working(store: Store, test_id: int, *, refresh: bool = False) -> state.WorkingSettings:
    """The working settings of ``test_id``, loaded from the store the first time.

    With ``refresh`` (once per page run), saved working settings are replaced by the store's
    when someone saved a newer version meanwhile (another reviewer, possibly on another server
    of a shared deployment), so every rerun shows the others' saved work. Unsaved changes are
    kept; saving them is then refused as a conflict (no lost update).
    """
    working = state.working_settings(test_id)
    if refresh and working is not None and working.saved and not state.save_tracker().status(test_id)[0]:
        stored_settings, stored_version = store.get_settings(test_id)
        if stored_version != working.version:
            working = state.WorkingSettings(dict(stored_settings or data.default_settings_dict()), stored_version, True)
            state.set_working_settings(test_id, working)
    if working is None:
        settings, version = store.get_settings(test_id)
        working = state.WorkingSettings(dict(settings or data.default_settings_dict()), version, True)
        state.set_working_settings(test_id, working)
    return working


def apply_change(store: Store, test_id: int, new_settings: dict[str, Any], *, reason: str = "") -> str:
    """Show ``new_settings`` at once and keep the change as an unsaved change of this test.

    Nothing is stored here: the change (in words, ``reason``) joins the test's unsaved changes
    and the next run analyses the new settings. The reviewer's explicit Save
    (:func:`save_pending`) stores all unsaved changes together as ONE new version whose reason
    lists every change. Returns ``"unsaved"``, ``"unchanged"`` (nothing differs, or the change
    leads back to the stored settings) or ``"view-only"``.
    """
    working = ensure_working(store, test_id)
    key = state.settings_key(new_settings)
    if key == working.key:
        return "unchanged"
    if not state.can_edit(state.current_user()) or working.version is None:
        state.set_working_settings(test_id, state.WorkingSettings(new_settings, working.version, saved=False))
        state.flash("View only: the change is shown here but not saved (your role cannot edit).", kind="info")
        return "view-only"
    stored, _ = store.get_settings(test_id, version=working.version)
    if key == state.settings_key(dict(stored or data.default_settings_dict())):  # back where the version was
        state.set_working_settings(test_id, state.WorkingSettings(new_settings, working.version, saved=True))
        state.forget_pending_changes(test_id)
        return "unchanged"
    state.set_working_settings(test_id, state.WorkingSettings(new_settings, working.version, saved=False))
    state.add_pending_change(test_id, reason.strip() or "analysis setting changed")
    return "unsaved"


def save_pending(store: Store, test_id: int, *, note: str = "") -> str:
    """Store the unsaved changes of ``test_id`` as ONE new version (the explicit Save).

    The save runs in the background (:func:`dashboard.data.save_in_background`) once the page is
    drawn, and its outcome is picked up by :func:`sync_saves`; a version saved meanwhile by
    someone else refuses it (no lost update). Returns ``"saving"``, ``"unchanged"``,
    ``"view-only"`` or ``"refused"`` (an earlier save of this test was refused: reload first).
    """
    working = ensure_working(store, test_id)
    if working.saved:
        return "unchanged"
    user = state.current_user()
    if not state.can_edit(user) or working.version is None:
        return "view-only"
    tracker = state.save_tracker()
    _, version, failed, _ = tracker.status(test_id)
    if failed:
        return "refused"
    reason = state.version_reason(state.pending_changes(test_id), note=note) or "analysis settings changed"
    with tracker.lock:  # counted as pending now; handed to the save worker once the page is drawn
        tracker.versions.setdefault(test_id, int(version if version is not None else working.version))
    st.session_state.setdefault(SAVE_QUEUE, []).append(
        {"test_id": test_id, "settings": working.settings, "actor": user, "reason": reason,
         "settings_json": working.key}
    )
    state.forget_pending_changes(test_id)  # changes made while this save runs start a new list
    return "saving"


def flush_saves(store: Store) -> int:
    """Hand the queued saves to the background worker (called after the page is drawn, so the
    save does not compete with drawing the change). Returns how many were queued."""
    queue = st.session_state.pop(SAVE_QUEUE, [])
    tracker = state.save_tracker()
    for job in queue:
        _, version, _, _ = tracker.status(job["test_id"])
        data.save_in_background(store, tracker, expected_version=int(version or 0), **job)
    return len(queue)


def sync_saves(test_id: int) -> tuple[int, str | None]:
    """Fold finished background saves into the working settings: ``(pending, failure message)``."""
    working = state.working_settings(test_id)
    pending, version, failed, saved_key = state.save_tracker().status(test_id)
    if working is not None and not pending and not failed and version is not None:
        saved = saved_key == working.key
        if saved or version != working.version:
            state.set_working_settings(test_id, state.WorkingSettings(working.settings, version, saved=saved or working.saved))
        if saved:
            state.forget_pending_changes(test_id)
    return pending, failed


def reload_from_store(test_id: int) -> None:
    """Drop the reviewer's unsaved changes (and a refused save) and show the stored version."""
    state.forget_working_settings(test_id)
    state.forget_pending_changes(test_id)
    state.save_tracker().forget(test_id)


# --- rendering ------------------------------------------------------------------------------


def _fmt(value: Any, digits: int = 0, unit: str = "") -> str:
    """A number as every page and the report write it (thin-space thousands), with its unit."""
    from dashboard.report.html_report import format_number

    if value is None:
        return "–"
    try:
        v = float(value)
    except (TypeError, ValueError):
        return str(value)
    if v != v:  # NaN
        return "–"
    return f"{format_number(v, digits)} {unit}".strip()


def _steady_state_load(results: TestResults, kind: str) -> str:
    from dashboard.report.html_report import steady_state_load

    return steady_state_load(results, kind)


def threshold_rows(results: TestResults) -> list[dict[str, str]]:
    """VT1/VT2 display rows from the result record (formatting only)."""
    rows = []
    for kind in ("vt1", "vt2"):
        t: ThresholdResult | None = getattr(results, kind)
        if t is None:
            rows.append({"Threshold": THRESHOLD_NAMES[kind], "Time": "not found", "VO2": "", "VO2/kg": "",
                         "% VO2peak": "", "Heart rate": "", "Load": "", "Set by": "", "Method": ""})
            continue
        load = _fmt(t.work_w, 0, "W") if t.work_w is not None else _fmt(t.speed_kmh, 1, "km/h")
        steady = _steady_state_load(results, kind)
        if steady:
            load = f"{load} (steady-state {steady})"
        manual = t.source == "manual"
        rows.append(
            {
                "Threshold": THRESHOLD_NAMES[kind] + (" ✎ manual" if manual else ""),
                "Time": clock_text(t.t_s),
                "VO2": _fmt(t.vo2_ml_min, 0, "mL/min"),
                "VO2/kg": _fmt(t.vo2_ml_kg_min, 1, "mL/kg/min"),
                "% VO2peak": _fmt(t.pct_vo2_peak, 0, "%"),
                "Heart rate": _fmt(t.hr_bpm, 0, "beats/min"),
                "Load": load,
                "Set by": "reviewer (manual)" if manual else f"automatic, {t.confidence} confidence",
                "Method": t.method,
            }
        )
    return rows


def threshold_lines(results: TestResults) -> list[str]:
    """One sentence per threshold, e.g. ``VT1: 2 741 mL/min at 11:55 — automatic (consensus)``."""
    lines = []
    for kind in ("vt1", "vt2"):
        t: ThresholdResult | None = getattr(results, kind)
        name = THRESHOLD_NAMES[kind]
        if t is None:
            lines.append(f"**{name}:** not found")
            continue
        how = "✎ manual (set by a reviewer)" if t.source == "manual" else f"automatic ({t.method})"
        lines.append(f"**{name}:** {_fmt(t.vo2_ml_min, 0, 'mL/min')} at {clock_text(t.t_s)} — {how}")
    return lines


#: Longest unit written beside a headline number; longer ones go into the label (a metric
#: cuts its value off with "…" when it does not fit a third of the page).
SHORT_UNIT_CHARS = 10
#: Up to this many excluded breaths are listed as a plain table (reasons wrap); more scroll.
WRAPPED_TABLE_ROWS = 30
#: Who left a breath out, as the reader sees it (codes from the analysis' excluded table).
EXCLUDED_BY = {"auto": "automatic", "reviewer": "reviewer"}


def metric_text(row: Mapping[str, str]) -> tuple[str, str]:
    """``(label, value)`` of a headline metric: ``("VO2peak", "1 055 mL/min")`` or, for a long
    unit, ``("OUES (mL/min per log10(L/min))", "1 236")``."""
    unit = row.get("unit") or ""
    if len(unit) > SHORT_UNIT_CHARS:
        return f"{row['label']} ({unit})", str(row["value"])
    return str(row["label"]), f"{row['value']} {unit}".strip()


def signal_label(column: str) -> str:
    """``"vo2_ml_min"`` -> ``"VO2"``: the trade name of a canonical column (code kept if unknown)."""
    from analysis import columns as C

    spec = C.COLUMNS.get(column) if column else None
    return spec.label if spec is not None else (column or "")


def excluded_rows_view(table: pd.DataFrame) -> pd.DataFrame:
    """The excluded-breaths table as the reviewer reads it: trade names, no codes.

    The value itself is not repeated in a column of its own: the reason already states it with
    its unit ("VO2 230.9 mL/min is 3.0 SD below ..."), and the reason needs the width.
    """
    return pd.DataFrame(
        {
            "Line in file": table["source_row"].astype(int).to_numpy(),
            "Time (m:ss)": ["–" if pd.isna(t) else clock_text(t) for t in table["t_s"]],
            "Signal": [signal_label(c) for c in table["column"]],
            "Excluded by": [EXCLUDED_BY.get(str(b), str(b)) for b in table["by"]],
            "Reason": table["reason"].astype(str).to_numpy(),
        }
    )


@st.fragment(run_every=1.0)
def _save_status(test_id: int) -> None:
    """A "saving" note that polls the background save and refreshes the page when it is done."""
    pending = state.save_tracker().status(test_id)[0]
    if pending or st.session_state.get(SAVE_QUEUE):
        st.caption("Saving the changes to the store as one new version…")
    else:
        st.rerun(scope="app")


def _header(store: Store, test_id: int, working: state.WorkingSettings) -> TestRecord:
    record = store.get_test(test_id)
    s = record.summary
    who = s.person_code + (f" ({s.display_name})" if s.display_name else "")
    st.subheader(markdown_text(f"{who} — {s.test_date or 'no date'}"))
    signed = record.current_version_signed
    bits = [s.protocol or "", f"file {s.file_name}",
            f"version {working.version if working.version is not None else '–'}"]
    if signed and working.saved:
        sign = next((x for x in record.sign_offs if x.version == s.version), None)
        bits.append(f"signed off by {sign.signed_by}" if sign else "signed off")
    st.caption(markdown_text(" · ".join(b for b in bits if b)))
    return record


#: Asks the browser to warn before the tab is closed or reloaded while the marker element (drawn
#: only while Review holds unsaved changes) is on the page. Registered once per browser tab; our
#: own script, no outside request. Moving between the dashboard's pages keeps the changes in the
#: session (per test), so only leaving the dashboard needs the warning.
LEAVE_GUARD_HTML = (
    '<div data-tidemark-unsaved="1"></div><script>'
    "if(!window.__tidemarkLeaveGuard){window.__tidemarkLeaveGuard=true;"
    "window.addEventListener('beforeunload',function(e){"
    "if(document.querySelector('[data-tidemark-unsaved]')){e.preventDefault();e.returnValue='';}});}"
    "</script>"
)


def unsaved_text(changes: Sequence[str]) -> str:
    """The line above the Save button: how many unsaved changes and what they are."""
    n = len(changes)
    if not n:
        return "Unsaved changes: what you see differs from the stored version."
    listed = state.version_reason(changes)
    return f"Unsaved changes ({n}), not stored yet: {listed}. Save stores them together as one new version."


def _unsaved_bar(store: Store, test_id: int, working: state.WorkingSettings) -> None:
    """Unsaved changes of this test: what they are, Save (one new version) and Discard."""
    if working.saved:
        return
    st.html(LEAVE_GUARD_HTML, unsafe_allow_javascript=True)
    if not state.can_edit() or working.version is None:
        c1, c2 = st.columns([3, 1], vertical_alignment="center")
        c1.info("View only: what you see differs from the stored version and is not saved (your role cannot edit).")
        c2.button("Back to the stored version", key=f"discard_{test_id}", on_click=reload_from_store, args=(test_id,))
        return
    st.warning(markdown_text(unsaved_text(state.pending_changes(test_id))))
    c1, c2, c3 = st.columns([3, 1, 1], vertical_alignment="bottom")
    c1.text_input("Note for this version (optional; kept in the audit trail)", key=f"save_note_{test_id}")
    c2.button(f"Save as version {int(working.version) + 1}", type="primary", key=f"save_{test_id}",
              on_click=_guard(_on_save), args=(store, test_id))
    c3.button("Discard the changes", key=f"discard_{test_id}", on_click=reload_from_store, args=(test_id,))


def _on_save(store: Store, test_id: int) -> None:
    note = (st.session_state.get(f"save_note_{test_id}") or "").strip()
    outcome = save_pending(store, test_id, note=note)
    if outcome == "saving":
        st.session_state[f"save_note_{test_id}"] = ""


def _headline(results: TestResults) -> None:
    from dashboard.report.html_report import headline_rows

    st.subheader("Headline results")
    rows = headline_rows(results)
    cols = st.columns(min(3, max(1, len(rows))))  # three across stays readable on a tablet
    for i, row in enumerate(rows):
        with cols[i % len(cols)]:
            label, shown = metric_text(row)
            st.metric(label, shown)
            if row["method"]:
                st.caption(row["method"])
    verdict = results.maximality.label
    if verdict:
        st.markdown(f"**Maximality:** {verdict}")
        for r in results.maximality.reasons:
            st.markdown(f"- {r}")


def _guard(fn: Any) -> Any:
    """Run a widget callback; a problem becomes a message on the next run, never a traceback."""

    def run(*args: Any, **kwargs: Any) -> None:
        try:
            fn(*args, **kwargs)
        except Exception as exc:  # shown plainly after the rerun
            from dashboard.errors import describe

            if not isinstance(exc, TidemarkError):
                log.exception("review change failed")
            state.flash(describe(exc), kind="error")

    return run


def _on_averaging(store: Store, test_id: int, *, method_changed: bool) -> None:
    working = ensure_working(store, test_id)
    method = st.session_state[f"avg_method_{test_id}"]
    sizes = AVERAGING_SIZES[method]
    size = sizes[len(sizes) // 2] if method_changed else st.session_state[f"avg_size_{test_id}_{method}"]
    apply_change(store, test_id, with_averaging(working.settings, method=method, size=size),
                 reason=f"averaging changed to {AveragingSpec.from_text(method, size).label}")


def _on_reference_set(store: Store, test_id: int) -> None:
    from analysis.interpretation.predicted import REFERENCE_SHORT_NAMES

    working = ensure_working(store, test_id)
    chosen = st.session_state[f"reference_set_{test_id}"]
    apply_change(store, test_id, with_reference_set(working.settings, reference_set=chosen),
                 reason=f"reference set for % predicted changed to {REFERENCE_SHORT_NAMES.get(chosen, chosen)}")


def _reference_set_selector(store: Store, test_id: int, working: state.WorkingSettings) -> None:
    """Which published equations every % predicted of this test follows (a new version when changed)."""
    from analysis.interpretation.predicted import REFERENCE_SETS
    from analysis.settings import DEFAULT_REFERENCE_SET

    codes = list(REFERENCE_SETS)
    key = f"reference_set_{test_id}"
    st.session_state[key] = working.settings.get("reference_set") or DEFAULT_REFERENCE_SET
    st.selectbox(
        "Reference set for % predicted", codes, format_func=lambda c: REFERENCE_SETS[c], key=key,
        on_change=_guard(_on_reference_set), args=(store, test_id),
        help="The published equations every % predicted of this test is read against; a change is saved as a new version.",
    )


def _averaging_selector(store: Store, test_id: int, working: state.WorkingSettings) -> None:
    current = working.settings.get("averaging") or {}
    method = current.get("method", "time_bin")
    size = current.get("size")
    methods = [m for m in AVERAGING_METHODS if m in AVERAGING_NAMES]
    st.session_state[f"avg_method_{test_id}"] = method if method in methods else methods[0]
    c1, c2 = st.columns(2)
    c1.selectbox(
        "Averaging", methods, format_func=lambda m: AVERAGING_NAMES[m], key=f"avg_method_{test_id}",
        on_change=_guard(_on_averaging), args=(store, test_id), kwargs={"method_changed": True},
    )
    sizes = list(AVERAGING_SIZES.get(method, ()))
    if size is not None and size not in sizes:
        sizes = sorted(set(sizes) | {size})
    size_key = f"avg_size_{test_id}_{method}"
    if size in sizes:
        st.session_state[size_key] = size
    c2.selectbox(WINDOW_LABELS.get(method, "Window"), sizes, key=size_key, on_change=_guard(_on_averaging),
                 args=(store, test_id), kwargs={"method_changed": False}, format_func=lambda v: f"{v:g}")


def _on_threshold(store: Store, test_id: int, *, clear: bool) -> None:
    working = ensure_working(store, test_id)
    kind = st.session_state.get(f"thr_kind_{test_id}", "vt1")
    by = st.session_state.get(f"thr_by_{test_id}", "time")
    reason = (st.session_state.get(f"thr_reason_{test_id}") or "").strip()
    if clear:
        apply_change(store, test_id, without_override(working.settings, kind=kind),
                     reason=reason or f"{THRESHOLD_NAMES[kind]} back to automatic")
        return
    value = st.session_state.get(f"thr_t_{test_id}" if by == "time" else f"thr_v_{test_id}")
    if value is None or (isinstance(value, str) and not value.strip()):
        state.flash("Type a time (m:ss, or seconds) or a VO2 in mL/min first.", kind="error")
        return
    if by == "time":
        try:
            value = time_from_text(str(value))
        except ValueError as exc:
            state.flash(str(exc), kind="error")
            return
    kw = {"t_s": float(value)} if by == "time" else {"vo2_ml_min": float(value)}
    new = with_override(working.settings, kind=kind, reason=reason, **kw)
    apply_change(store, test_id, new, reason=reason or f"{THRESHOLD_NAMES[kind]} set by {by}")


#: Label of the typed threshold time (the charts and tables show m:ss; seconds are accepted too).
TIME_INPUT_LABEL = "Time (m:ss or seconds)"


def time_from_text(text: str) -> float:
    """A typed time from the start of the recording in seconds: ``"12:30"`` (m:ss, as the charts
    and tables show it), ``"1:02:05"`` (h:mm:ss), or plain seconds (``"750"``, ``"750.5"``).

    Raises ``ValueError`` with a message for the reviewer when the text is none of these (a
    negative time, seconds or minutes of 60 or more after a colon, letters).

    Examples
    --------
    >>> time_from_text("12:30")
    750.0
    >>> time_from_text("1:02:05")
    3725.0
    >>> time_from_text(" 750.5 ")
    750.5
    """
    raw = text.strip()
    problem = ValueError(f"Type the time as m:ss (12:30) or in seconds (750); received {raw!r}.")
    parts = raw.split(":")
    if not raw or len(parts) > 3 or "-" in raw:  # no negative times ("-0:05" reads as 0 and 5)
        raise problem
    try:
        numbers = [float(p) for p in parts]
    except ValueError:
        raise problem from None
    if any(not math.isfinite(n) or n < 0 for n in numbers):
        raise problem
    if len(numbers) == 1:
        return numbers[0]
    *whole, secs = numbers
    if secs >= 60 or any(n != int(n) for n in whole) or (len(whole) == 2 and whole[1] >= 60):
        raise problem
    if any(len(p.strip()) != 2 for p in parts[1:-1]) or len(parts[-1].split(".")[0].strip()) != 2:
        raise problem  # "12:5" is ambiguous (5 or 50 s): seconds and minutes after a colon have two digits
    total = 0.0
    for n in whole:
        total = total * 60 + n
    return total * 60 + secs


def _threshold_controls(store: Store, test_id: int, working: state.WorkingSettings, results: TestResults) -> None:
    st.subheader("Set a threshold")
    st.caption("Type a time (m:ss, as on the charts, or seconds) or a VO2, or pick the threshold below and click an averaged point on any panel of the "
               "overview above (a click moves the threshold to that point's time; a box or lasso only highlights "
               "breaths).")
    c1, c2, c3 = st.columns([1, 1, 2])
    kind = c1.radio("Threshold", ["vt1", "vt2"], format_func=THRESHOLD_NAMES.get, horizontal=True, key=f"thr_kind_{test_id}")
    by = c2.radio("Place by", ["time", "VO2"], horizontal=True, key=f"thr_by_{test_id}")
    c3.text_input("Reason (kept in the audit trail)", key=f"thr_reason_{test_id}")
    with st.form(f"thr_form_{test_id}", clear_on_submit=False, border=False):
        if by == "time":
            st.text_input(TIME_INPUT_LABEL, key=f"thr_t_{test_id}", placeholder="e.g. 12:30",
                          help="Minutes and seconds from the start of the recording, as on the charts (12:30), "
                               "or seconds (750).")
        else:
            st.number_input("VO2 (mL/min)", min_value=1.0, step=25.0, value=None, key=f"thr_v_{test_id}")
        a, b = st.columns(2)
        a.form_submit_button(f"Set {THRESHOLD_NAMES[kind]}", type="primary", on_click=_guard(_on_threshold),
                             args=(store, test_id), kwargs={"clear": False})
        b.form_submit_button(f"Back to automatic {THRESHOLD_NAMES[kind]}", on_click=_guard(_on_threshold),
                             args=(store, test_id), kwargs={"clear": True})


def _on_chart_select(store: Store, test_id: int, *, chart: ChartName) -> None:
    chart_selected(store, test_id, st.session_state.get(f"chart_{chart}_{test_id}"), chart=chart)


def chart_selected(store: Store, test_id: int, event: Any, *, chart: ChartName) -> None:
    """A selection on a chart: a box or lasso highlights those breaths; a click on an averaged
    point places the chosen threshold there (an unsaved change until Save)."""
    working = ensure_working(store, test_id)
    if is_area_selection(event):  # box / lasso: highlight those breaths on every chart, move nothing
        span = selected_time_span(event)
        if span is not None:
            st.session_state[span_key(test_id)] = span
        return
    avg = data.analyze(test_id, working.key).averaged
    pick = chart_pick(event, chart=chart, avg=avg)
    if pick is None:
        return
    kind = st.session_state.get(f"thr_kind_{test_id}", "vt1")
    reason = (st.session_state.get(f"thr_reason_{test_id}") or "").strip() or (
        f"{THRESHOLD_NAMES[kind]} picked on the "
        + {"vslope": "V-slope chart", "time": "time-course chart", "grid": "overview"}[chart]
    )
    apply_change(store, test_id, with_override(working.settings, kind=kind, t_s=float(pick["t_s"]), reason=reason),
                 reason=reason)


def _select_callback(store: Store, test_id: int, chart: ChartName) -> Any:
    guarded = _guard(_on_chart_select)
    return functools.partial(guarded, store, test_id, chart=chart)


def _time_window(test_id: int, bounds: tuple[float, float]) -> tuple[float, float] | None:
    """The "Time window" range slider shared by every time panel, labelled in m:ss (``None`` when
    it spans the whole test: the panels then fit the whole recording).

    The chosen window is kept under :func:`window_key`; the slider itself is made anew (its own
    key) whenever the page moves the window (zoom to a span) or the test's time span changes, and
    starts from the kept window — a range slider given its value through the widget's own state
    would come back as a single value after a keyboard change.
    """
    key = window_key(test_id)
    options = window_options(bounds, step_s=WINDOW_STEP_S)
    lo, hi = clamp_window(st.session_state.get(key, bounds), bounds)
    start = (snap(lo, options), snap(hi, options))
    generation = int(st.session_state.get(f"{key}_gen", 0))
    widget = f"{key}_slider_{generation}_{bounds[0]:.0f}_{bounds[1]:.0f}"
    window = st.select_slider("Time window", options=options, value=start, key=widget, format_func=clock_text,
                              help="Zooms every time panel of the overview together (m:ss from the start).")
    if isinstance(window, (tuple, list)) and len(window) == 2:
        st.session_state[key] = (float(window[0]), float(window[1]))
    lo, hi = st.session_state.get(key, start)
    rng = window_range((float(lo), float(hi)), bounds=bounds)
    return (rng[0], rng[1]) if rng else None


def move_window(test_id: int, window: tuple[float, float]) -> None:
    """Set the shared time window from the page (the slider is made anew at that window)."""
    key = window_key(test_id)
    st.session_state[key] = (float(window[0]), float(window[1]))
    st.session_state[f"{key}_gen"] = int(st.session_state.get(f"{key}_gen", 0)) + 1


def window_options(bounds: tuple[float, float], *, step_s: float) -> list[float]:
    """The slider's positions: every ``step_s`` from the start to the end of ``bounds`` (s)."""
    n = round((bounds[1] - bounds[0]) / step_s)
    return [float(bounds[0] + i * step_s) for i in range(n + 1)]


def snap(value: float, options: Sequence[float]) -> float:
    """The option nearest ``value`` (a remembered window always lands on a slider position)."""
    return min(options, key=lambda o: abs(o - float(value)))


def _span_note(test_id: int, bounds: tuple[float, float]) -> tuple[float, float] | None:
    span = st.session_state.get(span_key(test_id))
    if span is None:
        st.caption("To see where breaths sit in time, pick the box or lasso tool (top right of the overview) and "
                   "draw round them on any panel: their span is shaded on the time panels and ringed on the others.")
        return None
    a, b, c = st.columns([2, 1, 1])
    a.caption(f"Highlighted on all charts: breaths selected at {span_text(span)}.")
    b.button("Zoom the time panels to it", key=f"zoom_span_{test_id}", on_click=_zoom_to_span, args=(test_id, bounds))
    if c.button("Clear the highlight", key=f"clear_span_{test_id}"):
        st.session_state.pop(span_key(test_id), None)
        st.rerun()
    return (float(span[0]), float(span[1]))


def _zoom_to_span(test_id: int, bounds: tuple[float, float]) -> None:
    span = st.session_state.get(span_key(test_id))
    if span is not None:
        move_window(test_id, window_around(span, bounds, step_s=WINDOW_STEP_S))


#: Less space above the page's first line, so the overview grid fits a laptop screen (1440x900)
#: under the test's header. A style rule of this page only (no outside request).
COMPACT_TOP_CSS = "<style>[data-testid='stMainBlockContainer']{padding-top:2rem}</style>"


def _overview(store: Store, test_id: int, results: TestResults, session: Session, lines: Sequence[str], *, n_notes: int = 0) -> None:
    """The overview grid: every relationship at a glance, linked by one time window and one
    highlighted span, VT1/VT2 and their 90 % bands on every panel. Above it, in one row, the two
    thresholds and the time window; the analysis' notes follow under it."""
    report = results.thresholds
    bounds = window_bounds(results.averaged["t_s"].to_numpy(dtype=float), step_s=WINDOW_STEP_S)
    c1, c2, c3 = st.columns([1, 1, 2], vertical_alignment="center")
    for col, line in zip((c1, c2), lines, strict=False):
        col.markdown(line)
    with c3:
        window = _time_window(test_id, bounds)
    if n_notes:
        st.caption(f"⚠ {n_notes} {'note' if n_notes == 1 else 'notes'} on this analysis under the overview.")
    span = st.session_state.get(span_key(test_id))
    span = (float(span[0]), float(span[1])) if span is not None else None
    fig = overview_figure(
        results.averaged,
        thresholds={"vt1": results.vt1, "vt2": results.vt2},
        fit=report.vslope,
        breaths=session.breaths,
        excluded_rows=[e.source_row for e in results.excluded_breaths],
        time_window=window,
        highlight=span,
    )
    st.plotly_chart(fig, on_select=_select_callback(store, test_id, "grid"), selection_mode=("points", "box", "lasso"),
                    key=f"chart_grid_{test_id}", config={"displaylogo": False})
    st.caption(f"VT1 orange dashed, VT2 purple dotted, each with its 90 % interval as a faint band; shaded: rest, "
               f"warm-up, recovery; times in m:ss. Lines averaged: {results.settings.averaging.label}.")
    _span_note(test_id, bounds)
    if report.vslope is not None and not report.vslope.valid:
        st.caption(f"V-slope fit not accepted: {report.vslope.reason}")
    for line in threshold_notes(report.agreement or {}, report.reasons or []):
        st.caption(line)


def threshold_notes(agreement: Mapping[str, str], reasons: Sequence[str]) -> list[str]:
    """The threshold captions under the charts: each method agreement, then each note that does
    not merely repeat one of them (e.g. "VT2 not found: none of 3 methods found a VT2")."""
    lines = [f"{THRESHOLD_NAMES[k]}: {agreement[k]}" for k in ("vt1", "vt2") if agreement.get(k)]
    said = [str(v) for v in agreement.values() if v]
    lines += [f"Note: {r}" for r in reasons if not any(s in str(r) for s in said)]
    return lines


def _exclusions(store: Store, test_id: int, working: state.WorkingSettings, results: TestResults) -> None:
    st.subheader("Excluded breaths")
    table = results.excluded_table()
    restored = [int(r) for r in working.settings.get("restored_rows") or []]
    if not len(table) and not restored:
        st.caption("No breath is excluded.")
        return
    if len(table):
        view = excluded_rows_view(table)
        if len(view) <= WRAPPED_TABLE_ROWS:  # a plain table wraps the reasons instead of cutting them off
            st.table(view.set_index("Line in file"))
        else:
            st.dataframe(view, hide_index=True,
                         column_config={"Reason": st.column_config.TextColumn("Reason", width="large")})
    candidates = sorted(set(table["source_row"].astype(int).tolist() if len(table) else []) | set(restored))
    st.session_state[f"restore_{test_id}"] = [r for r in restored if r in candidates]
    st.multiselect(
        "Put these breaths back into the analysis (line numbers in the file)",
        candidates, key=f"restore_{test_id}", on_change=_guard(_on_restore), args=(store, test_id),
    )


def _on_restore(store: Store, test_id: int) -> None:
    working = ensure_working(store, test_id)
    restored = [int(r) for r in working.settings.get("restored_rows") or []]
    chosen = [int(r) for r in st.session_state.get(f"restore_{test_id}") or []]
    apply_change(store, test_id, with_exclusions(working.settings, restored_rows=chosen),
                 reason="breaths restored" if len(chosen) > len(restored) else "breath exclusion re-applied")


def _zones(results: TestResults) -> None:
    from dashboard.report.html_report import zone_rows

    st.subheader("Training zones")
    rows = zone_rows(results)
    if rows:
        st.dataframe(pd.DataFrame(rows), hide_index=True)
    if results.zones.note:
        st.caption(markdown_text(results.zones.note))
    if not rows:
        st.caption("No zones: they need at least VT1.")


def _history_and_sign_off(store: Store, test_id: int, working: state.WorkingSettings, record: Any) -> None:
    st.subheader("Versions, audit trail and sign-off")
    c1, c2 = st.columns([2, 1])
    with c2:
        if not working.saved:
            st.caption("Save or discard the unsaved changes (top of the page) before signing off.")
        elif record.current_version_signed:
            st.success(f"Version {record.summary.version} is signed off. A later change starts a new version.")
        elif state.save_tracker().status(test_id)[0]:
            st.caption("Saving the last change; sign-off is possible once it is stored.")
        elif state.can_edit():
            note = st.text_input("Sign-off note", key=f"sign_note_{test_id}")
            if st.button("Sign off this version", type="primary", key=f"sign_{test_id}"):
                try:
                    v = store.sign_off(test_id, actor=state.acting_user(), version=working.version, note=note)
                except Exception as exc:  # noqa: BLE001 - conflicts shown plainly
                    show_error(exc, context="Sign-off")
                else:
                    state.flash(f"Version {v} signed off.")
                    st.rerun()
        else:
            st.caption("Your role can view but not sign off.")
    with c1:
        versions = store.list_versions(test_id)
        st.dataframe(
            pd.DataFrame(
                [{"Version": v["version"], "Saved (UTC)": f"{v['created_at']:%Y-%m-%d %H:%M}" if v["created_at"] else "",
                  "By": v["created_by"] or "import", "Reason": v["reason"], "Signed off": "yes" if v["signed"] else "no"}
                 for v in versions]
            ),
            hide_index=True,
        )
        entries = store.audit_log(test_id)
        if entries:
            with st.expander(f"Audit trail ({len(entries)} {'entry' if len(entries) == 1 else 'entries'})"):
                st.dataframe(
                    pd.DataFrame(
                        [{"When (UTC)": f"{e.at:%Y-%m-%d %H:%M}", "Who": e.actor, "Action": audit_action(e.action),
                          "Field": audit_field(e.field),
                          "Old": "" if e.old_value is None else str(e.old_value),
                          "New": "" if e.new_value is None else str(e.new_value), "Reason": e.reason}
                         for e in entries]
                    ),
                    hide_index=True,
                )


#: Audit actions and setting names as the reviewer reads them (codes from the store).
AUDIT_ACTIONS = {
    "import": "imported", "settings_change": "setting changed", "sign_off": "signed off",
    "person_edit": "person edited", "soft_delete": "deleted", "restore": "restored",
    "share_create": "share link created", "share_revoke": "share link revoked",
    "sign_off_after_reset": "CAUTION: signed off with a password an administrator set",
}
AUDIT_FIELDS = {
    "vt1_override": "VT1 placed by a reviewer", "vt2_override": "VT2 placed by a reviewer",
    "excluded_rows": "breaths excluded by a reviewer", "restored_rows": "breaths put back",
    "averaging": "averaging", "averaging.method": "averaging method", "averaging.size": "averaging window",
    "peak_window_s": "peak window (s)", "plateau_threshold_ml_min": "plateau limit (mL/min)",
}


def audit_action(action: str) -> str:
    return AUDIT_ACTIONS.get(action, action.replace("_", " "))


AUDIT_SUBFIELDS = {"t_s": "time (s)", "vo2_ml_min": "VO2 (mL/min)", "reason": "reason", "method": "method",
                   "size": "window"}


def audit_field(field: str | None) -> str:
    """A stored setting path (``vt1_override.t_s``) in words (``VT1 placed by a reviewer: time (s)``)."""
    if not field:
        return ""
    if field in AUDIT_FIELDS:
        return AUDIT_FIELDS[field]
    head, _, tail = field.partition(".")
    words = AUDIT_FIELDS.get(head, head.replace("_", " "))
    if not tail:
        return words
    return f"{words}: {AUDIT_SUBFIELDS.get(tail, tail.replace('_', ' ').replace('.', ': '))}"


def _choose_test(store: Store) -> int | None:
    tests = list(store.list_tests())
    if not tests:
        st.info("No tests yet. Import one on the Library page.")
        return None
    by_id = {t.id: t for t in tests}
    ids = list(by_id)
    current = current_or_default(ids)
    chosen = st.selectbox(
        "Test", ids, index=ids.index(current) if current in ids else 0, key="review_test",
        format_func=lambda i: f"{by_id[i].person_code} · {by_id[i].test_date or 'no date'} · {by_id[i].protocol or by_id[i].file_name}",
    )
    if chosen != current:
        state.set_current_test(chosen)
    return int(chosen)


#: Session-state key: the Review page was drawn once in this browser session (from then on every
#: run draws the sections under the overview in the same run as the overview).
PAGE_DRAWN = "tm_review_drawn"
#: Milliseconds after which the sections are asked for even if the overview has not drawn (a
#: browser that cannot draw the chart still gets every table and control).
SECTIONS_FALLBACK_MS = 8000
#: Our own browser code (no outside request): wait until the overview's first trace is on the
#: page, let the browser paint it, then ask for the next run.
OVERVIEW_DRAWN_JS = """
export default function (component) {
  const { data, setTriggerValue } = component;
  const started = performance.now();
  let timer = null;
  let sent = false;
  const send = () => { if (!sent) { sent = true; setTriggerValue("drawn", true); } };
  const check = () => {
    const drawn = document.querySelector(data.selector);
    if (drawn) { requestAnimationFrame(() => { timer = setTimeout(send, 0); }); return; }
    if (performance.now() - started > data.fallback_ms) { send(); return; }
    timer = setTimeout(check, 50);
  };
  check();
  return () => { sent = true; if (timer !== null) clearTimeout(timer); };
}
"""


@functools.cache
def _overview_drawn_signal() -> Any:
    """The small browser component that reports the overview drawn (registered once per process)."""
    return st.components.v2.component("tidemark_overview_drawn", js=OVERVIEW_DRAWN_JS)


def sections_wait_for_first_draw(test_id: int) -> bool:
    """On the first Review run of a browser session, draw the overview first and the sections
    under it (headline, flags, tables, forms, versions) in the next run, once the browser has
    drawn the overview.

    A browser fetches the code of each kind of element the first time a page shows one, and
    works through every element it has received before it draws the overview's traces: the
    sections under the overview (data tables, forms, inputs, metrics) made the first chart wait
    for them. So the first run ends after the overview, the analysis' notes and the caution, with
    a line saying the rest follows; a small browser component reports when the overview's first
    trace is on the screen (or after :data:`SECTIONS_FALLBACK_MS`), which starts a whole-page run.
    Every later run (that one, a change, another test) draws the whole page at once. Returns
    ``True`` when the sections are left for that next run.
    """
    if st.session_state.get(PAGE_DRAWN):
        return False
    st.session_state[PAGE_DRAWN] = True
    st.caption("Headline results, flags, thresholds, zones, exclusions and sign-off follow below once the "
               "overview is drawn…")
    _overview_drawn_signal()(
        key=f"overview_drawn_{test_id}",
        data={"selector": f".st-key-chart_grid_{test_id} .scatterlayer .trace", "fallback_ms": SECTIONS_FALLBACK_MS},
        on_drawn_change=lambda: None,
    )
    return True


def render() -> None:
    """The Review page."""
    st.html(COMPACT_TOP_CSS)
    for kind, message in state.pop_flashes():
        getattr(st, kind, st.info)(message)
    st.title("Review")
    store = data.get_store()
    test_id = _choose_test(store)
    if test_id is None:
        return
    ensure_working(store, test_id, refresh=True)
    pending, failed = sync_saves(test_id)
    working = ensure_working(store, test_id)
    record = _header(store, test_id, working)
    if failed:
        st.error(f"{failed} Your change is shown below but was not saved.")
        if st.button("Reload the stored version", key=f"reload_{test_id}"):
            reload_from_store(test_id)
            st.rerun()
    elif pending or st.session_state.get(SAVE_QUEUE):
        _save_status(test_id)
    else:
        _unsaved_bar(store, test_id, working)
    results = data.analyze(test_id, working.key)
    session = data.load_session(test_id)
    warnings = list(results.warnings)
    _overview(store, test_id, results, session, threshold_lines(results), n_notes=len(warnings))
    st.caption(
        "Estimates for review by qualified staff; not a medical device. Thresholds and zones are "
        "estimates and should be checked on the charts."
    )
    for w in warnings:
        st.warning(markdown_text(w))
    if sections_wait_for_first_draw(test_id):
        flush_saves(store)
        return
    _headline(results)
    _reference_set_selector(store, test_id, working)
    render_flags(results)
    details_panel(store, test_id)
    st.subheader("Thresholds")
    st.dataframe(pd.DataFrame(threshold_rows(results)), hide_index=True)
    _averaging_selector(store, test_id, working)
    st.caption(f"Averaging in use: {results.settings.averaging.label}")
    _threshold_controls(store, test_id, working, results)
    _zones(results)
    _exclusions(store, test_id, working, results)
    _history_and_sign_off(store, test_id, working, record)
    flush_saves(store)
