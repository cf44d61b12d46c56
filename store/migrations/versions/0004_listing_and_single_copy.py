"""Fast test lists and one copy of a session file's bytes.

Revision ID: 0004
Revises: 0005
Create Date: 2026-12-03 15:00:00

(Numbered as planned; it follows 0005, which was merged first.)

- ``ix_tests_live_listing``: a partial index (live tests only) holding every ``tests`` column
  the test list reads, in the list's order, so listing never touches a row (rows carry the raw
  upload and the session text).
- On SQLite, ``analysis_versions`` is rebuilt with the list's columns (headline numbers,
  results error) before the settings and results JSON: a row's first bytes are in its page and
  the JSON in overflow pages, so the list reads the headline without reading the results.
  (PostgreSQL keeps large values out of line by itself.)
- ``tests.session_text`` is empty when the converted session is the upload itself (a Tidemark
  session file): the text is then read from ``raw_bytes``. Existing identical copies are emptied.
"""

from __future__ import annotations

import sqlalchemy as sa
from alembic import op

revision = "0004"
down_revision = "0005"
branch_labels = None
depends_on = None

LISTING_COLUMNS = [
    "test_date", "id", "person_id", "current_version", "imported_at", "protocol", "original_file_name", "deleted_at",
]
VERSION_ORDER = (
    "id", "test_id", "version", "vo2peak_ml_min", "vt1_vo2_ml_min", "ve_vco2_slope", "results_error",
    "created_at", "created_by", "reason", "settings_json", "results_json",
)

_tests = sa.table("tests", sa.column("id", sa.Integer), sa.column("raw_bytes", sa.LargeBinary), sa.column("session_text", sa.Text))


def upgrade() -> None:
    bind = op.get_bind()
    if bind.dialect.name == "sqlite":
        with op.batch_alter_table("analysis_versions", recreate="always", partial_reordering=[VERSION_ORDER]):
            pass
    op.create_index(
        "ix_tests_live_listing", "tests", LISTING_COLUMNS,
        sqlite_where=sa.text("deleted_at IS NULL"), postgresql_where=sa.text("deleted_at IS NULL"),
    )
    ids = bind.execute(sa.select(_tests.c.id)).scalars().all()
    for test_id in ids:  # one row at a time: each holds a whole upload
        raw, text = bind.execute(sa.select(_tests.c.raw_bytes, _tests.c.session_text).where(_tests.c.id == test_id)).one()
        if text and text.encode("utf-8") == bytes(raw):
            bind.execute(sa.update(_tests).where(_tests.c.id == test_id).values(session_text=""))


def downgrade() -> None:
    bind = op.get_bind()
    for test_id, raw in bind.execute(sa.select(_tests.c.id, _tests.c.raw_bytes).where(_tests.c.session_text == "")).all():
        bind.execute(sa.update(_tests).where(_tests.c.id == test_id).values(session_text=bytes(raw).decode("utf-8")))
    op.drop_index("ix_tests_live_listing", table_name="tests")
