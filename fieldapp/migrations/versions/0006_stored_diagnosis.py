"""Stored diagnoses: one row per distinct circuit record and engine version, shared by every
app worker and server.

Revision ID: 0006
Revises: 0003
Create Date: 2026-12-02
"""

import sqlalchemy as sa
from alembic import op

revision = "0006"
down_revision = "0003"
branch_labels = None
depends_on = None


def upgrade():
    op.create_table(
        "stored_diagnosis",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("record_hash", sa.String(length=64), nullable=False),
        sa.Column("engine", sa.String(length=64), nullable=False),
        sa.Column("result", sa.Text(), nullable=False),
        sa.Column("created_at", sa.DateTime(), nullable=False),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_stored_diagnosis")),
        sa.UniqueConstraint("record_hash", "engine",
                            name=op.f("uq_stored_diagnosis_record_hash_engine")),
    )


def downgrade():
    op.drop_table("stored_diagnosis")
