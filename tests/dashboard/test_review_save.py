"""Review keeps the reviewer's changes unsaved until the explicit Save: one stored version per Save.

Several changes (a typed VT1, a click on the overview, another averaging, breaths put back,
details) become ONE new version whose reason lists every change; the audit trail holds one
event per changed setting, all with that reason. Discard goes back to the stored version.
Reference for the values: the store's own ``get_settings`` / ``list_versions`` / ``audit_log``.
"""

from __future__ import annotations

import pytest

from analysis.pipeline import analyze_session
from analysis.settings import AnalysisSettings
from dashboard import data, state
from dashboard.views import review


def _review_script() -> None:
    import streamlit as st

    from dashboard import data
    from dashboard.views import review

    event = st.session_state.pop("tm_event", None)  # a click on the overview grid, as plotly sends it
    if event is not None:
        review.chart_selected(data.get_store(), st.session_state["tm_test_id"], event, chart="grid")
    review.render()


def _warnings(at) -> list[str]:
    return [w.value.replace("\\", "") for w in at.warning]


def _unsaved(at) -> str | None:
    return next((w for w in _warnings(at) if w.startswith("Unsaved changes")), None)


def _click_grid_at(at, t_s: float, row: int) -> None:
    at.session_state["tm_event"] = {"selection": {"points": [{"curve_number": 9, "point_index": row, "x": t_s,
                                                              "y": 1.0, "customdata": [t_s, row]}],
                                                  "box": [], "lasso": []}}
    at.run()
    assert not at.exception, at.exception


def _set_vt1_time(at, test_id: int, t_s: float, reason: str = "") -> None:
    at.text_input(key=f"thr_reason_{test_id}").input(reason)
    at.text_input(key=f"thr_t_{test_id}").input(f"{t_s:g}")
    at.button[[b.label for b in at.button].index("Set VT1")].click().run()
    assert not at.exception, at.exception


def _leave_guard_shown(at) -> bool:
    return any("data-tidemark-unsaved" in h.proto.body for h in at.get("html"))


def test_several_changes_then_save_make_exactly_one_version(demo_store, page_test):
    store, test_id = demo_store.store, demo_store.test_ids[0]
    settings0, version0 = store.get_settings(test_id)
    n_versions, n_audit = len(store.list_versions(test_id)), len(store.audit_log(test_id))
    at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=test_id).run()
    assert not at.exception, at.exception
    assert _unsaved(at) is None and not _leave_guard_shown(at)
    avg = analyze_session(store.load_session(test_id), AnalysisSettings.from_dict(settings0)).averaged

    _set_vt1_time(at, test_id, float(avg["t_s"].iloc[40]), "typed first")
    at.text_input(key=f"thr_reason_{test_id}").input("")
    _click_grid_at(at, float(avg["t_s"].iloc[45]), 45)  # a click on the overview moves it again...
    _click_grid_at(at, float(avg["t_s"].iloc[50]), 50)  # ...and again
    at.selectbox(key=f"avg_method_{test_id}").set_value("breaths").run()
    assert not at.exception, at.exception
    # four changes so far, none stored
    assert store.get_settings(test_id)[1] == version0 and len(store.list_versions(test_id)) == n_versions
    text = _unsaved(at)
    assert text is not None and text.startswith("Unsaved changes (4), not stored yet: typed first; "
                                                "VT1 picked on the overview (2 times); averaging changed to ")
    assert _leave_guard_shown(at)  # the browser warns before the tab is closed
    assert not any(b.label == "Sign off this version" for b in at.button)
    assert at.button(key=f"save_{test_id}").label == f"Save as version {version0 + 1}"

    at.text_input(key=f"save_note_{test_id}").input("checked on the grid")
    at.button(key=f"save_{test_id}").click().run()
    assert not at.exception, at.exception
    data.wait_for_saves()
    at.run()
    assert not at.exception, at.exception
    assert _unsaved(at) is None and not _leave_guard_shown(at)

    stored, version = store.get_settings(test_id)
    assert version == version0 + 1
    versions = store.list_versions(test_id)
    assert len(versions) == n_versions + 1  # exactly one new version for all the changes
    reason = versions[-1]["reason"]
    assert reason == ("checked on the grid: typed first; VT1 picked on the overview (2 times); "
                      f"averaging changed to {AnalysisSettings.from_dict(stored).averaging.label}")
    assert stored["vt1_override"]["t_s"] == float(avg["t_s"].iloc[50])
    assert stored["averaging"]["method"] == "breaths"
    new_events = store.audit_log(test_id)[n_audit:]
    assert {e.action for e in new_events} == {"settings_change"}
    assert {e.reason for e in new_events} == {reason}  # every event of the version lists every change
    fields = {e.field for e in new_events}
    assert any(f.startswith("vt1_override") for f in fields) and any(f.startswith("averaging") for f in fields)
    assert all(not f.startswith("vt2") for f in fields)


