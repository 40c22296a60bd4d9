"""The command line's parser: the global options and every subcommand.

Each subcommand lives in its own module with a ``register(subparsers)`` function that
adds its parser and sets ``func`` to a handler taking the parsed arguments and
returning an exit status.
"""

from __future__ import annotations

import importlib
import sys

from carboy import __version__
from carboy.tui.cli.kit import ArgumentParser
from carboy.tui.edge import EXIT_BAD_INPUT, run_guarded

# modules that contribute subcommands, in the order their help is listed
SUBCOMMAND_MODULES = (
    "carboy.tui.cli.ph",
    "carboy.tui.cli.neutralize",
    "carboy.tui.cli.prep",
    "carboy.tui.cli.standardize",
    "carboy.tui.cli.stock",
    "carboy.tui.cli.rules",
    "carboy.tui.cli.waste",
    "carboy.tui.cli.journal",
    "carboy.tui.cli.report",
    "carboy.tui.cli.init",
)


def build_parser() -> ArgumentParser:
    parser = ArgumentParser(
        prog="carboy",
        description="Acid–base planning and inventory for a chemical storeroom.",
    )
    parser.add_argument("--version", action="version", version=f"carboy {__version__}")
    parser.add_argument("--db", metavar="PATH", help="database file (default: $CARBOY_DB, "
                        "else the user data directory)")
    parser.add_argument("--demo", action="store_true",
                        help="open a throwaway database seeded with an invented storeroom")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=ArgumentParser)
    for name in SUBCOMMAND_MODULES:
        importlib.import_module(name).register(sub)
    return parser


def main(argv: list[str] | None = None) -> int:
    """Run one subcommand (the ``carboy`` command itself is :mod:`carboy.tui.launch`)."""
    parser = build_parser()
    args = parser.parse_args(sys.argv[1:] if argv is None else argv)
    func = getattr(args, "func", None)
    if func is None:
        parser.print_help()
        return EXIT_BAD_INPUT
    return run_guarded(func, args)
