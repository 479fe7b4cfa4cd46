"""Alembic environment: always run online on the connection handed over in Config.attributes."""

from alembic import context

import fieldapp.models  # noqa: F401  (registers the tables on the metadata)
from fieldapp.extensions import db

connection = context.config.attributes.get("connection")
if connection is None:
    raise RuntimeError("run the migrations through fieldapp.migrations.upgrade(engine)")

context.configure(
    connection=connection,
    target_metadata=db.metadata,
    render_as_batch=True,  # SQLite alters tables by copying them
    compare_type=True,
)
with context.begin_transaction():
    context.run_migrations()
