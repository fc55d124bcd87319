"""``netstretch batch FOLDER|FILE... --model NAME [--jobs N] [--scheduler ADDRESS] -o results.csv``: fit every curve
of an archive, one row per curve, resumable; unreadable files listed in ``<stem>.failures.csv``."""

from __future__ import annotations

import argparse

from ._options import add_db, add_functionality, add_polymer


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "batch", help="fit every curve in folders of lab files: one row per curve (CSV or parquet), resumable",
        description="Walk folders (csv, tsv, txt, xlsx and the other formats the reader knows), fit MODEL to every "
                    "curve and write one row per curve. Files that cannot be read are listed with the reason in "
                    "<output stem>.failures.csv; the run never stops at a bad file. Re-running with the same "
                    "output skips files already done.")
    p.add_argument("inputs", nargs="+", metavar="FOLDER|FILE", help="folders (searched recursively) and files")
    p.add_argument("--model", required=True, metavar="NAME", help="model to fit (see `netstretch models`)")
    p.add_argument("-o", "--output", required=True, metavar="FILE.csv|FILE.parquet", help="results file")
    p.add_argument("--jobs", type=int, default=1, metavar="N", help="local worker processes (default 1)")
    p.add_argument("--scheduler", metavar="ADDRESS",
                   help="send the work to a running Dask distributed scheduler, e.g. tcp://lab-pc-01:8786 "
                        "(pip install 'netstretch[cluster]')")
    add_polymer(p, "polymer for the crosslink density (default NR)")
    add_functionality(p, "junction functionality f for the crosslink density (default 4)")
    p.add_argument("--no-progress", action="store_true", help="no progress bar on stderr")

    add_db(p)  # also store the rows in the results library (`netstretch library`)
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    import sys

    from ..batch import run_batch

    if args.jobs > 1 and args.scheduler:
        print("netstretch batch: --jobs is ignored with --scheduler (the cluster's workers do the work)",
              file=sys.stderr)
    summary = run_batch(args.inputs, args.model, args.output, jobs=args.jobs, scheduler=args.scheduler,
                        polymer=args.polymer, f=args.functionality, progress=not args.no_progress)
    print(summary.sentence())
    if getattr(args, "db", None):
        from ..library import import_study

        print(import_study("batch", args.output, args.db, model=args.model).sentence())
    return 0
