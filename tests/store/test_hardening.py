"""Hardening of the store: parallel sign-in, append-only history, the audit hash chain.

Every test runs on SQLite and on the real PostgreSQL server the suite starts.
"""

from __future__ import annotations

import threading

import pytest
from sqlalchemy import text
from sqlalchemy.exc import DBAPIError

from analysis.errors import InvalidParameter
from store import AccountLocked, LoginRefused, StoreError
from store import accounts
from tests.store.helpers import PASSWORD
from tests.store.standin import csv_bytes


def _parallel(n: int, fn) -> list[object]:  # noqa: ANN001
    """Run ``fn(i)`` in ``n`` threads released together; the outcome (value or exception) of each."""
    gate = threading.Barrier(n)
    out: list[object] = [None] * n

    def one(i: int) -> None:
        gate.wait()
        try:
            out[i] = fn(i)
        except Exception as exc:  # noqa: BLE001 - collected for the assertions
            out[i] = exc

    threads = [threading.Thread(target=one, args=(i,)) for i in range(n)]
    for t in threads:
        t.start()
    for t in threads:
        t.join(120)
    return out


class TestParallelSignIn:
    def test_sixteen_parallel_wrong_passwords_lock_at_the_limit(self, store):
        outcomes = _parallel(16, lambda i: store.authenticate("rhea", f"wrong guess {i}"))
        locked = [o for o in outcomes if isinstance(o, AccountLocked)]
        refused = [o for o in outcomes if isinstance(o, LoginRefused) and not isinstance(o, AccountLocked)]
        assert (len(refused), len(locked)) == (accounts.MAX_FAILED_LOGINS, 16 - accounts.MAX_FAILED_LOGINS)
        logged = sorted(o for _, o, _ in store.login_attempts("rhea"))
        assert logged == sorted(["bad_password"] * 5 + ["locked"] * 11)
        with pytest.raises(AccountLocked):
            store.authenticate("rhea", PASSWORD)

    def test_attempt_is_recorded_before_the_password_is_checked(self, store, monkeypatch):
        seen: list[list[str]] = []

        def spy(password, encoded):  # noqa: ANN001
            seen.append([o for _, o, _ in store.login_attempts("remy")])
            return False

        monkeypatch.setattr(accounts, "verify_password", spy)
        with pytest.raises(LoginRefused):
            store.authenticate("remy", "anything at all")
        assert seen == [[accounts.PENDING]]
        assert [o for _, o, _ in store.login_attempts("remy")] == ["bad_password"]

    def test_password_checks_run_at_most_the_cap_at_once(self, store, monkeypatch):
        running, peak, lock = [0], [0], threading.Lock()
        real = accounts.verify_password

        def counting(password, encoded):  # noqa: ANN001
            with lock:
                running[0] += 1
                peak[0] = max(peak[0], running[0])
            try:
                threading.Event().wait(0.05)
                return real(password, encoded)
            finally:
                with lock:
                    running[0] -= 1

        monkeypatch.setattr(accounts, "verify_password", counting)
        names = [f"name{i}" for i in range(8)]
        outcomes = _parallel(8, lambda i: store.authenticate(names[i], "wrong guess"))
        assert all(type(o) is LoginRefused for o in outcomes)
        assert peak[0] == accounts.MAX_CONCURRENT_CHECKS

    def test_one_client_spraying_names_is_locked_beside_the_per_name_limit(self, store):
        for i in range(accounts.MAX_FAILED_PER_CLIENT):
            with pytest.raises(LoginRefused) as info:
                store.authenticate(f"guess{i}", "wrong guess", client="203.0.113.7")
            assert not isinstance(info.value, AccountLocked)
        with pytest.raises(AccountLocked, match="from this computer"):
            store.authenticate("rhea", PASSWORD, client="203.0.113.7")
        assert store.authenticate("rhea", PASSWORD, client="198.51.100.2").username == "rhea"
        assert store.login_locked_for("anyone", client="203.0.113.7") > 0


