"""Deprecated compatibility shim for code outside the project: the names once documented here live in
:mod:`network_models.curves` (``TestCurve``, ``ForceTemperatureRecord``, ``SwellingResult``),
:mod:`network_models.errors` (``DataError``) and :mod:`network_models.labfiles` (the readers).

Importing this module emits a :class:`DeprecationWarning`; nothing in the project imports it
(``tests/test_testdata_shim.py`` checks), and it will be removed in a later release.  Replace
``from network_models.testdata import read_curves`` by ``from network_models.labfiles import read_curves``.
"""

from __future__ import annotations

import warnings

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

warnings.warn("network_models.testdata is deprecated: import TestCurve and the other data types from "
              "network_models.curves and the readers from network_models.labfiles", DeprecationWarning, stacklevel=2)
