"""The words of lab tables, per language, read from ``vocabulary.toml`` (data shipped with the package).

Matching ignores case and accents.  Words of the languages in ``[match].anywhere`` match anywhere in a
header (German compounds, Chinese and Japanese); the others only at the start of a word.
"""

from __future__ import annotations

import re
import tomllib
import unicodedata
from functools import lru_cache
from pathlib import Path

VOCABULARY_FILE = Path(__file__).with_name("vocabulary.toml")

#: Column kinds in the order the reader tries them (the first that matches wins).
COLUMN_KINDS = ("specimen", "true_stress", "stretch", "stress", "true_strain", "force", "strain", "extension",
                "time", "temperature")
#: Kinds that give the stretch axis and the stress axis, in order of preference.
X_KINDS = ("stretch", "strain", "true_strain", "extension")
Y_KINDS = ("stress", "true_stress", "force")


def fold(text: str) -> str:
    """Lower case without accents (``Messlänge`` → ``messlange``, ``Éprouvette`` → ``eprouvette``)."""
    return fold_with_map(text)[0]


def fold_with_map(text: str) -> tuple[str, list[int]]:
    """The folded text and, for each of its characters, the index of the character it came from."""
    out, where = [], []
    for i, ch in enumerate(str(text)):
        for f in unicodedata.normalize("NFKD", ch.casefold()):
            if unicodedata.combining(f):
                continue
            out.append(f)
            where.append(i)
    return "".join(out), where


class _Words:
    """One list of words (all languages) compiled to one regex."""

    def __init__(self, by_language: dict, anywhere: set[str]):
        start: list = []
        free: list = []
        for lang, words in by_language.items():
            for w in words:
                (free if lang in anywhere else start).append(fold(w))
        self.words = sorted({*start, *free}, key=len, reverse=True)
        parts = []
        if start:
            parts.append(r"(?<![^\W\d_])(?:" + "|".join(re.escape(w) for w in sorted(set(start), key=len,
                                                                                     reverse=True)) + ")")
        if free:
            parts.append("(?:" + "|".join(re.escape(w) for w in sorted(set(free), key=len, reverse=True)) + ")")
        self.regex = re.compile("|".join(parts)) if parts else None
        self.exact = set(self.words)

    def search(self, folded: str) -> bool:
        return bool(self.regex and self.regex.search(folded))

    def remove(self, folded: str) -> str:
        return self.regex.sub(lambda m: " " * len(m.group()), folded) if self.regex else folded


@lru_cache(maxsize=1)
def _load() -> dict:
    raw = tomllib.loads(VOCABULARY_FILE.read_text("utf-8"))
    anywhere = set(raw.get("match", {}).get("anywhere", []))
    return {
        "columns": {k: _Words(raw["columns"].get(k, {}), anywhere) for k in COLUMN_KINDS},
        "keys": {k: _Words(v, anywhere) for k, v in raw["keys"].items()},
        "modes": {k: _Words(v, anywhere) for k, v in raw["modes"].items()},
        "compression": _Words(raw.get("compression_marks", {}), anywhere),
        "swelling": {k: _Words(v, anywhere) for k, v in raw.get("swelling", {}).items()},
        "filler": {fold(w) for words in raw.get("filler", {}).values() for w in words},
        "raw": raw,
    }


def column_kind(label: str) -> str:
    """The kind a header label names (``other`` when no word matches)."""
    f = fold(label)
    for kind, words in _load()["columns"].items():
        if words.search(f):
            return kind
    return "other"


def swelling_column(label: str, taken=()) -> str | None:
    """The swelling-table column a header names (compound, specimen, dry_mass, swollen_mass,
    extracted_mass, solvent, temperature), skipping keys already ``taken``; None when none matches."""
    f = fold(label)
    for key, words in _load()["swelling"].items():
        if key not in taken and words.search(f):
            return key
    return None


def marks_compression(label: str) -> bool:
    """True when a header or value carries a compression word ("compressive stress", "Druckspannung")."""
    return _load()["compression"].search(fold(label))


def meta_key(key: str) -> str | None:
    """The canonical preamble key (gauge_length, width, thickness, diameter, area, temperature, specimen,
    mode, speed, compound, cycle, stretch) for a key as written, or None.  Keys match whole; a trailing
    symbol such as "L0" or "b" after the words is allowed ("Messlänge L0")."""
    f = " ".join(fold(key).replace("_", " ").split()).strip(" :.")
    candidates = [f]
    parts = f.rsplit(" ", 1)
    if len(parts) == 2 and len(parts[1]) <= 3:
        candidates.append(parts[0])
    for cand in candidates:
        for canon, words in _load()["keys"].items():
            if cand in words.exact:
                return canon
    return None


def mode_word(value: str) -> str | None:
    """``uniaxial``, ``compression``, ``equibiaxial`` or ``planar`` for a mode value as written, or None.
    Whole values are tried first, then words inside the value (``Druckversuch DIN``)."""
    f = " ".join(fold(value).replace("_", " ").replace("-", " ").split())
    modes = _load()["modes"]
    for mode, words in modes.items():
        if f in {w.replace("-", " ") for w in words.exact}:
            return mode
    for mode in ("compression", "equibiaxial", "planar", "uniaxial"):
        if modes[mode].search(f):
            return mode
    return None


def specimen_hint(label: str) -> str:
    """What is left of a header once its kind words and filler words are removed, in the user's spelling
    ("Force S-1" → "S-1", "Dehnung Probe 2" → "2")."""
    folded, where = fold_with_map(label)
    data = _load()
    text = folded
    for words in data["columns"].values():
        text = words.remove(text)
    for w in data["filler"]:
        text = re.sub(rf"(?<![^\W\d_]){re.escape(w)}(?![^\W\d_])", lambda m: " " * len(m.group()), text)
    kept = [i for i, (a, b) in enumerate(zip(folded, text, strict=True)) if a == b and not a.isspace()]
    if not kept:
        return ""
    # the hint is the span from the first to the last kept character, in the original spelling
    lo, hi = where[kept[0]], where[kept[-1]]
    return " ".join(str(label)[lo:hi + 1].replace("_", " ").split()).strip(" -:,.#")


def all_words() -> dict:
    """The vocabulary as read (for documentation and tests)."""
    return _load()["raw"]
