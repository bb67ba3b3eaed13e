"""Builds: N copies of a kit with parts reserved, later built or released.

Revision ID: 0002
Revises: 0001
Create Date: 2026-12-01
"""

from __future__ import annotations

import sqlalchemy as sa
from alembic import op

revision = "0002"
down_revision = "0001"
branch_labels = None
depends_on = None


def upgrade() -> None:
    op.create_table(
        "builds",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("name", sa.String(length=80), nullable=False),
        sa.Column("kit", sa.String(length=200), nullable=False),
        sa.Column("copies", sa.Integer(), nullable=False),
        sa.Column("built", sa.Integer(), nullable=False),
        sa.Column("status", sa.String(length=10), nullable=False),
        sa.Column("plan", sa.Text(), nullable=False),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.CheckConstraint(
            "status IN ('reserved', 'built', 'released')", name=op.f("ck_builds_status")
        ),
        sa.CheckConstraint("copies > 0", name=op.f("ck_builds_copies_positive")),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_builds")),
        sa.UniqueConstraint("name", name=op.f("uq_builds_name")),
    )
    # batch mode: SQLite cannot add a foreign key to an existing table, so Alembic
    # rebuilds the table (rows are copied across).
    with op.batch_alter_table("movements", schema=None) as batch_op:
        batch_op.add_column(sa.Column("build_id", sa.Integer(), nullable=True))
        batch_op.create_foreign_key(
            batch_op.f("fk_movements_build_id_builds"), "builds", ["build_id"], ["id"]
        )


def downgrade() -> None:
    with op.batch_alter_table("movements", schema=None) as batch_op:
        batch_op.drop_constraint(batch_op.f("fk_movements_build_id_builds"), type_="foreignkey")
        batch_op.drop_column("build_id")
    op.drop_table("builds")
