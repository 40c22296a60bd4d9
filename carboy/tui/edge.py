"""The edge where errors meet people, shared by both front ends.

Below this layer nothing prints or exits; here carboy's own errors, database and file
errors become one readable line (on a screen or on stderr) and an exit status.
"""

from __future__ import annotations

import argparse
import os
import sqlite3
import sys
from collections.abc import Callable

from carboy.errors import CarboyError

EXIT_OK = 0
EXIT_REFUSED = 1
EXIT_BAD_INPUT = 2


def describe(exc: BaseException) -> str:
    """One line for a person: carboy's own message, else what kind of failure it was."""
    if isinstance(exc, CarboyError):
        return str(exc)
    if isinstance(exc, sqlite3.Error):
        return f"database error: {exc}"
    if isinstance(exc, OSError):
        return f"file error: {exc.strerror or exc}"
    return f"unexpected error ({type(exc).__name__}): {exc}"


def run_guarded(func: Callable[[argparse.Namespace], int], args: argparse.Namespace) -> int:
    """Run a command; carboy errors become a message on stderr and exit status 2."""
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
