"""Subject and test details: the form's pure helpers and the Review page's edit panel (AppTest)."""

from __future__ import annotations

import datetime as dt

from dashboard import state
from dashboard.subject_details import changed_details, form_defaults, import_overrides
from tests.dashboard.pages_helpers import signed_in


def test_form_defaults_and_changes():
    meta = {"test_date": "2026-02-10", "body_mass_kg": 58.0, "sex": "female", "beta_blocker": "no", "age_y": 999.0}
    d = form_defaults(meta)
    assert d["test_date"] == dt.date(2026, 2, 10) and d["body_mass_kg"] == 58.0
    assert d["sex"] == "F" and d["beta_blocker"] == "no"
    assert d["age_y"] is None  # outside the form's range: not offered as a value
    values = dict(d, age_y=41.0, body_mass_kg=58.0, protocol="Ramp 25 W/min")
    assert changed_details(d, values) == {"age_y": "41", "protocol": "Ramp 25 W/min"}
    assert import_overrides(meta, values) == {"age_y": "41", "protocol": "Ramp 25 W/min"}
    assert changed_details(d, dict(d, body_mass_kg=None)) == {"body_mass_kg": ""}  # cleared


def _review():
    from dashboard.views import review

    review.render()


def test_review_edit_panel_saves_body_mass_as_an_audited_version(demo_store, page_test):
    store, test_id = demo_store.store, demo_store.test_ids[0]
    _, version = store.get_settings(test_id)
    at = page_test(_review, **signed_in(demo_store.user, **{state.TEST_ID: test_id}))
    at.run()
    assert not at.exception, at.exception
    mass = next(n for n in at.number_input if n.label == "Body mass (kg)")
    old = mass.value
    mass.set_value(old + 5.0)
    next(t for t in at.text_input if t.label == "Reason for the change (audit trail)").input("weighed again")
    at.button(key=f"FormSubmitter:details_{test_id}-Save the details").click().run()
    assert not at.exception, at.exception
    assert any("Details saved as version" in s.value for s in at.success)
    assert store.test_metadata(test_id)["body_mass_kg"] == old + 5.0
    assert store.get_settings(test_id)[1] == version + 1
    event = next(e for e in store.audit_log(test_id) if e.field == "meta.body_mass_kg")
    assert (event.action, event.reason) == ("metadata_change", "weighed again")
    peak = store.get_results(test_id)
    assert peak["vo2_peak_ml_kg_min"] == __import__("pytest").approx(peak["vo2_peak_ml_min"] / (old + 5.0), rel=1e-6)
