"""Subject and test details on a page: the form fields, and the edit panel of a stored test.

The values are kept in the session metadata by the store (``update_test_metadata``: a new
version, audited, results recomputed); this module only renders and collects.
"""

from __future__ import annotations

import datetime as _dt
from collections.abc import Mapping
from typing import TYPE_CHECKING, Any

import streamlit as st

from dashboard import data, state
from dashboard.errors import show_error
from dashboard.subject_details import CHOICE_LABELS, FIELDS, changed_details, field_label, form_defaults

if TYPE_CHECKING:
    from store import Store


def detail_inputs(prefix: str, defaults: Mapping[str, Any], *, disabled: bool = False) -> dict[str, Any]:
    """One input per detail field (call inside an ``st.form``); returns the values entered."""
    values: dict[str, Any] = {}
    cols = st.columns(3)
    for i, f in enumerate(FIELDS):
        col = cols[i % 3]
        key = f"{prefix}_{f.key}"
        label = field_label(f)
        if f.kind == "date":
            values[f.key] = col.date_input(label, value=defaults.get(f.key), key=key, disabled=disabled,
                                           min_value=_dt.date(1990, 1, 1), max_value=_dt.date(2100, 12, 31),
                                           format="YYYY-MM-DD")
        elif f.kind == "number":
            values[f.key] = col.number_input(label, min_value=f.low, max_value=f.high, value=defaults.get(f.key),
                                             step=f.step, key=key, disabled=disabled, placeholder="not given")
        elif f.kind == "choice":
            current = defaults.get(f.key) or ""
            values[f.key] = col.selectbox(label, list(f.choices), index=list(f.choices).index(current),
                                          format_func=lambda c: CHOICE_LABELS.get(c, c), key=key, disabled=disabled)
        else:
            values[f.key] = col.text_input(label, value=str(defaults.get(f.key) or ""), key=key, disabled=disabled,
                                           max_chars=200)
    return values


def details_panel(store: Store, test_id: int, *, expanded: bool = False) -> None:
    """The "Subject and test details" expander of a stored test, with an explicit Save.

    Unsaved Review changes of the test (thresholds, exclusions, averaging) are stored in the same
    new version as the details, so one Save is one version and nothing shown is lost.
    """
    meta = store.test_metadata(test_id)
    defaults = form_defaults(meta)
    may_edit = state.can_edit()
    working = state.working_settings(test_id)
    base_version = working.version if may_edit and working is not None and not working.saved else None
    unsaved = base_version is not None
    pending = state.pending_changes(test_id) if unsaved else []
    with st.expander("Subject and test details (date, body mass, age, sex, height, Hb, ...)", expanded=expanded):
        st.caption("Body mass, age, sex and height give VO2 per kg, % predicted and the heart-rate criterion. "
                   "A change is a new version of the test, recorded in the audit trail.")
        with st.form(f"details_{test_id}"):
            values = detail_inputs(f"det_{test_id}", defaults, disabled=not may_edit)
            reason = st.text_input("Reason for the change (audit trail)", key=f"det_{test_id}_reason",
                                   disabled=not may_edit)
            label = "Save the details" + (f" with the {len(pending)} unsaved changes" if pending
                                          else " with the unsaved changes" if unsaved else "")
            saved = st.form_submit_button(label, type="primary", disabled=not may_edit)
        if not may_edit:
            st.caption("Your role can read these details but not change them.")
        if not saved:
            return
        changes = changed_details(defaults, values)
        if not changes:
            st.info("Nothing was changed.")
            return
        try:
            if base_version is not None and working is not None:
                note = state.version_reason([*pending, "subject and test details changed"], note=reason)
                new_version = store.update_test_metadata(
                    test_id, changes, actor=state.acting_user(), expected_version=base_version, reason=note,
                    settings=working.settings,
                )
            else:
                _, version = store.get_settings(test_id)
                new_version = store.update_test_metadata(
                    test_id, changes, actor=state.acting_user(), expected_version=version, reason=reason.strip()
                )
        except Exception as exc:  # noqa: BLE001 - refusals (role, conflict, sign-off reason) shown plainly
            show_error(exc, context="Subject and test details")
            return
        data.clear_test_caches()
        state.forget_working_settings(test_id)
        state.save_tracker().forget(test_id)
        state.flash(f"Details saved as version {new_version}; the results were recomputed.")
        st.rerun()
