"""Hardening: session versions, disabled accounts and mentors on users; import provenance on
circuits; remember tokens, sign-in attempts and account events.

Revision ID: 0003
Revises: 0002
Create Date: 2026-12-02
"""

import sqlalchemy as sa
from alembic import op

revision = "0003"
down_revision = "0002"
branch_labels = None
depends_on = None


def upgrade():
    with op.batch_alter_table("user", schema=None) as batch_op:
        batch_op.add_column(sa.Column("session_version", sa.Integer(), nullable=False,
                                      server_default=sa.text("0")))
        batch_op.add_column(sa.Column("disabled_at", sa.DateTime(), nullable=True))
        batch_op.add_column(sa.Column("mentor_id", sa.Integer(), nullable=True))
        batch_op.create_foreign_key(batch_op.f("fk_user_mentor_id_user"), "user",
                                    ["mentor_id"], ["id"])
    with op.batch_alter_table("circuit", schema=None) as batch_op:
        batch_op.add_column(sa.Column("imported_by_id", sa.Integer(), nullable=True))
        batch_op.add_column(sa.Column("imported_at", sa.DateTime(), nullable=True))
        batch_op.add_column(sa.Column("imported_safety", sa.Text(), nullable=True))
        batch_op.create_foreign_key(batch_op.f("fk_circuit_imported_by_id_user"), "user",
                                    ["imported_by_id"], ["id"])
    op.create_table(
        "remember_token",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("user_id", sa.Integer(), nullable=False),
        sa.Column("selector", sa.String(length=32), nullable=False),
        sa.Column("secret_hash", sa.String(length=64), nullable=False),
        sa.Column("created_at", sa.DateTime(), nullable=False),
        sa.Column("expires_at", sa.DateTime(), nullable=False),
        sa.Column("revoked_at", sa.DateTime(), nullable=True),
        sa.ForeignKeyConstraint(["user_id"], ["user.id"],
                                name=op.f("fk_remember_token_user_id_user")),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_remember_token")),
        sa.UniqueConstraint("selector", name=op.f("uq_remember_token_selector")),
    )
    with op.batch_alter_table("remember_token", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_remember_token_user_id"), ["user_id"])
    op.create_table(
        "login_attempt",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("at", sa.DateTime(), nullable=False),
        sa.Column("username", sa.String(length=64), nullable=False),
        sa.Column("address", sa.String(length=64), nullable=False),
        sa.Column("succeeded", sa.Boolean(), nullable=False),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_login_attempt")),
    )
    with op.batch_alter_table("login_attempt", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_login_attempt_at"), ["at"])
        batch_op.create_index("ix_login_attempt_username_at", ["username", "at"])
        batch_op.create_index("ix_login_attempt_address_at", ["address", "at"])
    op.create_table(
        "user_event",
        sa.Column("id", sa.Integer(), nullable=False),
        sa.Column("at", sa.DateTime(), nullable=False),
        sa.Column("user_id", sa.Integer(), nullable=False),
        sa.Column("actor_id", sa.Integer(), nullable=True),
        sa.Column("action", sa.String(length=32), nullable=False),
        sa.Column("detail", sa.Text(), nullable=False),
        sa.ForeignKeyConstraint(["actor_id"], ["user.id"],
                                name=op.f("fk_user_event_actor_id_user")),
        sa.ForeignKeyConstraint(["user_id"], ["user.id"],
                                name=op.f("fk_user_event_user_id_user")),
        sa.PrimaryKeyConstraint("id", name=op.f("pk_user_event")),
    )
    with op.batch_alter_table("user_event", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_user_event_user_id"), ["user_id"])


def downgrade():
    op.drop_table("user_event")
    op.drop_table("login_attempt")
    op.drop_table("remember_token")
    with op.batch_alter_table("circuit", schema=None) as batch_op:
        batch_op.drop_constraint(batch_op.f("fk_circuit_imported_by_id_user"),
                                 type_="foreignkey")
        batch_op.drop_column("imported_safety")
        batch_op.drop_column("imported_at")
        batch_op.drop_column("imported_by_id")
    with op.batch_alter_table("user", schema=None) as batch_op:
        batch_op.drop_constraint(batch_op.f("fk_user_mentor_id_user"), type_="foreignkey")
        batch_op.drop_column("mentor_id")
        batch_op.drop_column("disabled_at")
        batch_op.drop_column("session_version")
