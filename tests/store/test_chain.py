"""The record chain and its guards: every tampering attempt is refused or reported.

Each attack is made the way someone with write access to the file would make it: a
plain ``sqlite3`` connection (no ``recursive_triggers``), outside carboy.
"""

from __future__ import annotations

import sqlite3

import pytest
from sqlite_utils import Database
from sqlite_utils.migrations import Migrations

from carboy.errors import Refused
from carboy.store import chain, journal, migrations, waste
from carboy.store.db import HistoryUnprotected, open_database


@pytest.fixture
def filled(store):
    """A store with five journal entries and two waste additions (chained interleaved)."""
    waste.new_container(store, "W1", who="t")
    for n in range(1, 4):
        journal.append(store, "note", summary=f"note {n}", snapshot={"n": n}, who="t")
    waste.add(store, "W1", "HCl=1M", "1 L", who="t")
    waste.add(store, "W1", "NaOH=1M", "0.5 L", who="t")
    journal.append(store, "note", summary="note 4", who="t")
    journal.append(store, "note", summary="note 5", who="t")
    return store


def raw(path):
    conn = sqlite3.connect(path, isolation_level=None)
    return conn


def reopened(path):
    return open_database(path, create=False)


def problem_texts(verdict):
    return [p.text() for p in verdict.problems]


# -- the chain as carboy writes it -----------------------------------------------------------

def test_every_record_is_linked_and_verifies(filled):
    verdict = journal.verify(filled)
    assert verdict.ok, problem_texts(verdict)
    assert verdict.checked == 7 == verdict.head.links
    tables = [r["record_table"] for r in filled.rows("SELECT record_table FROM record_chain "
                                                     "ORDER BY seq")]
    assert tables.count("waste_additions") == 2 and tables.count("journal_entries") == 5


def test_the_head_moves_with_every_write(filled):
    before = journal.head(filled)
    journal.append(filled, "note", summary="one more", who="t")
    after = journal.head(filled)
    assert after.links == before.links + 1 and after.link_sha256 != before.link_sha256
    assert len(after.link_sha256) == 64


def test_the_hash_is_of_the_stored_row_and_its_predecessor(filled):
    """Recompute the last link by hand from the definition in carboy.store.chain."""
    import hashlib
    import json

    last = filled.one("SELECT * FROM record_chain ORDER BY seq DESC LIMIT 1")
    prev = filled.one("SELECT link_sha256 FROM record_chain WHERE seq = ?", [last["seq"] - 1])
    row = filled.one("SELECT * FROM journal_entries WHERE id = ?", [last["record_id"]])
    content = {k: v for k, v in row.items() if v is not None} | {"~table": "journal_entries"}
    text = json.dumps(content, sort_keys=True, separators=(",", ":"), ensure_ascii=False)
    digest = hashlib.sha256(text.encode()).hexdigest()
    assert last["content_sha256"] == digest
    assert last["link_sha256"] == hashlib.sha256(
        f"{prev['link_sha256']}:{digest}".encode()).hexdigest()


def test_chained_columns_are_every_column(store):
    """A migration that adds a column to a chained table must decide whether the chain
    covers it (add it to chain.CHAINED, nullable so older rows keep their hash)."""
    for table, columns in chain.CHAINED.items():
        assert tuple(r["name"] for r in store.rows(f"PRAGMA table_info({table})")) == columns


def test_guards_in_a_fresh_file_are_carboys_own(store):
    assert chain.guard_problems(store) == []
    assert store.trust_problems == []
    found = {r["name"]: r["sql"] for r in store.rows(
        "SELECT name, sql FROM sqlite_master WHERE type = 'trigger' AND name LIKE '%_no_%'")}
    assert found == chain.GUARDS


def test_recursive_triggers_on_every_connection(store):
    assert store.scalar("PRAGMA recursive_triggers") == 1


# -- attacks that are refused outright ------------------------------------------------------------

@pytest.mark.parametrize("sql", [
    "REPLACE INTO journal_entries (id, kind, recorded_at, recorded_by, origin, summary, "
    "snapshot_json) VALUES (2, 'note', 't', 'someone', 'local', 'rewritten', '{}')",
    "INSERT OR REPLACE INTO journal_entries (id, kind, recorded_at, recorded_by, origin, "
    "summary, snapshot_json) VALUES (2, 'note', 't', 'someone', 'local', 'rewritten', '{}')",
    "REPLACE INTO waste_additions (id, container_id, compound_key, volume_l, entered, "
    "composition_json, moles_json, added_at, added_by, origin) "
    "VALUES (1, 1, 'H2O', 0, 'x', '{}', '{}', 't', 'u', 'local')",
    "REPLACE INTO record_chain (seq, record_table, record_id, content_sha256, link_sha256) "
    "VALUES (1, 'journal_entries', 1, printf('%064d', 0), printf('%064d', 0))",
    "UPDATE record_chain SET link_sha256 = printf('%064d', 0)",
    "DELETE FROM record_chain",
])
def test_rewrites_from_a_plain_connection_are_refused(filled, db_path, sql):
    conn = raw(db_path)
    with pytest.raises(sqlite3.IntegrityError, match="append-only"):
        conn.execute(sql)
    conn.close()
    assert journal.verify(filled).ok