def _raw(store, sql: str, **params) -> None:  # noqa: ANN001
    with store.engine.begin() as conn:
        conn.execute(text(sql), params)


def _imported(store, users) -> int:  # noqa: ANN001
    res = store.import_test(csv_bytes(3000.0), file_name="t.csv", actor=users["rhea"])
    store.sign_off(res.test_id, actor=users["rhea"], version=1)
    return res.test_id


class TestAppendOnlyHistory:
    @pytest.mark.parametrize("sql", [
        "UPDATE audit_events SET reason = 'rewritten'",
        "DELETE FROM audit_events",
        "UPDATE analysis_versions SET vo2peak_ml_min = 9999",
        "DELETE FROM analysis_versions",
        "UPDATE sign_offs SET note = 'x'",
        "DELETE FROM sign_offs",
    ])
    def test_triggers_refuse_changes_with_the_applications_own_connection(self, store, users, sql):
        test_id = _imported(store, users)
        before = store.get_results(test_id)
        with pytest.raises(DBAPIError, match="append-only"):
            _raw(store, sql)
        assert store.get_results(test_id) == before
        assert store.verify_audit_chain().ok

    def test_triggers_exist_after_every_migration(self, store):
        if store.dialect == "sqlite":
            sql = "SELECT name FROM sqlite_master WHERE type = 'trigger'"
        else:
            sql = "SELECT tgname FROM pg_trigger WHERE NOT tgisinternal"
        with store.engine.connect() as conn:
            names = set(conn.execute(text(sql)).scalars())
        for table in ("audit_events", "analysis_versions", "sign_offs"):
            assert any(table in n for n in names), (table, names)


class TestAuditChain:
    def test_intact_chain_verifies_and_links_every_row(self, store, users):
        test_id = _imported(store, users)
        settings, v = store.get_settings(test_id)
        store.save_settings(test_id, {**settings, "smoothing": {"window_s": 20}}, actor=users["rhea"],
                            reason="smoother", expected_version=v)
        report = store.verify_audit_chain()
        assert report.ok and report.rows == len(store.audit_log()) >= 3

    @pytest.mark.parametrize("how", ["change", "delete_middle", "delete_last"])
    def test_first_broken_link_is_reported(self, store, users, how):
        _imported(store, users)
        store.set_role("vic", "reviewer", actor=users["ada"])
        store.set_role("vic", "viewer", actor=users["ada"])
        ids = [e.id for e in store.audit_log()]
        target = ids[1] if how != "delete_last" else ids[-1]
        drop = "DROP TRIGGER IF EXISTS trg_audit_events_no_{v}" if store.dialect == "sqlite" else \
            "ALTER TABLE audit_events DISABLE TRIGGER trg_audit_events_append_only"
        # whoever tampers must first get past the triggers (as the database's owner could)
        if store.dialect == "sqlite":
            _raw(store, drop.format(v="update"))
            _raw(store, drop.format(v="delete"))
        else:
            _raw(store, drop)
        if how == "change":
            _raw(store, "UPDATE audit_events SET new_value = '\"admin\"' WHERE id = :i", i=target)
        else:
            _raw(store, "DELETE FROM audit_events WHERE id = :i", i=target)
        report = store.verify_audit_chain()
        assert not report.ok
        if how == "change":
            assert report.broken_at_id == target and "was changed after it was written" in report.problem
        elif how == "delete_middle":
            assert report.broken_at_id == ids[2] and "a row was removed, inserted or moved" in report.problem
        else:
            assert report.broken_at_id is None and "last 1 row(s) of the audit trail are missing" in report.problem

    def test_parallel_writers_extend_one_chain(self, store, users):
        test_id = _imported(store, users)

        def share(i: int) -> object:
            return store.create_share(actor=users["rhea"], test_id=test_id, expires_in_days=30, note=f"link {i}")

        outcomes = _parallel(6, share)
        assert not [o for o in outcomes if isinstance(o, Exception)]
        report = store.verify_audit_chain()
        assert report.ok and report.rows == len(store.audit_log())


