"""Staff accounts: roles, scrypt passwords, sign-in with throttling, OIDC-mapped accounts."""

from __future__ import annotations

import re
import threading
from datetime import datetime, timedelta
from typing import Any, ClassVar

from sqlalchemy import func, select, update
from sqlalchemy.orm import Session as DbSession

from analysis.errors import require
from store.core import Actor, StoreCore, aware, user_record
from store.errors import AccountLocked, LoginRefused, NotFound, StoreError
from store.models import LoginAttempt, StoreInfo, UserRow
from store.passwords import (
    DEFAULT_PARAMS,
    ScryptParams,
    check_password_rules,
    hash_password,
    needs_rehash,
    verify_password,
)
from store.records import LOCAL_OPERATOR, ROLE_ORDER, User

#: Failed sign-ins for one user name within ``THROTTLE_WINDOW`` that lock it ...
MAX_FAILED_LOGINS = 5
THROTTLE_WINDOW = timedelta(minutes=15)
#: ... for this long after the last counted failure.
LOCKOUT = timedelta(minutes=15)
#: Failed sign-ins from one client (a browser's address or session) within ``THROTTLE_WINDOW``,
#: whatever names were typed, that lock that client for ``LOCKOUT`` (name guessing).
MAX_FAILED_PER_CLIENT = 20
#: Password checks running at once in one server process: each scrypt check needs about
#: 128 MiB, so parallel attempts cannot drive the server's memory beyond a few of them.
MAX_CONCURRENT_CHECKS = 2
#: How long an attempt waits for a free check before it is refused as "busy", in seconds.
CHECK_WAIT_S = 30.0
_CHECKS = threading.BoundedSemaphore(MAX_CONCURRENT_CHECKS)
#: Outcome of an attempt recorded before its password is checked; it counts as a failure until
#: the check replaces it (an attempt cut short by a crash stays counted).
PENDING = "pending"
_FAILURES = ("bad_password", "unknown_user", "disabled", PENDING)
#: Key of the ``store_info`` row locked (``SELECT ... FOR UPDATE``) while an attempt is recorded.
SIGN_IN_LOCK_KEY = "sign_in_lock"
#: Outcomes after which earlier failures no longer count.
_RESETS = ("ok", "unlocked")
USERNAME_RE = re.compile(r"^[a-z0-9][a-z0-9._@-]{1,119}$")
AUTH_SOURCES = ("local", "oidc")


def normalise_username(username: str) -> str:
    return (username or "").strip().lower()


