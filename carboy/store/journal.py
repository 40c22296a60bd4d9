"""The append-only journal: preparations, standardizations, neutralizations, disposals.

Every entry records its kind, who (the OS account of the process's real user id, see
:mod:`carboy.store.identity`), when (UTC), where from (the SSH client's address as
reported, else ``local``), the bottle or container it concerns, and a JSON snapshot of
the inputs and results as computed then.  Triggers in the database reject UPDATE,
DELETE and an INSERT that reuses an id; a mistake is fixed by :func:`correct`, a new
entry that points at the one it corrects.  Every entry is linked into the record chain
(:mod:`carboy.store.chain`); :func:`verify` checks the whole chain.
"""

from __future__ import annotations

import json
import math
import re
from collections.abc import Mapping
from dataclasses import dataclass
from datetime import date, datetime
from typing import Any

from carboy.errors import InvalidInput
from carboy.store import chain
from carboy.store.db import Store, current_user, iso_utc, stamp
from carboy.store.errors import NotFound
from carboy.store.readers import parse_whole
from carboy.store.statuses import JOURNAL_KINDS

KINDS = JOURNAL_KINDS


@dataclass(frozen=True)
class Entry:
    """One journal entry as stored."""

    id: int
    kind: str
    recorded_at: str
    recorded_by: str
    origin: str
    bottle_id: int | None
    container_id: int | None
    container_label: str | None
    corrects_id: int | None
    summary: str
    snapshot: dict
    link_sha256: str | None = None
    """The entry's link in the record chain (None: the entry has none, see :func:`verify`)."""

    def as_dict(self) -> dict:
        return {
            "id": self.id, "kind": self.kind, "recorded_at": self.recorded_at,
            "recorded_by": self.recorded_by, "origin": self.origin,
            "bottle_id": self.bottle_id, "container_id": self.container_id,
            "container_label": self.container_label, "corrects_id": self.corrects_id,
            "summary": self.summary, "snapshot": self.snapshot,
            "link_sha256": self.link_sha256,
        }


def snapshot_json(snapshot: Mapping[str, Any] | None) -> str:
    """Serialise a snapshot strictly: finite numbers only, keys as text."""
    if snapshot is None:
        snapshot = {}
    if not isinstance(snapshot, Mapping):
        raise InvalidInput("journal snapshot", type(snapshot).__name__, "must be a mapping",
                           field="snapshot")

    def default(obj: Any) -> Any:
        if isinstance(obj, (datetime, date)):
            return obj.isoformat()
        if hasattr(obj, "item") and callable(obj.item):  # numpy scalar
            return obj.item()
        if hasattr(obj, "tolist"):
            return obj.tolist()
        if isinstance(obj, (set, frozenset, tuple)):
            return list(obj)
        raise TypeError(type(obj).__name__)

    def clean(obj: Any) -> Any:
        if isinstance(obj, float) and not math.isfinite(obj):
            return None
        if isinstance(obj, Mapping):
            return {str(k): clean(v) for k, v in obj.items()}
        if isinstance(obj, (list, tuple)):
            return [clean(v) for v in obj]
        return obj

    try:
        return json.dumps(clean(dict(snapshot)), default=default, ensure_ascii=False,
                          allow_nan=False, sort_keys=True)
    except (TypeError, ValueError) as exc:
        raise InvalidInput("journal snapshot", str(exc), "cannot be stored as JSON",
                           field="snapshot") from None


def _check_kind(kind: str) -> str:
    if kind not in KINDS:
        raise InvalidInput("journal kind", kind, "expected one of " + ", ".join(KINDS),
                           field="kind")
    return kind


