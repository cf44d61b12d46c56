"""Versioned settings, audit trail, optimistic locking, sign-off and soft delete."""

from __future__ import annotations

import threading

import pytest
from sqlalchemy import func, select
from sqlalchemy.orm import Session as DbSession

from analysis.errors import InvalidParameter
from store import EditConflict, NotFound, PermissionDenied, StoreError, User
from store.models import TestRow
from store.review import changed_fields
from tests.store.helpers import open_test_store
from tests.store.standin import csv_bytes


@pytest.fixture
def test_id(store, users) -> int:
    return store.import_test(csv_bytes(3200.0, subject="SEL-007"), file_name="sel007.csv", actor=users["rhea"]).test_id


def edit(store, test_id, user, *, window_s, reason="", expected=None):
    settings, version = store.get_settings(test_id)
    settings["smoothing"]["window_s"] = window_s
    return store.save_settings(test_id, settings, actor=user, reason=reason,
                               expected_version=version if expected is None else expected)


class TestSettingsAndAudit:
    def test_save_creates_a_new_version_and_keeps_the_old_one(self, store, users, test_id):
        assert edit(store, test_id, users["rhea"], window_s=15, reason="noisy start") == 2
        assert store.get_settings(test_id) [1] == 2
        assert store.get_settings(test_id, version=1)[0]["smoothing"]["window_s"] == 30
        assert store.get_results(test_id)["window_s"] == 15
        assert store.get_results(test_id, version=1)["window_s"] == 30
        assert [v["version"] for v in store.list_versions(test_id)] == [1, 2]

    def test_every_changed_field_is_audited_with_old_and_new_value(self, store, users, test_id, clock):
        settings, v = store.get_settings(test_id)
        settings["smoothing"]["window_s"] = 20
        settings["thresholds"]["vt1_override_s"] = 412.5
        settings["exclusions"] = [[120, 135]]
        clock.advance(minutes=3)
        store.save_settings(test_id, settings, actor=users["remy"], reason="cough at 2 min", expected_version=v)
        changes = {e.field: e for e in store.audit_log(test_id) if e.action == "settings_change"}
        assert set(changes) == {"smoothing.window_s", "thresholds.vt1_override_s", "exclusions"}
        assert (changes["smoothing.window_s"].old_value, changes["smoothing.window_s"].new_value) == (30, 20)
        assert (changes["thresholds.vt1_override_s"].old_value, changes["thresholds.vt1_override_s"].new_value) == (None, 412.5)
        assert changes["exclusions"].new_value == [[120, 135]]
        for entry in changes.values():
            assert entry.actor == "remy" and entry.reason == "cough at 2 min" and entry.at == clock.now

    def test_saving_identical_settings_creates_no_version(self, store, users, test_id):
        settings, v = store.get_settings(test_id)
        assert store.save_settings(test_id, settings, actor=users["rhea"], expected_version=v) == v
        assert [e.action for e in store.audit_log(test_id)] == ["import"]

    def test_invalid_settings_are_refused_without_a_new_version(self, store, users, test_id):
        with pytest.raises(InvalidParameter):
            store.save_settings(test_id, {"bogus": 1}, actor=users["rhea"], expected_version=1)
        assert store.get_settings(test_id)[1] == 1

    def test_diff_helper_reports_leaves_and_whole_values(self):
        assert changed_fields({"a": 1, "b": None}, {"a": 1, "c": 2}) == [("c", None, 2)]
        override = {"time_s": 412.5, "by": "rhea"}
        assert changed_fields({"o": None, "x": {"y": 1}}, {"o": override, "x": {"y": 2}}) == [
            ("o", None, override), ("x.y", 1, 2)]


