"""Opening the storeroom database, and the one way to write to it.

Rules this module enforces (see ``docs/shared-server.md`` for the server setup):

* One file, WAL mode (set once, at creation), ``foreign_keys=ON`` and a busy
  timeout on every connection.
* Every write is one short ``BEGIN IMMEDIATE`` transaction, run by
  :meth:`Store.write` with a bounded retry: a deferred ``BEGIN`` that reads
  before it writes fails under concurrency instead of waiting.
* Schema changes are sqlite-utils migrations (``migrations.py``), applied only
  while holding an exclusive ``flock`` on ``PATH.lock`` and inside one
  immediate transaction, so two users starting at once cannot collide.
* Before anything is written, the file is checked: it must be SQLite, pass
  ``PRAGMA quick_check`` (of its small tables when the file is large:
  ``OPEN_CHECK_MAX_ROWID``), and be a carboy database (or empty).  A damaged or
  foreign file raises :class:`DatabaseUnusable` and is never written.

A :class:`Store` (one connection) belongs to the thread that opened it; open
one per worker thread.
"""

from __future__ import annotations

import contextlib
import fcntl
import os
import random
import sqlite3
import stat
import time
from collections.abc import Callable, Iterator, Mapping, Sequence
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path
from typing import TYPE_CHECKING, Any, TypeVar

from carboy.errors import Refused, quoted
from carboy.store import chain, files, migrations
from carboy.store.errors import AlreadyExists, Busy, DatabaseUnusable, StoreError
from carboy.store.files import DatabaseMissing, DatabaseReplaced, FileIdentity
from carboy.store.identity import current_origin, current_user

if TYPE_CHECKING:
    import sqlite_utils

__all__ = ["Store", "open_database", "init_database", "default_path", "current_user",
           "current_origin", "utc_now", "iso_utc", "stamp", "file_lock", "APPLICATION_ID",
           "DatabaseMissing", "DatabaseReplaced", "HistoryUnprotected"]

T = TypeVar("T")

ENV_VAR = "CARBOY_DB"
DB_FILENAME = "carboy.db"
APPLICATION_ID = 0x43524259  # "CRBY" in the file header: marks a carboy database
BUSY_TIMEOUT_S = 5.0
"""How long one attempt waits for another writer (SQLite's busy handler)."""
WRITE_ATTEMPTS = 6
"""Attempts of one write transaction before :class:`Busy` reaches the caller."""
LOCK_TIMEOUT_S = 60.0
"""How long to wait for another process applying migrations."""
SQLITE_HEADER = b"SQLite format 3\x00"
FULL_CHECK_LIMIT_BYTES = 64 * 1024 * 1024
"""Up to this size ``open_database`` quick-checks the whole file (about 0.4 s per 64 MB);
above it, only the tables that are small (``OPEN_CHECK_MAX_ROWID``); run
:meth:`Store.integrity_problems` for all of it."""
OPEN_CHECK_MAX_ROWID = 20_000
"""In a file above ``FULL_CHECK_LIMIT_BYTES``, a table whose largest rowid is beyond this
is left out of the check at open: at a million rows one such table's ``quick_check``
takes 0.2-0.5 s with the file in memory (journal, bottles, record chain, the search
index's blocks and sizes: about 1 s together, and seconds to tens of seconds from a cold
disk), which every command and the app's start would pay.  A damaged page there is
still refused when it is read (SQLite reports it; ``files.translate`` names the file)."""

ANALYSIS_LIMIT = 400
"""Rows ANALYZE reads per index when :meth:`Store.close` refreshes the statistics (SQLite's
``analysis_limit``: approximate statistics in milliseconds, even at a million rows)."""

_LOCKED_MESSAGES = ("database is locked", "database table is locked", "database is busy")


def default_path(cli_path: str | os.PathLike | None = None,
                 environ: Mapping[str, str] | None = None) -> Path:
    """The database path: ``--db PATH``, else ``$CARBOY_DB``, else the user data directory.

    An empty ``--db`` is refused (it would otherwise fall through to another file);
    an empty ``$CARBOY_DB`` counts as unset.
    """
    if cli_path is not None and not str(cli_path).strip():
        raise DatabaseUnusable(str(cli_path), "the path is empty: give a file name, e.g. "
                               "--db storeroom.db")
    if cli_path:
        return Path(cli_path).expanduser()
    env = os.environ if environ is None else environ
    if env.get(ENV_VAR):
        return Path(env[ENV_VAR]).expanduser()
    import platformdirs

    return Path(platformdirs.user_data_dir("carboy", appauthor=False)) / DB_FILENAME