def test_replace_through_carboys_own_connection_is_refused(filled):
    with pytest.raises(sqlite3.IntegrityError, match="append-only"):
        filled.write(lambda s: s.execute(
            "REPLACE INTO journal_entries (id, kind, recorded_at, recorded_by, origin, "
            "summary, snapshot_json) VALUES (1, 'note', 't', 'x', 'local', 'x', '{}')"))
    assert journal.get(filled, 1).summary == "note 1"


# -- attacks past the guards: reported at open and by verify ---------------------------------------

def _edit_unguarded(path, *statements, restore=True):
    """Drop the journal's guards, run ``statements``, and put the exact guards back."""
    conn = raw(path)
    for name in chain.GUARDS:
        conn.execute(f"DROP TRIGGER IF EXISTS {name}")
    for sql in statements:
        conn.execute(sql)
    if restore:
        for sql in chain.GUARDS.values():
            conn.execute(sql)
    conn.close()


def test_dropped_trigger_is_found_at_open_and_writes_stop(filled, db_path):
    conn = raw(db_path)
    conn.execute("DROP TRIGGER journal_entries_no_update")
    conn.execute("UPDATE journal_entries SET summary = 'rewritten' WHERE id = 2")
    conn.close()
    again = reopened(db_path)
    assert any(p.guard == "journal_entries_no_update" for p in again.trust_problems)
    with pytest.raises(HistoryUnprotected) as info:
        journal.append(again, "note", summary="more", who="t")
    assert isinstance(info.value, Refused) and "journal verify" in str(info.value)
    verdict = journal.verify(again)
    assert not verdict.ok
    texts = problem_texts(verdict)
    assert any("journal_entries_no_update is missing" in t for t in texts)
    assert any(t.startswith("journal entry 2") and "changed" in t for t in texts)
    again.close()


def test_writable_schema_edit_of_a_guard_is_found(filled, db_path):
    conn = raw(db_path)
    conn.execute("PRAGMA writable_schema = ON")
    conn.execute("UPDATE sqlite_master SET sql = 'CREATE TRIGGER journal_entries_no_delete "
                 "BEFORE DELETE ON journal_entries WHEN 0 BEGIN SELECT 1; END' "
                 "WHERE name = 'journal_entries_no_delete'")
    conn.close()
    conn = raw(db_path)  # a new connection reads the edited schema
    conn.execute("DELETE FROM journal_entries WHERE id = 3")
    conn.close()
    again = reopened(db_path)
    assert [p.guard for p in again.trust_problems if p.guard] == ["journal_entries_no_delete"]
    texts = problem_texts(journal.verify(again))
    assert any("not carboy's own" in t for t in texts)
    assert any(t.startswith("journal entry 3") and "missing" in t for t in texts)
    again.close()


def test_rename_and_copy_back_is_found(filled, db_path):
    conn = raw(db_path)
    conn.execute("PRAGMA foreign_keys = OFF")
    conn.execute("ALTER TABLE journal_entries RENAME TO journal_old")
    conn.execute("CREATE TABLE journal_entries AS SELECT * FROM journal_old")
    conn.execute("UPDATE journal_entries SET recorded_by = 'someone else' WHERE id = 4")
    conn.close()
    again = reopened(db_path)
    assert {p.guard for p in again.trust_problems if p.guard} >= {
        "journal_entries_no_update", "journal_entries_no_delete"}
    texts = problem_texts(journal.verify(again))
    assert any(t.startswith("journal entry 4") and "changed" in t for t in texts)
    again.close()


def test_edited_row_with_guards_put_back_is_named_by_verify(filled, db_path):
    _edit_unguarded(db_path, "UPDATE journal_entries SET summary = 'note two' WHERE id = 2")
    again = reopened(db_path)
    # the guards look right; the open check of the chain's tail (the last 16 links) sees it
    assert [(p.record_id, p.guard) for p in again.trust_problems] == [(2, "")]
    verdict = journal.verify(again)
    assert not verdict.ok
    assert verdict.first.table == "journal_entries" and verdict.first.record_id == 2
    assert "changed" in verdict.first.what
    again.close()


