"""Shared machinery of the store: engine, transactions, clock, role checks, audit rows."""

from __future__ import annotations

import json
from collections.abc import Callable, Iterator
from contextlib import AbstractContextManager, contextmanager
from datetime import UTC, datetime
from typing import Any, Self, overload

from sqlalchemy import select
from sqlalchemy.engine import Engine
from sqlalchemy.exc import DBAPIError
from sqlalchemy.orm import Session as DbSession
from sqlalchemy.orm import sessionmaker

from store.analysis_bridge import AnalysisBridge, Headline, plain_json
from store.audit_chain import AUDIT_HEAD_KEY, GENESIS, ChainReport, decode_head, encode_head, hash_of, verify_rows
from store.config import READ_ONLY_OPTION
from store.db_errors import plain_store_error
from store.errors import PermissionDenied
from store.models import AnalysisVersion, AuditEvent, StoreInfo, UserRow
from store.records import ROLE_ORDER, Operator, User
from store.session_cache import SessionCache

Clock = Callable[[], datetime]
#: Key in a database session's ``info`` holding the audit chain head read in that transaction.
_HEAD_CACHE = "tidemark_audit_head"


def utc_now() -> datetime:
    return datetime.now(UTC)


@overload
def aware(value: datetime) -> datetime: ...
@overload
def aware(value: datetime | None) -> datetime | None: ...
def aware(value: datetime | None) -> datetime | None:
    """SQLite hands back naive datetimes; everything stored is UTC."""
    if value is None:
        return None
    return value if value.tzinfo is not None else value.replace(tzinfo=UTC)


def to_json(value: Any) -> str:
    """Canonical JSON text (sorted keys, UTF-8 kept) of settings, results and audit values.

    Plain JSON values come from the analysis' one codec (NaN and infinities as ``null``, NumPy
    scalars as Python numbers), reached through :mod:`store.analysis_bridge`.
    """
    return json.dumps(plain_json(value), sort_keys=True, ensure_ascii=False, allow_nan=False)


def analysis_version_row(
    *,
    test_id: int,
    version: int,
    settings: dict[str, Any],
    results: dict[str, Any] | None,
    results_error: str | None,
    headline: Headline | None,
    created_at: datetime,
    created_by: int | None,
    reason: str,
) -> AnalysisVersion:
    """One saved analysis version: settings, results (or why there are none) and the headline columns."""
    return AnalysisVersion(
        test_id=test_id, version=version, settings_json=to_json(settings),
        results_json=None if results is None else to_json(results), results_error=results_error,
        vo2peak_ml_min=headline.vo2peak_ml_min if headline else None,
        vt1_vo2_ml_min=headline.vt1_vo2_ml_min if headline else None,
        ve_vco2_slope=headline.ve_vco2_slope if headline else None,
        created_at=created_at, created_by=created_by, reason=reason,
    )


def user_record(row: UserRow) -> User:
    return User(
        id=row.id,
        username=row.username,
        role=row.role,
        is_active=row.is_active,
        auth_source=row.auth_source,
        is_demo=row.is_demo,
    )


Actor = User | Operator


@contextmanager
def _plain_transaction(sessions: sessionmaker[DbSession]) -> Iterator[DbSession]:
    """A transaction of ``sessions``; driver failures a user can act on become a plain StoreError."""
    try:
        with sessions.begin() as db:
            yield db
    except (DBAPIError, OSError) as exc:
        plain = plain_store_error(exc)
        if plain is None:
            raise
        raise plain from None


