"""Shared pieces of the headless subcommands: output, errors, exit status.

Library errors become one clear line on stderr and exit status 2 here, at the edge;
nothing below this layer prints or exits.
"""

from __future__ import annotations

import argparse
import contextlib
import json
import math
import os
import sys
from collections.abc import Callable
from typing import Any

from carboy.errors import CarboyError

EXIT_OK = 0
EXIT_BAD_INPUT = 2


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
    import tempfile
    from datetime import date
    from pathlib import Path

    from carboy.store.db import default_path, open_database

    if getattr(args, "demo", False) and not getattr(args, "db", None):
        from carboy.store.demo import create_demo_database

        with tempfile.TemporaryDirectory(prefix="carboy-demo-") as tmp:
            # dated from the real today, so the demo's expiry and standardization look fresh
            store = open_database(create_demo_database(Path(tmp) / "demo.db", date.today()))
            try:
                yield store
            finally:
                store.close()
        return
    store = open_database(default_path(getattr(args, "db", None)))
    try:
        yield store
    finally:
        store.close()


def run_guarded(func: Callable[[argparse.Namespace], int], args: argparse.Namespace) -> int:
    """Run a subcommand; carboy errors become a message on stderr and exit status 2."""
    try:
        return func(args)
    except CarboyError as exc:
        print(f"carboy: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except KeyboardInterrupt:
        print("carboy: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        # the reader (e.g. `| head`) went away: stop quietly, as command-line tools do
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return 141
