"""The command line's parser: the global options and every subcommand.

Each subcommand lives in its own module with a ``register(subparsers)`` function that
adds its parser and sets ``func`` to a handler taking the parsed arguments and
returning an exit status.

Start-up time: given the arguments, :func:`build_parser` imports and builds only the
subcommand they name (``carboy ph …`` never loads the store, the journal or the
neutralization form); without one it builds them all, for ``carboy --help`` and for
the message that lists the commands when the name is wrong.
"""

from __future__ import annotations

import importlib
import sys

from carboy import __version__
from carboy.tui.cli.kit import ArgumentParser
from carboy.tui.edge import EXIT_BAD_INPUT, run_guarded

# the subcommands, in the order their help is listed; each is the module
# carboy.tui.cli.<name>, whose register() adds the command <name>
COMMANDS = ("ph", "neutralize", "prep", "standardize", "stock", "rules", "waste", "journal",
            "report", "init")
SUBCOMMAND_MODULES = tuple(f"carboy.tui.cli.{name}" for name in COMMANDS)
_TAKES_VALUE = ("--db",)
"""Global options followed by a value (skipped when looking for the command's name)."""


def command_named(argv: list[str] | None) -> str | None:
    """The subcommand ``argv`` names, if it is one of :data:`COMMANDS` and comes before any
    help option; else None (then every subcommand is built)."""
    words = iter(argv or ())
    for word in words:
        if word in _TAKES_VALUE:
            next(words, None)
        elif word in ("-h", "--help", "--"):
            return None
        elif not word.startswith("-"):
            return word if word in COMMANDS else None
    return None


def build_parser(argv: list[str] | None = None) -> ArgumentParser:
    """The parser of ``carboy``; with ``argv``, only the subcommand it names is built."""
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
    wanted = command_named(argv)
    for name in COMMANDS if wanted is None else (wanted,):
        importlib.import_module(f"carboy.tui.cli.{name}").register(sub)
    return parser


def main(argv: list[str] | None = None) -> int:
    """Run one subcommand (the ``carboy`` command itself is :mod:`carboy.tui.launch`)."""
    argv = sys.argv[1:] if argv is None else argv
    parser = build_parser(argv)
    args = parser.parse_args(argv)
    func = getattr(args, "func", None)
    if func is None:
        parser.print_help()
        return EXIT_BAD_INPUT
    return run_guarded(func, args)
