"""Shared pieces of the headless subcommands: output, errors, exit status.

Library errors become one clear line on stderr and exit status 1 or 2 at the edge
(:mod:`carboy.tui.edge`); nothing below this layer prints or exits.

All printing goes through :class:`SafeOutput`, which :func:`clean_output` puts in front
of stdout and stderr for the whole of a command: control characters, bidirectional
controls and invisible characters from stored or typed text are written as visible
escapes (``\x1b``), so a bottle's notes cannot send escape sequences to the terminal
of the person who lists them.  JSON is escaped the JSON way by :func:`emit_json`.
"""

from __future__ import annotations

import argparse
import contextlib
import io
import json
import math
import sys
from collections.abc import Iterator
from typing import Any

from carboy.errors import CarboyError
from carboy.tui.edge import (  # the exit statuses are re-exported for the subcommands
    EXIT_BAD_INPUT,  # noqa: F401
    EXIT_OK,
    EXIT_REFUSED,  # noqa: F401
    UNPRINTABLE,
    one_line,
    printable,
)


class SafeOutput(io.TextIOBase):
    """A text stream that writes :func:`carboy.tui.edge.printable` text to another one
    (and, where its encoding cannot hold a character, a backslash escape of it)."""

    def __init__(self, stream) -> None:
        super().__init__()
        self.stream = stream

    def write(self, text: str) -> int:
        safe = printable(text)
        try:
            self.stream.write(safe)
        except UnicodeEncodeError:
            enc = getattr(self.stream, "encoding", None) or "ascii"
            self.stream.write(safe.encode(enc, "backslashreplace").decode(enc))
        return len(text)

    def flush(self) -> None:
        self.stream.flush()

    def writable(self) -> bool:
        return True

    def isatty(self) -> bool:
        return self.stream.isatty()

    def fileno(self) -> int:
        return self.stream.fileno()

    @property
    def encoding(self) -> str:  # type: ignore[override]
        return getattr(self.stream, "encoding", "utf-8")


@contextlib.contextmanager
def clean_output() -> Iterator[None]:
    """Every line a command prints, on stdout and stderr, goes through :class:`SafeOutput`."""
    out, err = sys.stdout, sys.stderr
    sys.stdout, sys.stderr = SafeOutput(out), SafeOutput(err)
    try:
        yield
    finally:
        with contextlib.suppress(Exception):
            sys.stdout.flush()
        sys.stdout, sys.stderr = out, err


def warn(text: str) -> None:
    """One warning line on stderr (printable, cut to one line)."""
    print(f"carboy: warning: {one_line(text)}", file=sys.stderr)


def whole(low: int = 1, high: int = 10**9, what: str = "number"):
    """An argparse ``type`` for a whole number from ``low`` to ``high`` (ids, limits),
    checked before use: ASCII digits only, no more than 19 of them."""
    def read(text: str) -> int:
        from carboy.store.readers import parse_whole

        try:
            return parse_whole(text, what, field="", low=low, high=high)
        except CarboyError as err:
            raise argparse.ArgumentTypeError(str(err)) from None

    read.__name__ = what  # argparse names the type in its message
    return read


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


def _json_escape(match) -> str:
    code = ord(match.group())
    if code > 0xFFFF:  # a tag character: as its UTF-16 pair, the JSON way
        code -= 0x10000
        return f"\\u{0xD800 + (code >> 10):04x}\\u{0xDC00 + (code & 0x3FF):04x}"
    return f"\\u{code:04x}"


def emit_json(obj: Any, stream=None) -> None:
    """``obj`` as indented JSON; characters that could act on a terminal are written as
    JSON escapes (``\\u001b``), so the output is valid JSON and safe to show."""
    stream = stream or sys.stdout
    text = json.dumps(_clean(obj), indent=2, ensure_ascii=False, allow_nan=False)
    stream.write(UNPRINTABLE.sub(_json_escape, text))
    stream.write("\n")


@contextlib.contextmanager
def open_store(args: argparse.Namespace):
    """The database a headless command works on: ``--db``, else ``$CARBOY_DB``, else the
    user data directory; with ``--demo`` (and no ``--db``) a throwaway demo storeroom.

    It must exist (``carboy init PATH`` makes one).  When the open check found a guard or
    the chain's tail wrong, a warning line goes to stderr first."""
    from carboy.store.db import default_path, open_database

    with contextlib.ExitStack() as stack:
        if getattr(args, "demo", False) and getattr(args, "db", None) is None:
            from carboy.store.demo_cache import throwaway

            path = stack.enter_context(throwaway())
        else:
            path = default_path(getattr(args, "db", None))
        store = open_database(path, create=False)
        stack.callback(store.close)
        if store.trust_problems:
            first = store.trust_problems[0]
            more = len(store.trust_problems) - 1
            warn(f"{store.path}: {first.text()}" + (f" (and {more} more)" if more else "")
                 + "; run `carboy journal verify`")
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


def none_found(what: str, asked: list[str]) -> str:
    """The line of a listing with nothing in it: ``no journal entries (kind disposal)``."""
    return f"no {what}" + (f" ({', '.join(asked)})" if asked else "")


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


ACTIVITY_CHOICES = ("auto", "pitzer", "davies", "ideal")
"""The activity models every command that computes a pH offers (default ``auto``)."""


def add_activity_options(p) -> None:
    """``--activity`` and its short form ``--ideal`` on a command that computes a pH."""
    p.add_argument("--activity", choices=ACTIVITY_CHOICES, default=None,
                   help="activity model: auto (default: Davies with ion pairs up to an "
                   "ionic strength of 0.5 mol/kg, the specific-interaction (Pitzer) model "
                   "above), pitzer, davies (with the same ion pairs) or ideal")
    p.add_argument("--ideal", action="store_true",
                   help="short for --activity ideal: activity coefficients 1, "
                   "pH = -log10[H+]")


def chosen_activity(args) -> str:
    """The activity model the options name; --ideal with another --activity is refused."""
    if args.ideal:
        if args.activity not in (None, "ideal"):
            raise UsageError(f"--ideal and --activity {args.activity} contradict each other")
        return "ideal"
    return args.activity or "auto"
