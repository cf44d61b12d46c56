"""Audit guards: append-only triggers, a hash chain over audit rows, sign-in attempts by client.

Revision ID: 0006
Revises: 0004
Create Date: 2026-12-03 15:00:00

* ``audit_events`` gains ``prev_hash`` and ``row_hash`` (the chain, see ``store/audit_chain.py``);
  rows already present are linked here in id order and the head is written to ``store_info``.
* ``login_attempts`` gains ``client`` (who tried, as the dashboard knows it) with an index, for
  the per-client sign-in limit.
* Triggers refuse UPDATE and DELETE on ``audit_events``, ``analysis_versions`` and
  ``sign_offs`` on SQLite and PostgreSQL: history is only ever added to.
"""

from __future__ import annotations

import sqlalchemy as sa
from alembic import op

revision = "0006"
down_revision = "0004"
branch_labels = None
depends_on = None

#: Tables whose rows are never changed or removed.
APPEND_ONLY = ("audit_events", "analysis_versions", "sign_offs")
#: Text of the refusal (shown to whoever tries, e.g. in a database tool).
REFUSAL = "Tidemark history is append-only: rows of this table cannot be changed or deleted"


def _link_existing_rows() -> None:
    from store.audit_chain import AUDIT_HEAD_KEY, GENESIS, encode_head, hash_of

    bind = op.get_bind()
    audit = sa.table(
        "audit_events", sa.column("id", sa.Integer), sa.column("at", sa.DateTime(timezone=True)),
        sa.column("actor_id", sa.Integer), sa.column("actor_name", sa.String), sa.column("action", sa.String),
        sa.column("test_id", sa.Integer), sa.column("person_id", sa.Integer), sa.column("field", sa.String),
        sa.column("old_value", sa.Text), sa.column("new_value", sa.Text), sa.column("reason", sa.Text),
        sa.column("prev_hash", sa.String), sa.column("row_hash", sa.String),
    )
    info = sa.table("store_info", sa.column("key", sa.String), sa.column("value", sa.Text))
    prev, count = GENESIS, 0
    for row in bind.execute(sa.select(audit).order_by(audit.c.id)).all():
        new = hash_of(row, prev)
        bind.execute(audit.update().where(audit.c.id == row.id).values(prev_hash=prev, row_hash=new))
        prev, count = new, count + 1
    bind.execute(info.delete().where(info.c.key == AUDIT_HEAD_KEY))
    bind.execute(info.insert().values(key=AUDIT_HEAD_KEY, value=encode_head(count, prev)))


def _create_triggers(dialect: str) -> None:
    if dialect == "postgresql":
        op.execute(
            "CREATE OR REPLACE FUNCTION tidemark_append_only() RETURNS trigger LANGUAGE plpgsql AS $$ "
            f"BEGIN RAISE EXCEPTION '{REFUSAL} (%)', TG_TABLE_NAME USING ERRCODE = 'insufficient_privilege'; END $$"
        )
        for table in APPEND_ONLY:
            op.execute(
                f"CREATE TRIGGER trg_{table}_append_only BEFORE UPDATE OR DELETE ON {table} "
                "FOR EACH ROW EXECUTE FUNCTION tidemark_append_only()"
            )
        return
    for table in APPEND_ONLY:
        for verb in ("update", "delete"):
            op.execute(
                f"CREATE TRIGGER trg_{table}_no_{verb} BEFORE {verb.upper()} ON {table} "
                f"BEGIN SELECT RAISE(ABORT, '{REFUSAL} ({table})'); END"
            )


def _drop_triggers(dialect: str) -> None:
    if dialect == "postgresql":
        for table in APPEND_ONLY:
            op.execute(f"DROP TRIGGER IF EXISTS trg_{table}_append_only ON {table}")
        op.execute("DROP FUNCTION IF EXISTS tidemark_append_only()")
        return
    for table in APPEND_ONLY:
        for verb in ("update", "delete"):
            op.execute(f"DROP TRIGGER IF EXISTS trg_{table}_no_{verb}")


def upgrade() -> None:
    dialect = op.get_bind().dialect.name
    with op.batch_alter_table("audit_events") as batch:
        batch.add_column(sa.Column("prev_hash", sa.String(length=64), nullable=True))
        batch.add_column(sa.Column("row_hash", sa.String(length=64), nullable=True))
    with op.batch_alter_table("login_attempts") as batch:
        batch.add_column(sa.Column("client", sa.String(length=64), nullable=True))
        batch.create_index(batch.f("ix_login_attempts_client"), ["client"], unique=False)
    _link_existing_rows()
    _create_triggers(dialect)


def downgrade() -> None:
    dialect = op.get_bind().dialect.name
    _drop_triggers(dialect)
    with op.batch_alter_table("login_attempts") as batch:
        batch.drop_index(batch.f("ix_login_attempts_client"))
        batch.drop_column("client")
    with op.batch_alter_table("audit_events") as batch:
        batch.drop_column("row_hash")
        batch.drop_column("prev_hash")