def test_edited_waste_addition_is_named(filled, db_path):
    _edit_unguarded(db_path, "UPDATE waste_additions SET volume_l = 0.1 WHERE id = 1")
    verdict = journal.verify(reopened(db_path))
    assert (verdict.first.table, verdict.first.record_id) == ("waste_additions", 1)


def test_deleted_row_is_named(filled, db_path):
    _edit_unguarded(db_path, "DELETE FROM journal_entries WHERE id = 5")
    verdict = journal.verify(reopened(db_path))
    assert verdict.first.record_id == 5 and "missing" in verdict.first.what


def test_deleted_row_and_its_link_break_the_chain_at_the_next_link(filled, db_path):
    _edit_unguarded(db_path, "DELETE FROM journal_entries WHERE id = 2",
                    "DELETE FROM record_chain WHERE record_table = 'journal_entries' "
                    "AND record_id = 2")
    verdict = journal.verify(reopened(db_path))
    assert not verdict.ok and "chain is broken" in verdict.first.what
    assert (verdict.first.table, verdict.first.record_id) == ("journal_entries", 3)


def test_row_written_past_carboy_is_found_at_open(filled, db_path):
    conn = raw(db_path)
    conn.execute("INSERT INTO journal_entries (kind, recorded_at, recorded_by, origin, "
                 "summary, snapshot_json) VALUES ('note', 't', 'x', 'local', 'slipped in', '{}')")
    conn.close()
    again = reopened(db_path)
    assert [p.record_id for p in again.trust_problems] == [6]
    assert "no link" in journal.verify(again).first.what
    again.close()


def test_a_rebuilt_chain_fails_against_a_kept_head(filled, db_path):
    kept = journal.head(filled).link_sha256
    assert journal.verify(filled, expected_head=kept).ok
    # rewrite entry 1 and recompute every link, as someone who read this code could
    _edit_unguarded(db_path, "UPDATE journal_entries SET summary = 'other' WHERE id = 1",
                    "DELETE FROM record_chain")
    conn = raw(db_path)
    for name in ("record_chain_no_reused_id",):
        conn.execute(f"DROP TRIGGER {name}")
    db = Database(conn)
    chain.seal_existing(db)
    conn.execute(chain.GUARDS["record_chain_no_reused_id"])
    conn.close()
    again = reopened(db_path)
    assert journal.verify(again).ok  # the file alone cannot show it ...
    verdict = journal.verify(again, expected_head=kept)
    assert not verdict.ok and "kept chain head" in verdict.first.what  # ... the kept head does
    again.close()


def test_restore_guards_puts_them_back_and_journals_it(filled, db_path):
    conn = raw(db_path)
    conn.execute("DROP TRIGGER waste_additions_no_delete")
    conn.close()
    again = reopened(db_path)
    assert journal.restore_guards(again) == ["waste_additions_no_delete"]
    assert again.trust_problems == [] and chain.guard_problems(again) == []
    note = journal.entries(again, limit=1)[0]
    assert note.snapshot == {"restored_guards": ["waste_additions_no_delete"]}
    assert journal.verify(again).ok
    assert journal.restore_guards(again) == []
    again.close()


# -- a database made before the chain existed ---------------------------------------------------

def test_migration_chains_the_rows_an_older_file_holds(db_path):
    older = Migrations(migrations.MIGRATION_SET)
    for m in migrations.migrations._migrations[:2]:
        older(name=m.name)(m.fn)
    conn = raw(db_path)
    db = Database(conn)
    older.apply(db)
    conn.execute("PRAGMA journal_mode = WAL")
    conn.execute("INSERT INTO waste_containers (label, capacity_l, opened_on, created_by) "
                 "VALUES ('OLD-1', 20, '2024-01-01', 'a')")
    conn.execute("INSERT INTO waste_additions (container_id, compound_key, conc_molar, "
                 "volume_l, entered, composition_json, moles_json, added_at, added_by, "
                 "origin) VALUES (1, 'HCl', 1, 1, 'HCl=1M', '{}', '{}', "
                 "'2024-01-02T00:00:00.000+00:00', 'a', 'local')")
    for day in (1, 3):
        conn.execute("INSERT INTO journal_entries (kind, recorded_at, recorded_by, origin, "
                     "summary, snapshot_json) VALUES ('note', ?, 'a', 'local', 's', '{}')",
                     [f"2024-01-0{day}T00:00:00.000+00:00"])
    conn.close()
    store = open_database(db_path, create=False)
    assert migrations.pending_names(store) == []
    order = [(r["record_table"], r["record_id"]) for r in store.rows(
        "SELECT record_table, record_id FROM record_chain ORDER BY seq")]
    assert order == [("journal_entries", 1), ("waste_additions", 1), ("journal_entries", 2)]
    assert journal.verify(store).ok and store.trust_problems == []
    store.close()
