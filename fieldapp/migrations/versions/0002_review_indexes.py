"""Indexes for the supervisor's review: the job list filtered by status, and the history of
one job or outlet looked up by (entity, entity_id) in the change log.

Revision ID: 0002
Revises: 0001
Create Date: 2026-12-02
"""

from alembic import op

revision = "0002"
down_revision = "0001"
branch_labels = None
depends_on = None


def upgrade():
    with op.batch_alter_table("job", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_job_status"), ["status"], unique=False)
    with op.batch_alter_table("change_log", schema=None) as batch_op:
        batch_op.create_index(batch_op.f("ix_change_log_entity_entity_id"),
                              ["entity", "entity_id"], unique=False)


def downgrade():
    with op.batch_alter_table("change_log", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_change_log_entity_entity_id"))
    with op.batch_alter_table("job", schema=None) as batch_op:
        batch_op.drop_index(batch_op.f("ix_job_status"))
