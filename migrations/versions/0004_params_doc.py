"""Each part carries its parameters as one document beside the ``params`` rows.

Revision ID: 0004
Revises: 0003
Create Date: 2026-12-01

The fit engine loads every parameter of thousands of candidates; reading them as ~7 rows
per part from ``params`` cost more than ranking them. ``parts.params_doc`` holds the same
values as one text per part (format: stock.store.paramdoc), written with the rows. The
upgrade fills it from the rows already stored; the downgrade drops it (the rows stay the
record).
"""

from __future__ import annotations

import json
from collections import defaultdict

import sqlalchemy as sa
from alembic import op

revision = "0004"
down_revision = "0003"
branch_labels = None
depends_on = None


def upgrade() -> None:
    # the store's own encoder, so the documents are exactly what its writers produce
    from stock.kinds import Bound
    from stock.parts import Origin, Param
    from stock.store.paramdoc import encode

    # a plain ADD COLUMN (no batch rebuild: other tables' foreign keys point at parts,
    # and SQLite would refuse to drop the old table while they are enforced)
    op.add_column("parts", sa.Column("params_doc", sa.Text(), nullable=False,
                                     server_default="{}"))
    conn = op.get_bind()
    params: dict[int, list[Param]] = defaultdict(list)
    for pid, name, bound, value, at, origin in conn.execute(sa.text(
            "SELECT part_id, name, bound, value, at, origin FROM params ORDER BY id")):
        params[pid].append(Param(name, Bound(bound), value, json.loads(at) if at else {},
                                 Origin(origin)))
    docs = [{"d": encode(ps), "i": pid} for pid, ps in params.items()]
    if docs:
        conn.execute(sa.text("UPDATE parts SET params_doc = :d WHERE id = :i"), docs)


def downgrade() -> None:
    if op.get_bind().dialect.name == "sqlite":
        op.execute("ALTER TABLE parts DROP COLUMN params_doc")  # SQLite 3.35 and later
    else:
        op.drop_column("parts", "params_doc")