class TestSignOffAfterPasswordReset:
    def test_admin_reset_then_sign_off_shows_plainly(self, store, users):
        res = store.import_test(csv_bytes(3000.0), file_name="t.csv", actor=users["rhea"])
        store.set_password("rhea", "a brand new passphrase", actor=users["ada"])
        store.sign_off(res.test_id, actor=users["rhea"], version=1)
        entries = store.audit_log(res.test_id)
        caution = [e for e in entries if e.action == "sign_off_after_reset"]
        assert len(caution) == 1
        assert caution[0].actor == "rhea" and "ada" in caution[0].reason and "rhea" in caution[0].reason
        # once the account holder sets their own password, later sign-offs carry no caution
        store.set_password("rhea", "my own passphrase now", actor=users["rhea"])
        settings, v = store.get_settings(res.test_id)
        store.save_settings(res.test_id, {**settings, "smoothing": {"window_s": 20}},
                            actor=users["rhea"], reason="smoother", expected_version=v)
        store.sign_off(res.test_id, actor=users["rhea"], version=v + 1)
        assert len([e for e in store.audit_log(res.test_id) if e.action == "sign_off_after_reset"]) == 1


class TestSignOffRace:
    def test_sign_off_landing_during_an_edit_is_seen_when_writing(self, store, users, monkeypatch):
        res = store.import_test(csv_bytes(3000.0), file_name="t.csv", actor=users["rhea"])
        settings, v = store.get_settings(res.test_id)
        real_load = store.load_session

        def load_then_sign(test_id):  # noqa: ANN001 - the other reviewer signs while results are computed
            session = real_load(test_id)
            store.sign_off(test_id, actor=users["remy"], version=v)
            return session

        monkeypatch.setattr(store, "load_session", load_then_sign)
        with pytest.raises(StoreError, match="signed off while you were editing; give a reason"):
            store.save_settings(res.test_id, {**settings, "smoothing": {"window_s": 20}}, actor=users["rhea"],
                                expected_version=v)
        monkeypatch.setattr(store, "load_session", real_load)
        assert store.get_settings(res.test_id)[1] == v  # nothing written
        assert [x["signed"] for x in store.list_versions(res.test_id)] == [True]
        assert store.save_settings(res.test_id, {**settings, "smoothing": {"window_s": 20}}, actor=users["rhea"],
                                   reason="smoother after sign-off", expected_version=v) == v + 1


class TestShareLinkCounts:
    def test_links_that_do_not_open_are_counted_per_day_without_the_token(self, store, users, clock):
        res = store.import_test(csv_bytes(3000.0), file_name="t.csv", actor=users["rhea"])
        token, share_id = store.create_share(actor=users["rhea"], test_id=res.test_id, expires_in_days=1)
        for bad in ("nonsense", "x" * 43, token[:-1] + ("A" if token[-1] != "A" else "B")):
            assert store.resolve_share(bad) is None
        assert store.resolve_share(token) is not None
        clock.advance(days=2)
        assert store.resolve_share(token) is None  # expired
        assert store.share_miss_counts() == [("2026-03-16", 1), ("2026-03-14", 3)]
        assert [k for k, _, _ in store.share_views(share_id)] == ["open"]

    def test_views_are_logged_by_kind_and_test(self, store, users):
        res = store.import_test(csv_bytes(3000.0), file_name="t.csv", actor=users["rhea"])
        _, share_id = store.create_share(actor=users["rhea"], test_id=res.test_id, expires_in_days=1)
        store.log_share_view(share_id, kind="report", test_id=res.test_id)
        with pytest.raises(InvalidParameter):
            store.log_share_view(share_id, kind="peek")
        assert [(k, t) for k, t, _ in store.share_views(share_id)] == [("report", res.test_id)]
