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
    "carboy.tui.cli_prep",
    "carboy.tui.cli_standardize",
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
        return run_guarded(run_app, args)
    return run_guarded(func, args)


def run_app(args) -> int:
    """Open the terminal app: on the default database, or on a throwaway demo storeroom."""
    import shutil
    import tempfile
    from datetime import date

    from carboy.store import db

    if args.demo:
        from carboy.store.demo import create_demo_database

        tmp = tempfile.mkdtemp(prefix="carboy-demo-")
        try:
            path = create_demo_database(f"{tmp}/demo.db", today=date.today())
            return _run_app(path, demo=True)
        finally:
            shutil.rmtree(tmp, ignore_errors=True)
    path = db.default_path(args.db)
    db.open_database(path, check=True).close()  # a damaged file stops here, unwritten
    return _run_app(path, demo=False)


def _run_app(path, *, demo: bool) -> int:
    from carboy.tui.app import make_app

    make_app(path, demo=demo).run()
    return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