class TestEditConflict:
    def test_second_reviewer_with_a_stale_version_gets_edit_conflict(self, store, store_url, clock, users, test_id):
        other = open_test_store(store_url, clock)  # a second dashboard process
        try:
            _, v_rhea = store.get_settings(test_id)
            _, v_remy = other.get_settings(test_id)
            assert edit(store, test_id, users["rhea"], window_s=10, expected=v_rhea) == 2
            with pytest.raises(EditConflict, match="rhea"):
                edit(other, test_id, users["remy"], window_s=40, expected=v_remy)
        finally:
            other.close()
        assert store.get_settings(test_id)[0]["smoothing"]["window_s"] == 10
        assert [e.new_value for e in store.audit_log(test_id) if e.action == "settings_change"] == [10]

    def test_simultaneous_saves_exactly_one_wins(self, store, store_url, clock, users, test_id):
        stores = [open_test_store(store_url, clock) for _ in range(2)]
        outcomes: list[object] = []
        barrier = threading.Barrier(2)

        def save(s, user, window):
            barrier.wait()
            try:
                outcomes.append(edit(s, test_id, user, window_s=window, expected=1))
            except EditConflict as exc:
                outcomes.append(exc)

        threads = [threading.Thread(target=save, args=(s, users[n], w)) for s, n, w in
                   zip(stores, ("rhea", "remy"), (11, 44))]
        for t in threads:
            t.start()
        for t in threads:
            t.join(60)
        for s in stores:
            s.close()
        assert sorted(type(o).__name__ for o in outcomes) == ["EditConflict", "int"]
        assert store.get_settings(test_id)[1] == 2
        assert len(store.list_versions(test_id)) == 2


class TestSignOff:
    def test_signed_version_is_frozen_and_edit_starts_a_new_unsigned_version(self, store, users, test_id):
        assert store.sign_off(test_id, actor=users["rhea"], version=1) == 1
        frozen_settings, frozen_results = store.get_settings(test_id, version=1)[0], store.get_results(test_id, version=1)
        with pytest.raises(StoreError, match="reason"):
            edit(store, test_id, users["remy"], window_s=12)
        assert edit(store, test_id, users["remy"], window_s=12, reason="amend after review") == 2
        assert store.get_settings(test_id, version=1)[0] == frozen_settings
        assert store.get_results(test_id, version=1) == frozen_results
        record = store.get_test(test_id)
        assert [(s.version, s.signed_by) for s in record.sign_offs] == [(1, "rhea")]
        assert record.summary.version == 2 and not record.current_version_signed
        assert record.summary.signed_version == 1
        assert [v["signed"] for v in store.list_versions(test_id)] == [True, False]

    def test_signing_a_stale_version_is_refused(self, store, users, test_id):
        edit(store, test_id, users["rhea"], window_s=12)
        with pytest.raises(EditConflict):
            store.sign_off(test_id, actor=users["remy"], version=1)
        assert store.get_test(test_id).sign_offs == []

    def test_sign_off_is_audited_and_idempotent(self, store, users, test_id):
        store.sign_off(test_id, actor=users["rhea"])
        store.sign_off(test_id, actor=users["rhea"])
        assert [e.action for e in store.audit_log(test_id)] == ["import", "sign_off"]


class TestPermissions:
    def test_viewer_cannot_do_reviewer_actions(self, store, users, test_id):
        vic = users["vic"]
        settings, v = store.get_settings(test_id)  # reading is allowed
        settings["smoothing"]["window_s"] = 5
        attempts = [
            lambda: store.save_settings(test_id, settings, actor=vic, expected_version=v),
            lambda: store.sign_off(test_id, actor=vic),
            lambda: store.create_share(actor=vic, test_id=test_id, expires_in_days=7),
            lambda: store.update_person(store.get_test(test_id).summary.person_id, actor=vic, display_name="X"),
            lambda: store.soft_delete_test(test_id, actor=vic),
        ]
        for attempt in attempts:
            with pytest.raises(PermissionDenied):
                attempt()
        assert store.get_settings(test_id)[1] == 1 and store.get_test(test_id).sign_offs == []

    def test_only_admin_soft_deletes(self, store, users, test_id):
        with pytest.raises(PermissionDenied, match="admin"):
            store.soft_delete_test(test_id, actor=users["rhea"])
        store.soft_delete_test(test_id, actor=users["ada"], reason="wrong person")

    def test_role_is_read_from_the_database_not_the_object(self, store, users, test_id):
        forged = User(id=users["vic"].id, username="vic", role="admin")
        with pytest.raises(PermissionDenied):
            store.soft_delete_test(test_id, actor=forged)
        with pytest.raises(PermissionDenied):
            store.soft_delete_test(test_id, actor=User(id=9999, username="ghost", role="admin"))

    def test_disabled_account_can_no_longer_act(self, store, users, test_id):
        store.disable_user("remy", actor=users["ada"])
        with pytest.raises(PermissionDenied, match="active"):
            edit(store, test_id, users["remy"], window_s=9)


