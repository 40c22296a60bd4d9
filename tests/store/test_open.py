"""Opening a database: path rules, pragmas, migrations under a lock, refusing bad files."""

from __future__ import annotations

import hashlib
import multiprocessing
import os
import sqlite3
import stat

import pytest

from carboy.store import db as dbmod
from carboy.store import journal, migrations
from carboy.store.db import default_path, open_database
from carboy.store.errors import Busy, DatabaseUnusable


def _digest(path):
    return hashlib.sha256(path.read_bytes()).hexdigest()


def test_default_path_order(tmp_path):
    assert default_path("x.db", {"CARBOY_DB": "/env.db"}) == dbmod.Path("x.db")
    assert default_path(None, {"CARBOY_DB": "/env.db"}) == dbmod.Path("/env.db")
    fallback = default_path(None, {})
    assert fallback.name == "carboy.db" and "carboy" in str(fallback.parent)


def test_new_database_pragmas(store):
    assert store.scalar("PRAGMA journal_mode") == "wal"
    assert store.scalar("PRAGMA foreign_keys") == 1
    assert store.scalar("PRAGMA busy_timeout") == int(dbmod.BUSY_TIMEOUT_S * 1000)
    assert store.scalar("PRAGMA application_id") == dbmod.APPLICATION_ID
    assert migrations.applied_names(store) == migrations.known_names()


def test_foreign_keys_on_every_connection(db_path):
    open_database(db_path).close()
    again = open_database(db_path)
    assert again.scalar("PRAGMA foreign_keys") == 1
    with pytest.raises(sqlite3.IntegrityError):
        again.write(lambda s: s.execute(
            "INSERT INTO waste_additions (container_id, compound_key, volume_l, entered, "
            "composition_json, moles_json, added_at, added_by, origin) "
            "VALUES (999, 'HCl', 1, 'x', '{}', '{}', 't', 'u', 'local')"))
    again.close()


def _content(path) -> list[str]:
    """Every statement of the file's schema and rows, without SQLite's own statistics
    (which closing a database may refresh: PRAGMA optimize)."""
    conn = sqlite3.connect(path)
    try:
        return [line for line in conn.iterdump() if "sqlite_stat" not in line]
    finally:
        conn.close()


def test_reopen_applies_nothing(db_path):
    open_database(db_path).close()
    before = _content(db_path)
    open_database(db_path).close()
    assert _content(db_path) == before


def test_junk_file_is_refused_and_untouched(tmp_path):
    path = tmp_path / "notes.db"
    path.write_bytes(b"shopping list: pipette tips, nitrile gloves\n" * 20)
    before = _digest(path)
    with pytest.raises(DatabaseUnusable, match="not an SQLite database"):
        open_database(path)
    assert _digest(path) == before
    assert not (tmp_path / "notes.db-wal").exists()


def test_foreign_sqlite_file_is_refused_and_untouched(tmp_path):
    path = tmp_path / "other.db"
    conn = sqlite3.connect(path)
    conn.execute("CREATE TABLE things (a)")
    conn.commit()
    conn.close()
    before = _digest(path)
    with pytest.raises(DatabaseUnusable, match="another program"):
        open_database(path)
    assert _digest(path) == before
    conn = sqlite3.connect(path)
    assert conn.execute("PRAGMA journal_mode").fetchone()[0] == "delete"
    conn.close()


def test_damaged_file_is_refused_and_untouched(tmp_path, demo_path):
    data = bytearray(demo_path.read_bytes())
    # overwrite the middle pages (table and index b-trees) with garbage, keep the header
    for i in range(4096 * 3, min(len(data), 4096 * 12)):
        data[i] = (i * 7919) % 251
    bad = tmp_path / "damaged.db"
    bad.write_bytes(bytes(data))
    before = _digest(bad)
    with pytest.raises(DatabaseUnusable):
        open_database(bad)
    assert _digest(bad) == before


def test_newer_schema_is_refused(store, db_path):
    store.write(lambda s: s.execute(
        "INSERT INTO _sqlite_migrations (migration_set, name, applied_at) "
        "VALUES ('carboy', '9999_from_the_future', 'x')"))
    store.close()
    with pytest.raises(DatabaseUnusable, match="newer carboy"):
        open_database(db_path)


def test_directory_is_refused(tmp_path):
    with pytest.raises(DatabaseUnusable, match="directory"):
        open_database(tmp_path)
    assert list(tmp_path.iterdir()) == []


def _open_and_write(path, n, q):
    try:
        s = open_database(path)
        journal.append(s, "note", summary=f"opener {n}", who="t")
        s.close()
        q.put(None)
    except BaseException as exc:  # report everything to the parent
        q.put(repr(exc))