def test_discard_goes_back_to_the_stored_version(demo_store, page_test):
    store, test_id = demo_store.store, demo_store.test_ids[1]
    settings0, version0 = store.get_settings(test_id)
    at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=test_id).run()
    _set_vt1_time(at, test_id, 500.0, "to be thrown away")
    assert "manual" in next(md.value for md in at.markdown if md.value.startswith("**VT1:**"))
    assert _unsaved(at) is not None
    at.button(key=f"discard_{test_id}").click().run()
    assert not at.exception, at.exception
    assert _unsaved(at) is None and not _leave_guard_shown(at)
    assert "manual" not in next(md.value for md in at.markdown if md.value.startswith("**VT1:**"))
    assert state.PENDING_PREFIX + str(test_id) not in at.session_state
    data.wait_for_saves()
    assert store.get_settings(test_id) == (settings0, version0)


def test_a_change_undone_by_hand_leaves_nothing_to_save(demo_store, page_test):
    store, test_id = demo_store.store, demo_store.test_ids[1]
    settings0, _ = store.get_settings(test_id)
    method0 = settings0["averaging"]["method"]
    at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=test_id).run()
    at.selectbox(key=f"avg_method_{test_id}").set_value("middle_of_n").run()
    assert _unsaved(at) is not None
    at.selectbox(key=f"avg_method_{test_id}").set_value(method0).run()
    size_key = f"avg_size_{test_id}_{method0}"
    at.selectbox(key=size_key).set_value(settings0["averaging"]["size"]).run()
    assert not at.exception, at.exception
    assert _unsaved(at) is None
    assert not any(b.key == f"save_{test_id}" for b in at.button)


def test_unsaved_changes_stay_with_their_test_when_another_is_opened(demo_store, page_test):
    store = demo_store.store
    first, second = demo_store.test_ids
    before = store.get_settings(first)
    at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=first).run()
    _set_vt1_time(at, first, 480.0, "kept while away")
    at.selectbox(key="review_test").set_value(second).run()
    assert not at.exception, at.exception
    assert _unsaved(at) is None  # the other test has nothing unsaved
    at.selectbox(key="review_test").set_value(first).run()
    assert not at.exception, at.exception
    assert (_unsaved(at) or "").startswith("Unsaved changes (1), not stored yet: kept while away.")
    at.button(key=f"discard_{first}").click().run()
    data.wait_for_saves()
    assert store.get_settings(first) == before


