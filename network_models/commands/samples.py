"""``netstretch samples DIR``: write the bundled (invented) sample set — data files and ``compounds.toml`` — into
a folder where it can be opened, copied and used with ``--manifest DIR/compounds.toml``."""

from __future__ import annotations

import argparse


def add_parser(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser("samples", help="write the bundled sample set (invented demo data) into a folder",
                       description="Copy the bundled sample set (invented data of an invented scenario) and its "
                                   "manifest compounds.toml into DIR.")
    p.add_argument("dir", metavar="DIR", help="folder to write into (created if missing)")
    p.add_argument("--overwrite", action="store_true", help="replace files of the same name that differ")
    p.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    from ..errors import UserError
    from ..samples import write_samples

    try:
        written = write_samples(args.dir, overwrite=args.overwrite)
    except (FileExistsError, NotADirectoryError) as exc:
        raise UserError(str(exc)) from None
    for p in written:
        print(p)
    manifest = next((p for p in written if p.name == "compounds.toml"), None)
    if manifest is not None:
        print(f"\nInvented demo data. Try: netstretch compare --manifest {manifest}")
    return 0