def test_many_users_create_the_database_at_once(tmp_path):
    path = tmp_path / "fresh.db"
    ctx = multiprocessing.get_context("fork")
    q = ctx.Queue()
    procs = [ctx.Process(target=_open_and_write, args=(path, n, q)) for n in range(6)]
    for p in procs:
        p.start()
    results = [q.get(timeout=60) for _ in procs]
    for p in procs:
        p.join()
    assert results == [None] * 6
    s = open_database(path)
    assert journal.count(s) == 6
    assert migrations.applied_names(s) == migrations.known_names()
    s.close()


def test_schema_lock_timeout_is_busy(db_path):
    import fcntl

    lock = db_path.with_name(db_path.name + ".lock")
    fd = os.open(lock, os.O_RDWR | os.O_CREAT)
    fcntl.flock(fd, fcntl.LOCK_EX)
    try:
        with pytest.raises(Busy), dbmod.file_lock(db_path, timeout_s=0.2):
            pass
    finally:
        os.close(fd)


def test_setgid_directory_makes_files_group_writable(tmp_path):
    shared = tmp_path / "shared"
    shared.mkdir()
    os.chmod(shared, 0o2775)
    old = os.umask(0o022)
    try:
        open_database(shared / "carboy.db").close()
    finally:
        os.umask(old)
    for name in ("carboy.db", "carboy.db.lock"):
        assert (shared / name).stat().st_mode & stat.S_IWGRP, name


def test_write_retries_then_busy(db_path, store):
    other = sqlite3.connect(db_path, isolation_level=None)
    other.execute("BEGIN IMMEDIATE")
    try:
        store.conn.execute("PRAGMA busy_timeout = 10")
        with pytest.raises(Busy) as info:
            store.write(lambda s: journal.append_in(s, "note", who="t"), attempts=3)
        assert info.value.attempts == 3
    finally:
        other.execute("ROLLBACK")
        other.close()
    assert journal.count(store) == 0


def test_write_rolls_back_on_error(store):
    def work(s):
        journal.append_in(s, "note", summary="half", who="t")
        raise ValueError("stop")

    with pytest.raises(ValueError):
        store.write(work)
    assert journal.count(store) == 0
    assert not store.conn.in_transaction


def test_writes_outside_a_transaction_are_refused(store):
    store.write(lambda s: s.execute(
        "INSERT INTO waste_containers (label, capacity_l, opened_on, created_by) "
        "VALUES ('W-1', 10, '2025-01-01', 't')"))
    with pytest.raises(RuntimeError, match="Store.write"):
        store.execute("DELETE FROM waste_containers")
    assert store.scalar("SELECT count(*) FROM waste_containers") == 1


def test_backup_api_copy(store, tmp_path):
    journal.append(store, "note", summary="before backup", who="t")
    copy = store.backup_to(tmp_path / "backup.db")
    b = open_database(copy)
    assert [e.summary for e in journal.entries(b)] == ["before backup"]
    assert b.integrity_problems() == []
    b.close()


def test_large_file_check_leaves_out_large_tables(demo_path, monkeypatch):
    """Above FULL_CHECK_LIMIT_BYTES the open checks each table whose largest rowid is at
    most OPEN_CHECK_MAX_ROWID (and no virtual table): at a million rows the others'
    check cost every command about a second."""
    monkeypatch.setattr(dbmod, "FULL_CHECK_LIMIT_BYTES", 0)
    monkeypatch.setattr(dbmod, "OPEN_CHECK_MAX_ROWID", 8)
    checked = []
    real = dbmod.Store._execute

    def spy(self, sql, *args, **kw):
        if sql.startswith("PRAGMA quick_check"):
            checked.append(sql.split('"')[1])
        return real(self, sql, *args, **kw)

    monkeypatch.setattr(dbmod.Store, "_execute", spy)
    store = open_database(demo_path)
    sizes = {t: store.scalar(f'SELECT max(rowid) FROM "{t}"') or 0
             for t in ("journal_entries", "waste_containers", "stock_bottles")}
    store.close()
    assert sizes["journal_entries"] > 8 and sizes["stock_bottles"] > 8
    assert sizes["waste_containers"] <= 8
    assert "waste_containers" in checked and "_sqlite_migrations" in checked
    assert "journal_entries" not in checked and "stock_bottles" not in checked
    assert "stock_bottles_fts" not in checked        # virtual: its shadow tables hold it


def test_large_file_check_covers_small_tables(tmp_path, demo_path, monkeypatch):
    monkeypatch.setattr(dbmod, "FULL_CHECK_LIMIT_BYTES", 0)
    open_database(demo_path).close()          # sound file: opens
    data = bytearray(demo_path.read_bytes())
    for i in range(4096 * 3, min(len(data), 4096 * 12)):
        data[i] = (i * 7919) % 251
    bad = tmp_path / "damaged-large.db"
    bad.write_bytes(bytes(data))
    with pytest.raises(DatabaseUnusable):
        open_database(bad)