class StoreCore:
    """Engine, transactions and checks shared by the store's parts."""

    def __init__(self, engine: Engine, *, url: str, clock: Clock | None = None) -> None:
        self.engine = engine
        self.url = url
        self.clock: Clock = clock or utc_now
        self.analysis = AnalysisBridge()
        self._session_cache = SessionCache()
        self._sessions = sessionmaker(engine, expire_on_commit=False)
        self._read_sessions = sessionmaker(
            engine.execution_options(**{READ_ONLY_OPTION: True}), expire_on_commit=False
        )

    @property
    def dialect(self) -> str:
        return self.engine.dialect.name

    def close(self) -> None:
        """Release database connections."""
        self.engine.dispose()

    def __enter__(self) -> Self:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    def _tx(self) -> AbstractContextManager[DbSession]:
        """One transaction: committed when the block ends, rolled back on any exception.

        Driver failures a user can act on (read-only store, full disk, server unreachable)
        become :class:`~store.errors.StoreError` with a plain message.
        """
        return _plain_transaction(self._sessions)

    def _read(self) -> AbstractContextManager[DbSession]:
        """A read-only transaction (on SQLite it does not wait for writers); errors as in :meth:`_tx`."""
        return _plain_transaction(self._read_sessions)

    def now(self) -> datetime:
        return self.clock()

    # ----------------------------------------------------------------- permissions
    def _check_actor(self, db: DbSession, actor: Actor, role: str, action: str) -> UserRow | None:
        """Return the actor's current row (``None`` for the command-line operator).

        The role is read from the database, not from the ``User`` object passed in, so a
        disabled account or a lowered role takes effect at once.
        """
        if isinstance(actor, Operator):
            return None
        if not isinstance(actor, User):
            raise PermissionDenied(f"To {action} you must be signed in.")
        row = db.get(UserRow, actor.id)
        if row is None or not row.is_active:
            raise PermissionDenied(f"To {action} you must be signed in with an active account.")
        if ROLE_ORDER.index(row.role) < ROLE_ORDER.index(role):
            raise PermissionDenied(
                f"Your role '{row.role}' does not allow you to {action}; it needs the role '{role}' "
                "(ask an administrator)."
            )
        return row

    @staticmethod
    def _actor_name(actor: Actor, row: UserRow | None) -> str:
        if row is not None:
            return row.username
        return actor.name if isinstance(actor, Operator) else str(getattr(actor, "username", "?"))

    def _audit(
        self,
        db: DbSession,
        *,
        actor: Actor,
        actor_row: UserRow | None,
        action: str,
        test_id: int | None = None,
        person_id: int | None = None,
        field: str | None = None,
        old: Any = None,
        new: Any = None,
        reason: str = "",
    ) -> None:
        rows, prev = self._audit_head(db)
        event = AuditEvent(
            at=self.now(),
            actor_id=actor_row.id if actor_row is not None else None,
            actor_name=self._actor_name(actor, actor_row),
            action=action,
            test_id=test_id,
            person_id=person_id,
            field=field,
            old_value=None if old is None else to_json(old),
            new_value=None if new is None else to_json(new),
            reason=reason or "",
            prev_hash=prev,
        )
        event.row_hash = hash_of(event, prev)
        db.add(event)
        db.info[_HEAD_CACHE] = (rows + 1, event.row_hash)
        self._set_info(db, AUDIT_HEAD_KEY, encode_head(rows + 1, event.row_hash))

    def _audit_head(self, db: DbSession) -> tuple[int, str]:
        """The chain head ``(rows, last hash)``, locked for this transaction on first use.

        SQLite: writing transactions begin with ``BEGIN IMMEDIATE``, so the head cannot move
        under us. PostgreSQL: ``SELECT ... FOR UPDATE`` on the head row (created when missing),
        so that concurrent writers extend one chain instead of forking it.
        """
        cached = db.info.get(_HEAD_CACHE)
        if cached is not None:
            return (int(cached[0]), str(cached[1]))
        if self.dialect == "postgresql":
            from sqlalchemy.dialects.postgresql import insert as pg_insert

            db.execute(pg_insert(StoreInfo).values(key=AUDIT_HEAD_KEY, value=encode_head(0, GENESIS))
                       .on_conflict_do_nothing())
        value = db.execute(
            select(StoreInfo.value).where(StoreInfo.key == AUDIT_HEAD_KEY).with_for_update()
        ).scalar_one_or_none()
        head = decode_head(value)
        db.info[_HEAD_CACHE] = head
        return head

    def verify_audit_chain(self) -> ChainReport:
        """Walk the audit trail's hash chain and report the first broken link (``tidemark audit verify``)."""
        with self._read() as db:
            value = self._info(db, AUDIT_HEAD_KEY)
            rows = db.execute(
                select(AuditEvent).order_by(AuditEvent.id).execution_options(yield_per=2000)
            ).scalars()
            return verify_rows(rows, None if value is None else decode_head(value))

    # ----------------------------------------------------------------- store facts
    def _info(self, db: DbSession, key: str) -> str | None:
        row = db.get(StoreInfo, key)
        return row.value if row is not None else None

    def _set_info(self, db: DbSession, key: str, value: str) -> None:
        row = db.get(StoreInfo, key)
        if row is None:
            db.add(StoreInfo(key=key, value=value))
        else:
            row.value = value

    def is_demo_store(self) -> bool:
        """True when this store was created by ``tidemark demo --load`` (local demo mode)."""
        with self._read() as db:
            return self._info(db, "demo") == "1"

    def _usernames(self, db: DbSession, ids: set[int | None]) -> dict[int, str]:
        wanted = {i for i in ids if i is not None}
        if not wanted:
            return {}
        return dict(db.execute(select(UserRow.id, UserRow.username).where(UserRow.id.in_(wanted))).all())
