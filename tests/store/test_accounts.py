"""Staff accounts: scrypt at or above OWASP guidance, throttled sign-in, roles, demo mode."""

from __future__ import annotations

import pytest

from analysis.errors import InvalidParameter
from store import LOCAL_OPERATOR, AccountLocked, LoginRefused, PermissionDenied, StoreError, open_store
from store import accounts
from store.passwords import DEFAULT_PARAMS, hash_password, needs_rehash, parse_hash, verify_password
from tests.store.helpers import CHEAP, PASSWORD


class TestPasswordHashing:
    def test_default_parameters_meet_owasp_scrypt_minimum(self):
        # OWASP Password Storage Cheat Sheet: scrypt N=2^17 (128 MiB), r=8, p=1 as the minimum.
        assert DEFAULT_PARAMS.n >= 2**17 and DEFAULT_PARAMS.r >= 8 and DEFAULT_PARAMS.p >= 1
        assert DEFAULT_PARAMS.salt_bytes >= 16  # common practice: at least 128-bit random salt
        # Memory limit above the 128*r*N working set (RFC 7914, section 6), so hashing succeeds.
        assert DEFAULT_PARAMS.maxmem_bytes > 128 * DEFAULT_PARAMS.r * DEFAULT_PARAMS.n

    def test_rfc7914_test_vector(self):
        # RFC 7914 section 12, second vector: P="password", S="NaCl", N=1024, r=8, p=16, dkLen=64.
        import hashlib

        key = hashlib.scrypt(b"password", salt=b"NaCl", n=1024, r=8, p=16, dklen=64)
        assert key.hex().startswith("fdbabe1c9d3472007856e7190d01e9fe7c6ad7cbc8237830e77376634b373162")

    def test_hash_is_salted_and_self_describing(self):
        a, b = hash_password("same words here", params=CHEAP), hash_password("same words here", params=CHEAP)
        assert a != b  # per-user random salt
        params, salt, key = parse_hash(a)
        assert (params.n, params.r, params.p, len(salt), len(key)) == (2**10, 8, 1, 16, 32)
        assert verify_password("same words here", a) and not verify_password("same words herE", a)
        assert needs_rehash(a) and not needs_rehash(a, params=CHEAP)

    @pytest.mark.parametrize("encoded", [None, "", "plain", "scrypt$3$8$1$AAAA$AAAA", "scrypt$1024$8$1$!!$AAAA"])
    def test_malformed_stored_hashes_never_verify(self, encoded):
        assert verify_password("anything at all", encoded) is False

    def test_account_created_with_production_parameters_and_old_hashes_upgraded(self, sqlite_template, tmp_path):
        # Not repeated per back end: two real-cost hashes (about 0.5 s each).
        import shutil

        shutil.copyfile(sqlite_template, tmp_path / "s.sqlite")
        store = open_store(str(tmp_path / "s.sqlite"))
        users = {u.username: u for u in store.list_users()}
        assert store.password_params == DEFAULT_PARAMS
        new = store.create_user("nadia", role="viewer", actor=users["ada"], password="a long passphrase")
        assert new.role == "viewer"
        stored = {u: h for u, h in _hashes(store).items()}
        params, _, _ = parse_hash(stored["nadia"])
        assert params.n >= 2**17 and params.r >= 8 and params.p >= 1
        # "ada" holds a cheap test hash; a successful sign-in re-hashes it at today's parameters.
        assert store.authenticate("ada", PASSWORD).username == "ada"
        assert parse_hash(_hashes(store)["ada"])[0].n == DEFAULT_PARAMS.n
        store.close()


def _hashes(store) -> dict[str, str]:
    from sqlalchemy import select
    from sqlalchemy.orm import Session as DbSession

    from store.models import UserRow

    with DbSession(store.engine) as db:
        return dict(db.execute(select(UserRow.username, UserRow.password_hash)).all())


