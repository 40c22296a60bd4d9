"""The database schema, as sqlite-utils migrations.

Each migration is a decorated function, applied once and recorded in
``_sqlite_migrations``.  :func:`apply` is only called by
:func:`carboy.store.db.open_database`, holding the schema file lock and inside one
``BEGIN IMMEDIATE`` transaction, so a half-applied schema cannot exist.

A migration that has shipped never changes: it holds its SQL as literal text,
with the value lists of its day (statuses, journal kinds, units) written out, so
editing a constant elsewhere cannot alter it.  ``tests/store/test_migrations_frozen.py``
pins the text of each one.  To change the schema, add a migration.

This module imports nothing from the rest of the store (``db`` imports it) but
:mod:`carboy.store.chain`, whose hashing chains the rows a file already holds (0003).

Tables (names are ours):

``stock_bottles``      bottles on the shelves (strength, amount, dates, status)
``stock_bottles_fts``  full-text index over compound, name, location and lot
``waste_containers``   carboys collecting waste, with a status
``waste_additions``    what went into each container (append-only)
``user_compounds``     compounds the built-in catalog lacks (validated like it)
``journal_entries``    the append-only journal
``storeroom_rules``    the storeroom's own settings over carboy's defaults (0002): re-check
                       intervals per compound, standardization acceptance
``record_chain``       one hash-chain link per journal entry and waste addition (0003),
                       with guards that refuse UPDATE, DELETE and an INSERT reusing an id
``disposal_rules``     the storeroom's own disposal rules over carboy's placeholders
                       (0006), changed only right after the journal entry recording it

Migration 0004 gives each waste container a ``stream`` (what it is meant for, the
vocabulary of :mod:`carboy.model.compatibility`), a ``stream_note`` (how the stream was
set when no person chose it) and a ``material`` (glass, plastic, metal; NULL: not
recorded).  Containers that existed before it get the stream their contents point to
where that is unambiguous, else ``mixed``, with the reason in ``stream_note``; nothing
else about them changes.  From then on a trigger lets a stream or material change only
right after the journal entry that records it.
``stock_bottle_counts`` how many bottles have each status, kept by triggers (0005)

Migration 0005 is about speed at scale: the search index is rebuilt with prefix indexes
(one to ten characters: search as you type never merges long posting lists; they add
about a tenth to the index), column detail and the status as a column; the journal's bottle and container indexes carry the time (histories
in time order); bottles get a status index; and the bottle counts are kept as they
change (the stock list's "rows 1–50 of N" without counting a million rows).
"""

from __future__ import annotations

import functools
import sqlite3
from collections.abc import Callable
from typing import TYPE_CHECKING, Protocol

from carboy.store.chain import seal_existing

if TYPE_CHECKING:
    from sqlite_utils import Database
    from sqlite_utils.migrations import Migrations

# No migration reads this: carboy/tui/cli_store.py still imports it from here.  Its home
# is carboy.store.statuses; drop this line once the command line imports it from there.

MIGRATION_SET = "carboy"
MIGRATIONS_TABLE = "_sqlite_migrations"
"""sqlite-utils' record of the migrations applied (``Migrations.migrations_table``)."""

_SHIPPED: list[tuple[str, Callable[[Database], None]]] = []
"""Every migration in order, name and function.  sqlite-utils (which loads numpy) is
imported only to apply them (:func:`migration_set`): opening an up-to-date database reads
the names applied with one query and never needs it."""


def _migration(name: str) -> Callable[[Callable[[Database], None]], Callable[[Database], None]]:
    def register(fn: Callable[[Database], None]) -> Callable[[Database], None]:
        _SHIPPED.append((name, fn))
        return fn
    return register


@functools.cache
def migration_set() -> Migrations:
    """The migrations as a sqlite-utils set (built, and sqlite-utils imported, on first use)."""
    from sqlite_utils.migrations import Migrations

    found = Migrations(MIGRATION_SET)
    for name, fn in _SHIPPED:
        found(name=name)(fn)
    return found


def __getattr__(name: str):
    if name == "migrations":  # the sqlite-utils set, as this module once held it
        return migration_set()
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")

STATEMENT_BREAK = "\n;\n"
"""Between two statements of a migration's SQL text (a line holding only ``;``: trigger
bodies have semicolons of their own)."""


def _run(db: Database, script: str) -> None:
    """Run each statement in turn (``executescript`` would commit the transaction)."""
    for sql in script.split(STATEMENT_BREAK):
        db.execute(sql)


