"""Alembic environment for the Tidemark store.

Used in two ways: by :func:`store.migrate.upgrade_to_head` (which hands over an open
connection in ``config.attributes["connection"]``) and by developers running
``alembic -c store/migrations/alembic.ini ...`` with ``TIDEMARK_STORE`` set.
"""

from __future__ import annotations

from alembic import context
from sqlalchemy.engine import Connection

from store.config import make_engine, resolve_url
from store.models import Base

target_metadata = Base.metadata


def _configure_and_run(connection: Connection) -> None:
    context.configure(
        connection=connection,
        target_metadata=target_metadata,
        render_as_batch=connection.dialect.name == "sqlite",
        compare_type=True,
    )
    with context.begin_transaction():
        context.run_migrations()


def run_migrations_online() -> None:
    connection = context.config.attributes.get("connection")
    if connection is not None:
        _configure_and_run(connection)
        return
    engine = make_engine(resolve_url(context.config.get_main_option("sqlalchemy.url") or None))
    try:
        with engine.connect() as conn:
            _configure_and_run(conn)
    finally:
        engine.dispose()


if context.is_offline_mode():
    raise SystemExit("Tidemark migrations run online only (they need a database connection).")
run_migrations_online()
