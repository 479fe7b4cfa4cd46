"""Live tests and the rest of the schedule: cpc kind, parallel earth paths, prospective fault
current, insulation resistance, RCD trip time and test button on the circuit; measured Zs,
where the readings were taken and a re-measure at the terminals on each outlet.

Readings are text as recorded ("0.52", "OL", NULL); insulation resistance keeps ">999".

Revision ID: 0005
Revises: 0004
Create Date: 2026-12-02
"""

from typing import Any

import sqlalchemy as sa
from alembic import op

revision = "0005"
down_revision = "0004"
branch_labels = None
depends_on = None

CIRCUIT_COLUMNS: tuple[tuple[str, sa.types.TypeEngine[Any]], ...] = (
    ("pfc_ka", sa.Double()),
    ("ir_test_v", sa.Double()),
    ("ir_ln_mohm", sa.String(length=16)),
    ("ir_le_mohm", sa.String(length=16)),
    ("ir_ne_mohm", sa.String(length=16)),
    ("rcd_trip_ms", sa.Double()),
    ("rcd_button_ok", sa.Boolean()),
)
OUTLET_COLUMNS = (
    ("zs_measured", sa.String(length=16)),
    ("taken_at", sa.String(length=10)),
    ("ln_terminals", sa.String(length=16)),
    ("le_terminals", sa.String(length=16)),
)


def upgrade():
    with op.batch_alter_table("circuit", schema=None) as batch_op:
        # existing rows get the record format's defaults
        batch_op.add_column(sa.Column("cpc_kind", sa.String(length=12), nullable=False,
                                      server_default="cable_core"))
        batch_op.add_column(sa.Column("parallel_paths", sa.Boolean(), nullable=False,
                                      server_default=sa.false()))
        for name, kind in CIRCUIT_COLUMNS:
            batch_op.add_column(sa.Column(name, kind, nullable=True))
    with op.batch_alter_table("circuit", schema=None) as batch_op:
        # the models set the values themselves: no server default left behind
        batch_op.alter_column("cpc_kind", server_default=None)
        batch_op.alter_column("parallel_paths", server_default=None)
    with op.batch_alter_table("outlet", schema=None) as batch_op:
        for name, kind in OUTLET_COLUMNS:
            batch_op.add_column(sa.Column(name, kind, nullable=True))


def downgrade():
    with op.batch_alter_table("outlet", schema=None) as batch_op:
        for name, _ in reversed(OUTLET_COLUMNS):
            batch_op.drop_column(name)
    with op.batch_alter_table("circuit", schema=None) as batch_op:
        for name, _ in reversed(CIRCUIT_COLUMNS):
            batch_op.drop_column(name)
        batch_op.drop_column("parallel_paths")
        batch_op.drop_column("cpc_kind")
