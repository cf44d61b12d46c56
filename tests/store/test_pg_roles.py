"""The documented PostgreSQL set-up: an owner runs the migrations, the application role owns
nothing and may only add rows where history lives (``store/pg_roles.py``, docs/store.md)."""

from __future__ import annotations

import secrets

import psycopg
import pytest

from store import LOCAL_OPERATOR, open_store
from store.pg_roles import HISTORY_TABLES, grant_statements
from tests.store.helpers import open_test_store
from tests.store.standin import csv_bytes

pytestmark = pytest.mark.postgres


@pytest.fixture
def roles_db(pg_server):
    suffix = secrets.token_hex(3)
    owner, app, db = f"tm_owner_{suffix}", f"tm_app_{suffix}", f"tm_roles_{suffix}"
    pg_server.admin_execute(f"CREATE ROLE {owner} LOGIN")
    pg_server.admin_execute(f"CREATE ROLE {app} LOGIN")
    pg_server.admin_execute(f"CREATE DATABASE {db} OWNER {owner}")
    pg_server.admin_execute(f"REVOKE ALL ON DATABASE {db} FROM PUBLIC")
    pg_server.admin_execute(f"GRANT CONNECT ON DATABASE {db} TO {owner}, {app}")
    base = f"postgresql+psycopg://{{}}@127.0.0.1:{pg_server.port}/{db}"
    with psycopg.connect(host="127.0.0.1", port=pg_server.port, user=owner, dbname=db, autocommit=True) as conn:
        conn.execute("REVOKE ALL ON SCHEMA public FROM PUBLIC")
    # the owner creates the schema (migrations) and grants
    owner_store = open_store(base.format(owner))
    owner_store.close()
    with psycopg.connect(host="127.0.0.1", port=pg_server.port, user=owner, dbname=db, autocommit=True) as conn:
        for sql in grant_statements(app):
            conn.execute(sql)
    yield {"owner": base.format(owner), "app": base.format(app), "port": pg_server.port, "db": db, "app_role": app}


def _app_sql(info, sql: str) -> None:
    with psycopg.connect(host="127.0.0.1", port=info["port"], user=info["app_role"], dbname=info["db"],
                         autocommit=True) as conn:
        conn.execute(sql)


def test_application_role_works_but_cannot_rewrite_history(roles_db):
    store = open_test_store(roles_db["app"])
    try:
        admin = store.create_user("ada", role="admin", actor=LOCAL_OPERATOR, password="a long passphrase")
        rhea = store.create_user("rhea", role="reviewer", actor=admin, password="another passphrase")
        res = store.import_test(csv_bytes(3100.0), file_name="t.csv", actor=rhea)
        settings, v = store.get_settings(res.test_id)
        store.save_settings(res.test_id, {**settings, "smoothing": {"window_s": 20}}, actor=rhea,
                            reason="smoother", expected_version=v)
        store.sign_off(res.test_id, actor=rhea, version=v + 1)
        store.soft_delete_test(res.test_id, actor=admin, reason="duplicate")
        store.restore_test(res.test_id, actor=admin, reason="not a duplicate")
        assert store.authenticate("rhea", "another passphrase").username == "rhea"
        assert store.verify_audit_chain().ok
    finally:
        store.close()
    for table in HISTORY_TABLES:
        for sql in (f"UPDATE {table} SET id = id", f"DELETE FROM {table}"):
            with pytest.raises(psycopg.errors.InsufficientPrivilege):
                _app_sql(roles_db, sql)
    refused = [
        "DELETE FROM tests", "TRUNCATE audit_events", "DROP TRIGGER trg_audit_events_append_only ON audit_events",
        "ALTER TABLE audit_events DISABLE TRIGGER ALL", "DROP TABLE sign_offs", "CREATE TABLE x (i int)",
        "UPDATE alembic_version SET version_num = '0001'",
    ]
    for sql in refused:
        with pytest.raises((psycopg.errors.InsufficientPrivilege, psycopg.errors.UndefinedObject)):
            _app_sql(roles_db, sql)


def test_even_the_owner_meets_the_triggers(roles_db):
    store = open_test_store(roles_db["owner"])
    try:
        admin = store.create_user("ada", role="admin", actor=LOCAL_OPERATOR, password="a long passphrase")
        store.import_test(csv_bytes(3100.0), file_name="t.csv", actor=admin)
    finally:
        store.close()
    owner = roles_db["owner"].split("//")[1].split("@")[0]
    with psycopg.connect(host="127.0.0.1", port=roles_db["port"], user=owner, dbname=roles_db["db"],
                         autocommit=True) as conn:
        with pytest.raises(psycopg.errors.InsufficientPrivilege, match="append-only"):
            conn.execute("UPDATE analysis_versions SET vo2peak_ml_min = 9999")
