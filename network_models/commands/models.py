"""``netstretch models``: the model registry with each model's declared parameters."""

from __future__ import annotations

import json

from ..models import MODELS


def add_parser(sub):
    p = sub.add_parser("models", help="list the network models and their parameters")
    p.add_argument("--json", action="store_true", help="print one JSON document")
    p.set_defaults(run=run)


def run(args):
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