class TestSignIn:
    def test_correct_password_signs_in_case_insensitive_name(self, store):
        user = store.authenticate("  RHEA ", PASSWORD)
        assert (user.username, user.role) == ("rhea", "reviewer")
        assert store.login_attempts("rhea")[0][1] == "ok"

    @pytest.mark.parametrize("name,password", [("rhea", "wrong password"), ("nobody", PASSWORD), ("rhea", "")])
    def test_failures_give_one_identical_message(self, store, name, password):
        with pytest.raises(LoginRefused) as info:
            store.authenticate(name, password)
        assert str(info.value) == "The user name or password is not correct, or the account is disabled."

    def test_disabled_account_cannot_sign_in(self, store, users):
        store.disable_user("vic", actor=users["ada"])
        with pytest.raises(LoginRefused):
            store.authenticate("vic", PASSWORD)
        assert store.login_attempts("vic")[0][1] == "disabled"

    def test_five_failures_in_15_minutes_lock_the_name(self, store, clock):
        for _ in range(accounts.MAX_FAILED_LOGINS):
            clock.advance(minutes=2)
            with pytest.raises(LoginRefused) as info:
                store.authenticate("rhea", "guess")
            assert not isinstance(info.value, AccountLocked)
        with pytest.raises(AccountLocked) as locked:
            store.authenticate("rhea", PASSWORD)  # even the right password waits
        assert 0 < locked.value.retry_after_s <= accounts.LOCKOUT.total_seconds()
        outcomes = [o for _, o, _ in store.login_attempts("rhea")]
        assert outcomes == ["locked"] + ["bad_password"] * 5
        clock.advance(minutes=16)
        assert store.authenticate("rhea", PASSWORD).username == "rhea"

    def test_admin_unlock_lifts_the_lock_at_once(self, store, users, clock):
        for _ in range(accounts.MAX_FAILED_LOGINS):
            with pytest.raises(LoginRefused):
                store.authenticate("remy", "guess")
        assert store.login_locked_for("remy") > 0
        with pytest.raises(PermissionDenied):
            store.unlock_login("remy", actor=users["rhea"])
        store.unlock_login("REMY", actor=users["ada"])
        assert store.login_locked_for("remy") == 0
        assert store.authenticate("remy", PASSWORD).username == "remy"
        assert store.audit_log()[-1].action == "user_unlock"

    def test_failures_spread_beyond_the_window_do_not_lock(self, store, clock):
        for _ in range(accounts.MAX_FAILED_LOGINS + 2):
            clock.advance(minutes=4)  # at most four failures in any 15 minutes
            with pytest.raises(LoginRefused) as info:
                store.authenticate("rhea", "guess")
            assert not isinstance(info.value, AccountLocked)

    def test_unknown_names_are_throttled_too(self, store, clock):
        for _ in range(accounts.MAX_FAILED_LOGINS):
            with pytest.raises(LoginRefused):
                store.authenticate("mallory", "guess")
        with pytest.raises(AccountLocked):
            store.authenticate("mallory", "guess")

    def test_success_resets_the_count(self, store, clock):
        for _ in range(accounts.MAX_FAILED_LOGINS - 1):
            with pytest.raises(LoginRefused):
                store.authenticate("rhea", "guess")
        store.authenticate("rhea", PASSWORD)
        with pytest.raises(LoginRefused) as info:
            store.authenticate("rhea", "guess")
        assert not isinstance(info.value, AccountLocked)


class TestAccountManagement:
    def test_only_admin_manages_accounts(self, store, users):
        for actor in (users["rhea"], users["vic"]):
            with pytest.raises(PermissionDenied):
                store.set_role("vic", "admin", actor=actor)
            with pytest.raises(PermissionDenied):
                store.create_user("zed", role="admin", actor=actor, auth_source="oidc")
        assert {u.username: u.role for u in store.list_users()}["vic"] == "viewer"

    def test_role_change_is_audited(self, store, users):
        store.set_role("vic", "reviewer", actor=users["ada"])
        entry = store.audit_log()[-1]
        assert (entry.action, entry.field, entry.old_value, entry.new_value, entry.actor) == (
            "user_role", "vic", "viewer", "reviewer", "ada")

    def test_last_admin_cannot_be_demoted_or_disabled(self, store, users):
        with pytest.raises(StoreError, match="last active administrator"):
            store.set_role("ada", "reviewer", actor=users["ada"])
        with pytest.raises(StoreError, match="last active administrator"):
            store.disable_user("ada", actor=LOCAL_OPERATOR)

    @pytest.mark.parametrize("store_url", ["sqlite"], indirect=True)  # refusal does not depend on the back end
    @pytest.mark.parametrize("name", ["a", "has space", "semi;colon", "x" * 121, "../etc"])
    def test_bad_user_names_refused(self, store, users, name):
        with pytest.raises(InvalidParameter, match="username"):
            store.create_user(name, role="viewer", actor=users["ada"], auth_source="oidc")

    def test_short_password_refused_and_duplicate_name_refused(self, store, users):
        with pytest.raises(StoreError, match="at least"):
            store.create_user("newbie", role="viewer", actor=users["ada"], password="short")
        with pytest.raises(StoreError, match="already exists"):
            store.create_user("RHEA", role="viewer", actor=users["ada"], auth_source="oidc")

    def test_oidc_account_maps_provider_identity_and_has_no_password(self, store, users):
        store.create_user("Coach.Kim@saltmarsh.example", role="viewer", actor=users["ada"], auth_source="oidc")
        assert store.user_for_identity("coach.kim@saltmarsh.example").role == "viewer"
        assert store.user_for_identity("someone.else@saltmarsh.example") is None
        with pytest.raises(LoginRefused):
            store.authenticate("coach.kim@saltmarsh.example", "")


class TestDemoMode:
    def test_fresh_store_becomes_a_demo_store_with_a_password_less_reviewer(self, tmp_path):
        store = open_store(str(tmp_path / "demo.sqlite"))
        store.password_params = CHEAP  # the refused sign-in below still verifies a dummy hash
        try:
            assert not store.is_demo_store() and store.demo_user() is None
            demo = store.enable_demo_mode()
            assert store.is_demo_store() and store.demo_user() == demo
            assert (demo.role, demo.is_demo) == ("reviewer", True)
            with pytest.raises(LoginRefused):
                store.authenticate(demo.username, "")
        finally:
            store.close()

    def test_store_with_real_accounts_refuses_demo_mode(self, store):
        with pytest.raises(StoreError, match="cannot become a demo store"):
            store.enable_demo_mode()
        assert not store.is_demo_store() and store.demo_user() is None