# application_id 1129464409 is 0x43524259, "CRBY" (carboy.store.db.APPLICATION_ID)
SQL_0001 = """\
PRAGMA application_id = 1129464409
;
CREATE TABLE stock_bottles (
    id INTEGER PRIMARY KEY,
    compound_key TEXT NOT NULL CHECK (length(compound_key) > 0),
    compound_name TEXT NOT NULL DEFAULT '',
    strength_unit TEXT NOT NULL CHECK (strength_unit IN ('M', '%w/w')),
    label_strength REAL NOT NULL CHECK (label_strength > 0),
    current_strength REAL CHECK (current_strength IS NULL OR current_strength > 0),
    measured_at TEXT,
    measured_how TEXT NOT NULL DEFAULT '',
    restandardize_days INTEGER CHECK (restandardize_days IS NULL OR restandardize_days > 0),
    amount_unit TEXT NOT NULL CHECK (amount_unit IN ('L', 'g')),
    amount_left REAL NOT NULL CHECK (amount_left >= 0),
    container_size REAL NOT NULL CHECK (container_size > 0),
    location TEXT NOT NULL DEFAULT '',
    lot TEXT NOT NULL DEFAULT '',
    received_on TEXT,
    opened_on TEXT,
    expires_on TEXT,
    status TEXT NOT NULL DEFAULT 'in-use' CHECK (status IN ('in-use', 'empty', 'disposed')),
    notes TEXT NOT NULL DEFAULT '',
    added_at TEXT NOT NULL,
    added_by TEXT NOT NULL
)
;
CREATE INDEX stock_bottles_by_compound ON stock_bottles (compound_key)
;
CREATE INDEX stock_bottles_by_expiry ON stock_bottles (expires_on)
;
CREATE VIRTUAL TABLE stock_bottles_fts USING fts5 (
    compound_key, compound_name, location, lot,
    content = 'stock_bottles', content_rowid = 'id',
    tokenize = 'unicode61 remove_diacritics 2'
)
;
CREATE TRIGGER stock_bottles_fts_insert AFTER INSERT ON stock_bottles BEGIN
    INSERT INTO stock_bottles_fts (rowid, compound_key, compound_name, location, lot)
    VALUES (new.id, new.compound_key, new.compound_name, new.location, new.lot);
END
;
CREATE TRIGGER stock_bottles_fts_delete AFTER DELETE ON stock_bottles BEGIN
    INSERT INTO stock_bottles_fts (stock_bottles_fts, rowid, compound_key, compound_name,
                                   location, lot)
    VALUES ('delete', old.id, old.compound_key, old.compound_name, old.location, old.lot);
END
;
CREATE TRIGGER stock_bottles_fts_update AFTER UPDATE OF compound_key, compound_name,
    location, lot ON stock_bottles BEGIN
    INSERT INTO stock_bottles_fts (stock_bottles_fts, rowid, compound_key, compound_name,
                                   location, lot)
    VALUES ('delete', old.id, old.compound_key, old.compound_name, old.location, old.lot);
    INSERT INTO stock_bottles_fts (rowid, compound_key, compound_name, location, lot)
    VALUES (new.id, new.compound_key, new.compound_name, new.location, new.lot);
END
;
CREATE TABLE waste_containers (
    id INTEGER PRIMARY KEY,
    label TEXT NOT NULL UNIQUE COLLATE NOCASE CHECK (length(trim(label)) > 0),
    location TEXT NOT NULL DEFAULT '',
    capacity_l REAL NOT NULL CHECK (capacity_l > 0),
    status TEXT NOT NULL DEFAULT 'collecting' CHECK (status IN ('collecting', 'planned', 'neutralized', 'disposed', 'licensed-disposal')),
    opened_on TEXT NOT NULL,
    closed_on TEXT,
    notes TEXT NOT NULL DEFAULT '',
    created_by TEXT NOT NULL
)
;
CREATE TABLE waste_additions (
    id INTEGER PRIMARY KEY,
    container_id INTEGER NOT NULL REFERENCES waste_containers (id),
    compound_key TEXT NOT NULL,
    conc_molar REAL CHECK (conc_molar IS NULL OR conc_molar >= 0),
    volume_l REAL NOT NULL CHECK (volume_l >= 0),
    mass_g REAL CHECK (mass_g IS NULL OR mass_g >= 0),
    entered TEXT NOT NULL,
    composition_json TEXT NOT NULL CHECK (json_valid(composition_json)),
    moles_json TEXT NOT NULL CHECK (json_valid(moles_json)),
    supersedes_id INTEGER UNIQUE REFERENCES waste_additions (id),
    added_at TEXT NOT NULL,
    added_by TEXT NOT NULL,
    origin TEXT NOT NULL,
    note TEXT NOT NULL DEFAULT ''
)
;
CREATE INDEX waste_additions_by_container ON waste_additions (container_id, id)
;
CREATE TRIGGER waste_additions_no_update BEFORE UPDATE ON waste_additions
BEGIN SELECT RAISE(ABORT, 'carboy: waste additions are append-only; record a correction instead'); END
;
CREATE TRIGGER waste_additions_no_delete BEFORE DELETE ON waste_additions
BEGIN SELECT RAISE(ABORT, 'carboy: waste additions are append-only; record a correction instead'); END
;
CREATE TABLE user_compounds (
    key TEXT PRIMARY KEY,
    definition_json TEXT NOT NULL CHECK (json_valid(definition_json)),
    source TEXT NOT NULL CHECK (length(trim(source)) > 0),
    added_at TEXT NOT NULL,
    added_by TEXT NOT NULL
)
;
CREATE TABLE journal_entries (
    id INTEGER PRIMARY KEY,
    kind TEXT NOT NULL CHECK (kind IN ('receipt', 'preparation', 'standardization', 'neutralization', 'disposal', 'correction', 'note')),
    recorded_at TEXT NOT NULL,
    recorded_by TEXT NOT NULL,
    origin TEXT NOT NULL,
    bottle_id INTEGER REFERENCES stock_bottles (id),
    container_id INTEGER REFERENCES waste_containers (id),
    corrects_id INTEGER REFERENCES journal_entries (id),
    summary TEXT NOT NULL DEFAULT '',
    snapshot_json TEXT NOT NULL CHECK (json_valid(snapshot_json)),
    CHECK (kind <> 'correction' OR corrects_id IS NOT NULL)
)
;
CREATE INDEX journal_entries_by_time ON journal_entries (recorded_at)
;
CREATE INDEX journal_entries_by_kind ON journal_entries (kind, recorded_at)
;
CREATE INDEX journal_entries_by_bottle ON journal_entries (bottle_id) WHERE bottle_id IS NOT NULL
;
CREATE INDEX journal_entries_by_container ON journal_entries (container_id) WHERE container_id IS NOT NULL
;
CREATE INDEX journal_entries_by_corrected ON journal_entries (corrects_id) WHERE corrects_id IS NOT NULL
;
CREATE TRIGGER journal_entries_no_update BEFORE UPDATE ON journal_entries
BEGIN SELECT RAISE(ABORT, 'carboy: journal entries are append-only; record a correction instead'); END
;
CREATE TRIGGER journal_entries_no_delete BEFORE DELETE ON journal_entries
BEGIN SELECT RAISE(ABORT, 'carboy: journal entries are append-only; record a correction instead'); END"""