def utc_now() -> str:
    """The current time as a UTC ISO 8601 string (milliseconds)."""
    return iso_utc(datetime.now(UTC))


def iso_utc(moment: datetime) -> str:
    """A datetime as UTC ISO 8601 text; a naive datetime is taken as UTC."""
    if moment.tzinfo is None:
        moment = moment.replace(tzinfo=UTC)
    return moment.astimezone(UTC).isoformat(timespec="milliseconds")


def stamp(when: datetime | None = None) -> str:
    """When a record was made, as stored: ``when`` as UTC ISO text, else now."""
    return iso_utc(when) if when else utc_now()


def _is_locked(exc: sqlite3.OperationalError) -> bool:
    msg = str(exc).lower()
    return any(m in msg for m in _LOCKED_MESSAGES)


class Store:
    """One open connection to a carboy database.

    Reads: :meth:`rows`, :meth:`one`, :meth:`scalar` (materialised, short), and
    :meth:`reading` for several reads that must agree.  Writes: :meth:`write`.
    """

    def __init__(self, path: Path, conn: sqlite3.Connection):
        self.path = path
        self.conn = conn
        self._db: sqlite_utils.Database | None = None
        self.origin: str | None = None
        """Where writes come from; ``None`` reads SSH_CLIENT / SSH_CONNECTION each time."""
        self.identity: FileIdentity | None = None
        """The file opened (device and inode): the app compares it on every later open."""
        self.trust_problems: list[chain.Problem] = []
        """What the open check found wrong with the guards or the chain's tail (empty when
        sound); with a guard missing or altered, :meth:`write` refuses."""
        self._repairing = False

    def origin_of(self) -> str:
        return self.origin or current_origin()

    @property
    def db(self) -> sqlite_utils.Database:
        """The connection as a sqlite-utils ``Database`` (migrations, nested writes).
        sqlite-utils is imported on first use: it loads numpy, and opening an up-to-date
        database for reading never needs it (the app's first frame waits for nothing)."""
        if self._db is None:
            import sqlite_utils

            self._db = sqlite_utils.Database(self.conn, execute_plugins=False)
        return self._db

    # -- lifecycle -------------------------------------------------------------
    def close(self) -> None:
        """Refresh the query planner's statistics where they are missing or stale (see
        :meth:`optimize`), then close the connection."""
        self.optimize()
        self.conn.close()

    def optimize(self) -> None:
        """``PRAGMA optimize``, as SQLite advises before a connection closes: it analyzes
        only the tables this connection's queries needed statistics for whose statistics
        are missing or far out of date (nothing, most of the time), each index read up to
        :data:`ANALYSIS_LIMIT` rows.  It never waits for another writer and never fails:
        a file that is busy, read-only or in trouble is left as it is for a later close."""
        try:
            if self.conn.in_transaction:
                return
            self.conn.execute("PRAGMA busy_timeout = 0")
            self.conn.execute(f"PRAGMA analysis_limit = {ANALYSIS_LIMIT}")
            self.conn.execute("PRAGMA optimize")
        except sqlite3.Error:  # closed already, busy, read-only, damaged: skip it this time
            with contextlib.suppress(sqlite3.Error):
                self._rollback()
        finally:
            with contextlib.suppress(sqlite3.Error):
                self.conn.execute(f"PRAGMA busy_timeout = {int(BUSY_TIMEOUT_S * 1000)}")

    def __enter__(self) -> Store:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    def __repr__(self) -> str:
        return f"<Store {str(self.path)!r}>"

    # -- reads -----------------------------------------------------------------
    def rows(self, sql: str, params: Sequence[Any] | Mapping[str, Any] = ()) -> list[dict]:
        """Run a query and return every row as a dict (the cursor is closed at once)."""
        cur = self._execute(sql, params)
        try:
            names = [d[0] for d in cur.description]
            return [dict(zip(names, row)) for row in cur.fetchall()]
        finally:
            cur.close()

    def one(self, sql: str, params: Sequence[Any] | Mapping[str, Any] = ()) -> dict | None:
        """The first row of a query, or ``None``."""
        found = self.rows(sql, params)
        return found[0] if found else None

    def column(self, sql: str, params: Sequence[Any] | Mapping[str, Any] = ()) -> list:
        """The first value of every row of a query (the cursor is closed at once)."""
        cur = self._execute(sql, params)
        try:
            return [row[0] for row in cur.fetchall()]
        finally:
            cur.close()

    def scalar(self, sql: str, params: Sequence[Any] | Mapping[str, Any] = ()) -> Any:
        cur = self._execute(sql, params)
        try:
            row = cur.fetchone()
        finally:
            cur.close()
        return None if row is None else row[0]

    @contextlib.contextmanager
    def reading(self) -> Iterator[Store]:
        """Several reads in one (deferred, read-only) transaction: one consistent snapshot."""
        if self.conn.in_transaction:
            yield self
            return
        self._execute("BEGIN")
        try:
            yield self
        finally:
            if self.conn.in_transaction:
                self.conn.execute("COMMIT")

    def execute(self, sql: str, params: Sequence[Any] | Mapping[str, Any] = ()) -> sqlite3.Cursor:
        """Run one statement inside :meth:`write` (writes outside a transaction are refused)."""
        if not self.conn.in_transaction and sql.lstrip()[:6].upper() not in ("SELECT", "PRAGMA"):
            raise RuntimeError("carboy writes must run inside Store.write()")
        return self._execute(sql, params)

    def _execute(self, sql: str, params: Sequence[Any] | Mapping[str, Any] = ()) -> sqlite3.Cursor:
        try:
            return self.conn.execute(sql, params)
        except sqlite3.DatabaseError as exc:
            known = files.translate(exc, str(self.path))
            if known is not None:
                raise known from exc
            raise

    # -- writes ----------------------------------------------------------------
    def write(self, fn: Callable[[Store], T], *, attempts: int = WRITE_ATTEMPTS) -> T:
        """Run ``fn(self)`` as one ``BEGIN IMMEDIATE`` transaction, retrying while locked.

        ``fn`` must only touch the database (it may run more than once).  Any
        exception rolls the whole transaction back.  Called inside another
        ``write``, it joins the outer transaction as a savepoint.
        """
        if self.conn.in_transaction:
            with self.db.atomic():
                return fn(self)
        self._refuse_if_unprotected()
        delay = 0.02
        last = ""
        for attempt in range(1, attempts + 1):
            try:
                self.conn.execute("BEGIN IMMEDIATE")
            except sqlite3.OperationalError as exc:
                if not _is_locked(exc):
                    raise files.translate(exc, str(self.path)) or exc from exc
                last = str(exc)
            else:
                try:
                    result = fn(self)
                    self.conn.execute("COMMIT")
                    return result
                except sqlite3.OperationalError as exc:
                    self._rollback()
                    if not _is_locked(exc):
                        raise files.translate(exc, str(self.path)) or exc from exc
                    last = str(exc)
                except sqlite3.DatabaseError as exc:
                    self._rollback()
                    raise files.translate(exc, str(self.path)) or exc from exc
                except BaseException:
                    self._rollback()
                    raise
            if attempt < attempts:
                time.sleep(delay * (1 + random.random()))
                delay = min(delay * 2, 0.5)
        raise Busy(str(self.path), attempts, last)

    def _refuse_if_unprotected(self) -> None:
        guards = [p for p in self.trust_problems if p.guard]
        if guards and not self._repairing:
            raise HistoryUnprotected(str(self.path), guards[0].text())

    def repair_guards(self, fn: Callable[[Store], T]) -> T:
        """Run ``fn`` as one write even though a guard is missing (only for putting the
        guards back: :func:`carboy.store.journal.restore_guards`)."""
        self._repairing = True
        try:
            return self.write(fn)
        finally:
            self._repairing = False

    def _rollback(self) -> None:
        if self.conn.in_transaction:
            with contextlib.suppress(sqlite3.Error):
                self.conn.execute("ROLLBACK")

    # -- maintenance -------------------------------------------------------------
    def integrity_problems(self, *, full: bool = True) -> list[str]:
        """Findings of ``PRAGMA integrity_check`` (or ``quick_check``); empty when sound."""
        pragma = "integrity_check" if full else "quick_check"
        found = [r[0] for r in self._execute(f"PRAGMA {pragma}").fetchall()]
        return [] if found == ["ok"] else found

    def backup_to(self, destination: str | os.PathLike) -> Path:
        """Copy the live database safely with SQLite's backup API (never copy the file itself)."""
        dest = Path(destination)
        if dest.exists():
            raise AlreadyExists("backup file", str(dest))
        target = sqlite3.connect(dest)
        try:
            self.conn.backup(target)
        finally:
            target.close()
        return dest