def append_in(store: Store, kind: str, *, summary: str = "", snapshot: Mapping | None = None,
              bottle_id: int | None = None, container_id: int | None = None,
              corrects_id: int | None = None, who: str | None = None,
              origin: str | None = None, when: datetime | None = None) -> int:
    """Insert one entry; the caller must already be inside ``Store.write``."""
    _check_kind(kind)
    payload = snapshot_json(snapshot)
    if kind == "correction" and corrects_id is None:
        raise InvalidInput("correction", None, "must name the entry it corrects")
    if corrects_id is not None and store.scalar(
            "SELECT 1 FROM journal_entries WHERE id = ?", [corrects_id]) is None:
        raise NotFound("journal entry", corrects_id)
    if bottle_id is not None and store.scalar(
            "SELECT 1 FROM stock_bottles WHERE id = ?", [bottle_id]) is None:
        raise NotFound("stock bottle", bottle_id)
    if container_id is not None and store.scalar(
            "SELECT 1 FROM waste_containers WHERE id = ?", [container_id]) is None:
        raise NotFound("waste container", container_id)
    cur = store.execute(
        "INSERT INTO journal_entries (kind, recorded_at, recorded_by, origin, bottle_id, "
        "container_id, corrects_id, summary, snapshot_json) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)",
        [kind, stamp(when), who or current_user(),
         origin or store.origin_of(), bottle_id, container_id, corrects_id, summary, payload],
    )
    entry_id = int(cur.lastrowid)
    chain.link(store, "journal_entries", entry_id)
    return entry_id


def append(store: Store, kind: str, *, summary: str = "", snapshot: Mapping | None = None,
           bottle_id: int | None = None, container_id: int | None = None,
           corrects_id: int | None = None, who: str | None = None,
           origin: str | None = None, when: datetime | None = None) -> int:
    """Append one journal entry in its own transaction; returns its id."""
    payload = snapshot_json(snapshot)  # fail before taking the write lock
    return store.write(lambda s: append_in(
        s, kind, summary=summary, snapshot=json.loads(payload), bottle_id=bottle_id,
        container_id=container_id, corrects_id=corrects_id, who=who, origin=origin, when=when))


def correct(store: Store, entry_id: int, reason: str, *, snapshot: Mapping | None = None,
            who: str | None = None, when: datetime | None = None) -> int:
    """Record a correction of entry ``entry_id`` (which stays as it was); returns the new id."""
    if not reason or not reason.strip():
        raise InvalidInput("correction reason", reason, "say what was wrong", field="reason")
    original = get(store, entry_id)
    snap = {"reason": reason.strip(), **(dict(snapshot) if snapshot else {})}
    return append(store, "correction", summary=f"correction of entry {entry_id}: {reason.strip()}",
                  snapshot=snap, bottle_id=original.bottle_id,
                  container_id=original.container_id, corrects_id=entry_id, who=who, when=when)


_SELECT = (
    "SELECT j.id, j.kind, j.recorded_at, j.recorded_by, j.origin, j.bottle_id, j.container_id, "
    "c.label AS container_label, j.corrects_id, j.summary, j.snapshot_json, "
    "r.link_sha256 FROM journal_entries j LEFT JOIN waste_containers c ON c.id = j.container_id "
    "LEFT JOIN record_chain r ON r.record_table = 'journal_entries' AND r.record_id = j.id"
)


def _entry(row: dict) -> Entry:
    snap = json.loads(row.pop("snapshot_json"))
    return Entry(snapshot=snap, **row)


def get(store: Store, entry_id: int) -> Entry:
    row = store.one(_SELECT + " WHERE j.id = ?", [parse_whole(entry_id, "journal entry id", field="entry")])
    if row is None:
        raise NotFound("journal entry", entry_id)
    return _entry(row)


def corrections_of(store: Store, entry_id: int) -> list[Entry]:
    """Entries that correct ``entry_id``, oldest first."""
    return [_entry(r) for r in store.rows(_SELECT + " WHERE j.corrects_id = ? ORDER BY j.id",
                                          [entry_id])]


def _since_text(since: date | datetime | str | None) -> str | None:
    if since is None:
        return None
    if isinstance(since, datetime):
        return iso_utc(since)
    if isinstance(since, date):
        return since.isoformat()
    try:
        parsed = date.fromisoformat(since.strip())
    except ValueError:
        try:
            return iso_utc(datetime.fromisoformat(since.strip()))
        except ValueError:
            shaped = _DATE_SHAPE.match(since.strip())   # 2026-02-30: the shape, no such day
            raise InvalidInput("date", since, "is not a real date" if shaped else
                               "expected YYYY-MM-DD", field="since") from None
    return parsed.isoformat()


_DATE_SHAPE = re.compile(r"\d{4}-\d{2}-\d{2}\Z")


def _filters(kind: str | None, since) -> tuple[list[str], list]:
    """SQL conditions and parameters for the kind and since-date filters."""
    where, params = [], []
    if kind is not None:
        where.append("j.kind = ?")
        params.append(_check_kind(kind))
    since_text = _since_text(since)
    if since_text is not None:
        where.append("j.recorded_at >= ?")
        params.append(since_text)
    return where, params


