"""Where the store lives and how the database engine is created.

Resolution order for the database URL: an explicit ``url`` argument (the CLI's ``--store``),
then the ``TIDEMARK_STORE`` environment variable, then the default SQLite file
``~/.tidemark/tidemark.sqlite``. A plain file path is accepted and turned into a SQLite URL.
"""

from __future__ import annotations

import os
import sqlite3
import time
from pathlib import Path

from sqlalchemy import create_engine, event
from sqlalchemy.engine import URL, Connection, Engine, make_url

from store.errors import StoreError

#: Environment variable naming the store (a SQLAlchemy URL or a SQLite file path).
STORE_ENV = "TIDEMARK_STORE"
#: Default SQLite file when nothing is configured: the store for real data, never a demo store.
DEFAULT_PATH = Path("~/.tidemark/tidemark.sqlite")
#: Default SQLite file of the demo store (``tidemark demo --load``, ``make run``): fictional data
#: live in a file of their own, so real accounts and imports never land under the demo banner.
DEMO_PATH = Path("~/.tidemark/demo.sqlite")
#: How long a SQLite writer waits for another writer before giving up (milliseconds).
SQLITE_BUSY_TIMEOUT_MS = 15_000
#: Back ends the store is tested against.
SUPPORTED_DIALECTS = ("sqlite", "postgresql")


def resolve_url(url: str | None = None) -> str:
    """Return the database URL to use.

    Parameters
    ----------
    url : str, optional
        A SQLAlchemy URL (``sqlite:////abs/path.sqlite``, ``postgresql+psycopg://user@host/db``)
        or a path to a SQLite file. ``None`` falls back to ``$TIDEMARK_STORE`` and then to
        ``~/.tidemark/tidemark.sqlite``.
    """
    chosen = url or os.environ.get(STORE_ENV) or str(DEFAULT_PATH)
    if "://" not in chosen:
        path = Path(chosen).expanduser().resolve()
        chosen = URL.create("sqlite", database=str(path)).render_as_string()
    parsed = _parse(chosen)
    if parsed.get_backend_name() not in SUPPORTED_DIALECTS:
        raise StoreError(
            f"The store URL uses '{parsed.get_backend_name()}', which Tidemark does not support; "
            "use a SQLite file path or a postgresql+psycopg:// URL."
        )
    return chosen


def _parse(url: str) -> URL:
    try:
        return make_url(url)
    except Exception as exc:  # SQLAlchemy raises ArgumentError with a terse text
        raise StoreError(f"The store URL could not be read ({exc}); check --store or {STORE_ENV}.") from exc


def is_default_real_store(url: str) -> bool:
    """True when ``url`` names the default store for real data (``~/.tidemark/tidemark.sqlite``)."""
    return resolve_url(url) == resolve_url(str(DEFAULT_PATH))


def describe_url(url: str) -> str:
    """The URL with any password hidden, for messages and logs."""
    return _parse(url).render_as_string(hide_password=True)


def make_engine(url: str) -> Engine:
    """Create the engine; SQLite gets foreign keys, WAL journaling and a busy timeout."""
    parsed = _parse(url)
    if parsed.get_backend_name() == "sqlite":
        database = parsed.database or ""
        if database and database != ":memory:" and not database.startswith("file:"):
            Path(database).parent.mkdir(parents=True, exist_ok=True)
        engine = create_engine(
            parsed, connect_args={"timeout": SQLITE_BUSY_TIMEOUT_MS / 1000}
        )
        event.listen(engine, "connect", _sqlite_on_connect)
        event.listen(engine, "begin", _sqlite_on_begin)
        return engine
    return create_engine(parsed, pool_pre_ping=True)


def _sqlite_on_connect(dbapi_connection: sqlite3.Connection, _record: object) -> None:
    # Let SQLAlchemy issue BEGIN itself so that transactions behave the same on both back ends.
    dbapi_connection.isolation_level = None
    cursor = dbapi_connection.cursor()
    cursor.execute("PRAGMA foreign_keys=ON")
    cursor.execute(f"PRAGMA busy_timeout={SQLITE_BUSY_TIMEOUT_MS}")
    _ensure_wal(cursor)
    cursor.execute("PRAGMA synchronous=NORMAL")
    cursor.close()


def _ensure_wal(cursor: sqlite3.Cursor) -> None:
    """Switch the file to WAL once (the mode is kept in the file).

    Changing the journal mode needs a moment without other connections and does not wait on
    the busy timeout, so a new store opened by two processes at once retries briefly.
    """
    if str(cursor.execute("PRAGMA journal_mode").fetchone()[0]).lower() == "wal":
        return
    deadline = time.monotonic() + SQLITE_BUSY_TIMEOUT_MS / 1000
    while True:
        try:
            cursor.execute("PRAGMA journal_mode=WAL")
            return
        except sqlite3.OperationalError as exc:
            if "locked" not in str(exc) or time.monotonic() > deadline:
                raise
            time.sleep(0.05)


#: Execution option marking a read-only transaction (plain BEGIN on SQLite).
READ_ONLY_OPTION = "tidemark_read_only"


def _sqlite_on_begin(connection: Connection) -> None:
    # A writing transaction takes the write lock at once (BEGIN IMMEDIATE), so two writers queue
    # instead of one failing half-way with "database is locked" after reading stale data.
    # Read-only transactions use a plain BEGIN: with WAL they never wait for a writer.
    if connection.get_execution_options().get(READ_ONLY_OPTION):
        connection.exec_driver_sql("BEGIN")
    else:
        connection.exec_driver_sql("BEGIN IMMEDIATE")
