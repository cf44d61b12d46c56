"""Store fixtures: every store test runs on SQLite and on a real PostgreSQL server.

SQLite: a migrated template file (schema + four accounts) is made once and copied for each
test. PostgreSQL: one migrated database is emptied and re-seeded before each test.
Accounts in the template carry a cheap scrypt hash so tests stay fast; the production
parameters are checked in ``test_accounts.py`` with one real hash.
"""

from __future__ import annotations

import shutil
from collections.abc import Iterator
from datetime import UTC, datetime
from pathlib import Path

import pytest
from sqlalchemy import create_engine, text
from sqlalchemy.orm import Session as DbSession

from store import Store, User, open_store
from store.models import Base, UserRow
from store.passwords import hash_password
from tests.store.helpers import ACCOUNTS, CHEAP, PASSWORD, ManualClock, open_test_store
from tests.store.pg_server import find_bin_dir, start_server
from tests.support import skip_or_fail

_CHEAP_HASH: list[str] = []


def _seed_accounts(url: str, *, wipe: bool = False) -> None:
    """Migrate ``url`` and (re)create the template accounts; ``wipe`` empties every table first."""
    if not _CHEAP_HASH:
        _CHEAP_HASH.append(hash_password(PASSWORD, params=CHEAP))
    store = open_store(url)
    with DbSession(store.engine) as db, db.begin():
        if wipe:
            tables = ", ".join(t.name for t in Base.metadata.sorted_tables)
            db.execute(text(f"TRUNCATE {tables} RESTART IDENTITY CASCADE"))
        for name, role in ACCOUNTS:
            db.add(UserRow(username=name, role=role, password_hash=_CHEAP_HASH[0], auth_source="local",
                           is_active=True, is_demo=False, created_at=datetime(2026, 1, 1, tzinfo=UTC)))
    store.close()


@pytest.fixture(scope="session")
def pg_server():
    if find_bin_dir() is None:
        skip_or_fail("PostgreSQL server binaries are not installed (apt-get install postgresql)",
                     require_env="TIDEMARK_REQUIRE_POSTGRES")
    try:
        server = start_server()
    except Exception as exc:  # noqa: BLE001
        skip_or_fail(f"PostgreSQL could not be started: {exc}", require_env="TIDEMARK_REQUIRE_POSTGRES")
    server.admin_execute("CREATE DATABASE tidemark_test")
    yield server
    server.stop()


@pytest.fixture(scope="session")
def sqlite_template(tmp_path_factory) -> Path:
    path = tmp_path_factory.mktemp("template") / "template.sqlite"
    _seed_accounts(str(path))
    # Fold the WAL into the main file so that a plain copy is complete.
    engine = create_engine(f"sqlite:///{path}")
    with engine.connect() as conn:
        conn.exec_driver_sql("PRAGMA wal_checkpoint(TRUNCATE)")
        conn.exec_driver_sql("PRAGMA journal_mode=DELETE")
    engine.dispose()
    return path


@pytest.fixture(params=["sqlite", pytest.param("postgresql", marks=pytest.mark.postgres)])
def store_url(request, tmp_path) -> str:
    """URL of a fresh, migrated database with the template accounts (one per test)."""
    if request.param == "sqlite":
        template = request.getfixturevalue("sqlite_template")
        target = tmp_path / "store.sqlite"
        shutil.copyfile(template, target)
        return str(target)
    # One PostgreSQL database, emptied and re-seeded before each test (much faster than a new
    # database per test). Each test closes its store before the next one starts.
    server = request.getfixturevalue("pg_server")
    url = server.url("tidemark_test")
    _seed_accounts(url, wipe=True)
    return url


@pytest.fixture
def clock() -> ManualClock:
    return ManualClock()


@pytest.fixture
def store(store_url, clock) -> Iterator[Store]:
    s = open_test_store(store_url, clock)
    yield s
    s.close()


@pytest.fixture
def users(store) -> dict[str, User]:
    return {u.username: u for u in store.list_users()}
