"""``netstretch library import|find|trend|export|list``: the results library (a database of studies).

    netstretch library import --manifest sample_sets/qc_history/qc_history.toml --db lab.sqlite
    netstretch library find --db lab.sqlite --target "nu=250..300mol/m3" --target "lock>=6" --json
    netstretch library trend --db lab.sqlite --quantity strand_density --compound-prefix QM-M --svg trend.svg
    netstretch library export --db lab.sqlite --study 3 -o study3.nsproj.zip

``--db`` takes a SQLAlchemy URL (``postgresql+psycopg://user@host/db``) or a file path (SQLite); without it
``$NETSTRETCH_LIBRARY``, else the user's data folder (``~/.local/share/netstretch/library.sqlite`` on Linux).
"""

from __future__ import annotations

import argparse
import json
import sys

from ._options import add_db, add_json, add_polymer


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("library", help="the results library: import studies, find compounds by targets, QC trends",
                       description="A database of studies (inputs by SHA-256, settings, compounds, specimens and "
                                   "their results per model and basis): import, find by design targets, follow a "
                                   "quantity over time as an individuals control chart, export a study back.")
    lsub = p.add_subparsers(dest="library_command", metavar="ACTION")

    imp = lsub.add_parser("import", help="store a study (idempotent: the same inputs and settings are stored once)")
    src = imp.add_mutually_exclusive_group(required=True)
    src.add_argument("--manifest", metavar="FILE", help="a compounds manifest (TOML/JSON) and the files it lists")
    src.add_argument("--project", metavar="FILE.zip", help="a project file saved by netstretch")
    src.add_argument("--batch", metavar="RESULTS.csv", help="a `netstretch batch` output (CSV or parquet)")
    imp.add_argument("--model", metavar="NAME", help="model of the results (default: the study's own model, else "
                                                     "the comparison default, extended-tube)")
    add_db(imp)
    add_json(imp, "print one JSON object")
    imp.set_defaults(run=run_import)

    fnd = lsub.add_parser("find", help="compounds whose headline 95 %% intervals meet every target, nearest first")
    add_db(fnd)
    fnd.add_argument("--target", action="append", default=[], metavar="TARGET",
                     help="a target in the design syntax (repeat): G, E, M100, M300, lock, nu, e.g. "
                          "'nu=250..300mol/m3', 'lock>=6', 'G=0.30..0.40MPa'")
    add_polymer(fnd, "only compounds of this polymer (e.g. NR)", default=None, metavar="KEY")
    fnd.add_argument("--model", metavar="NAME", help="results of this model (default: each study's own model)")
    fnd.add_argument("--limit", type=int, default=50, metavar="N", help="show at most N matches (default 50)")
    add_json(fnd, "print one JSON object with `matches`")
    fnd.set_defaults(run=run_find)

    tr = lsub.add_parser("trend", help="a quantity over time, one point per compound: individuals control chart")
    add_db(tr)
    tr.add_argument("--quantity", default="strand_density", metavar="Q",
                    help="strand_density (default), G0, lock, N, M100_measured, M300_measured")
    tr.add_argument("--compound-prefix", default="", metavar="PREFIX", help="only compounds whose key starts so")
    tr.add_argument("--model", metavar="NAME", help="results of this model (default: the latest study's model)")
    tr.add_argument("--basis", metavar="BASIS", help="strand-density basis: affine-all (default; all of G read as "
                                                     "strands, never negative) or affine-no-entanglement")
    tr.add_argument("--svg", metavar="FILE.svg", help="also write the control chart as an SVG file")
    add_json(tr, "print one JSON object with `points`, `centre`, `ucl`, `lcl`")
    tr.set_defaults(run=run_trend)

    ex = lsub.add_parser("export", help="write a stored study back as a project file")
    add_db(ex)
    ex.add_argument("--study", required=True, type=int, metavar="ID", help="the study number (library list/find)")
    ex.add_argument("-o", "--output", required=True, metavar="FILE.zip", help="project file to write")
    ex.set_defaults(run=run_export)

    ls = lsub.add_parser("list", help="the studies in the library")
    add_db(ls)
    add_json(ls, "print JSON")
    ls.set_defaults(run=run_list)
    p.set_defaults(run=lambda args: (p.print_help(), 0)[1])


