"""The ``carboy`` command: the TUI without a subcommand, headless subcommands otherwise.

Each subcommand lives in its own module with a ``register(subparsers)`` function that
adds its parser and sets ``func`` to a handler taking the parsed arguments and
returning an exit status.
"""

from __future__ import annotations

import importlib
import sys

from carboy import __version__
from carboy.tui.clikit import ArgumentParser, run_guarded

# modules that contribute subcommands, in the order their help is listed
SUBCOMMAND_MODULES = (
    "carboy.tui.cli_ph",
    "carboy.tui.cli_neutralize",
    "carboy.tui.cli_store",
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
    parser = build_parser()
    args = parser.parse_args(sys.argv[1:] if argv is None else argv)
    func = getattr(args, "func", None)
    if func is None:
        parser.print_help()
        return 0
    return run_guarded(func, args)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
