"""Keep the import options (sheet, gas unit, time format, metadata overrides) with each test.

Revision ID: 0002
Revises: 0001
Create Date: 2026-12-02 06:40:00

Existing tests get ``{}`` (they were imported with the importer's defaults).
"""

from __future__ import annotations

import sqlalchemy as sa
from alembic import op

revision = "0002"
down_revision = "0001"
branch_labels = None
depends_on = None


def upgrade() -> None:
    with op.batch_alter_table("tests", schema=None) as batch_op:
        batch_op.add_column(sa.Column("import_options_json", sa.Text(), server_default="{}", nullable=False))


def downgrade() -> None:
    with op.batch_alter_table("tests", schema=None) as batch_op:
        batch_op.drop_column("import_options_json")
