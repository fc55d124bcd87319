"""The results library: studies, compounds, specimens and their results in a database (SQLite by default, any
SQLAlchemy URL for a lab server), found again by design targets and followed over time as a control chart.

    from network_models.library import import_study, find, trend, export_study
    import_study("manifest", "sample_sets/qc_history/qc_history.toml", db="lab.sqlite")
    find(["nu=250..300mol/m3", "lock>=6"], db="lab.sqlite")           # {"matches": [...]} nearest first
    trend("strand_density", db="lab.sqlite", compound_prefix="QM-M")  # individuals chart, moving-range limits

Layout: :mod:`.schema` (tables), ``migrations/`` (Alembic scripts, run from code), :mod:`.db` (where the library
is, connecting, migrating, refusals), :mod:`.adapter` (what a study is — the one coupling to the study and
project modules), :mod:`.store` (import, export), :mod:`.query` (find, trend, chart).
"""

from .db import ENV_VAR, LibraryError, configured, connect, default_path, masked, resolve_url
from .query import find, trend, trend_svg
from .store import BASIS_KEYS, DEFAULT_BASIS, ImportResult, export_study, import_study, store

__all__ = ["BASIS_KEYS", "DEFAULT_BASIS", "ENV_VAR", "ImportResult", "LibraryError", "configured", "connect",
           "default_path", "export_study", "find", "import_study", "masked", "resolve_url", "store", "trend",
           "trend_svg"]
