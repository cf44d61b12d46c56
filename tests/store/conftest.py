"""Store fixtures: every store test runs on SQLite and on a real PostgreSQL server.

A migrated template database (schema + four accounts) is made once per back end; each test
gets its own copy (a file copy for SQLite, ``CREATE DATABASE ... TEMPLATE`` for PostgreSQL).
Accounts in the template carry a cheap scrypt hash so tests stay fast; the production
parameters are checked in ``test_accounts.py`` with one real hash.
"""

from __future__ import annotations

import itertools
import shutil
from collections.abc import Iterator
from datetime import UTC, datetime, timedelta
from pathlib import Path

import pytest
from sqlalchemy import create_engine
from sqlalchemy.orm import Session as DbSession

from store import Store, User, open_store
from store.models import UserRow
from store.passwords import ScryptParams, hash_password
from tests.store.pg_server import find_bin_dir, start_server
from tests.store.standin import StandInBridge
from tests.support import skip_or_fail

#: Password of every template account.
PASSWORD = "saltmarsh-tide-42"
#: Cheap parameters for test accounts only (production default: N=2**17).
CHEAP = ScryptParams(n=2**10, r=8, p=1)
ACCOUNTS = (("ada", "admin"), ("rhea", "reviewer"), ("remy", "reviewer"), ("vic", "viewer"))
_counter = itertools.count()


class ManualClock:
    """A clock the test moves by hand (timezone-aware UTC)."""

    def __init__(self) -> None:
        self.now = datetime(2026, 3, 14, 9, 0, tzinfo=UTC)

    def __call__(self) -> datetime:
        return self.now

    def advance(self, **kwargs: float) -> None:
        self.now += timedelta(**kwargs)


def _seed_accounts(url: str) -> None:
    store = open_store(url)
    encoded = hash_password(PASSWORD, params=CHEAP)
    with DbSession(store.engine) as db, db.begin():
        for name, role in ACCOUNTS:
            db.add(UserRow(username=name, role=role, password_hash=encoded, auth_source="local",
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
    server.admin_execute("CREATE DATABASE tidemark_template")
    _seed_accounts(server.url("tidemark_template"))
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
    server = request.getfixturevalue("pg_server")
    name = f"t{next(_counter)}"
    server.admin_execute(f"CREATE DATABASE {name} TEMPLATE tidemark_template")
    return server.url(name)


@pytest.fixture
def clock() -> ManualClock:
    return ManualClock()


def open_test_store(url: str, clock: ManualClock) -> Store:
    store = open_store(url, clock=clock)
    store.analysis = StandInBridge()
    store.password_params = CHEAP
    return store


@pytest.fixture
def store(store_url, clock) -> Iterator[Store]:
    s = open_test_store(store_url, clock)
    yield s
    s.close()


@pytest.fixture
def users(store) -> dict[str, User]:
    return {u.username: u for u in store.list_users()}
