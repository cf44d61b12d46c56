"""The schema is built by Alembic migrations, matches the models, and upgrades keep data."""

from __future__ import annotations

import pytest
from alembic.autogenerate import compare_metadata
from alembic.runtime.migration import MigrationContext
from sqlalchemy import inspect
from sqlalchemy.exc import IntegrityError
from sqlalchemy.orm import Session as DbSession

from store import open_store
from store.config import make_engine, resolve_url
from store.migrate import current_revision, head_revision, upgrade_to_head
from store.models import Base, ShareView
from tests.store.helpers import open_test_store
from tests.store.standin import csv_bytes


def test_migrated_database_matches_the_models(store):
    # Alembic autogenerate comparison (the tool's own diff): no difference means the
    # migrations create exactly the tables, columns, types, indexes and constraints modelled.
    with store.engine.connect() as conn:
        context = MigrationContext.configure(conn, opts={"compare_type": True})
        assert compare_metadata(context, Base.metadata) == []
    assert current_revision(store.engine) == head_revision()
    assert set(inspect(store.engine).get_table_names()) >= set(Base.metadata.tables)


def test_fresh_sqlite_file_is_created_by_migration(tmp_path):
    path = tmp_path / "sub" / "dir" / "new.sqlite"
    store = open_store(str(path))
    try:
        assert path.exists() and current_revision(store.engine) == head_revision()
        with store.engine.connect() as conn:
            assert conn.exec_driver_sql("PRAGMA foreign_keys").scalar() == 1
            assert conn.exec_driver_sql("PRAGMA journal_mode").scalar() == "wal"
            assert conn.exec_driver_sql("PRAGMA busy_timeout").scalar() >= 5000
    finally:
        store.close()


def test_reopening_and_upgrading_keeps_every_row(store_url, clock):
    first = open_test_store(store_url, clock)
    rhea = {u.username: u for u in first.list_users()}["rhea"]
    res = first.import_test(csv_bytes(3050.0, subject="SEL-301"), file_name="k.csv", actor=rhea)
    first.close()
    engine = make_engine(resolve_url(store_url))
    upgrade_to_head(engine)  # a second upgrade is a no-op
    engine.dispose()
    again = open_test_store(store_url, clock)
    try:
        assert [t.id for t in again.list_tests()] == [res.test_id]
        assert again.raw_file(res.test_id)[1] == csv_bytes(3050.0, subject="SEL-301")
    finally:
        again.close()


def test_foreign_keys_are_enforced(store, clock):
    with pytest.raises(IntegrityError), DbSession(store.engine) as db, db.begin():
        db.add(ShareView(share_id=424242, viewed_at=clock.now))


def test_upgrade_from_the_first_revision_keeps_existing_tests(tmp_path):
    from alembic import command

    from store.migrate import alembic_config

    url = resolve_url(str(tmp_path / "old.sqlite"))
    engine = make_engine(url)
    cfg = alembic_config()
    with engine.begin() as conn:
        cfg.attributes["connection"] = conn
        command.upgrade(cfg, "0001")
    with engine.begin() as conn:
        conn.exec_driver_sql(
            "INSERT INTO people (id, code, created_at) VALUES (1, 'SEL-OLD', '2025-06-01 10:00:00')")
        conn.exec_driver_sql(
            "INSERT INTO tests (id, person_id, original_file_name, raw_sha256, raw_size_bytes, raw_bytes, "
            "session_text, flags_json, current_version, imported_at) VALUES (1, 1, 'old.csv', 'ab', 3, X'414243', "
            "'t_s', '[]', 1, '2025-06-01 10:00:00')")
    engine.dispose()
    assert current_revision(make_engine(url)) == "0001"
    store = open_store(url)
    try:
        assert current_revision(store.engine) == head_revision()
        with store.engine.connect() as conn:
            row = conn.exec_driver_sql("SELECT raw_bytes, import_options_json FROM tests WHERE id = 1").one()
        assert bytes(row[0]) == b"ABC" and row[1] == "{}"
    finally:
        store.close()


@pytest.mark.parametrize("backend", ["sqlite", pytest.param("postgresql", marks=pytest.mark.postgres)])
def test_two_processes_creating_the_same_store_at_once(tmp_path, request, backend):
    """Two openers racing on a new, empty store: both succeed and the schema is created once."""
    import threading

    if backend == "sqlite":
        url = str(tmp_path / "race.sqlite")
    else:
        server = request.getfixturevalue("pg_server")
        server.admin_execute("CREATE DATABASE race_to_create")  # one per test server
        url = server.url("race_to_create")
    errors: list[BaseException] = []
    barrier = threading.Barrier(2)

    def opener() -> None:
        barrier.wait()
        try:
            open_store(url).close()
        except BaseException as exc:  # noqa: BLE001 - reported below
            errors.append(exc)

    threads = [threading.Thread(target=opener) for _ in range(2)]
    for t in threads:
        t.start()
    for t in threads:
        t.join(60)
    assert errors == []
    store = open_store(url)
    try:
        assert current_revision(store.engine) == head_revision()
    finally:
        store.close()