def _out(obj):
    print(json.dumps(obj, indent=2, ensure_ascii=False, allow_nan=False))


def run_import(args: argparse.Namespace) -> int:
    from ..library import import_study

    kind, path = next((k, getattr(args, k)) for k in ("manifest", "project", "batch") if getattr(args, k))
    res = import_study(kind, path, args.db, model=args.model)
    if args.json:
        _out(res.to_dict())
    else:
        print(res.sentence())
    return 0


def _fmt(x, unit):
    if x is None:
        return "—"
    if unit == "Pa":
        return f"{x / 1e6:.4g}"
    return f"{x:.4g}"


def _shown(key, v) -> str:
    u = v["unit"]
    ci = (f" [{_fmt(v['ci95'][0], u)}–{_fmt(v['ci95'][1], u)}]" if v["ci95"] else " (n = 1, no interval)")
    unit = " MPa" if u == "Pa" else (f" {u}" if u != "1" else "")
    return f"{key}: {_fmt(v['value'], u)}{ci}{unit}"


def run_find(args: argparse.Namespace) -> int:
    from ..errors import UserError
    from ..library import find

    if not args.target:
        raise UserError("give at least one --target, e.g. --target 'nu=250..300mol/m3'")
    res = find(args.target, args.db, polymer=args.polymer, model=args.model, limit=args.limit)
    if args.json:
        _out(res)
        return 0
    m = res["matches"]
    shown = f"; the nearest {len(m)} shown" if len(m) < res["total"] else ", nearest first"
    print(f"{res['total']} compound(s) meet {', '.join(t['text'] for t in res['targets'])} (model: {res['model']})"
          f"{shown}")
    for x in m:
        vals = "; ".join(_shown(k, v) for k, v in x["values"].items())
        flag = "  [n = 1: scatter unknown]" if x["n1"] else ""
        print(f"  {x['compound']:<14} study {x['study']:<4} {x['date']} {x['model']}  {vals}{flag}")
    for n in res["notes"]:
        print(f"note: {n}")
    return 0


def run_trend(args: argparse.Namespace) -> int:
    from pathlib import Path

    from ..library import trend, trend_svg

    res = trend(args.quantity, args.db, compound_prefix=args.compound_prefix, model=args.model, basis=args.basis)
    if args.svg:
        Path(args.svg).write_text(trend_svg(res), encoding="utf-8")
    if args.json:
        _out(res)
        return 0
    u = res["unit"]
    show = "MPa" if u == "Pa" else u
    print(f"{res['quantity']} ({show}), model {res['model']}, basis: {res['basis_label'] or res['basis']}")
    for p in res["points"]:
        ci = f"[{_fmt(p['ci95'][0], u)}–{_fmt(p['ci95'][1], u)}]" if p["ci95"] else "(no interval)"
        flag = "  OUT OF CONTROL" if p["out_of_control"] else ""
        print(f"  {p['date']}  {p['compound']:<14} {_fmt(p['value'], u):>10} {ci}{flag}")
    if res["ucl"] is not None:
        print(f"centre {_fmt(res['centre'], u)}, UCL {_fmt(res['ucl'], u)}, LCL {_fmt(res['lcl'], u)} {show} "
              f"({res['method']})")
    for n in res["notes"]:
        print(f"note: {n}")
    if args.svg:
        print(f"chart written to {args.svg}", file=sys.stderr)
    return 0


def run_export(args: argparse.Namespace) -> int:
    from pathlib import Path

    from ..library import export_study

    data = export_study(args.study, args.db)
    Path(args.output).write_bytes(data)
    print(f"study {args.study} written to {args.output} ({len(data)} bytes)")
    return 0


def run_list(args: argparse.Namespace) -> int:
    from ..library.query import studies

    rows = studies(args.db)
    if args.json:
        _out({"studies": rows})
        return 0
    for r in rows:
        print(f"  {r['study']:<4} {r['kind']:<8} {r['model']:<16} {r['compounds']:>3} compounds  "
              f"{r['imported_at']}  {r['saved_by'] or ''}  {r['title']}")
    if not rows:
        print("the library holds no study yet; `netstretch library import --manifest FILE` adds one")
    return 0
