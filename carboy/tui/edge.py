"""The edge where errors meet people, shared by both front ends.

Below this layer nothing prints or exits; here every failure becomes one readable line
(on a screen or on stderr) and an exit status, and no traceback reaches the user:

* carboy's own errors: their message; exit status 1 for a rule refusal
  (:class:`carboy.errors.Refused`), 2 for everything else;
* file and database errors (``OSError``, ``sqlite3.Error``), text that is not UTF-8
  (``UnicodeError``), a number too large (``OverflowError``): what happened, the path,
  and what to do; exit status 2;
* anything else is a bug: its traceback goes to ``errors.log`` in the user's state
  directory (``platformdirs.user_state_dir("carboy")``), and the line says where; exit 2.

Every line is passed through :func:`printable` and cut to :data:`MAX_LINE` characters,
so neither a stored value nor a typed one can reach a terminal as an escape sequence
or flood it.
"""

from __future__ import annotations

import argparse
import errno
import os
import re
import sys
from collections.abc import Callable
from typing import TYPE_CHECKING

from carboy.errors import CarboyError, Refused

if TYPE_CHECKING:  # pathlib only when the log is written: it costs a command ~4 ms to load
    from pathlib import Path

EXIT_OK = 0
EXIT_REFUSED = 1
EXIT_BAD_INPUT = 2
MAX_LINE = 400
"""Longest error line shown (a value in it is already cut to about 80 characters)."""
LOG_NAME = "errors.log"
MAX_LOG_BYTES = 1_000_000
"""The log starts afresh past this size."""

UNPRINTABLE = re.compile(
    "[\x00-\x08\x0b-\x1f\x7f-\x9f\u00ad\u061c\u180e\u200b-\u200f\u2028-\u202e"
    "\u2060-\u2064\u2066-\u206f\ufeff\ufff9-\ufffb\ud800-\udfff\U000e0000-\U000e007f]")
"""Control characters (C0 but newline and tab, DEL, C1), invisible format characters,
bidirectional controls, line/paragraph separators, lone surrogates and tag characters."""


def _escape(match: re.Match) -> str:
    code = ord(match.group())
    return f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}" if code < 0x10000 \
        else f"\\U{code:08x}"


def printable(text: str) -> str:
    """``text`` with every character that could act on a terminal (or hide itself)
    written out as an escape (``\\x1b``, ``\\u202e``); newline and tab are kept."""
    return UNPRINTABLE.sub(_escape, text)


def one_line(text: str, limit: int = MAX_LINE) -> str:
    """``text`` printable, on one line, at most ``limit`` characters."""
    flat = printable(text).replace("\n", " ").replace("\t", " ")
    return flat if len(flat) <= limit else flat[: limit - 1] + "…"


def _short(path: object) -> str:
    text = os.fsdecode(path) if isinstance(path, (str, bytes, os.PathLike)) else str(path)
    return repr(text) if len(text) <= 80 else repr(text[:40] + "…" + text[-30:])


_OS_HINTS = {
    errno.EACCES: "you may not use it: ask the storeroom administrator for access (see "
                  "docs/shared-server.md)",
    errno.EPERM: "you may not use it: ask the storeroom administrator for access",
    errno.EROFS: "the file system is read-only: choose another place",
    errno.ENOSPC: "the disk is full: free some space and try again (nothing was finished)",
    errno.EDQUOT: "your disk quota is used up: free some space and try again",
    errno.ENOENT: "check the path (the file or its directory does not exist)",
    errno.ENOTDIR: "a part of the path is not a directory: check the path",
    errno.EISDIR: "it is a directory: give a file name",
    errno.ENAMETOOLONG: "the name is too long: use a shorter file name",
    errno.EIO: "the disk reported an error: try again, and tell the administrator",
}


def _describe_os(exc: OSError) -> str:
    where = f"{_short(exc.filename)}: " if exc.filename is not None else ""
    hint = _OS_HINTS.get(exc.errno or 0)
    return f"{where}{exc.strerror or type(exc).__name__}" + (f"; {hint}" if hint else "")