class TestSoftDelete:
    def test_deleted_test_is_hidden_but_kept_and_logged(self, store, users, test_id):
        store.soft_delete_test(test_id, actor=users["ada"], reason="duplicate upload")
        assert store.list_tests() == []
        assert store.list_people()[0].n_tests == 0
        with pytest.raises(NotFound):
            store.get_test(test_id)
        kept = store.get_test(test_id, include_deleted=True)
        assert kept.deleted_at is not None and kept.raw_size_bytes > 0
        with DbSession(store.engine) as db:
            assert db.execute(select(func.count()).select_from(TestRow)).scalar_one() == 1
        deletion = store.audit_log(test_id)[-1]
        assert (deletion.action, deletion.actor, deletion.reason) == ("soft_delete", "ada", "duplicate upload")

    def test_same_file_can_be_imported_again_after_deletion(self, store, users, test_id):
        store.soft_delete_test(test_id, actor=users["ada"])
        again = store.import_test(csv_bytes(3200.0, subject="SEL-007"), file_name="sel007.csv", actor=users["rhea"])
        assert not again.duplicate and again.test_id != test_id

    def test_deleted_person_hides_all_their_tests(self, store, users, test_id):
        person_id = store.get_test(test_id).summary.person_id
        store.import_test(csv_bytes(3300.0, subject="SEL-007"), file_name="b.csv", actor=users["rhea"])
        store.soft_delete_person(person_id, actor=users["ada"])
        assert store.list_people() == [] and store.list_tests() == []
        assert [e.action for e in store.audit_log(person_id=person_id)][-3:] == ["soft_delete", "soft_delete", "soft_delete_person"]
        with pytest.raises(StoreError, match="deleted"):
            store.import_test(csv_bytes(3400.0, subject="SEL-007"), file_name="c.csv", actor=users["rhea"])

    def test_admin_restores_a_deleted_test_and_person(self, store, users, test_id):
        person_id = store.get_test(test_id).summary.person_id
        store.soft_delete_test(test_id, actor=users["ada"])
        with pytest.raises(PermissionDenied):
            store.restore_test(test_id, actor=users["rhea"])
        store.restore_test(test_id, actor=users["ada"], reason="deleted by mistake")
        assert [t.id for t in store.list_tests()] == [test_id]
        store.soft_delete_person(person_id, actor=users["ada"])
        store.restore_person(person_id, actor=users["ada"])
        assert [t.id for t in store.list_tests()] == [test_id]
        assert [e.action for e in store.audit_log(test_id)][-4:] == ["soft_delete", "restore", "soft_delete", "restore"]
        assert store.audit_log(person_id=person_id)[-1].action == "restore_person"

    def test_restore_refused_while_the_same_file_is_live_again(self, store, users, test_id):
        store.soft_delete_test(test_id, actor=users["ada"])
        again = store.import_test(csv_bytes(3200.0, subject="SEL-007"), file_name="sel007.csv", actor=users["rhea"])
        with pytest.raises(StoreError, match=f"test {again.test_id}"):
            store.restore_test(test_id, actor=users["ada"])
