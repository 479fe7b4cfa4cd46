"""Sign-off and the job sheet: the test instrument of a job (model and serial number as the
tester types them), the reasons given for submitting or approving a job with problems, and when
a reading queued offline was taken.

Revision ID: 0004
Revises: 0006
Create Date: 2026-12-02
"""

import sqlalchemy as sa
from alembic import op

revision = "0004"
down_revision = "0006"
branch_labels = None
depends_on = None

JOB_COLUMNS = (
    ("instrument_model", sa.String(length=80)),
    ("instrument_serial", sa.String(length=60)),
    ("submit_reason", sa.Text()),
    ("approve_reason", sa.Text()),
)


def upgrade():
    with op.batch_alter_table("job", schema=None) as batch_op:
        for name, kind in JOB_COLUMNS:
            batch_op.add_column(sa.Column(name, kind, nullable=True))
    with op.batch_alter_table("change_log", schema=None) as batch_op:
        batch_op.add_column(sa.Column("taken_at", sa.DateTime(), nullable=True))


def downgrade():
    with op.batch_alter_table("change_log", schema=None) as batch_op:
        batch_op.drop_column("taken_at")
    with op.batch_alter_table("job", schema=None) as batch_op:
        for name, _ in reversed(JOB_COLUMNS):
            batch_op.drop_column(name)