@_migration("0001_storeroom")
def m0001_storeroom(db: Database) -> None:
    _run(db, SQL_0001)


SQL_0002 = """\
CREATE TABLE storeroom_rules (
    name TEXT PRIMARY KEY CHECK (length(trim(name)) > 0),
    value_json TEXT NOT NULL CHECK (json_valid(value_json)),
    set_at TEXT NOT NULL,
    set_by TEXT NOT NULL
)"""


@_migration("0002_storeroom_rules")
def m0002_storeroom_rules(db: Database) -> None:
    _run(db, SQL_0002)


# The record chain and the guards that complete the append-only rule.  The trigger texts
# are carboy.store.chain.GUARDS (the open check compares the file's triggers with them);
# a test checks that they agree.  The Python step chains the rows already in the file.
SQL_0003 = """\
CREATE TABLE record_chain (
    seq INTEGER PRIMARY KEY,
    record_table TEXT NOT NULL CHECK (record_table IN ('journal_entries', 'waste_additions')),
    record_id INTEGER NOT NULL,
    content_sha256 TEXT NOT NULL CHECK (length(content_sha256) = 64),
    link_sha256 TEXT NOT NULL CHECK (length(link_sha256) = 64),
    UNIQUE (record_table, record_id)
)
;
CREATE TRIGGER journal_entries_no_reused_id BEFORE INSERT ON journal_entries WHEN new.id > 0 AND EXISTS (SELECT 1 FROM journal_entries WHERE id = new.id)
BEGIN SELECT RAISE(ABORT, 'carboy: journal entries are append-only; an id is never reused'); END
;
CREATE TRIGGER waste_additions_no_reused_id BEFORE INSERT ON waste_additions WHEN new.id > 0 AND EXISTS (SELECT 1 FROM waste_additions WHERE id = new.id)
BEGIN SELECT RAISE(ABORT, 'carboy: waste additions are append-only; an id is never reused'); END
;
CREATE TRIGGER record_chain_no_update BEFORE UPDATE ON record_chain
BEGIN SELECT RAISE(ABORT, 'carboy: chain links are append-only; record a correction instead'); END
;
CREATE TRIGGER record_chain_no_delete BEFORE DELETE ON record_chain
BEGIN SELECT RAISE(ABORT, 'carboy: chain links are append-only; record a correction instead'); END
;
CREATE TRIGGER record_chain_no_reused_id BEFORE INSERT ON record_chain WHEN new.seq > 0 AND EXISTS (SELECT 1 FROM record_chain WHERE seq = new.seq)
BEGIN SELECT RAISE(ABORT, 'carboy: chain links are append-only; an id is never reused'); END"""


