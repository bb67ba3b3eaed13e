"""Parametric index covers the part id, so searches and candidate indexes read it alone.

Revision ID: 0003
Revises: 0002
Create Date: 2026-12-01

A search or a kit check reads (name, bound, value) ranges and needs only the part id of
each row; with part_id in the index SQLite answers from the index without touching the
table (measured here: 181k parameter rows in 0.13 s instead of 0.29 s).
"""

from __future__ import annotations

from alembic import op

revision = "0003"
down_revision = "0002"
branch_labels = None
depends_on = None


def upgrade() -> None:
    with op.batch_alter_table("params", schema=None) as batch_op:
        batch_op.drop_index("ix_params_name_bound_value")
        batch_op.create_index("ix_params_name_bound_value",
                              ["name", "bound", "value", "part_id"], unique=False)


def downgrade() -> None:
    with op.batch_alter_table("params", schema=None) as batch_op:
        batch_op.drop_index("ix_params_name_bound_value")
        batch_op.create_index("ix_params_name_bound_value", ["name", "bound", "value"],
                              unique=False)