@dataclass
class HistoryUnprotected(StoreError, Refused):
    """A guard trigger of the journal is missing or was altered: carboy writes nothing
    more to this file until the guards are back (``carboy journal verify
    --restore-guards``, after checking) or the file is restored from a backup."""

    path: str
    finding: str

    def __str__(self) -> str:
        return (f"the database {quoted(self.path)} has lost its protection ({self.finding}); "
                "carboy writes nothing to it: run `carboy journal verify` and see "
                f"{files.SETUP_GUIDE} ('When verify fails')")


def _connect(path: Path) -> sqlite3.Connection:
    # isolation_level=None: no implicit transactions; Store.write issues BEGIN IMMEDIATE
    conn = sqlite3.connect(str(path), timeout=BUSY_TIMEOUT_S, isolation_level=None)
    conn.execute(f"PRAGMA busy_timeout = {int(BUSY_TIMEOUT_S * 1000)}")
    conn.execute("PRAGMA foreign_keys = ON")
    # REPLACE deletes the row it replaces without firing DELETE triggers unless this is on
    conn.execute("PRAGMA recursive_triggers = ON")
    # FULL: a commit reaches the disk before it returns (WAL's NORMAL may lose the
    # last commits on power loss); measured cost is small at storeroom write rates
    conn.execute("PRAGMA synchronous = FULL")
    return conn


