"""The journal is append-only at the database level; corrections point at what they fix."""

from __future__ import annotations

import shutil
import sqlite3
import subprocess
from datetime import UTC, datetime

import pytest

from carboy.errors import InvalidInput
from carboy.store import journal, waste
from carboy.store.errors import NotFound


def _entry(store):
    return journal.append(store, "preparation", summary="1 L of 0.1 M HCl",
                          snapshot={"target_molar": 0.1, "volume_l": 1.0}, who="h.ostervald")


def test_entry_fields(store, monkeypatch):
    monkeypatch.delenv("SSH_CLIENT", raising=False)
    monkeypatch.setenv("SSH_CONNECTION", "192.0.2.40 50022 192.0.2.1 22")
    store.origin = None
    eid = journal.append(store, "note", summary="hello", snapshot={"x": 1})
    e = journal.get(store, eid)
    assert e.kind == "note" and e.summary == "hello" and e.snapshot == {"x": 1}
    assert e.origin == "192.0.2.40 (as reported by SSH_CONNECTION)"
    assert e.recorded_by == journal.current_user()
    when = datetime.fromisoformat(e.recorded_at)
    assert when.utcoffset().total_seconds() == 0


def test_origin_prefers_ssh_client(monkeypatch):
    from carboy.store.db import current_origin

    assert current_origin({"SSH_CLIENT": "198.51.100.7 4242 22",
                           "SSH_CONNECTION": "192.0.2.40 50022 192.0.2.1 22"}) == \
        "198.51.100.7 (as reported by SSH_CLIENT)"
    assert current_origin({}) == "local"


def test_links_to_container(store):
    c = waste.new_container(store, "W1")
    eid = journal.append(store, "note", container_id=c.id, who="t")
    assert journal.get(store, eid).container_label == "W1"
    with pytest.raises(NotFound):
        journal.append(store, "note", container_id=999, who="t")
    with pytest.raises(NotFound):
        journal.append(store, "note", bottle_id=999, who="t")


def test_bad_kind_and_snapshot(store):
    with pytest.raises(InvalidInput, match="journal kind"):
        journal.append(store, "gossip")
    with pytest.raises(InvalidInput, match="snapshot"):
        journal.append(store, "note", snapshot={"x": object()})
    assert journal.count(store) == 0


def test_update_and_delete_rejected_through_store(store):
    eid = _entry(store)
    with pytest.raises(sqlite3.IntegrityError, match="append-only"):
        store.write(lambda s: s.execute("UPDATE journal_entries SET summary = 'x' WHERE id = ?",
                                        [eid]))
    with pytest.raises(sqlite3.IntegrityError, match="append-only"):
        store.write(lambda s: s.execute("DELETE FROM journal_entries"))
    assert journal.get(store, eid).summary == "1 L of 0.1 M HCl"


def test_update_and_delete_rejected_from_raw_sqlite3(store, db_path):
    eid = _entry(store)
    waste.new_container(store, "W1")
    waste.add(store, "W1", "HCl=1M", "1 L", who="t")
    raw = sqlite3.connect(db_path)
    with pytest.raises(sqlite3.IntegrityError, match="append-only"):
        raw.execute("UPDATE journal_entries SET kind = 'note'")
    with pytest.raises(sqlite3.IntegrityError, match="append-only"):
        raw.execute("DELETE FROM journal_entries WHERE id = ?", [eid])
    with pytest.raises(sqlite3.IntegrityError, match="append-only"):
        raw.execute("UPDATE waste_additions SET volume_l = 0")
    with pytest.raises(sqlite3.IntegrityError, match="append-only"):
        raw.execute("DELETE FROM waste_additions")
    raw.rollback()
    raw.close()
    assert journal.count(store) == 1


@pytest.mark.skipif(shutil.which("sqlite3") is None, reason="no sqlite3 shell")
def test_update_and_delete_rejected_from_sqlite3_shell(store, db_path):
    eid = _entry(store)
    for sql in ("UPDATE journal_entries SET summary = 'rewritten';",
                f"DELETE FROM journal_entries WHERE id = {eid};"):
        done = subprocess.run(["sqlite3", str(db_path), sql], capture_output=True, text=True,
                              timeout=30)
        assert done.returncode != 0
        assert "append-only" in done.stderr
    assert journal.get(store, eid).summary == "1 L of 0.1 M HCl"


def test_correction_is_a_new_entry(store):
    eid = _entry(store)
    cid = journal.correct(store, eid, "the volume was 0.5 L", snapshot={"volume_l": 0.5},
                          who="m.ferreday")
    corr = journal.get(store, cid)
    assert corr.kind == "correction" and corr.corrects_id == eid
    assert corr.snapshot == {"reason": "the volume was 0.5 L", "volume_l": 0.5}
    assert journal.get(store, eid).snapshot == {"target_molar": 0.1, "volume_l": 1.0}
    assert [e.id for e in journal.corrections_of(store, eid)] == [cid]
    with pytest.raises(NotFound):
        journal.correct(store, 12345, "nothing")
    with pytest.raises(InvalidInput):
        journal.correct(store, eid, "  ")


def test_correction_needs_a_target_in_the_database(store, db_path):
    raw = sqlite3.connect(db_path)
    with pytest.raises(sqlite3.IntegrityError):
        raw.execute("INSERT INTO journal_entries (kind, recorded_at, recorded_by, origin, "
                    "snapshot_json) VALUES ('correction', 't', 'u', 'local', '{}')")
    raw.close()


def test_filters_and_paging(store):
    t0 = datetime(2025, 1, 1, 12, tzinfo=UTC)
    for day in range(1, 11):
        journal.append(store, "standardization" if day % 2 else "note", who="t",
                       when=t0.replace(day=day))
    assert len(journal.entries(store, kind="note")) == 5
    assert [e.recorded_at[:10] for e in journal.entries(store, since="2025-01-08")] == [
        "2025-01-10", "2025-01-09", "2025-01-08"]
    first = journal.entries(store, limit=4)
    second = journal.entries(store, limit=4, before_id=first[-1].id)
    assert [e.id for e in first + second] == list(range(10, 2, -1))
    assert [e.id for e in journal.iter_all(store, batch=3)] == list(range(1, 11))
    with pytest.raises(InvalidInput, match="date"):
        journal.entries(store, since="last tuesday")


def test_snapshot_non_finite_becomes_null(store):
    eid = journal.append(store, "note", snapshot={"pH": float("nan"), "n": [1, float("inf")]})
    assert journal.get(store, eid).snapshot == {"pH": None, "n": [1, None]}
