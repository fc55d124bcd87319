"""One way to write JSON: an object (never a JSON-encoded string), no NaN/inf (they become ``null`` and a
``warnings`` entry says where), numpy scalars/arrays and enums converted, notices as their sentence."""

from __future__ import annotations

import json
import math
from enum import Enum
from pathlib import Path
from typing import Any


def to_jsonable(obj: Any, *, _path: str = "", _found: list | None = None) -> Any:
    """Plain JSON-ready structure; non-finite floats become None and their paths are appended to ``_found``."""
    found = _found if _found is not None else []
    if hasattr(obj, "to_dict") and not isinstance(obj, (dict, str)):
        obj = obj.to_dict()
    if isinstance(obj, dict):
        return {str(k.value if isinstance(k, Enum) else k): to_jsonable(v, _path=f"{_path}.{k}" if _path else str(k),
                                                                       _found=found)
                for k, v in obj.items()}
    if isinstance(obj, (list, tuple, set, frozenset)):
        return [to_jsonable(v, _path=f"{_path}[{i}]", _found=found) for i, v in enumerate(obj)]
    if isinstance(obj, str):
        return str.__str__(obj)
    if isinstance(obj, Enum):
        return obj.value
    if isinstance(obj, Path):
        return str(obj)
    if hasattr(obj, "tolist") and not isinstance(obj, (bool, int, float)):  # numpy arrays and scalars
        return to_jsonable(obj.tolist(), _path=_path, _found=found)
    if isinstance(obj, float) and not math.isfinite(obj):
        found.append(_path or "(value)")
        return None
    return obj


def dumps(doc: dict, *, indent: int | None = 2) -> str:
    """One JSON object as text.  ``doc`` must be a mapping (or have ``to_dict()``): a script reading our
    output always gets an object.  Undefined numbers become null and are listed under ``warnings``."""
    found: list[str] = []
    out = to_jsonable(doc, _found=found)
    if not isinstance(out, dict):
        raise TypeError(f"JSON output must be an object, got {type(out).__name__}")
    if found:
        warnings = out.setdefault("warnings", [])
        if isinstance(warnings, list):
            warnings.append("undefined numbers are given as null: " + ", ".join(found[:8])
                            + (" …" if len(found) > 8 else ""))
    return json.dumps(out, indent=indent, ensure_ascii=False, allow_nan=False)


__all__ = ["to_jsonable", "dumps"]
