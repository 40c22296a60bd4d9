"""Shared pieces of the headless subcommands: output, errors, exit status.

Library errors become one clear line on stderr and exit status 2 here, at the edge;
nothing below this layer prints or exits.
"""

from __future__ import annotations

import argparse
import contextlib
import json
import math
import sys
from typing import Any

from carboy.errors import CarboyError
from carboy.tui.edge import EXIT_BAD_INPUT, EXIT_OK, EXIT_REFUSED  # noqa: F401 (re-exported)


class UsageError(CarboyError):
    """A command-line argument that cannot be used as given."""


class ArgumentParser(argparse.ArgumentParser):
    """argparse that reports bad usage in carboy's own one-line form, exit status 2."""

    def error(self, message: str) -> None:  # pragma: no cover - exercised through main()
        self.exit(EXIT_BAD_INPUT, f"carboy: error: {message}\n(see: {self.prog} --help)\n")


def _clean(obj: Any) -> Any:
    """Make a result JSON-safe: NaN/inf become null, tuples lists, keys strings."""
    if isinstance(obj, float):
        return obj if math.isfinite(obj) else None
    if isinstance(obj, dict):
        return {str(k): _clean(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_clean(v) for v in obj]
    if hasattr(obj, "item") and callable(obj.item):  # numpy scalar
        return _clean(obj.item())
    return obj


def emit_json(obj: Any, stream=None) -> None:
    stream = stream or sys.stdout
    json.dump(_clean(obj), stream, indent=2, ensure_ascii=False, allow_nan=False)
    stream.write("\n")


@contextlib.contextmanager
def open_store(args: argparse.Namespace):
    """The database a headless command works on: ``--db``, else ``$CARBOY_DB``, else the
    user data directory; with ``--demo`` (and no ``--db``) a throwaway demo storeroom."""
    from carboy.store.db import default_path, open_database

    with contextlib.ExitStack() as stack:
        if getattr(args, "demo", False) and not getattr(args, "db", None):
            from carboy.store.demo import throwaway

            path = stack.enter_context(throwaway())
        else:
            path = default_path(getattr(args, "db", None))
        store = open_database(path)
        stack.callback(store.close)
        yield store


def common_options() -> argparse.ArgumentParser:
    """The options every database subcommand takes: ``--db`` and ``--json``."""
    p = argparse.ArgumentParser(add_help=False)
    p.add_argument("--db", metavar="PATH", default=argparse.SUPPRESS,
                   help="database file (default: $CARBOY_DB, else the user data directory)")
    p.add_argument("--json", action="store_true", help="print JSON instead of text")
    return p


def group(sub, name: str, *, help: str, description: str):  # noqa: A002
    """A command group (``carboy stock …``): its parser and the parser of its actions;
    the group alone prints its help."""
    parser = sub.add_parser(name, help=help, description=description)
    actions = parser.add_subparsers(dest=f"{name}_command", metavar="ACTION",
                                    parser_class=type(parser))

    def show_help(args) -> int:
        parser.print_help()
        return EXIT_OK

    parser.set_defaults(func=show_help)
    return actions


def first_problem(reading, options: dict[str, str]):
    """A form's value, or its first problem as one command-line error that names the
    option it came from (``--volume: needed: …``, ``--purity: purity '99': …``)."""
    from carboy.errors import MissingInput

    if reading.ok:
        return reading.value
    name, problem = reading.problems[0] if reading.problems else ("", None)
    option = options.get(name)
    if isinstance(problem, MissingInput):
        raise UsageError(f"{option or name}: {problem.reason}")
    if option and problem is not None and not str(problem).startswith(option):
        raise UsageError(f"{option}: {problem}")
    return reading.raise_first()
