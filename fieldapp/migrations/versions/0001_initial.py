"""Initial tables: users, jobs, circuits, outlets and the change log.

Revision ID: 0001
Revises:
Create Date: 2026-12-02
"""

import sqlalchemy as sa
from alembic import op

revision = "0001"
down_revision = None
branch_labels = None
depends_on = None


def _fk(column: str, table: str, target: str):
    return sa.ForeignKeyConstraint(
        [column], [f"{target}.id"], name=op.f(f"fk_{table}_{column}_{target}"))


def _index(table: str, column: str) -> None:
    with op.batch_alter_table(table, schema=None) as batch_op:
        batch_op.create_index(batch_op.f(f"ix_{table}_{column}"), [column], unique=False)


def upgrade():
    op.create_table(
        "user",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("username", sa.String(length=64), nullable=False),
        sa.Column("name", sa.String(length=120), nullable=False),
        sa.Column("password_hash", sa.String(length=256), nullable=False),
        sa.Column("role", sa.String(length=16), nullable=False),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_user")),
        sa.UniqueConstraint("username", name=op.f("uq_user_username")),
    )
    op.create_table(
        "job",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("reference", sa.String(length=40), nullable=False),
        sa.Column("site", sa.String(length=200), nullable=False),
        sa.Column("client", sa.String(length=200), nullable=False),
        sa.Column("date", sa.Date(), nullable=True),
        sa.Column("notes", sa.Text(), nullable=False),
        sa.Column("created_by", sa.Integer(), nullable=True),
        sa.Column("tester_id", sa.Integer(), nullable=True),
        sa.Column("status", sa.String(length=16), nullable=False),
        sa.Column("submitted_at", sa.DateTime(), nullable=True),
        sa.Column("reviewed_by_id", sa.Integer(), nullable=True),
        sa.Column("reviewed_at", sa.DateTime(), nullable=True),
        sa.Column("review_comment", sa.Text(), nullable=True),
        sa.Column("approved_by_id", sa.Integer(), nullable=True),
        sa.Column("approved_at", sa.DateTime(), nullable=True),
        sa.Column("created_at", sa.DateTime(), nullable=False),
        sa.Column("updated_at", sa.DateTime(), nullable=False),
        _fk("approved_by_id", "job", "user"),
        _fk("created_by", "job", "user"),
        _fk("reviewed_by_id", "job", "user"),
        _fk("tester_id", "job", "user"),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_job")),
        sa.UniqueConstraint("reference", name=op.f("uq_job_reference")),
    )
    op.create_table(
        "circuit",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("job_id", sa.Integer(), nullable=False),
        sa.Column("position", sa.Integer(), nullable=False),
        sa.Column("board", sa.String(length=40), nullable=False),
        sa.Column("way", sa.String(length=20), nullable=False),
        sa.Column("description", sa.String(length=200), nullable=False),
        sa.Column("ocpd_standard", sa.String(length=20), nullable=False),
        sa.Column("ocpd_curve", sa.String(length=1), nullable=True),
        sa.Column("ocpd_rating_a", sa.Double(), nullable=False),
        sa.Column("rcd_rated_ma", sa.Double(), nullable=True),
        sa.Column("rcd_type", sa.String(length=8), nullable=True),
        sa.Column("live_csa_mm2", sa.Double(), nullable=False),
        sa.Column("cpc_csa_mm2", sa.Double(), nullable=False),
        sa.Column("ze_ohm", sa.Double(), nullable=True),
        sa.Column("ze_source", sa.String(length=10), nullable=False),
        sa.Column("earthing", sa.String(length=8), nullable=True),
        sa.Column("cable_length_m", sa.Double(), nullable=True),
        sa.Column("safety_isolated", sa.Boolean(), nullable=False),
        sa.Column("safety_locked_off", sa.Boolean(), nullable=False),
        sa.Column("safety_proved_dead", sa.Boolean(), nullable=False),
        sa.Column("safety_confirmed_by_id", sa.Integer(), nullable=True),
        sa.Column("safety_confirmed_at", sa.DateTime(), nullable=True),
        sa.Column("r1", sa.String(length=16), nullable=True),
        sa.Column("rn", sa.String(length=16), nullable=True),
        sa.Column("r2", sa.String(length=16), nullable=True),
        sa.Column("current_step", sa.String(length=10), nullable=False),
        _fk("job_id", "circuit", "job"),
        _fk("safety_confirmed_by_id", "circuit", "user"),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_circuit")),
    )
    _index("circuit", "job_id")
    op.create_table(
        "change_log",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("at", sa.DateTime(), nullable=False),
        sa.Column("user_id", sa.Integer(), nullable=True),
        sa.Column("device", sa.String(length=200), nullable=False),
        sa.Column("entity", sa.String(length=10), nullable=False),
        sa.Column("entity_id", sa.Integer(), nullable=False),
        sa.Column("circuit_id", sa.Integer(), nullable=True),
        sa.Column("field", sa.String(length=40), nullable=False),
        sa.Column("old_value", sa.Text(), nullable=True),
        sa.Column("new_value", sa.Text(), nullable=True),
        sa.Column("client_id", sa.String(length=64), nullable=True),
        _fk("circuit_id", "change_log", "circuit"),
        _fk("user_id", "change_log", "user"),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_change_log")),
        sa.UniqueConstraint("client_id", name=op.f("uq_change_log_client_id")),
    )
    _index("change_log", "circuit_id")
    op.create_table(
        "outlet",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("circuit_id", sa.Integer(), nullable=False),
        sa.Column("position", sa.Integer(), nullable=False),
        sa.Column("key", sa.String(length=16), nullable=False),
        sa.Column("label", sa.String(length=120), nullable=False),
        sa.Column("kind", sa.String(length=20), nullable=False),
        sa.Column("spur_from_key", sa.String(length=16), nullable=True),
        sa.Column("fuse_a", sa.Double(), nullable=True),
        sa.Column("spur_csa_mm2", sa.Double(), nullable=True),
        sa.Column("spur_cpc_csa_mm2", sa.Double(), nullable=True),
        sa.Column("ln", sa.String(length=16), nullable=True),
        sa.Column("le", sa.String(length=16), nullable=True),
        sa.Column("deleted_at", sa.DateTime(), nullable=True),
        _fk("circuit_id", "outlet", "circuit"),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_outlet")),
        sa.UniqueConstraint("circuit_id", "key", name=op.f("uq_outlet_circuit_id_key")),
    )
    _index("outlet", "circuit_id")


def downgrade():
    for table in ("outlet", "change_log", "circuit"):
        column = "job_id" if table == "circuit" else "circuit_id"
        with op.batch_alter_table(table, schema=None) as batch_op:
            batch_op.drop_index(batch_op.f(f"ix_{table}_{column}"))
        op.drop_table(table)
    op.drop_table("job")
    op.drop_table("user")