def test_details_saved_with_the_unsaved_changes_in_one_version(demo_store, page_test):
    store, test_id = demo_store.store, demo_store.test_ids[1]
    _, version0 = store.get_settings(test_id)
    n_audit = len(store.audit_log(test_id))
    at = page_test(_review_script, tm_user=demo_store.user, tm_test_id=test_id).run()
    _set_vt1_time(at, test_id, 420.0, "VT1 moved before the details")
    mass = next(n for n in at.number_input if n.label == "Body mass (kg)")
    new_mass = float(mass.value) + 2.0
    mass.set_value(new_mass)
    label = "Save the details with the 1 unsaved changes"
    at.button(key=f"FormSubmitter:details_{test_id}-{label}").click().run()
    assert not at.exception, at.exception
    assert _unsaved(at) is None
    stored, version = store.get_settings(test_id)
    assert version == version0 + 1  # details and the threshold in one version
    assert stored["vt1_override"]["t_s"] == 420.0
    assert store.test_metadata(test_id)["body_mass_kg"] == new_mass
    reason = store.list_versions(test_id)[-1]["reason"]
    assert reason == "VT1 moved before the details; subject and test details changed"
    events = store.audit_log(test_id)[n_audit:]
    assert {(e.action, e.field.split(".")[0]) for e in events} == {("metadata_change", "meta"),
                                                                    ("settings_change", "vt1_override")}
    assert {e.reason for e in events} == {reason}


def test_viewer_changes_are_view_only_with_a_way_back(demo_store, page_test):
    from tests.dashboard.conftest import make_user

    store, test_id = demo_store.store, demo_store.test_ids[0]
    viewer = make_user(store, "vera.viewer", "viewer")
    _, version0 = store.get_settings(test_id)
    at = page_test(_review_script, tm_user=viewer, tm_test_id=test_id).run()
    at.selectbox(key=f"avg_method_{test_id}").set_value("rolling_time").run()
    assert not at.exception, at.exception
    assert not any(b.key == f"save_{test_id}" for b in at.button)
    at.button(key=f"discard_{test_id}").click().run()
    assert not at.exception, at.exception
    assert not any(b.key == f"discard_{test_id}" for b in at.button)
    assert store.get_settings(test_id)[1] == version0


@pytest.mark.parametrize(
    ("changes", "note", "expected"),
    [
        (["VT1 set by time"], "", "VT1 set by time"),
        (["a", "b", "a", "a"], "", "a (3 times); b"),
        (["VT1  picked\non the overview"], "why", "why: VT1 picked on the overview"),
        ([], "only a note", "only a note"),
        ([], "", ""),
    ],
)
def test_version_reason_lists_every_change_once(changes, note, expected):
    assert state.version_reason(changes, note=note) == expected


def test_unsaved_text_counts_the_changes():
    assert review.unsaved_text(["x", "y", "x"]).startswith("Unsaved changes (3), not stored yet: x (2 times); y.")
    assert review.unsaved_text([]) == "Unsaved changes: what you see differs from the stored version."


def test_other_pages_remind_of_unsaved_review_changes(demo_store, page_test):
    # the sidebar on every page, and the Reports page (whose report then says "unsaved settings")
    from dashboard.app import unsaved_reminder

    test_id = demo_store.test_ids[0]
    pending = {f"{state.PENDING_PREFIX}{test_id}": ["VT1 set by time", "averaging changed to 20 s bins"]}

    def script() -> None:
        from dashboard import data
        from dashboard.app import sidebar
        from dashboard.views import reports

        sidebar(data.get_store())
        reports.render()

    working = state.WorkingSettings({**demo_store.store.get_settings(test_id)[0], "excluded_rows": [40]},
                                    demo_store.store.get_settings(test_id)[1], saved=False)
    at = page_test(script, tm_user=demo_store.user, tm_test_id=test_id,
                   **{f"{state.SETTINGS_PREFIX}{test_id}": working}, **pending).run()
    assert not at.exception, at.exception
    assert [w.value for w in at.sidebar.warning] == [unsaved_reminder(1)]
    assert unsaved_reminder(1).startswith("Unsaved Review changes on one test")
    assert unsaved_reminder(3).startswith("Unsaved Review changes on 3 tests")
    assert any(i.value.startswith("Review holds 2 unsaved changes to this test") for i in at.info)
    at = page_test(script, tm_user=demo_store.user, tm_test_id=test_id).run()
    assert not at.sidebar.warning
