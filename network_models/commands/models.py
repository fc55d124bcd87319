"""``netstretch models``: the model registry with each model's declared parameters; with
``--list-polymers`` the polymer table in force (built-in rows plus any ``--polymers FILE``) with the source
of every value."""

from __future__ import annotations

import argparse
import json

from ..materials import add_polymers_option, apply_polymers_option, polymer_listing
from ..models import MODELS
from ._options import add_json


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("models", help="list the network models and their parameters (or the polymer table)")
    p.add_argument("--list-polymers", action="store_true",
                   help="list the polymer table instead: every value with its unit and source")
    add_polymers_option(p)
    add_json(p, "print one JSON document")
    p.set_defaults(run=run)


def _print_polymers():
    for row in polymer_listing():
        flag = {"read": "values read in the named sources", "user": f"your table {row['origin']}"}.get(
            row["status"], "some values recalled or estimated: check before a design decision rests on them")
        print(f"{row['key']:8s} {row['title']}  [{row['status']}: {flag}]")
        for name, v in row["values"].items():
            print(f"{'':10s}{name:19s} {v['value']:<10.4g} {v['unit']:6s} {v['source']}")
        if row["note"]:
            print(f"{'':10s}note: {row['note']}")


def run(args: argparse.Namespace) -> int:
    apply_polymers_option(args)
    if args.list_polymers:
        if args.json:
            print(json.dumps({"polymers": polymer_listing()}, indent=2, ensure_ascii=False))
        else:
            _print_polymers()
        return 0
    if args.json:
        print(json.dumps([m.describe() for m in MODELS.values()], indent=2, ensure_ascii=False))
        return 0
    for m in MODELS.values():
        modes = ", ".join(x.value for x in m.modes)
        print(f"{m.name:22s} {m.title}  [{modes}]")
        print(f"{'':22s} {m.equation}")
        for q in m.params:
            held = " (held fixed in fits by default)" if q.held else ""
            print(f"{'':24s}{q.name:7s} {q.unit:7s} {q.meaning}{held}")
    return 0