NEWEST_FIRST = " ORDER BY j.recorded_at DESC, j.id DESC"
"""The journal's order: by the time each entry records, newest first (entries recorded
after the event, with an earlier time, take their place by that time); the id breaks
ties.  The time indexes (``journal_entries_by_time``, ``_by_kind``, ``_by_bottle``,
``_by_container``) hold their rows in this order, so a page never sorts."""


def entries(store: Store, *, kind: str | None = None, since: date | datetime | str | None = None,
            bottle_id: int | None = None, container_id: int | None = None,
            before_id: int | None = None, limit: int | None = 100) -> list[Entry]:
    """Entries newest first by their recorded time (:data:`NEWEST_FIRST`), optionally
    filtered; ``before_id`` gives the entries that come after entry ``before_id`` in that
    order (keyset paging: pass the last entry of a page for the next one)."""
    where, params = _filters(kind, since)
    if bottle_id is not None:
        where.append("j.bottle_id = ?")
        params.append(bottle_id)
    if container_id is not None:
        where.append("j.container_id = ?")
        params.append(container_id)
    if before_id is not None:
        when = store.scalar("SELECT recorded_at FROM journal_entries WHERE id = ?", [before_id])
        if when is None:
            raise NotFound("journal entry", before_id)
        # the first condition alone lets the index range start at the anchor
        where.append("j.recorded_at <= ? AND (j.recorded_at < ? OR j.id < ?)")
        params += [when, when, before_id]
    sql = _SELECT + (" WHERE " + " AND ".join(where) if where else "") + NEWEST_FIRST
    if limit is not None:
        if limit <= 0:
            raise InvalidInput("limit", limit, "must be positive", field="limit")
        sql += f" LIMIT {int(limit)}"
    return [_entry(r) for r in store.rows(sql, params)]


def count(store: Store, *, kind: str | None = None) -> int:
    if kind is None:
        return int(store.scalar("SELECT count(*) FROM journal_entries"))
    return int(store.scalar("SELECT count(*) FROM journal_entries WHERE kind = ?",
                            [_check_kind(kind)]))


def iter_all(store: Store, *, kind: str | None = None,
             since: date | datetime | str | None = None, batch: int = 1000):
    """Every entry oldest first, read in short batches (for export)."""
    where, params = _filters(kind, since)
    where, params = ["j.id > ?", *where], [0, *params]
    sql = _SELECT + " WHERE " + " AND ".join(where) + f" ORDER BY j.id LIMIT {int(batch)}"
    while True:
        rows = store.rows(sql, params)
        yield from (_entry(r) for r in rows)
        if len(rows) < batch:
            return
        params[0] = rows[-1]["id"]


def local_time(recorded_at: str) -> str:
    """A stored UTC time shown in the local time zone, to the minute."""
    try:
        moment = datetime.fromisoformat(recorded_at)
    except ValueError:
        return recorded_at
    return moment.astimezone().strftime("%Y-%m-%d %H:%M")


def verify(store: Store, *, expected_head: str | None = None) -> chain.Verdict:
    """Check the guards and the whole record chain (journal and waste additions), in one
    read snapshot; ``expected_head`` is a link hash kept from an earlier export."""
    with store.reading():
        return chain.verify(store, expected_head=expected_head)


def head(store: Store) -> chain.Head:
    """The record chain's last link (printed with every export)."""
    return chain.head(store)


def restore_guards(store: Store) -> list[str]:
    """Put back every guard trigger that is missing or altered, and journal what was done
    (a ``note`` entry naming each trigger).  Returns the names restored (none: nothing done).

    For the storeroom administrator, after ``carboy journal verify`` and a look at what
    changed: the chain keeps showing any record that was altered while unguarded.
    """
    def work(s: Store) -> list[str]:
        broken = sorted({p.guard for p in chain.guard_problems(s)})
        for name in broken:
            s.execute(f"DROP TRIGGER IF EXISTS {name}")
            s.execute(chain.GUARDS[name])
        if broken:
            append_in(s, "note", summary="guard triggers restored: " + ", ".join(broken),
                      snapshot={"restored_guards": broken})
        return broken

    restored = store.repair_guards(work)
    store.trust_problems = chain.tail_problems(store)
    return restored
