"""The first schema of the results library: studies, blobs, inputs, compounds, specimens, results, batch runs.

Revision ID: 0001
Revises:
Create Date: 2026-12-04
"""

import sqlalchemy as sa
from alembic import op

revision = "0001"
down_revision = None
branch_labels = None
depends_on = None


def upgrade():
    op.create_table(
        "studies",
        sa.Column("id", sa.Integer, primary_key=True, autoincrement=True),
        sa.Column("content_hash", sa.String(64), nullable=False, unique=True),
        sa.Column("kind", sa.String(16), nullable=False),
        sa.Column("title", sa.Text, nullable=False),
        sa.Column("source", sa.Text, nullable=False),
        sa.Column("model", sa.String(64), nullable=False),
        sa.Column("settings", sa.Text, nullable=False),
        sa.Column("imported_at", sa.DateTime(timezone=True), nullable=False),
        sa.Column("saved_by", sa.String(200)),
        sa.Column("netstretch_version", sa.String(40), nullable=False),
        sa.Column("notes", sa.Text, nullable=False),
    )
    op.create_table(
        "blobs",
        sa.Column("sha256", sa.String(64), primary_key=True),
        sa.Column("size", sa.Integer, nullable=False),
        sa.Column("data", sa.LargeBinary, nullable=False),
    )
    op.create_table(
        "inputs",
        sa.Column("id", sa.Integer, primary_key=True, autoincrement=True),
        sa.Column("study_id", sa.Integer, sa.ForeignKey("studies.id", ondelete="CASCADE"), nullable=False,
                  index=True),
        sa.Column("name", sa.Text, nullable=False),
        sa.Column("sha256", sa.String(64), sa.ForeignKey("blobs.sha256"), nullable=False, index=True),
        sa.Column("role", sa.String(32), nullable=False),
        sa.Column("compound", sa.String(200), nullable=False),
        sa.Column("options", sa.Text, nullable=False),
    )
    op.create_table(
        "compounds",
        sa.Column("id", sa.Integer, primary_key=True, autoincrement=True),
        sa.Column("study_id", sa.Integer, sa.ForeignKey("studies.id", ondelete="CASCADE"), nullable=False,
                  index=True),
        sa.Column("name", sa.String(200), nullable=False, index=True),
        sa.Column("polymer", sa.String(64), nullable=False),
        sa.Column("f", sa.Float, nullable=False),
        sa.Column("filler", sa.Float, nullable=False),
        sa.Column("tested", sa.Date, nullable=False),
        sa.Column("date_source", sa.String(16), nullable=False),
        sa.Column("metadata", sa.Text, nullable=False),
        sa.Column("n", sa.Integer, nullable=False),
        sa.Column("error", sa.Text),
    )
    op.create_table(
        "specimens",
        sa.Column("id", sa.Integer, primary_key=True, autoincrement=True),
        sa.Column("compound_id", sa.Integer, sa.ForeignKey("compounds.id", ondelete="CASCADE"), nullable=False,
                  index=True),
        sa.Column("name", sa.String(200), nullable=False),
        sa.Column("used", sa.Boolean, nullable=False),
        sa.Column("excluded", sa.Text),
        sa.Column("values", sa.Text, nullable=False),
    )
    op.create_table(
        "results",
        sa.Column("id", sa.Integer, primary_key=True, autoincrement=True),
        sa.Column("compound_id", sa.Integer, sa.ForeignKey("compounds.id", ondelete="CASCADE"), nullable=False),
        sa.Column("model", sa.String(64), nullable=False),
        sa.Column("quantity", sa.String(64), nullable=False),
        sa.Column("basis", sa.String(64), nullable=False),
        sa.Column("basis_label", sa.Text, nullable=False),
        sa.Column("headline", sa.Boolean, nullable=False),
        sa.Column("value", sa.Float),
        sa.Column("ci_low", sa.Float),
        sa.Column("ci_high", sa.Float),
        sa.Column("n", sa.Integer, nullable=False),
        sa.Column("unit", sa.String(32), nullable=False),
    )
    op.create_index("ix_results_lookup", "results", ["quantity", "model", "basis"])
    op.create_index("ix_results_compound", "results", ["compound_id"])
    op.create_table(
        "batch_runs",
        sa.Column("id", sa.Integer, primary_key=True, autoincrement=True),
        sa.Column("study_id", sa.Integer, sa.ForeignKey("studies.id", ondelete="CASCADE"), nullable=False,
                  index=True),
        sa.Column("model", sa.String(64), nullable=False),
        sa.Column("source", sa.Text, nullable=False),
        sa.Column("rows", sa.Integer, nullable=False),
    )
    op.create_table(
        "batch_rows",
        sa.Column("id", sa.Integer, primary_key=True, autoincrement=True),
        sa.Column("run_id", sa.Integer, sa.ForeignKey("batch_runs.id", ondelete="CASCADE"), nullable=False,
                  index=True),
        sa.Column("file", sa.Text, nullable=False),
        sa.Column("curve", sa.Text, nullable=False),
        sa.Column("specimen", sa.Text, nullable=False),
        sa.Column("compound", sa.String(200), nullable=False),
        sa.Column("mode", sa.String(32), nullable=False),
        sa.Column("G0", sa.Float),
        sa.Column("nu", sa.Float),
        sa.Column("nu_basis", sa.Text, nullable=False),
        sa.Column("rms", sa.Float),
        sa.Column("r2", sa.Float),
        sa.Column("warnings", sa.Text, nullable=False),
        sa.Column("error", sa.Text, nullable=False),
        sa.Column("params", sa.Text, nullable=False),
    )


def downgrade():
    for name in ("batch_rows", "batch_runs", "results", "specimens", "compounds", "inputs", "blobs", "studies"):
        op.drop_table(name)