@contextlib.contextmanager
def file_lock(path: Path, timeout_s: float = LOCK_TIMEOUT_S) -> Iterator[Path]:
    """Hold an exclusive ``flock`` on ``PATH.lock`` (created beside the database)."""
    lock_path = path.with_name(path.name + ".lock")
    try:
        fd = os.open(lock_path, os.O_RDWR | os.O_CREAT, files.NEW_FILE_MODE)
    except OSError as exc:
        raise files.translate_os(exc, str(lock_path)) from None
    try:
        with contextlib.suppress(OSError):  # another user's lock file keeps its owner's mode
            if os.fstat(fd).st_uid == os.geteuid():
                os.fchmod(fd, files.NEW_FILE_MODE)
        _share_with_group(lock_path)
        deadline = time.monotonic() + timeout_s
        while True:
            try:
                fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
                break
            except BlockingIOError:
                if time.monotonic() > deadline:
                    raise Busy(str(path), 1, "another carboy is updating the schema") from None
                time.sleep(0.05)
        try:
            yield lock_path
        finally:
            fcntl.flock(fd, fcntl.LOCK_UN)
    finally:
        os.close(fd)


def _share_with_group(path: Path) -> None:
    """In a setgid directory (the shared-server setup), make a new file group-writable."""
    try:
        if path.parent.stat().st_mode & stat.S_ISGID:
            mode = path.stat().st_mode
            if not mode & stat.S_IWGRP:
                os.chmod(path, mode | stat.S_IRGRP | stat.S_IWGRP)
    except OSError:
        pass  # not our file (another user's): its owner set it up already


def _check_header(path: Path) -> None:
    try:
        with open(path, "rb") as fh:
            head = fh.read(100)
    except IsADirectoryError:
        raise DatabaseUnusable(str(path), "this is a directory, not a database file") from None
    except OSError as exc:
        raise files.translate_os(exc, str(path)) from None
    if head and (len(head) < 100 or not head.startswith(SQLITE_HEADER)):
        raise DatabaseUnusable(str(path), "not an SQLite database file (truncated or another "
                               f"kind of file); {files.RESTORE_HINT}")


