"""The checks a project's ``project.toml`` passes before it is used (see the project file module for the
layout): every known field has its type checked and a wrong one is refused with the field named; fields this
version does not know are dropped with a notice (a newer netstretch may have written them); reader options
are limited to the ones the reader takes.

``check_manifest(doc, name, error)`` returns the document (unknown fields removed) with the notices under
the key ``"notices"`` of its ``[project]`` table, so the caller can show them.
"""

from __future__ import annotations

_TEXT, _NUM, _BOOL, _TABLE, _LIST = "text", "number", "true/false", "table", "list"

_PROJECT = {"format": _TEXT, "version": "whole number", "created": _TEXT, "netstretch_version": _TEXT,
            "title": _TEXT, "purpose": _TEXT}
_INPUT = {"file": _TEXT, "name": _TEXT, "compound": _TEXT, "kind": _TEXT, "selected": _BOOL, "options": _TABLE,
          "conditions": _TABLE}  # conditions: test conditions the user stated (field = text)
# `filler` is version 1's name of the filler volume fraction (still read)
_COMPOUND = {"name": _TEXT, "polymer": _TEXT, "f": _NUM, "filler": _NUM, "filler_volume_fraction": _NUM,
             "baseline": _BOOL, "notes": _TEXT, "metadata": _TABLE, "swelling_source": _TEXT, "swelling": _LIST,
             "recipe": _TABLE, "ingredients": _LIST}  # recipe: ingredient name = phr; ingredients: own rows
_TOP = {"project": _TABLE, "settings": _TABLE, "input": _LIST, "compound": _LIST, "results": _TABLE}


def _is(v, kind) -> bool:
    if kind == _TEXT:
        return isinstance(v, str)
    if kind == _NUM:
        return isinstance(v, (int, float)) and not isinstance(v, bool)
    if kind == "whole number":
        return isinstance(v, int) and not isinstance(v, bool)
    if kind == _BOOL:
        return isinstance(v, bool)
    if kind == _TABLE:
        return isinstance(v, dict)
    if kind == _LIST:
        return isinstance(v, list)
    return True


def _check_table(d: dict, schema: dict, where: str, name: str, error, notices: list) -> dict:
    out = {}
    for k, v in d.items():
        if k not in schema:
            notices.append(f"{where}: the field {k!r} is not known to this version of netstretch and was ignored")
            continue
        if not _is(v, schema[k]):
            raise error(f"{name}: {where} {k} must be {schema[k]} (found {type(v).__name__} {str(v)[:40]!r}); "
                        "the file was changed by hand or is damaged — fix that field or save the project again")
        out[k] = v
    return out


def check_manifest(doc: dict, name: str, error=ValueError) -> dict:
    """``doc`` (parsed project.toml) checked; refusals raise ``error`` with one sentence naming the field."""
    from .labfiles.api import OPTIONS

    notices: list[str] = []
    doc = _check_table(doc, _TOP, "project.toml", name, error, notices)
    head = _check_table(doc.get("project", {}), _PROJECT, "[project]", name, error, notices)
    doc["project"] = head
    inputs = []
    for i, e in enumerate(doc.get("input", []), 1):
        if not isinstance(e, dict):
            raise error(f"{name}: [[input]] number {i} must be a table; save the project again")
        e = _check_table(e, _INPUT, f"[[input]] {i}", name, error, notices)
        if e.get("kind", "curves") == "curves":  # a lab file's reader options: only the ones the reader takes
            opts = {}
            for k, v in e.get("options", {}).items():
                if k in OPTIONS and k != "profile":
                    opts[k] = v
                else:
                    notices.append(f"[[input]] {i}: the reader option {k!r} is not known and was ignored")
            e["options"] = opts
        from .conditions import FIELDS

        conds = {}
        for k, v in e.get("conditions", {}).items():
            if k not in FIELDS:
                notices.append(f"[[input]] {i}: the test condition {k!r} is not known and was ignored")
            elif not _is(v, _TEXT):
                raise error(f"{name}: [[input]] {i} conditions {k} must be text (found {type(v).__name__}); fix "
                            "that field or save the project again")
            else:
                conds[k] = v
        if "conditions" in e:
            e["conditions"] = conds
        inputs.append(e)
    doc["input"] = inputs
    comps = []
    for i, c in enumerate(doc.get("compound", []), 1):
        if not isinstance(c, dict):
            raise error(f"{name}: [[compound]] number {i} must be a table; save the project again")
        c = _check_table(c, _COMPOUND, f"[[compound]] {i}", name, error, notices)
        if not all(isinstance(s, dict) for s in c.get("swelling", [])):
            raise error(f"{name}: [[compound]] {i} swelling must be a list of tables; save the project again")
        if not all(isinstance(s, dict) for s in c.get("ingredients", [])):
            raise error(f"{name}: [[compound]] {i} ingredients must be a list of tables; save the project again")
        bad = [k for k, v in c.get("recipe", {}).items() if not _is(v, _NUM)]
        if bad:
            raise error(f"{name}: [[compound]] {i} recipe {bad[0]} must be a number (phr); fix that field or save "
                        "the project again")
        comps.append(c)
    doc["compound"] = comps
    for key in ("settings", "results"):
        for section, values in doc.get(key, {}).items():
            if not isinstance(values, dict):
                raise error(f"{name}: [{key}.{section}] must be a table (found {type(values).__name__}); "
                            "save the project again")
    head["notices"] = notices
    return doc