class AccountsMixin(StoreCore):
    password_params: ScryptParams = DEFAULT_PARAMS
    _dummy_hashes: ClassVar[dict[ScryptParams, str]] = {}

    def _user_row(self, db: DbSession, username: str) -> UserRow:
        row = db.execute(select(UserRow).where(UserRow.username == normalise_username(username))).scalar_one_or_none()
        if row is None:
            raise NotFound(f"No account named '{username}'.")
        return row

    def count_users(self) -> int:
        with self._read() as db:
            return int(db.execute(select(func.count(UserRow.id))).scalar_one())

    def create_user(
        self, username: str, *, role: str, actor: Actor, password: str | None = None, auth_source: str = "local",
    ) -> User:
        """Create a staff account (admin, or the command-line operator).

        A ``local`` account needs a password (hashed with scrypt); an ``oidc`` account has none
        and signs in through the configured identity provider, matched by ``username``
        (the e-mail address the provider reports).
        """
        name = normalise_username(username)
        require(bool(USERNAME_RE.match(name)), "username",
                "2-120 characters: letters, digits, '.', '_', '@' or '-'", username)
        require(role in ROLE_ORDER, "role", f"one of {', '.join(ROLE_ORDER)}", role)
        require(auth_source in AUTH_SOURCES, "auth_source", "'local' or 'oidc'", auth_source)
        if auth_source == "local":
            require(password is not None, "password", "a password for a local account", None)
            problem = check_password_rules(password or "")
            if problem:
                raise StoreError(problem)
        elif password is not None:
            raise StoreError("An account that signs in through the identity provider has no local password.")
        encoded = hash_password(password, params=self.password_params) if password is not None else None
        with self._tx() as db:
            actor_row = self._check_actor(db, actor, "admin", "create accounts")
            if db.execute(select(UserRow.id).where(UserRow.username == name)).first() is not None:
                raise StoreError(f"An account named '{name}' already exists.")
            row = UserRow(username=name, role=role, password_hash=encoded, auth_source=auth_source,
                          is_active=True, is_demo=False, created_at=self.now())
            db.add(row)
            db.flush()
            self._audit(db, actor=actor, actor_row=actor_row, action="user_create", field=name,
                        new={"role": role, "auth_source": auth_source})
            return user_record(row)

    def list_users(self) -> list[User]:
        with self._read() as db:
            return [user_record(r) for r in db.execute(select(UserRow).order_by(UserRow.username)).scalars()]

    def get_user(self, user_id: int) -> User:
        with self._read() as db:
            row = db.get(UserRow, user_id)
            if row is None:
                raise NotFound(f"No account with number {user_id}.")
            return user_record(row)

    def _ensure_other_admin(self, db: DbSession, row: UserRow) -> None:
        if row.role != "admin" or not row.is_active:
            return
        others = db.execute(
            select(func.count(UserRow.id)).where(UserRow.role == "admin", UserRow.is_active.is_(True), UserRow.id != row.id)
        ).scalar_one()
        if not others:
            raise StoreError(f"'{row.username}' is the last active administrator; make another administrator first.")

    def set_role(self, username: str, role: str, *, actor: Actor) -> User:
        require(role in ROLE_ORDER, "role", f"one of {', '.join(ROLE_ORDER)}", role)
        with self._tx() as db:
            actor_row = self._check_actor(db, actor, "admin", "change roles")
            row = self._user_row(db, username)
            if row.role == role:
                return user_record(row)
            if role != "admin":
                self._ensure_other_admin(db, row)
            self._audit(db, actor=actor, actor_row=actor_row, action="user_role", field=row.username,
                        old=row.role, new=role)
            row.role = role
            return user_record(row)

    def disable_user(self, username: str, *, actor: Actor, reason: str = "") -> User:
        """Disable an account: it can no longer sign in or act. The row and its history stay."""
        with self._tx() as db:
            actor_row = self._check_actor(db, actor, "admin", "disable accounts")
            row = self._user_row(db, username)
            if not row.is_active:
                return user_record(row)
            self._ensure_other_admin(db, row)
            row.is_active, row.disabled_at = False, self.now()
            self._audit(db, actor=actor, actor_row=actor_row, action="user_disable", field=row.username,
                        old=True, new=False, reason=reason)
            return user_record(row)

    def enable_user(self, username: str, *, actor: Actor) -> User:
        with self._tx() as db:
            actor_row = self._check_actor(db, actor, "admin", "enable accounts")
            row = self._user_row(db, username)
            if not row.is_active:
                row.is_active, row.disabled_at = True, None
                self._audit(db, actor=actor, actor_row=actor_row, action="user_enable", field=row.username,
                            old=False, new=True)
            return user_record(row)

    def set_password(self, username: str, password: str, *, actor: Actor) -> None:
        """Set a local account's password (an admin, the operator, or the account itself)."""
        problem = check_password_rules(password or "")
        if problem:
            raise StoreError(problem)
        encoded = hash_password(password, params=self.password_params)
        with self._tx() as db:
            target = self._user_row(db, username)
            own = isinstance(actor, User) and actor.id == target.id
            actor_row = self._check_actor(db, actor, "viewer" if own else "admin", "set passwords")
            if target.auth_source != "local":
                raise StoreError(f"'{target.username}' signs in through the identity provider; it has no local password.")
            target.password_hash = encoded
            self._audit(db, actor=actor, actor_row=actor_row, action="user_password", field=target.username)

    # ----------------------------------------------------------------- sign-in
    def _dummy(self) -> str:
        """A hash at the current parameters, verified for unknown names so they cost the same time."""
        cache = AccountsMixin._dummy_hashes
        if self.password_params not in cache:
            cache[self.password_params] = hash_password("not-a-real-password", params=self.password_params)
        return cache[self.password_params]

    def _wait_s(self, db: DbSession, column: Any, value: str, limit: int, now: datetime) -> float:
        """Seconds until ``value`` (a user name or a client) may try again (0 when not locked)."""
        last_reset = aware(db.execute(
            select(func.max(LoginAttempt.at)).where(column == value, LoginAttempt.outcome.in_(_RESETS))
        ).scalar_one_or_none())
        since = now - THROTTLE_WINDOW if last_reset is None else max(now - THROTTLE_WINDOW, last_reset)
        failures = db.execute(
            select(func.count(LoginAttempt.id), func.max(LoginAttempt.at))
            .where(column == value, LoginAttempt.outcome.in_(_FAILURES), LoginAttempt.at > since)
        ).one()
        if failures[0] < limit:
            return 0.0
        last = aware(failures[1])
        if last is None:
            return 0.0
        until = last + LOCKOUT
        return max(0.0, (until - now).total_seconds())

    def login_locked_for(self, username: str, *, client: str | None = None) -> float:
        """Seconds until ``username`` (or ``client``) may try again (0 when not locked)."""
        name = normalise_username(username)[:120]
        now = self.now()
        with self._read() as db:
            wait = self._wait_s(db, LoginAttempt.username, name, MAX_FAILED_LOGINS, now)
            if client:
                wait = max(wait, self._wait_s(db, LoginAttempt.client, client[:64], MAX_FAILED_PER_CLIENT, now))
            return wait

    def _lock_sign_in(self, db: DbSession) -> None:
        """Serialise the recording of sign-in attempts across processes.

        SQLite: the writing transaction already began with ``BEGIN IMMEDIATE`` (one writer at a
        time). PostgreSQL: ``SELECT ... FOR UPDATE`` on one ``store_info`` row (created when
        missing), held until this short transaction ends.
        """
        if self.dialect != "postgresql":
            return
        from sqlalchemy.dialects.postgresql import insert as pg_insert

        db.execute(pg_insert(StoreInfo).values(key=SIGN_IN_LOCK_KEY, value="").on_conflict_do_nothing())
        db.execute(select(StoreInfo.value).where(StoreInfo.key == SIGN_IN_LOCK_KEY).with_for_update()).scalar_one()

    def _begin_attempt(self, name: str, client: str | None) -> tuple[int | None, float, str]:
        """Record an attempt before its password is checked, in one locking transaction.

        Returns ``(attempt id, 0, "")``, or ``(None, seconds to wait, whose lock)`` when the
        name or the client is locked (then a ``locked`` attempt is recorded instead).
        """
        with self._tx() as db:
            self._lock_sign_in(db)
            now = self.now()
            wait = self._wait_s(db, LoginAttempt.username, name, MAX_FAILED_LOGINS, now)
            whose = "name"
            if client and wait <= 0:
                wait = self._wait_s(db, LoginAttempt.client, client, MAX_FAILED_PER_CLIENT, now)
                whose = "client"
            row = LoginAttempt(username=name, at=now, outcome="locked" if wait > 0 else PENDING, client=client)
            db.add(row)
            db.flush()
            return (None, wait, whose) if wait > 0 else (row.id, 0.0, "")

    def _finish_attempt(self, attempt_id: int, outcome: str) -> None:
        with self._tx() as db:
            db.execute(update(LoginAttempt).where(LoginAttempt.id == attempt_id).values(outcome=outcome))

    def authenticate(self, username: str, password: str, *, client: str | None = None) -> User:
        """Check a local user name and password; every attempt is logged.

        The attempt is recorded (as ``pending``, counted as a failure) before the password is
        checked, in one locking transaction, so parallel attempts cannot all pass the count:
        after ``MAX_FAILED_LOGINS`` failures for one user name within ``THROTTLE_WINDOW``
        (whether or not the account exists), or ``MAX_FAILED_PER_CLIENT`` from one ``client``
        (the browser's address or session, as the dashboard passes it), the name or the client
        is locked for ``LOCKOUT``: :class:`AccountLocked`. At most ``MAX_CONCURRENT_CHECKS``
        password checks run at once. A wrong name, wrong password or disabled account all
        give the same :class:`LoginRefused` message and take the same time.
        """
        name = normalise_username(username)[:120]
        client = (client or "").strip()[:64] or None
        attempt_id, wait_s, whose = self._begin_attempt(name, client)
        if attempt_id is None:
            minutes = max(1, round(wait_s / 60))
            where = "for this user name" if whose == "name" else "from this computer"
            raise AccountLocked(
                f"Too many failed sign-ins {where}. Try again in about {minutes} minute(s), "
                "or ask an administrator.",
                retry_after_s=wait_s,
            )
        if not _CHECKS.acquire(timeout=CHECK_WAIT_S):
            self._finish_attempt(attempt_id, "busy")
            raise LoginRefused("The server is busy checking other sign-ins. Try again in a minute.")
        try:
            with self._read() as db:
                row = db.execute(select(UserRow).where(UserRow.username == name)).scalar_one_or_none()
                stored = row.password_hash if row is not None and row.auth_source == "local" else None
            ok = verify_password(password or "", stored or self._dummy())
        finally:
            _CHECKS.release()
        if row is None or stored is None:
            outcome = "unknown_user"
        elif not ok:
            outcome = "bad_password"
        elif not row.is_active:
            outcome = "disabled"
        else:
            outcome = "ok"
        self._finish_attempt(attempt_id, outcome)
        if outcome != "ok" or row is None or stored is None:  # "ok" has both; the checks tell the type checker
            raise LoginRefused("The user name or password is not correct, or the account is disabled.")
        if needs_rehash(stored, params=self.password_params):
            with self._tx() as db:
                fresh = db.get(UserRow, row.id)
                if fresh is not None:
                    fresh.password_hash = hash_password(password, params=self.password_params)
        return user_record(row)

    def unlock_login(self, username: str, *, actor: Actor) -> None:
        """Lift a sign-in lock at once (admin or command line); earlier failures stop counting."""
        name = normalise_username(username)[:120]
        with self._tx() as db:
            actor_row = self._check_actor(db, actor, "admin", "unlock sign-in")
            db.add(LoginAttempt(username=name, at=self.now(), outcome="unlocked"))
            self._audit(db, actor=actor, actor_row=actor_row, action="user_unlock", field=name)

    def _log_attempt(self, name: str, outcome: str) -> None:
        with self._tx() as db:
            db.add(LoginAttempt(username=name, at=self.now(), outcome=outcome))

    def login_attempts(self, username: str | None = None, *, limit: int = 200) -> list[tuple[str, str, object]]:
        """Recent sign-in attempts ``(username, outcome, at)``, newest first (for administrators)."""
        query = select(LoginAttempt).order_by(LoginAttempt.id.desc()).limit(limit)
        if username is not None:
            query = query.where(LoginAttempt.username == normalise_username(username))
        with self._read() as db:
            return [(r.username, r.outcome, aware(r.at)) for r in db.execute(query).scalars()]

    def user_for_identity(self, email: str) -> User | None:
        """The active ``oidc`` account whose user name equals the provider's e-mail, else None.

        Used by the dashboard after ``st.login`` when an identity provider is configured:
        a provider sign-in alone grants nothing until an admin has created the account.
        """
        name = normalise_username(email)
        with self._tx() as db:
            row = db.execute(
                select(UserRow).where(UserRow.username == name, UserRow.auth_source == "oidc", UserRow.is_active.is_(True))
            ).scalar_one_or_none()
            if row is not None:
                db.add(LoginAttempt(username=name, at=self.now(), outcome="ok"))
            return user_record(row) if row is not None else None

    # ----------------------------------------------------------------- demo mode
    #: User name of the built-in demo reviewer (exists only in demo stores; has no password).
    DEMO_USERNAME = "demo-reviewer"

    def enable_demo_mode(self) -> User:
        """Mark this store as a local demo store and return its built-in demo reviewer.

        Refused for a store that already holds accounts or tests and is not a demo store, so
        real data can never be opened without sign-in by mistake.
        """
        from store.models import TestRow

        with self._tx() as db:
            if self._info(db, "demo") != "1":
                n_users = db.execute(select(func.count(UserRow.id))).scalar_one()
                n_tests = db.execute(select(func.count(TestRow.id))).scalar_one()
                if n_users or n_tests:
                    raise StoreError(
                        "This store already holds accounts or tests, so it cannot become a demo store. "
                        "Load the demo into its own store, e.g. --store ~/.tidemark/demo.sqlite."
                    )
                self._set_info(db, "demo", "1")
            row = db.execute(select(UserRow).where(UserRow.username == self.DEMO_USERNAME)).scalar_one_or_none()
            if row is None:
                row = UserRow(username=self.DEMO_USERNAME, role="reviewer", password_hash=None, auth_source="local",
                              is_active=True, is_demo=True, created_at=self.now())
                db.add(row)
                db.flush()
                self._audit(db, actor=LOCAL_OPERATOR, actor_row=None, action="demo_enable", field=row.username,
                            new={"role": "reviewer", "demo": True})
            return user_record(row)

    def demo_user(self) -> User | None:
        """The built-in demo reviewer, only in a store created by ``tidemark demo --load``."""
        with self._read() as db:
            if self._info(db, "demo") != "1":
                return None
            row = db.execute(select(UserRow).where(UserRow.is_demo.is_(True), UserRow.is_active.is_(True))).scalars().first()
            return user_record(row) if row is not None else None