@_migration("0003_record_chain")
def m0003_record_chain(db: Database) -> None:
    _run(db, SQL_0003)
    seal_existing(db)


SQL_0004 = """\
ALTER TABLE waste_containers ADD COLUMN stream TEXT NOT NULL DEFAULT 'mixed' CHECK (stream IN ('acid', 'alkaline', 'cyanide_sulfide', 'heavy_metal', 'hf', 'oxidizing_acid', 'mixed'))
;
ALTER TABLE waste_containers ADD COLUMN stream_note TEXT NOT NULL DEFAULT ''
;
ALTER TABLE waste_containers ADD COLUMN material TEXT CHECK (material IS NULL OR material IN ('glass', 'plastic', 'metal'))"""

SQL_0004_CONTENTS = """\
SELECT c.id AS container_id, a.compound_key, a.conc_molar, a.volume_l, a.mass_g
FROM waste_containers c JOIN waste_additions a ON a.container_id = c.id
WHERE NOT EXISTS (SELECT 1 FROM waste_additions n WHERE n.supersedes_id = a.id)
ORDER BY c.id, a.id"""

SQL_0004_CONTAINERS = "SELECT id FROM waste_containers ORDER BY id"

SQL_0004_SET = "UPDATE waste_containers SET stream = ?, stream_note = ? WHERE id = ?"

SQL_0004_GUARD = """\
CREATE TRIGGER waste_containers_stream_journaled BEFORE UPDATE OF stream, material ON waste_containers
WHEN NEW.stream IS NOT OLD.stream OR NEW.material IS NOT OLD.material
BEGIN SELECT RAISE(ABORT, 'carboy: a container''s stream or material changes only right after the journal entry that records it')
WHERE NOT EXISTS (SELECT 1 FROM journal_entries j
    WHERE j.id = (SELECT max(id) FROM journal_entries) AND j.container_id = NEW.id
      AND j.kind = 'note' AND json_extract(j.snapshot_json, '$.event') = 'stream-change'
      AND json_extract(j.snapshot_json, '$.stream') IS NEW.stream
      AND json_extract(j.snapshot_json, '$.material') IS NEW.material); END"""

UPGRADE_NOTE = "set when streams were introduced: {reason}"
"""``stream_note`` of a container that existed before migration 0004."""


def _amount_mol(row, catalog) -> float:
    """Formula units of one stored addition (a mass needs the molar mass; an unknown
    compound keeps a positive stand-in so that it still counts as present)."""
    if row[4] is not None:
        if row[1] in catalog:
            return float(row[4]) / catalog.compound(row[1]).molar_mass_g_mol
        return float(row[4]) or 1.0
    return float(row[2] or 0.0) * float(row[3] or 0.0)


def _infer_streams(db: Database) -> None:
    """Each existing container's stream from what it holds (see the module docstring).

    The inference reads the built-in catalog of the day; a storeroom's own compounds are
    not known here, so a container holding one becomes ``mixed`` with that reason.
    """
    from carboy.model.catalog import default_catalog
    from carboy.model.compatibility import infer_stream

    catalog = default_catalog()
    contents: dict[int, dict[str, float]] = {
        row[0]: {} for row in db.execute(SQL_0004_CONTAINERS).fetchall()}
    for row in db.execute(SQL_0004_CONTENTS).fetchall():
        held = contents.setdefault(row[0], {})
        held[row[1]] = held.get(row[1], 0.0) + _amount_mol(row, catalog)
    for container_id, held in contents.items():
        guess = infer_stream(held, catalog=catalog)
        db.execute(SQL_0004_SET, [guess.stream, UPGRADE_NOTE.format(reason=guess.reason),
                                  container_id])


