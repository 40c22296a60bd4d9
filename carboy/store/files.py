"""The database file itself: which paths carboy accepts, how a new file is made, how a
file is recognized again, and what a failing file operation means for a person.

* A path must be non-empty, each name in it at most 255 bytes, and, when it exists, a
  regular file (never a directory, a device such as ``/dev/null``, or a pipe).
* Only :func:`create_file` (``carboy init``, the demo, the app after a confirmation)
  makes a database file; every other way in refuses a missing path with
  :class:`DatabaseMissing`, so a mistyped ``--db`` never becomes a new empty storeroom.
* A new file is mode 0660 (owner and group read and write, nobody else); SQLite gives
  the ``-wal`` and ``-shm`` files beside it the same mode.
* :class:`FileIdentity` (device, inode, and the carboy application id) lets a running
  app notice that its database was removed or replaced under it.
* :func:`translate` turns SQLite's and the system's failures (read-only, full disk,
  cannot open) into one error that names the path and says what to do.
"""

from __future__ import annotations

import errno
import os
import sqlite3
import stat
from dataclasses import dataclass
from pathlib import Path

from carboy.errors import CarboyError, Refused, quoted
from carboy.store.errors import DatabaseUnusable, StoreError

NEW_FILE_MODE = 0o660
"""Mode of a new database file (and so of its -wal and -shm files)."""
MAX_NAME_BYTES = 255
"""Longest file or directory name most file systems accept."""
MAX_PATH_BYTES = 4000
SETUP_GUIDE = "docs/shared-server.md"
PATH_QUOTE = 240
"""A path is quoted up to this many characters (a person may need to copy it)."""
RESTORE_HINT = ("if it was a carboy database, restore the last good backup (see "
                f"{SETUP_GUIDE}, 'Backups')")


@dataclass
class DatabaseMissing(StoreError):
    """No database file at the path; only ``carboy init`` (or the demo) creates one."""

    path: str

    def __str__(self) -> str:
        return (f"no carboy database at {quoted(self.path, PATH_QUOTE)}: check --db or "
                "$CARBOY_DB, or create one there with `carboy init PATH`")


@dataclass
class DatabaseExists(StoreError, Refused):
    """``carboy init`` found a file already at the path and left it alone."""

    path: str

    def __str__(self) -> str:
        return f"{quoted(self.path)} exists already; nothing was changed"


@dataclass
class DatabaseReplaced(StoreError, Refused):
    """The file at the path is not the database this program opened: removed, replaced
    or restored under it.  Nothing more is written until carboy is started again."""

    path: str
    how: str

    def __str__(self) -> str:
        return (f"the database {quoted(self.path, PATH_QUOTE)} {self.how} while carboy was running; "
                "nothing more is written: quit and start carboy again, after checking "
                "with the storeroom administrator")


@dataclass
class CannotWrite(StoreError):
    """The system refused to write the database: read-only, full, or failing."""

    path: str
    reason: str

    def __str__(self) -> str:
        return f"cannot write the database {quoted(self.path, PATH_QUOTE)}: {self.reason}"


READ_ONLY = ("it is read-only for you: ask the storeroom administrator to add you to the "
             f"group that owns it, with write access to the file and its directory "
             f"(see {SETUP_GUIDE})")
DISK_FULL = "the disk is full; nothing was written: free some space and try again"


@dataclass(frozen=True)
class FileIdentity:
    """Which file a path named when it was opened (see :func:`identity`)."""

    device: int
    inode: int


def identity(path: str | os.PathLike) -> FileIdentity | None:
    """The device and inode of the file at ``path``, or None if there is none."""
    try:
        st = os.stat(path)
    except OSError:
        return None
    return FileIdentity(st.st_dev, st.st_ino)


def check_path(path: Path) -> Path:
    """Refuse a path no database can have (see the module notes); returns it."""
    text = str(path)
    if not text or not text.strip():
        raise DatabaseUnusable(text, "the path is empty: give a file name, e.g. "
                               "--db storeroom.db")
    raw = os.fsencode(path)
    if b"\x00" in raw:
        raise DatabaseUnusable(text, "the path holds a NUL character")
    if len(raw) > MAX_PATH_BYTES:
        raise DatabaseUnusable(text, f"the path is too long ({len(raw)} bytes)")
    longest = max((len(part) for part in raw.split(b"/")), default=0)
    if longest > MAX_NAME_BYTES:
        raise DatabaseUnusable(text, f"a name in the path is too long ({longest} bytes; file "
                               f"systems take {MAX_NAME_BYTES} at most)")
    try:
        st = os.stat(path)
    except FileNotFoundError:
        return path
    except OSError as exc:
        raise translate_os(exc, text) from None
    if stat.S_ISDIR(st.st_mode):
        raise DatabaseUnusable(text, "this is a directory, not a database file")
    if not stat.S_ISREG(st.st_mode):
        raise DatabaseUnusable(text, "this is not a regular file (a device, pipe or socket): "
                               "give the path of a database file")
    return path


def create_file(path: Path) -> None:
    """Make a new, empty file at ``path`` with mode 0660 (parent directories too);
    raises :class:`DatabaseExists` when something is there already."""
    check_path(path)
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL, NEW_FILE_MODE)
    except FileExistsError:
        raise DatabaseExists(str(path)) from None
    except OSError as exc:
        raise translate_os(exc, str(path)) from None
    try:
        os.fchmod(fd, NEW_FILE_MODE)  # the umask must not open it to others, nor close it
    finally:
        os.close(fd)


def translate_os(exc: OSError, path: str) -> CarboyError:
    """A system error on the database's path as one sentence with what to do."""
    code = exc.errno
    if code in (errno.EACCES, errno.EPERM, errno.EROFS):
        return CannotWrite(path, READ_ONLY if code != errno.EROFS
                           else "the file system is read-only")
    if code in (errno.ENOSPC, errno.EDQUOT):
        return CannotWrite(path, DISK_FULL)
    if code == errno.ENAMETOOLONG:
        return DatabaseUnusable(path, "a name in the path is too long")
    if code in (errno.ENOENT, errno.ENOTDIR):
        return DatabaseUnusable(path, "its directory does not exist: check the path")
    return DatabaseUnusable(path, f"{exc.strerror or exc}")


def translate(exc: sqlite3.Error, path: str) -> CarboyError | None:
    """SQLite's failure on the database at ``path`` as carboy's error, or None when it
    is not about the file (a constraint, a bug): then the caller re-raises it."""
    msg = str(exc).lower()
    if "readonly" in msg or "read-only" in msg:
        return CannotWrite(path, READ_ONLY)
    if "disk is full" in msg or "database or disk is full" in msg:
        return CannotWrite(path, DISK_FULL)
    if "unable to open database file" in msg:
        return DatabaseUnusable(path, "SQLite cannot open it: check that the file and its "
                                "directory exist and that you may write them "
                                f"(see {SETUP_GUIDE})")
    if "disk i/o error" in msg:
        return CannotWrite(path, "the disk reported an input/output error; " + RESTORE_HINT
                           + " if the file stays unreadable")
    if ("malformed" in msg or "not a database" in msg or "file is encrypted" in msg
            or "disk image" in msg):
        return DatabaseUnusable(path, f"the file is damaged ({exc}); {RESTORE_HINT}")
    return None
