"""Subject and test details edited after import: a new version, audited, results recomputed."""

from __future__ import annotations

import pytest

from store import EditConflict, PermissionDenied, StoreError, open_store
from tests.dashboard.conftest import demo_paths
from tests.store.helpers import CHEAP

@pytest.fixture
def real(tmp_path):
    from store.records import LOCAL_OPERATOR

    store = open_store(str(tmp_path / "m.sqlite"))
    store.password_params = CHEAP
    reviewer = store.create_user("rhea", role="reviewer", actor=LOCAL_OPERATOR, password="tide-table-2026!")
    viewer = store.create_user("vic", role="viewer", actor=LOCAL_OPERATOR, password="tide-table-2026!")
    path = demo_paths()[0]
    test_id = store.import_test(path.read_bytes(), file_name=path.name, actor=reviewer).test_id
    yield store, reviewer, viewer, test_id
    store.close()


def test_body_mass_edit_is_a_new_audited_version_with_recomputed_results(real):
    store, reviewer, _viewer, test_id = real
    before = store.get_results(test_id)
    old_mass = store.test_metadata(test_id)["body_mass_kg"]
    _, version = store.get_settings(test_id)
    v2 = store.update_test_metadata(test_id, {"body_mass_kg": "80", "operator": "R. Hale"}, actor=reviewer,
                                    expected_version=version, reason="scale reading corrected")
    assert v2 == version + 1
    meta = store.test_metadata(test_id)
    assert meta["body_mass_kg"] == 80.0 and meta["operator"] == "R. Hale"
    after = store.get_results(test_id)
    # VO2peak per kg follows the new body mass: same absolute VO2peak / 80 kg
    assert after["vo2_peak_ml_min"] == pytest.approx(before["vo2_peak_ml_min"])
    assert after["vo2_peak_ml_kg_min"] == pytest.approx(after["vo2_peak_ml_min"] / 80.0, rel=1e-6)
    assert store.get_results(test_id, version=version)["vo2_peak_ml_kg_min"] == pytest.approx(
        before["vo2_peak_ml_min"] / old_mass, rel=1e-6)  # the earlier version is untouched
    events = {e.field: e for e in store.audit_log(test_id) if e.action == "metadata_change"}
    assert set(events) == {"meta.body_mass_kg", "meta.operator"}
    assert events["meta.body_mass_kg"].reason == "scale reading corrected"
    assert [v["reason"] for v in store.list_versions(test_id)][-1] == "scale reading corrected"
    # nothing changed: no new version
    assert store.update_test_metadata(test_id, {"body_mass_kg": 80}, actor=reviewer, expected_version=v2) == v2


def test_metadata_edit_rules(real):
    store, reviewer, viewer, test_id = real
    _, version = store.get_settings(test_id)
    with pytest.raises(PermissionDenied):
        store.update_test_metadata(test_id, {"age_y": 40}, actor=viewer, expected_version=version)
    with pytest.raises(EditConflict):
        store.update_test_metadata(test_id, {"age_y": 40}, actor=reviewer, expected_version=version + 5)
    store.sign_off(test_id, actor=reviewer)
    with pytest.raises(StoreError, match="signed off"):
        store.update_test_metadata(test_id, {"age_y": 40}, actor=reviewer, expected_version=version)
    v2 = store.update_test_metadata(test_id, {"age_y": 40, "sex": "F"}, actor=reviewer, expected_version=version,
                                    reason="age was missing")
    assert store.test_metadata(test_id)["age_y"] == 40.0
    assert store.get_test(test_id).summary.signed_version == version  # the signed version stays signed
    assert v2 == version + 1


def test_details_and_settings_saved_together_are_one_version(real):
    # the reviewer's unsaved Review changes go into the same version as the details (one Save)
    store, reviewer, _viewer, test_id = real
    settings, version = store.get_settings(test_id)
    n_audit = len(store.audit_log(test_id))
    wanted = {**settings, "vt1_override": {"t_s": 420.0, "vo2_ml_min": None, "reason": "moved"}}
    v2 = store.update_test_metadata(test_id, {"body_mass_kg": "71"}, actor=reviewer, expected_version=version,
                                    reason="moved; details", settings=wanted)
    assert v2 == version + 1 and len(store.list_versions(test_id)) == 2
    stored, _ = store.get_settings(test_id)
    assert stored["vt1_override"] == {"t_s": 420.0, "vo2_ml_min": None, "reason": "moved"}
    assert store.test_metadata(test_id)["body_mass_kg"] == 71.0
    assert store.get_results(test_id)["vt1"]["source"] == "manual"  # recomputed under the new settings
    events = store.audit_log(test_id)[n_audit:]
    assert sorted((e.action, e.field) for e in events) == [("metadata_change", "meta.body_mass_kg"),
                                                          ("settings_change", "vt1_override")]
    # settings alone (details unchanged) are still one version; the same settings again: none
    wanted2 = {**wanted, "excluded_rows": [40]}
    v3 = store.update_test_metadata(test_id, {"body_mass_kg": 71}, actor=reviewer, expected_version=v2,
                                    reason="one breath out", settings=wanted2)
    assert v3 == v2 + 1 and store.get_settings(test_id)[0]["excluded_rows"] == [40]
    assert store.update_test_metadata(test_id, {"body_mass_kg": 71}, actor=reviewer, expected_version=v3,
                                      settings=wanted2) == v3
