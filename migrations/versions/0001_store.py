"""The store: parts with parameters, drawers, the movement ledger and balances.

Revision ID: 0001
Revises:
Create Date: 2026-12-01 20:23:12.171966
"""

from __future__ import annotations

import sqlalchemy as sa
from alembic import op

revision = "0001"
down_revision = None
branch_labels = None
depends_on = None


def upgrade() -> None:
    op.create_table(
        "drawers",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("label", sa.String(length=64), nullable=False),
        sa.Column("parent_id", sa.Integer(), nullable=True),
        sa.Column("note", sa.Text(), nullable=False),
        sa.ForeignKeyConstraint(
            ["parent_id"], ["drawers.id"], name=op.f("fk_drawers_parent_id_drawers")
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_drawers")),
        sa.UniqueConstraint("label", name=op.f("uq_drawers_label")),
    )
    op.create_table(
        "parts",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("number", sa.String(length=120), nullable=False),
        sa.Column("key", sa.String(length=120), nullable=False),
        sa.Column("kind", sa.String(length=16), nullable=False),
        sa.Column("family", sa.String(length=32), nullable=True),
        sa.Column("package", sa.String(length=40), nullable=True),
        sa.Column("pinout", sa.String(length=16), nullable=True),
        sa.Column("description", sa.Text(), nullable=False),
        sa.Column("attrs", sa.Text(), nullable=False),
        sa.Column("source", sa.Text(), nullable=True),
        sa.Column("created_at", sa.DateTime(timezone=True), nullable=False),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_parts")),
        sa.UniqueConstraint("key", name=op.f("uq_parts_key")),
    )
    with op.batch_alter_table("parts", schema=None) as batch_op:
        batch_op.create_index("ix_parts_kind_family", ["kind", "family"], unique=False)

    op.create_table(
        "balances",
        sa.Column("part_id", sa.Integer(), nullable=False),
        sa.Column("drawer_id", sa.Integer(), nullable=False),
        sa.Column("on_hand", sa.Integer(), nullable=False),
        sa.Column("reserved", sa.Integer(), nullable=False),
        sa.CheckConstraint("on_hand >= 0", name=op.f("ck_balances_on_hand_not_negative")),
        sa.CheckConstraint("reserved <= on_hand", name=op.f("ck_balances_reserved_within_on_hand")),
        sa.CheckConstraint("reserved >= 0", name=op.f("ck_balances_reserved_not_negative")),
        sa.ForeignKeyConstraint(
            ["drawer_id"], ["drawers.id"], name=op.f("fk_balances_drawer_id_drawers")
        ),
        sa.ForeignKeyConstraint(["part_id"], ["parts.id"], name=op.f("fk_balances_part_id_parts")),
        sa.PrimaryKeyConstraint("part_id", "drawer_id", name=op.f("pk_balances")),
    )
    with op.batch_alter_table("balances", schema=None) as batch_op:
        batch_op.create_index("ix_balances_drawer", ["drawer_id"], unique=False)

    op.create_table(
        "movements",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("part_id", sa.Integer(), nullable=False),
        sa.Column("drawer_id", sa.Integer(), nullable=False),
        sa.Column("account", sa.String(length=8), nullable=False),
        sa.Column("qty", sa.Integer(), nullable=False),
        sa.Column("reason", sa.String(length=12), nullable=False),
        sa.Column("ref", sa.String(length=200), nullable=False),
        sa.Column("note", sa.Text(), nullable=False),
        sa.Column("at", sa.DateTime(timezone=True), nullable=False),
        sa.Column("key", sa.String(length=120), nullable=True),
        sa.CheckConstraint("account IN ('on_hand', 'reserved')", name=op.f("ck_movements_account")),
        sa.CheckConstraint("qty <> 0", name=op.f("ck_movements_qty_nonzero")),
        sa.ForeignKeyConstraint(
            ["drawer_id"], ["drawers.id"], name=op.f("fk_movements_drawer_id_drawers")
        ),
        sa.ForeignKeyConstraint(["part_id"], ["parts.id"], name=op.f("fk_movements_part_id_parts")),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_movements")),
        sa.UniqueConstraint("key", name=op.f("uq_movements_key")),
    )
    with op.batch_alter_table("movements", schema=None) as batch_op:
        batch_op.create_index("ix_movements_at", ["at"], unique=False)
        batch_op.create_index("ix_movements_part_drawer", ["part_id", "drawer_id"], unique=False)

    op.create_table(
        "params",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("part_id", sa.Integer(), nullable=False),
        sa.Column("name", sa.String(length=16), nullable=False),
        sa.Column("bound", sa.String(length=3), nullable=False),
        sa.Column("value", sa.Float(), nullable=False),
        sa.Column("at", sa.Text(), nullable=False),
        sa.Column("origin", sa.String(length=8), nullable=False),
        sa.CheckConstraint("bound IN ('min', 'typ', 'max', 'nom')", name=op.f("ck_params_bound")),
        sa.ForeignKeyConstraint(
            ["part_id"], ["parts.id"], name=op.f("fk_params_part_id_parts"), ondelete="CASCADE"
        ),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_params")),
        sa.UniqueConstraint("part_id", "name", "bound", "at", name="uq_params_part_name_bound_at"),
    )
    with op.batch_alter_table("params", schema=None) as batch_op:
        batch_op.create_index(
            "ix_params_name_bound_value", ["name", "bound", "value"], unique=False
        )


def downgrade() -> None:
    with op.batch_alter_table("params", schema=None) as batch_op:
        batch_op.drop_index("ix_params_name_bound_value")

    op.drop_table("params")
    with op.batch_alter_table("movements", schema=None) as batch_op:
        batch_op.drop_index("ix_movements_part_drawer")
        batch_op.drop_index("ix_movements_at")

    op.drop_table("movements")
    with op.batch_alter_table("balances", schema=None) as batch_op:
        batch_op.drop_index("ix_balances_drawer")

    op.drop_table("balances")
    with op.batch_alter_table("parts", schema=None) as batch_op:
        batch_op.drop_index("ix_parts_kind_family")

    op.drop_table("parts")
    op.drop_table("drawers")
