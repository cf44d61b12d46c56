"""Results JSON kept zlib-compressed.

Revision ID: 0008
Revises: 0007
Create Date: 2026-12-03 17:40:00

``analysis_versions.results_json`` (text) becomes ``results_zlib`` (binary): the same JSON
text, UTF-8, zlib-compressed (``store/compressed_text.py``). The model attribute is still
``AnalysisVersion.results_json`` and still a ``str``; only the stored bytes change
(≈ 46 KB → ≈ 15 KB per demo version). Existing rows are converted here, both ways.

The append-only triggers of migration ``0006`` refuse the UPDATE this conversion needs: they
are dropped for the conversion and created again, in the same transaction (on SQLite the
table rebuild would drop them anyway).
"""

from __future__ import annotations

from collections.abc import Callable
from types import ModuleType
from typing import Any

import sqlalchemy as sa
from alembic import op

from store.compressed_text import compress_text, decompress_text

revision = "0008"
down_revision = "0007"
branch_labels = None
depends_on = None

_versions = sa.table(
    "analysis_versions", sa.column("id", sa.Integer), sa.column("results_json", sa.Text),
    sa.column("results_zlib", sa.LargeBinary),
)


def _append_only_guards() -> ModuleType:
    """Migration 0006, whose functions drop and create the append-only triggers."""
    from alembic.script import ScriptDirectory

    from store.migrate import alembic_config

    script = ScriptDirectory.from_config(alembic_config()).get_revision("0006")
    assert script is not None and script.module is not None
    return script.module


def _convert(source: str, target: str, convert: Callable[[Any], Any]) -> None:
    """Fill column ``target`` from ``source`` row by row (each row holds a whole results JSON)."""
    bind = op.get_bind()
    src = _versions.c[source]
    ids = bind.execute(sa.select(_versions.c.id).where(src.is_not(None))).scalars().all()
    for version_id in ids:
        value = bind.execute(sa.select(src).where(_versions.c.id == version_id)).scalar_one()
        bind.execute(sa.update(_versions).where(_versions.c.id == version_id).values({target: convert(value)}))


def _replace_column(old: str, new: sa.Column, convert: Callable[[Any], Any]) -> None:
    """Add ``new``, fill it from ``old`` through ``convert``, drop ``old``; the append-only
    triggers are off meanwhile (same transaction)."""
    dialect = op.get_bind().dialect.name
    guards = _append_only_guards()
    guards._drop_triggers(dialect)
    op.add_column("analysis_versions", new)
    _convert(old, new.name, convert)
    with op.batch_alter_table("analysis_versions") as batch:
        batch.drop_column(old)
    guards._create_triggers(dialect)


def upgrade() -> None:
    _replace_column("results_json", sa.Column("results_zlib", sa.LargeBinary(), nullable=True), compress_text)


def downgrade() -> None:
    _replace_column("results_zlib", sa.Column("results_json", sa.Text(), nullable=True), decompress_text)
