"""The lab's identity: name, address line, logo, report footer and public URL for share links.

Revision ID: 0005
Revises: 0002
Create Date: 2026-12-03 14:20:00

A new table with at most one row; a store without it shows no lab name anywhere.
"""

from __future__ import annotations

import sqlalchemy as sa
from alembic import op

revision = "0005"
down_revision = "0002"
branch_labels = None
depends_on = None


def upgrade() -> None:
    op.create_table(
        "lab_identity",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("name", sa.String(length=200), nullable=False),
        sa.Column("address", sa.String(length=400), nullable=False),
        sa.Column("report_footer", sa.Text(), nullable=False),
        sa.Column("logo", sa.LargeBinary(), nullable=True),
        sa.Column("logo_mime", sa.String(length=32), nullable=True),
        sa.Column("public_url", sa.String(length=400), nullable=False),
        sa.Column("updated_at", sa.DateTime(timezone=True), nullable=True),
        sa.Column("updated_by", sa.Integer(), nullable=True),
        sa.ForeignKeyConstraint(["updated_by"], ["users.id"], name=op.f("fk_lab_identity_updated_by_users")),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_lab_identity")),
    )


def downgrade() -> None:
    op.drop_table("lab_identity")
