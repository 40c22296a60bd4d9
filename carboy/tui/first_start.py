"""The first start of the app: no database yet at the path it would open.

carboy never makes a database silently.  Before the app starts, :func:`ensure_database`
asks in the terminal, naming the path, whether to create one there; a "no", or no
terminal to ask, stops with the ``carboy init PATH`` hint instead.
"""

from __future__ import annotations

import sys
from collections.abc import Callable
from pathlib import Path

from carboy.store import db as store_db
from carboy.store.files import DatabaseMissing, check_path, identity


def ensure_database(db: str | None, *, ask: Callable[[str], str] = input,
                    interactive: bool | None = None) -> Path:
    """The database path the app opens; created after a "yes" if it does not exist.

    Raises :class:`~carboy.store.files.DatabaseMissing` (with the ``carboy init`` hint)
    when the answer is not yes or there is no terminal to ask.
    """
    path = check_path(store_db.default_path(db))
    if identity(path) is not None:
        return path
    if interactive is None:
        interactive = sys.stdin.isatty() and sys.stdout.isatty()
    if not interactive:
        raise DatabaseMissing(str(path))
    try:
        answer = ask(f"There is no carboy database at {path}.\n"
                     "Create a new, empty one there (readable and writable by you and "
                     "your group only)? [y/N] ")
    except EOFError:
        answer = ""
    if answer.strip().lower() not in ("y", "yes"):
        raise DatabaseMissing(str(path))
    store_db.init_database(path).close()
    print(f"created {path}")
    return path