@_migration("0004_waste_streams")
def m0004_waste_streams(db: Database) -> None:
    _run(db, SQL_0004)
    _infer_streams(db)
    _run(db, SQL_0004_GUARD)


# Speed at scale.  The search index is rebuilt with the bottle's status as a fifth column
# (a search within a status is then one index read), so its three triggers are too.
# Nothing here touches a chained table's columns.
SQL_0005 = """\
DROP TRIGGER stock_bottles_fts_insert
;
DROP TRIGGER stock_bottles_fts_delete
;
DROP TRIGGER stock_bottles_fts_update
;
DROP TABLE stock_bottles_fts
;
CREATE VIRTUAL TABLE stock_bottles_fts USING fts5 (
    compound_key, compound_name, location, lot, status,
    content = 'stock_bottles', content_rowid = 'id',
    tokenize = 'unicode61 remove_diacritics 2', prefix = '1 2 3 4 5 6 7 8 9 10', detail = column
)
;
INSERT INTO stock_bottles_fts (stock_bottles_fts) VALUES ('rebuild')
;
CREATE TRIGGER stock_bottles_fts_insert AFTER INSERT ON stock_bottles BEGIN
    INSERT INTO stock_bottles_fts (rowid, compound_key, compound_name, location, lot, status)
    VALUES (new.id, new.compound_key, new.compound_name, new.location, new.lot, new.status);
END
;
CREATE TRIGGER stock_bottles_fts_delete AFTER DELETE ON stock_bottles BEGIN
    INSERT INTO stock_bottles_fts (stock_bottles_fts, rowid, compound_key, compound_name,
                                   location, lot, status)
    VALUES ('delete', old.id, old.compound_key, old.compound_name, old.location, old.lot,
            old.status);
END
;
CREATE TRIGGER stock_bottles_fts_update AFTER UPDATE OF compound_key, compound_name,
    location, lot, status ON stock_bottles BEGIN
    INSERT INTO stock_bottles_fts (stock_bottles_fts, rowid, compound_key, compound_name,
                                   location, lot, status)
    VALUES ('delete', old.id, old.compound_key, old.compound_name, old.location, old.lot,
            old.status);
    INSERT INTO stock_bottles_fts (rowid, compound_key, compound_name, location, lot, status)
    VALUES (new.id, new.compound_key, new.compound_name, new.location, new.lot, new.status);
END
;
CREATE INDEX stock_bottles_by_status ON stock_bottles (status)
;
CREATE TABLE stock_bottle_counts (
    status TEXT PRIMARY KEY,
    bottles INTEGER NOT NULL CHECK (bottles >= 0)
)
;
INSERT INTO stock_bottle_counts (status, bottles)
SELECT status, count(*) FROM stock_bottles GROUP BY status
;
CREATE TRIGGER stock_bottle_counts_insert AFTER INSERT ON stock_bottles BEGIN
    INSERT INTO stock_bottle_counts (status, bottles) VALUES (new.status, 1)
    ON CONFLICT (status) DO UPDATE SET bottles = bottles + 1;
END
;
CREATE TRIGGER stock_bottle_counts_delete AFTER DELETE ON stock_bottles BEGIN
    UPDATE stock_bottle_counts SET bottles = bottles - 1 WHERE status = old.status;
END
;
CREATE TRIGGER stock_bottle_counts_update AFTER UPDATE OF status ON stock_bottles
WHEN new.status IS NOT old.status BEGIN
    UPDATE stock_bottle_counts SET bottles = bottles - 1 WHERE status = old.status;
    INSERT INTO stock_bottle_counts (status, bottles) VALUES (new.status, 1)
    ON CONFLICT (status) DO UPDATE SET bottles = bottles + 1;
END
;
DROP INDEX journal_entries_by_bottle
;
DROP INDEX journal_entries_by_container
;
CREATE INDEX journal_entries_by_bottle ON journal_entries (bottle_id, recorded_at) WHERE bottle_id IS NOT NULL
;
CREATE INDEX journal_entries_by_container ON journal_entries (container_id, recorded_at) WHERE container_id IS NOT NULL"""


