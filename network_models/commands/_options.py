"""Options several sub-commands share, each declared once here (flag, type, metavar, default help); a
command passes its own help sentence when the option means something more specific there.  ``--polymers
FILE`` and ``--ingredients FILE`` are added by :mod:`network_models.cli` to every command that needs them."""

from __future__ import annotations

import argparse

__all__ = ["DB_HELP", "add_db", "add_functionality", "add_json", "add_polymer"]

DB_HELP = ("the library: a SQLAlchemy URL (postgresql+psycopg://USER@HOST/DB, sqlite:///FILE) or a file path "
           "(SQLite); default $NETSTRETCH_LIBRARY, else ~/.local/share/netstretch/library.sqlite (Linux)")


def add_json(p: argparse.ArgumentParser, help: str = "print one JSON document (SI units)") -> None:
    """``--json``: print one JSON object on stdout instead of the table."""
    p.add_argument("--json", action="store_true", help=help)


def add_polymer(p: argparse.ArgumentParser, help: str = "polymer from the polymer table (default NR)",
                default: str | None = "NR", metavar: str | None = None) -> None:
    """``--polymer KEY``: a row of the polymer table (``netstretch models`` lists it; ``--polymers FILE`` adds)."""
    p.add_argument("--polymer", default=default, metavar=metavar, help=help)


def add_functionality(p: argparse.ArgumentParser, help: str = "junction functionality f (default 4)",
                      default: float | None = 4.0) -> None:
    """``--functionality F``: junction functionality f (4 for sulfur and peroxide cures)."""
    p.add_argument("--functionality", type=float, default=default, metavar="F", help=help)


def add_db(p: argparse.ArgumentParser) -> None:
    """``--db URL``: the results library (``netstretch library``, ``batch --db``)."""
    p.add_argument("--db", metavar="URL", help=DB_HELP)