def _describe_sqlite(exc: BaseException) -> str:
    msg = str(exc)
    low = msg.lower()
    if "readonly" in low:
        return ("database error: the database is read-only for you: ask the storeroom "
                "administrator for group write access (see docs/shared-server.md)")
    if "full" in low:
        return "database error: the disk is full: free some space and try again"
    if "malformed" in low or "not a database" in low:
        return (f"database error: the file is damaged ({msg}): restore the last good "
                "backup (see docs/shared-server.md)")
    return f"database error: {msg}"


def describe(exc: BaseException) -> str:
    """One line for a person: carboy's own message, else what kind of failure it was."""
    if isinstance(exc, CarboyError):
        text = str(exc)
    elif isinstance(exc, _sqlite_error()):
        text = _describe_sqlite(exc)
    elif isinstance(exc, OSError):
        text = _describe_os(exc)
    elif isinstance(exc, UnicodeDecodeError):
        text = (f"cannot read the text: it is not UTF-8 (byte 0x{exc.object[exc.start]:02x} "
                f"at position {exc.start}); save the file as UTF-8 and try again")
    elif isinstance(exc, UnicodeError):
        text = f"cannot handle the text: {exc.reason}"
    elif isinstance(exc, OverflowError):
        text = "a number is too large for carboy to use"
    else:
        text = f"unexpected error ({type(exc).__name__}): {exc}"
    return one_line(text)


def status_of(exc: BaseException) -> int:
    """The exit status for an error: 1 for a rule refusal, 2 for every other error."""
    return EXIT_REFUSED if isinstance(exc, Refused) else EXIT_BAD_INPUT


EXPECTED = (CarboyError, OSError, UnicodeError, OverflowError)
"""Failures that have a message for a person (with ``sqlite3.Error``:
:func:`expected`); anything else is a bug and is logged."""


def _sqlite_error() -> type | tuple:
    """``sqlite3.Error``, or no class when sqlite3 was never imported (then no error of
    it can exist; a command that opens no database does not load it: about 3 ms)."""
    module = sys.modules.get("sqlite3")
    return module.Error if module is not None else ()


def expected(exc: BaseException) -> bool:
    """A failure with a message for a person (not a bug)."""
    return isinstance(exc, EXPECTED) or isinstance(exc, _sqlite_error())


def log_path() -> Path:
    from pathlib import Path

    import platformdirs

    return Path(platformdirs.user_state_dir("carboy", appauthor=False)) / LOG_NAME


def log_unexpected(exc: BaseException, context: str = "") -> Path | None:
    """Append ``exc`` with its traceback to the error log; returns the log's path, or
    None when it could not be written (the message then says so)."""
    import traceback
    from datetime import UTC, datetime

    try:
        path = log_path()
        path.parent.mkdir(parents=True, exist_ok=True, mode=0o700)
        if path.exists() and path.stat().st_size > MAX_LOG_BYTES:
            path.unlink()
        fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_APPEND, 0o600)
        with os.fdopen(fd, "a", encoding="utf-8", errors="backslashreplace") as fh:
            fh.write(f"--- {datetime.now(UTC).isoformat(timespec='seconds')} {context}\n")
            fh.write("".join(traceback.format_exception(exc)))
        return path
    except Exception:  # noqa: BLE001 - the log is a courtesy; the message still goes out
        return None


def report(exc: BaseException, context: str = "") -> str:
    """:func:`describe`, and for an unexpected error also log it and say where."""
    line = describe(exc)
    if expected(exc):
        return line
    where = log_unexpected(exc, context)
    tail = (f"; details are in {where}" if where else "; the details could not be logged")
    return one_line(line, MAX_LINE - len(tail)) + tail + " (please report it)"


def run_guarded(func: Callable[[argparse.Namespace], int], args: argparse.Namespace) -> int:
    """Run a command: any error becomes one line on stderr and exit status 1 or 2."""
    try:
        return func(args)
    except KeyboardInterrupt:
        print("carboy: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        # the reader (e.g. `| head`) went away: stop quietly, as command-line tools do
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return 141
    except Exception as exc:  # noqa: BLE001 - this is the edge: nothing passes it
        print(f"carboy: {report(exc, ' '.join(sys.argv[:1]))}", file=sys.stderr)
        return status_of(exc)