@_migration("0005_speed_at_scale")
def m0005_speed_at_scale(db: Database) -> None:
    _run(db, SQL_0005)
# The storeroom's own disposal rules over carboy's placeholders (carboy.model.disposal_profile):
# one row per rule the storeroom set, and triggers that let a row change only right after
# the journal entry recording that change (a note whose snapshot's event is
# 'disposal-rules' and whose 'changes' give the rule's new value, or, for a row removed,
# say it went back to carboy's placeholder).
SQL_0006 = """\
CREATE TABLE disposal_rules (
    name TEXT PRIMARY KEY CHECK (name IN ('window_low', 'window_high', 'batch_treatment', 'batch_max_l', 'vessel_l', 'dilute_to_percent', 'ice_fraction', 'flush_factor', 'max_temperature_c', 'fill_limit_percent', 'nearly_full_percent', 'never_treat')),
    value_json TEXT NOT NULL CHECK (json_valid(value_json)),
    set_at TEXT NOT NULL,
    set_by TEXT NOT NULL,
    entry_id INTEGER NOT NULL REFERENCES journal_entries (id)
)
;
CREATE TRIGGER disposal_rules_journaled_insert BEFORE INSERT ON disposal_rules
WHEN NOT EXISTS (SELECT 1 FROM journal_entries j
    WHERE j.id = NEW.entry_id AND j.id = (SELECT max(id) FROM journal_entries)
      AND j.kind = 'note' AND json_extract(j.snapshot_json, '$.event') = 'disposal-rules'
      AND json_extract(j.snapshot_json, '$.changes.' || NEW.name || '.after') IS json_extract(NEW.value_json, '$'))
BEGIN SELECT RAISE(ABORT, 'carboy: a disposal rule changes only right after the journal entry that records it'); END
;
CREATE TRIGGER disposal_rules_journaled_update BEFORE UPDATE ON disposal_rules
WHEN NOT EXISTS (SELECT 1 FROM journal_entries j
    WHERE j.id = NEW.entry_id AND j.id = (SELECT max(id) FROM journal_entries)
      AND j.kind = 'note' AND json_extract(j.snapshot_json, '$.event') = 'disposal-rules'
      AND json_extract(j.snapshot_json, '$.changes.' || NEW.name || '.after') IS json_extract(NEW.value_json, '$'))
BEGIN SELECT RAISE(ABORT, 'carboy: a disposal rule changes only right after the journal entry that records it'); END
;
CREATE TRIGGER disposal_rules_journaled_delete BEFORE DELETE ON disposal_rules
WHEN NOT EXISTS (SELECT 1 FROM journal_entries j
    WHERE j.id = (SELECT max(id) FROM journal_entries)
      AND j.kind = 'note' AND json_extract(j.snapshot_json, '$.event') = 'disposal-rules'
      AND json_extract(j.snapshot_json, '$.back_to_placeholder') = 1
      AND json_type(j.snapshot_json, '$.changes.' || OLD.name) IS NOT NULL)
BEGIN SELECT RAISE(ABORT, 'carboy: a disposal rule changes only right after the journal entry that records it'); END"""


@_migration("0006_disposal_rules")
def m0006_disposal_rules(db: Database) -> None:
    _run(db, SQL_0006)


class _HasDatabase(Protocol):
    conn: sqlite3.Connection
    db: Database


def known_names() -> list[str]:
    return [name for name, _fn in _SHIPPED]


def applied_names(store: _HasDatabase) -> list[str]:
    """The names applied, in the order they were (as sqlite-utils reads them)."""
    if not store.conn.execute("SELECT 1 FROM sqlite_master WHERE type = 'table' AND name = ?",
                              [MIGRATIONS_TABLE]).fetchone():
        return []
    return [row[0] for row in store.conn.execute(
        f"SELECT name FROM {MIGRATIONS_TABLE} WHERE migration_set = ? ORDER BY rowid",
        [MIGRATION_SET]).fetchall()]


def pending_names(store: _HasDatabase) -> list[str]:
    applied = set(applied_names(store))
    return [name for name in known_names() if name not in applied]


def apply(store: _HasDatabase) -> list[str]:
    """Apply pending migrations; call only inside ``Store.write`` holding the file lock."""
    pending = pending_names(store)
    migration_set().apply(store.db)
    return pending
