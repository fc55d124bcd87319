"""Alembic environment of the results library.  Run from code only (network_models.library.db.upgrade),
which hands the open connection over in ``config.attributes["connection"]``; no alembic.ini is needed."""

from alembic import context

from network_models.library.schema import metadata

connection = context.config.attributes.get("connection")
if connection is None:  # pragma: no cover - only reached when someone runs the alembic command by hand
    raise RuntimeError("run the library's migrations through network_models.library (open_library / upgrade)")
context.configure(connection=connection, target_metadata=metadata, render_as_batch=True)
with context.begin_transaction():
    context.run_migrations()
