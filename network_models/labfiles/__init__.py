"""Reading lab files: bytes → table → columns and units → specimens → curves in SI, cleaned and reported.

Layout: ``tables`` (text and workbooks → cells), ``vocabulary`` (+ ``vocabulary.toml``: the trade's words
per language), ``columns`` (what a header names), ``metadata`` (``# key: value`` lines, preambles,
geometry, mode), ``reader`` (pairs, specimens, missing geometry at once), ``convert`` (λ and nominal
stress, compression signs), ``cleanup`` (loading branch), ``records`` (force–temperature and swelling
tables), ``profiles`` (saved reading options), ``manifest`` (the sample-set manifest), ``api`` (the
public readers).
"""

from ..curves import ForceTemperatureRecord, SwellingResult, TestCurve
from ..errors import DataError
from .api import OPTIONS, FileInfo, curves_to_csv, inspect_bytes, read_curves, read_curves_bytes
from .cleanup import SLACK_FRACTION
from .convert import MAX_PLAUSIBLE_STRETCH
from .manifest import SAMPLE_MANIFEST, CurveFile, ManifestEntry, ManifestIndex, read_manifest
from .profiles import load_profile, save_profile
from .records import read_force_temperature, read_swelling
from .tables import MAX_FILE_BYTES

__all__ = [
    "MAX_FILE_BYTES", "MAX_PLAUSIBLE_STRETCH", "OPTIONS", "SAMPLE_MANIFEST", "SLACK_FRACTION", "CurveFile",
    "ManifestEntry", "ManifestIndex",
    "DataError", "FileInfo", "ForceTemperatureRecord", "SwellingResult", "TestCurve", "curves_to_csv",
    "inspect_bytes", "load_profile", "read_curves", "read_curves_bytes", "read_force_temperature", "read_manifest",
    "read_swelling", "save_profile",
]
