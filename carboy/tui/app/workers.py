"""Helpers for the thread workers that read and write the database.

Every database call of the app runs in a ``@work(thread=True, exclusive=True,
exit_on_error=False)`` worker that opens its own :class:`~carboy.store.db.Store`
(a SQLite connection belongs to the thread that made it).  What can go wrong is
turned into one readable line here, so a screen can show it in place.
"""

from __future__ import annotations

import sqlite3

from carboy.errors import CarboyError


def describe(exc: BaseException) -> str:
    """One line for a person: carboy's own message, else what kind of failure it was."""
    if isinstance(exc, CarboyError):
        return str(exc)
    if isinstance(exc, sqlite3.Error):
        return f"database error: {exc}"
    if isinstance(exc, OSError):
        return f"file error: {exc.strerror or exc}"
    return f"unexpected error ({type(exc).__name__}): {exc}"
