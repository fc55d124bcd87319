"""The results library's tables (SQLAlchemy Core): one source of truth for the column names; the Alembic
migrations in ``migrations/versions`` create exactly these (checked by tests/test_library.py).

* ``studies`` — one imported study: its kind (manifest, project, batch), title, the model its results were
  computed with, its settings (JSON), when and by whom it was saved, and ``content_hash``: SHA-256 over the
  inputs' hashes, the settings and the compound facts.  The hash is UNIQUE, so the same inputs and settings are
  stored once, whoever imports them and however many import at the same moment.
* ``blobs`` — input bytes by their SHA-256 (stored once, shared by every study that uses them).
* ``inputs`` — which blob a study used, under which name, for which compound, with which reader options.
* ``compounds`` — a study's compounds: key, polymer, f, filler volume fraction, metadata, the date it was tested
  (``tested``) and where that date came from (``date_source``: manifest, metadata or import).
* ``specimens`` — a compound's specimens and their own values (JSON, SI).
* ``results`` — one row per compound, model, quantity and basis: value with its 95 % interval and n.
* ``batch_runs`` / ``batch_rows`` — a ``netstretch batch`` output, row for row.
"""

from __future__ import annotations

from sqlalchemy import (
    Boolean,
    Column,
    Date,
    DateTime,
    Float,
    ForeignKey,
    Index,
    Integer,
    LargeBinary,
    MetaData,
    String,
    Table,
    Text,
)

metadata = MetaData()

studies = Table(
    "studies", metadata,
    Column("id", Integer, primary_key=True, autoincrement=True),
    Column("content_hash", String(64), nullable=False, unique=True),
    Column("kind", String(16), nullable=False),
    Column("title", Text, nullable=False, default=""),
    Column("source", Text, nullable=False, default=""),
    Column("model", String(64), nullable=False),
    Column("settings", Text, nullable=False, default="{}"),
    Column("imported_at", DateTime(timezone=True), nullable=False),
    Column("saved_by", String(200)),
    Column("netstretch_version", String(40), nullable=False, default=""),
    Column("notes", Text, nullable=False, default=""),
)

blobs = Table(
    "blobs", metadata,
    Column("sha256", String(64), primary_key=True),
    Column("size", Integer, nullable=False),
    Column("data", LargeBinary, nullable=False),
)

inputs = Table(
    "inputs", metadata,
    Column("id", Integer, primary_key=True, autoincrement=True),
    Column("study_id", Integer, ForeignKey("studies.id", ondelete="CASCADE"), nullable=False, index=True),
    Column("name", Text, nullable=False),
    Column("sha256", String(64), ForeignKey("blobs.sha256"), nullable=False, index=True),
    Column("role", String(32), nullable=False),
    Column("compound", String(200), nullable=False, default=""),
    Column("options", Text, nullable=False, default="{}"),
)

compounds = Table(
    "compounds", metadata,
    Column("id", Integer, primary_key=True, autoincrement=True),
    Column("study_id", Integer, ForeignKey("studies.id", ondelete="CASCADE"), nullable=False, index=True),
    Column("name", String(200), nullable=False, index=True),
    Column("polymer", String(64), nullable=False, default="NR"),
    Column("f", Float, nullable=False, default=4.0),
    Column("filler", Float, nullable=False, default=0.0),
    Column("tested", Date, nullable=False),
    Column("date_source", String(16), nullable=False),
    Column("metadata", Text, nullable=False, default="{}"),
    Column("n", Integer, nullable=False, default=0),
    Column("error", Text),
)

specimens = Table(
    "specimens", metadata,
    Column("id", Integer, primary_key=True, autoincrement=True),
    Column("compound_id", Integer, ForeignKey("compounds.id", ondelete="CASCADE"), nullable=False, index=True),
    Column("name", String(200), nullable=False),
    Column("used", Boolean, nullable=False),
    Column("excluded", Text),
    Column("values", Text, nullable=False, default="{}"),
)

results = Table(
    "results", metadata,
    Column("id", Integer, primary_key=True, autoincrement=True),
    Column("compound_id", Integer, ForeignKey("compounds.id", ondelete="CASCADE"), nullable=False),
    Column("model", String(64), nullable=False),
    Column("quantity", String(64), nullable=False),
    Column("basis", String(64), nullable=False),
    Column("basis_label", Text, nullable=False, default=""),
    Column("headline", Boolean, nullable=False, default=False),
    Column("value", Float),
    Column("ci_low", Float),
    Column("ci_high", Float),
    Column("n", Integer, nullable=False, default=0),
    Column("unit", String(32), nullable=False, default=""),
    Index("ix_results_lookup", "quantity", "model", "basis"),
    Index("ix_results_compound", "compound_id"),
)

batch_runs = Table(
    "batch_runs", metadata,
    Column("id", Integer, primary_key=True, autoincrement=True),
    Column("study_id", Integer, ForeignKey("studies.id", ondelete="CASCADE"), nullable=False, index=True),
    Column("model", String(64), nullable=False),
    Column("source", Text, nullable=False, default=""),
    Column("rows", Integer, nullable=False),
)

batch_rows = Table(
    "batch_rows", metadata,
    Column("id", Integer, primary_key=True, autoincrement=True),
    Column("run_id", Integer, ForeignKey("batch_runs.id", ondelete="CASCADE"), nullable=False, index=True),
    Column("file", Text, nullable=False),
    Column("curve", Text, nullable=False, default=""),
    Column("specimen", Text, nullable=False, default=""),
    Column("compound", String(200), nullable=False, default=""),
    Column("mode", String(32), nullable=False, default=""),
    Column("G0", Float),
    Column("nu", Float),
    Column("nu_basis", Text, nullable=False, default=""),
    Column("rms", Float),
    Column("r2", Float),
    Column("warnings", Text, nullable=False, default=""),
    Column("error", Text, nullable=False, default=""),
    Column("params", Text, nullable=False, default="{}"),
)

__all__ = ["batch_rows", "batch_runs", "blobs", "compounds", "inputs", "metadata", "results", "specimens", "studies"]
