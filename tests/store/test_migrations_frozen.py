"""Shipped migrations never change: their SQL and the schema they build are pinned.

The hashes and ``data/schema.sql`` were taken from the migrations as they shipped
(commit 15d198c, before the status lists moved to ``carboy.store.statuses``).  A failure
here means a shipped migration was edited: put the change in a new migration instead.
A new migration adds its own hash here, and its objects to ``data/schema.sql``.
"""

from __future__ import annotations

import hashlib
from pathlib import Path

from carboy.store import migrations

SCHEMA_FILE = Path(__file__).parent / "data" / "schema.sql"

SHIPPED_SHA256 = {
    "0001_storeroom": "c9c6cdd8193a1e86a1bfccc83e72ebefe0425821e20f18611e55eb6d653521ed",
    "0002_storeroom_rules": "ccb83e6aecff951a5e4a1400591b47c973364116bb8f460b5edc5f7c38f69bb8",
    "0003_record_chain": "2f3cdb3ea16c083df8d0bfcc889a9db1ea7b36dc0c87d8d5305c3a58db8f4f62",
    "0004_waste_streams": "acf7baf235fd7b8070f2b1897a2ef2be4f1c9ae961d70b10052172156866eda3",
    "0005_speed_at_scale": "e55156fbe5496a815a93638b65db31b8ebda0222a1c31ba3a46034d54884f7b8",
    "0006_disposal_rules": "0f8bbded6bd0668537b7f1e384607327b3e7757b6960026dc595829c8773e72c",
}


class Recorder:
    """Stands in for an empty database and keeps the SQL a migration runs (a query reads
    no rows, so a migration's Python step, such as 0003 chaining the rows already in
    the file, records its SELECTs and writes nothing)."""

    def __init__(self) -> None:
        self.sql: list[str] = []

    def execute(self, sql: str, *params: object) -> _NoRows:
        self.sql.append(sql)
        return _NoRows()


class _NoRows:
    description = ()

    def fetchall(self) -> list:
        return []


def sql_of(migration) -> list[str]:
    rec = Recorder()
    migration.fn(rec)
    return rec.sql


def digest(statements: list[str]) -> str:
    return hashlib.sha256("\n;\n".join(statements).encode()).hexdigest()


def schema_text(store) -> str:
    """Every object carboy created, in a stable order, with the file's application id.

    sqlite-utils' own ``_sqlite_migrations`` bookkeeping is left out: it is not ours.
    """
    rows = store.rows("SELECT type, name, tbl_name, sql FROM sqlite_master "
                      "WHERE sql IS NOT NULL AND tbl_name <> '_sqlite_migrations' "
                      "ORDER BY type, name")
    parts = [f"-- application_id {store.scalar('PRAGMA application_id')}"]
    parts += [f"-- {r['type']} {r['name']} on {r['tbl_name']}\n{r['sql']};" for r in rows]
    return "\n\n".join(parts) + "\n"


def test_each_shipped_migration_runs_the_sql_it_shipped_with():
    found = {m.name: digest(sql_of(m)) for m in migrations.migrations._migrations}
    assert {name: found.get(name) for name in SHIPPED_SHA256} == SHIPPED_SHA256


def test_every_migration_is_pinned():
    assert migrations.known_names() == list(SHIPPED_SHA256)


def test_a_fresh_database_has_the_shipped_schema(store):
    assert schema_text(store) == SCHEMA_FILE.read_text(encoding="utf-8")


def test_the_pin_notices_a_changed_status_list():
    """The check can fail: one status more in a CHECK list changes the hash."""
    (first,) = [m for m in migrations.migrations._migrations if m.name == "0001_storeroom"]
    statements = sql_of(first)
    edited = [s.replace("'licensed-disposal'", "'licensed-disposal', 'lost'") for s in statements]
    assert edited != statements
    assert digest(edited) != SHIPPED_SHA256["0001_storeroom"]
