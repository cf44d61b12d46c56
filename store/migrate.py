"""Apply the Alembic migrations in ``store/migrations`` (``upgrade head``) on open."""

from __future__ import annotations

from pathlib import Path

from alembic import command
from alembic.config import Config
from alembic.runtime.migration import MigrationContext
from alembic.script import ScriptDirectory
from sqlalchemy.engine import Engine

MIGRATIONS_DIR = Path(__file__).resolve().parent / "migrations"
#: Arbitrary constant naming Tidemark's migration lock on PostgreSQL.
_MIGRATION_LOCK_ID = 7_461_726_101


def alembic_config() -> Config:
    """An Alembic configuration pointing at the packaged migrations (no ini file needed)."""
    cfg = Config()
    cfg.set_main_option("script_location", str(MIGRATIONS_DIR))
    return cfg


def head_revision() -> str:
    """The newest revision shipped with this version of Tidemark."""
    head = ScriptDirectory.from_config(alembic_config()).get_current_head()
    assert head is not None
    return head


def current_revision(engine: Engine) -> str | None:
    """The revision the database is at (``None`` for an empty database)."""
    with engine.connect() as conn:
        return MigrationContext.configure(conn).get_current_revision()


def upgrade_to_head(engine: Engine) -> None:
    """Bring the schema to the newest revision. Existing rows are kept (migrations only add)."""
    if current_revision(engine) == head_revision():
        return
    cfg = alembic_config()
    with engine.begin() as conn:
        # Two processes opening a new store at once: the second waits here, then finds the
        # schema current (SQLite: BEGIN IMMEDIATE already holds the write lock; PostgreSQL: a
        # transaction-scoped advisory lock).
        if conn.dialect.name == "postgresql":
            conn.exec_driver_sql(f"SELECT pg_advisory_xact_lock({_MIGRATION_LOCK_ID})")
        cfg.attributes["connection"] = conn
        command.upgrade(cfg, "head")
