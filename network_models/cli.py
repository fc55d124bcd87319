"""``netstretch`` command line.  Each sub-command lives in ``network_models/commands/<name>.py`` and
exposes ``add_parser(subparsers)``; the parser calls ``args.run(args)`` which returns an exit code.

Errors a user can cause (bad file, bad unit, bad number) are printed to stderr as one readable sentence
with exit code 2; never a traceback.
"""

from __future__ import annotations

import argparse
import importlib
import os
import re
import sys

from .constants import CAUTION
from .errors import UserError
from .materials import add_polymers_option, apply_polymers_option
from .recipes import add_ingredients_option, apply_ingredients_option

#: commands whose results depend on the polymer table (they all accept ``--polymers FILE``)
_POLYMER_COMMANDS = {"demo", "fit", "crosslinks", "swell", "thermo", "report", "compare", "design", "models", "batch",
                     "project"}

#: commands that read manifests whose recipes use the ingredient table (they accept ``--ingredients FILE``)
_RECIPE_COMMANDS = {"swell", "report", "compare", "design", "batch"}

#: sub-command modules, in the order ``--help`` lists them (``commands/report.py`` also adds ``compare``)
COMMANDS = ("demo", "models", "fit", "crosslinks", "swell", "thermo", "report", "design", "batch",
            "project", "samples", "serve", "library")


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="netstretch",
        description="Rubber-network models, lab-curve fitting and crosslink density for compound designers.",
        epilog=CAUTION,
    )
    from . import __version__

    parser.add_argument("--version", action="version", version=f"netstretch {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name in COMMANDS:  # a missing command module is an error (ModuleNotFoundError), never skipped
        importlib.import_module(f"network_models.commands.{name}").add_parser(sub)
    # every command that names a polymer reads the user's own polymer table the same way
    for name, sp in sub.choices.items():
        if name in _POLYMER_COMMANDS and not any("--polymers" in a.option_strings for a in sp._actions):
            add_polymers_option(sp)
        # commands that read manifests with recipes in phr read the user's ingredient table the same way
        if name in _RECIPE_COMMANDS and not any("--ingredients" in a.option_strings for a in sp._actions):
            add_ingredients_option(sp)
    return parser


#: a value that starts with a minus sign followed by a digit (``-20C``, ``-.5MPa``), not an option
_NEGATIVE_VALUE = re.compile(r"^-(\d|\.\d)")


def _value_options(parser) -> set[str]:
    """Long options (of the command and every sub-command) that take exactly one value."""
    out: set[str] = set()
    parsers = [parser]
    while parsers:
        p = parsers.pop()
        for a in p._actions:
            if isinstance(a, argparse._SubParsersAction):
                parsers += list(a.choices.values())
            elif a.nargs is None and a.option_strings:
                out.update(o for o in a.option_strings if o.startswith("--"))
    return out


def negative_values(parser: argparse.ArgumentParser, argv: list[str]) -> list[str]:
    """``--temperature -20C`` as ``--temperature=-20C``: argparse takes a word starting with '-' for an option
    unless it is a plain number, so a negative quantity with its unit after an option is joined to it."""
    takes, out = _value_options(parser), list[str]()
    for tok in argv:
        if out and _NEGATIVE_VALUE.match(tok) and out[-1] in takes:
            out[-1] = f"{out[-1]}={tok}"
        else:
            out.append(tok)
    return out


def main(argv=None) -> int:
    parser = build_parser()
    argv = negative_values(parser, list(sys.argv[1:] if argv is None else argv))
    args = parser.parse_args(argv)
    if not getattr(args, "run", None):
        parser.print_help()
        return 0
    try:
        apply_polymers_option(args)
        apply_ingredients_option(args)
        return int(args.run(args) or 0)
    except (UserError, ValueError, KeyError, FileNotFoundError, PermissionError, IsADirectoryError) as exc:
        msg = exc.args[0] if isinstance(exc, KeyError) and exc.args else str(exc)
        print(f"netstretch {args.command}: {msg}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        return 130
    except BrokenPipeError:  # output piped into `head` and friends
        sys.stderr.close()
        return 0
    except Exception as exc:  # last resort: a sentence, not a traceback (NETSTRETCH_DEBUG=1 shows it)
        if os.environ.get("NETSTRETCH_DEBUG"):
            raise
        print(f"netstretch {args.command}: unexpected problem ({type(exc).__name__}: {exc}). "
              "Please report it with the command you ran; set NETSTRETCH_DEBUG=1 to see details.", file=sys.stderr)
        return 1


if __name__ == "__main__":
    # run the package's copy of main so that exception classes raised by sub-commands (which import
    # network_models.cli) are the ones caught here, also under `python -m network_models.cli`
    from network_models.cli import main as _main

    sys.exit(_main())
