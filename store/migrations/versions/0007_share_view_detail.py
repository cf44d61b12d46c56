"""Share-link views by kind and test; refused link attempts counted per day.

Revision ID: 0007
Revises: 0006
Create Date: 2026-12-03 15:15:00

* ``share_views`` gains ``kind`` (``open``: the link opened; ``test``: another test chosen inside
  a person link; ``report``: the report downloaded) and ``test_id``.
* ``share_misses``: how many times a link that does not open (malformed, unknown, expired,
  revoked) was tried, per UTC day - counts only, never the token.
"""

from __future__ import annotations

import sqlalchemy as sa
from alembic import op

revision = "0007"
down_revision = "0006"
branch_labels = None
depends_on = None


def upgrade() -> None:
    with op.batch_alter_table("share_views") as batch:
        batch.add_column(sa.Column("kind", sa.String(length=16), server_default="open", nullable=False))
        batch.add_column(sa.Column("test_id", sa.Integer(), nullable=True))
    op.create_table(
        "share_misses",
        sa.Column("day", sa.String(length=10), nullable=False),
        sa.Column("attempts", sa.Integer(), nullable=False),
        sa.PrimaryKeyConstraint("day", name=op.f("pk_share_misses")),
    )


def downgrade() -> None:
    op.drop_table("share_misses")
    with op.batch_alter_table("share_views") as batch:
        batch.drop_column("test_id")
        batch.drop_column("kind")
