"""Compatibility module: the names the README and DEVELOPERS documented here, now living in
:mod:`network_models.curves` (the data types) and :mod:`network_models.labfiles` (the readers).

New code imports from those modules; this one only re-exports them.
"""

from __future__ import annotations

from .curves import ForceTemperatureRecord, SwellingResult, TestCurve
from .errors import DataError
from .labfiles import (
    MAX_FILE_BYTES,
    MAX_PLAUSIBLE_STRETCH,
    SAMPLE_MANIFEST,
    SLACK_FRACTION,
    CurveFile,
    FileInfo,
    ManifestEntry,
    ManifestIndex,
    curves_to_csv,
    inspect_bytes,
    load_profile,
    read_curves,
    read_curves_bytes,
    read_force_temperature,
    read_manifest,
    read_swelling,
    save_profile,
)

__all__ = [
    "MAX_FILE_BYTES", "MAX_PLAUSIBLE_STRETCH", "SAMPLE_MANIFEST", "SLACK_FRACTION", "CurveFile",
    "ManifestEntry", "ManifestIndex",
    "DataError", "FileInfo", "ForceTemperatureRecord", "SwellingResult", "TestCurve", "curves_to_csv",
    "inspect_bytes", "load_profile", "read_curves", "read_curves_bytes", "read_force_temperature", "read_manifest",
    "read_swelling", "save_profile",
]