def open_database(path: str | os.PathLike | None = None, *, check: bool = True,
                  create: bool = True, expect: FileIdentity | None = None) -> Store:
    """Open a carboy database (creating it only if ``create``) and bring its schema up to
    date.

    Parameters
    ----------
    path : the database file; ``None`` means :func:`default_path`.
    check : run ``PRAGMA quick_check`` before using an existing file (see
        ``FULL_CHECK_LIMIT_BYTES``).
    create : make a new database when there is no file at ``path`` (mode 0660).  The
        command line and the app pass False: only ``carboy init``, the demo and the app's
        first-start question create one.  An empty existing file counts as missing.
    expect : the file this program opened before (:attr:`Store.identity`); a different
        file, or none, raises :class:`DatabaseReplaced` (the app's check that its
        database was not removed or replaced under it).

    After opening, the guards and the tail of the record chain are checked
    (:func:`carboy.store.chain.tail_problems`); findings go to
    :attr:`Store.trust_problems`, and with a guard missing every write is refused.

    Raises
    ------
    DatabaseMissing : no file at ``path`` and ``create`` is False.
    DatabaseReplaced : not the file ``expect`` names.
    DatabaseUnusable : damaged, not SQLite, another program's database, or made
        by a newer carboy.  Nothing is written in that case.
    CannotWrite : read-only, or the disk is full, where a write was needed.
    Busy : another process held the schema lock or the write lock too long.
    """
    db_path = files.check_path(default_path(path))
    found = files.identity(db_path)
    if expect is not None and found != expect:
        raise DatabaseReplaced(str(db_path), "was removed" if found is None else
                               "was replaced by another file")
    if found is None or (not create and _is_empty(db_path)):
        if not create:
            if found is not None:
                raise DatabaseUnusable(str(db_path), "the file is empty (0 bytes), not a carboy "
                                       f"database: {files.RESTORE_HINT}; to start afresh, "
                                       "remove it and run `carboy init`")
            raise DatabaseMissing(str(db_path))
        files.create_file(db_path)
        found = files.identity(db_path)
    _check_header(db_path)
    try:
        conn = _connect(db_path)
    except sqlite3.Error as exc:
        raise (files.translate(exc, str(db_path))
               or DatabaseUnusable(str(db_path), f"cannot open it ({exc})")) from exc
    store = Store(db_path, conn)
    store.identity = found
    try:
        state = _inspect(store, check=check)
        if state != "current":
            with file_lock(db_path):
                _share_with_group(db_path)
                if store.scalar("PRAGMA journal_mode") != "wal":
                    conn.execute("PRAGMA journal_mode = WAL")
                store.write(lambda s: migrations.apply(s))
        store.trust_problems = chain.tail_problems(store)
    except sqlite3.Error as exc:
        conn.close()
        raise files.translate(exc, str(db_path)) or exc from exc
    except BaseException:
        conn.close()
        raise
    return store


def init_database(path: str | os.PathLike | None = None) -> Store:
    """Create a new carboy database at ``path`` (``carboy init``): mode 0660, WAL, the
    whole schema.  Raises :class:`~carboy.store.files.DatabaseExists` when a file is
    there already (nothing is changed)."""
    db_path = files.check_path(default_path(path))
    files.create_file(db_path)
    return open_database(db_path, create=True)


def _is_empty(path: Path) -> bool:
    try:
        return path.stat().st_size == 0
    except OSError:
        return False


def _open_check(store: Store, tables: set[str]) -> list[str]:
    """``quick_check`` of the file, or of its smaller tables when the file is large."""
    try:
        size = store.path.stat().st_size
    except OSError:
        size = 0
    if size <= FULL_CHECK_LIMIT_BYTES:
        return store.integrity_problems(full=False)
    virtual = {r[0] for r in store._execute(
        "SELECT name FROM sqlite_master WHERE type = 'table' AND sql LIKE 'CREATE VIRTUAL%'")}
    problems: list[str] = []
    for table in sorted(tables - virtual):   # a virtual table has no pages of its own
        if not _small_table(store, table):
            continue
        found = [r[0] for r in store._execute(f'PRAGMA quick_check("{table}")').fetchall()]
        problems += [] if found == ["ok"] else found
    return problems


def _small_table(store: Store, table: str) -> bool:
    """Whether ``table``'s largest rowid is at most ``OPEN_CHECK_MAX_ROWID`` (one read at
    the end of its b-tree); a table without rowids (few here: the search index's
    settings and term index) counts as small."""
    try:
        top = store._execute(f'SELECT max(rowid) FROM "{table}"').fetchone()[0]
    except sqlite3.OperationalError:   # WITHOUT ROWID
        return True
    return top is None or top <= OPEN_CHECK_MAX_ROWID


def _inspect(store: Store, *, check: bool) -> str:
    """'new', 'pending' or 'current'; raises DatabaseUnusable for a file we must not touch."""
    path = str(store.path)
    try:
        names = {r["name"] for r in store.rows(
            "SELECT name FROM sqlite_master WHERE type = 'table'")}
        app_id = store.scalar("PRAGMA application_id")
        if check and names:
            problems = _open_check(store, names)
            if problems:
                raise DatabaseUnusable(path, "integrity check failed: " + "; ".join(problems[:3]))
    except sqlite3.DatabaseError as exc:
        raise DatabaseUnusable(path, f"not a usable SQLite database ({exc})") from exc
    if not names and app_id in (0, APPLICATION_ID):
        return "new"
    if app_id != APPLICATION_ID or migrations.MIGRATIONS_TABLE not in names:
        raise DatabaseUnusable(path, "this SQLite file belongs to another program "
                               "(it is not a carboy database)")
    applied = migrations.applied_names(store)
    unknown = [n for n in applied if n not in migrations.known_names()]
    if unknown:
        raise DatabaseUnusable(path, "it was made by a newer carboy (schema step "
                               f"{unknown[-1]!r}); upgrade carboy to use it")
    return "pending" if migrations.pending_names(store) else "current"
