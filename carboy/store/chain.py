"""Tamper evidence: a hash chain over the journal and the waste additions, and the guards.

Every journal entry and every waste addition gets one link in ``record_chain``, in the
order they were written (one chain for both tables)::

    content_sha256 = SHA-256(canonical JSON of the row)
    link_sha256    = SHA-256(previous link_sha256 + ":" + content_sha256)

The first link's previous hash is :data:`GENESIS`.  The canonical JSON of a row is its
table name and chained columns (:data:`CHAINED`), keys sorted, no spaces, UTF-8, a
NULL column left out, read back from the database after the insert (so what is hashed
is exactly what is stored).  Leaving NULLs out lets a later migration add a nullable
column to a chained table without changing the hash of older rows.

The **guards** are carboy's triggers (:data:`GUARDS`): UPDATE and DELETE are refused on
the three tables, and so is an INSERT that reuses an id (that is how ``REPLACE INTO``
and ``INSERT OR REPLACE`` rewrite a row; :mod:`carboy.store.db` also turns
``recursive_triggers`` on, so a REPLACE on carboy's own connection fires the DELETE
guard).  :func:`guard_problems` compares the triggers in the file with these texts.

What this detects and what it cannot is said in docs/shared-server.md: anyone who can
write the file can also rebuild the whole chain, so the check proves that history is
unchanged only up to a chain head kept elsewhere (an export, a printed record).

This module reads through any object with ``rows(sql, params)`` (a Store, or a
sqlite-utils Database wrapped by :class:`_Rows`), so the migration that builds the
chain of an existing file uses the same code as every later check.
"""

from __future__ import annotations

import hashlib
import json
from collections.abc import Iterator, Mapping
from dataclasses import dataclass, field
from typing import Any, Protocol

GENESIS = "0" * 64
CHAIN_TABLE = "record_chain"
FORMAT = 1
"""Version of the canonical form; a change of it needs a migration that says so."""

CHAINED: dict[str, tuple[str, ...]] = {
    "journal_entries": ("id", "kind", "recorded_at", "recorded_by", "origin", "bottle_id",
                        "container_id", "corrects_id", "summary", "snapshot_json"),
    "waste_additions": ("id", "container_id", "compound_key", "conc_molar", "volume_l",
                        "mass_g", "entered", "composition_json", "moles_json",
                        "supersedes_id", "added_at", "added_by", "origin", "note"),
}
"""The columns each chained table's hash covers (every column it has; a test checks)."""

KIND_OF = {"journal_entries": "journal entry", "waste_additions": "waste addition"}
TAIL_CHECKED_AT_OPEN = 16
"""Links whose rows are checked again each time the database is opened."""

_REFUSE = "BEGIN SELECT RAISE(ABORT, 'carboy: {what} are append-only; {hint}'); END"
_CORRECT = "record a correction instead"
_REUSE = "an id is never reused"


def _guard(name: str, event: str, table: str, what: str, hint: str) -> tuple[str, str]:
    key = _key(table)
    # new.id is -1 in a BEFORE INSERT trigger when SQLite assigns the id itself
    when = (f" WHEN new.{key} > 0 AND EXISTS (SELECT 1 FROM {table} WHERE {key} = new.{key})"
            if event == "INSERT" else "")
    return name, (f"CREATE TRIGGER {name} BEFORE {event} ON {table}{when}\n"
                  + _REFUSE.format(what=what, hint=hint))


def _key(table: str) -> str:
    return "seq" if table == CHAIN_TABLE else "id"


_GUARDED = (("journal_entries", "journal entries"), ("waste_additions", "waste additions"),
            (CHAIN_TABLE, "chain links"))
GUARDS: dict[str, str] = dict(
    g for table, what in _GUARDED for g in (
        _guard(f"{table}_no_update", "UPDATE", table, what, _CORRECT),
        _guard(f"{table}_no_delete", "DELETE", table, what, _CORRECT),
        _guard(f"{table}_no_reused_id", "INSERT", table, what, _REUSE)))
"""Trigger name -> its SQL exactly as carboy creates it (migrations 0001 and 0003)."""


class _Reader(Protocol):
    def rows(self, sql: str, params: Any = ...) -> list[dict]: ...


class Rows:
    """``rows()`` over a sqlite-utils Database (inside a migration, before a Store exists)."""

    def __init__(self, db) -> None:
        self.db = db

    def rows(self, sql: str, params: Any = ()) -> list[dict]:
        cur = self.db.execute(sql, params)
        names = [d[0] for d in cur.description or ()]
        return [dict(zip(names, r)) for r in cur.fetchall()]


# -- hashing ---------------------------------------------------------------------------------

def canonical(table: str, row: Mapping[str, Any]) -> bytes:
    """The bytes hashed for one row (see the module notes)."""
    content = {c: row[c] for c in CHAINED[table] if row.get(c) is not None}
    content["~table"] = table
    return json.dumps(content, sort_keys=True, separators=(",", ":"), ensure_ascii=False,
                      allow_nan=False).encode("utf-8")


def content_hash(table: str, row: Mapping[str, Any]) -> str:
    return hashlib.sha256(canonical(table, row)).hexdigest()


def link_hash(previous: str, content: str) -> str:
    return hashlib.sha256(f"{previous}:{content}".encode("ascii")).hexdigest()


def _row(reader: _Reader, table: str, record_id: int) -> dict | None:
    cols = ", ".join(CHAINED[table])
    found = reader.rows(f"SELECT {cols} FROM {table} WHERE id = ?", [record_id])
    return found[0] if found else None


def _last_link(reader: _Reader) -> dict | None:
    found = reader.rows(f"SELECT seq, link_sha256 FROM {CHAIN_TABLE} ORDER BY seq DESC LIMIT 1")
    return found[0] if found else None


def link(writer, table: str, record_id: int) -> str:
    """Chain the row ``record_id`` of ``table`` just inserted; returns its link hash.

    ``writer`` has ``rows()`` and ``execute()`` and is inside the write transaction
    that inserted the row (so no other writer can take the same place in the chain).
    """
    row = _row(writer, table, record_id)
    if row is None:  # pragma: no cover - called right after the insert
        raise LookupError(f"{table} {record_id}")
    last = _last_link(writer)
    content = content_hash(table, row)
    new = link_hash(last["link_sha256"] if last else GENESIS, content)
    writer.execute(f"INSERT INTO {CHAIN_TABLE} (record_table, record_id, content_sha256, "
                   "link_sha256) VALUES (?, ?, ?, ?)", [table, record_id, content, new])
    return new


def seal_existing(db) -> int:
    """Chain every row already in the file, oldest first (migration 0003); returns how many."""
    reader = Rows(db)
    stamped = [(r["at"], table, r["id"]) for table, at in
               (("journal_entries", "recorded_at"), ("waste_additions", "added_at"))
               for r in reader.rows(f"SELECT id, {at} AS at FROM {table}")]
    previous = GENESIS
    for _, table, record_id in sorted(stamped):
        content = content_hash(table, _row(reader, table, record_id))
        previous = link_hash(previous, content)
        db.execute(f"INSERT INTO {CHAIN_TABLE} (record_table, record_id, content_sha256, "
                   "link_sha256) VALUES (?, ?, ?, ?)", [table, record_id, content, previous])
    return len(stamped)


# -- checking ---------------------------------------------------------------------------------

@dataclass(frozen=True)
class Head:
    """Where the chain ends: keep it (an export prints it) to check the file against later."""

    links: int
    seq: int
    link_sha256: str

    def as_dict(self) -> dict:
        return {"links": self.links, "seq": self.seq, "link_sha256": self.link_sha256,
                "format": FORMAT}

    def text(self) -> str:
        return f"chain head: link {self.seq} of {self.links}, sha256 {self.link_sha256}"


@dataclass(frozen=True)
class Problem:
    """One place where the file does not match its chain."""

    seq: int | None
    table: str
    record_id: int | None
    what: str
    guard: str = ""
    """The guard trigger at fault (a guard problem), else ``""``."""

    def text(self) -> str:
        where = (f"{KIND_OF.get(self.table, self.table)} {self.record_id}"
                 if self.record_id is not None else self.table)
        at = f" (link {self.seq})" if self.seq is not None else ""
        return f"{where}{at}: {self.what}"

    def as_dict(self) -> dict:
        return {"seq": self.seq, "table": self.table, "record_id": self.record_id,
                "what": self.what, "text": self.text()}


@dataclass
class Verdict:
    """The outcome of :func:`verify`: ``ok`` when every check passed."""

    checked: int = 0
    head: Head | None = None
    problems: list[Problem] = field(default_factory=list)
    expected_head: str | None = None

    @property
    def ok(self) -> bool:
        return not self.problems

    @property
    def first(self) -> Problem | None:
        return self.problems[0] if self.problems else None

    def as_dict(self) -> dict:
        return {"ok": self.ok, "checked": self.checked,
                "head": self.head.as_dict() if self.head else None,
                "first_problem": self.first.as_dict() if self.first else None,
                "problems": [p.as_dict() for p in self.problems[:MAX_LISTED]],
                "problem_count": len(self.problems)}


MAX_LISTED = 50


def head(reader: _Reader) -> Head:
    found = reader.rows(f"SELECT count(*) AS n, coalesce(max(seq), 0) AS seq FROM {CHAIN_TABLE}")
    last = _last_link(reader)
    return Head(int(found[0]["n"]), int(found[0]["seq"]),
                last["link_sha256"] if last else GENESIS)


def guard_problems(reader: _Reader) -> list[Problem]:
    """Each guard trigger that is missing, altered, or on another table."""
    found = {r["name"]: r for r in reader.rows(
        "SELECT name, tbl_name, sql FROM sqlite_master WHERE type = 'trigger'")}
    problems = []
    for name, sql in GUARDS.items():
        table = name.rsplit("_no_", 1)[0]
        have = found.get(name)
        if have is None:
            problems.append(Problem(None, table, None, f"the guard trigger {name} is missing",
                                    name))
        elif have["tbl_name"] != table or _squeeze(have["sql"]) != _squeeze(sql):
            problems.append(Problem(None, table, None, f"the guard trigger {name} is not "
                                    "carboy's own (its SQL was changed)", name))
    return problems


def _squeeze(sql: str | None) -> str:
    return " ".join((sql or "").split())


def _links(reader: _Reader, after_seq: int, batch: int) -> Iterator[dict]:
    while True:
        got = reader.rows(f"SELECT * FROM {CHAIN_TABLE} WHERE seq > ? ORDER BY seq LIMIT ?",
                          [after_seq, batch])
        yield from got
        if len(got) < batch:
            return
        after_seq = got[-1]["seq"]


def _check_link(reader: _Reader, ln: dict, previous: str) -> list[Problem]:
    seq, table, rid = ln["seq"], ln["record_table"], ln["record_id"]
    out = []
    if table not in CHAINED:
        return [Problem(seq, table, rid, "the link names a table carboy does not chain")]
    row = _row(reader, table, rid)
    if row is None:
        out.append(Problem(seq, table, rid, "the record is missing (deleted after it was "
                                            "written)"))
    elif content_hash(table, row) != ln["content_sha256"]:
        out.append(Problem(seq, table, rid, "the record was changed after it was written"))
    if link_hash(previous, ln["content_sha256"]) != ln["link_sha256"]:
        out.append(Problem(seq, table, rid, "the chain is broken here (a link before it was "
                                            "removed or rewritten)"))
    return out


def _unlinked(reader: _Reader) -> list[Problem]:
    """Rows with no link: written past carboy (or their link was deleted)."""
    out = []
    for table in CHAINED:
        for r in reader.rows(f"SELECT t.id FROM {table} t LEFT JOIN {CHAIN_TABLE} c ON "
                             f"c.record_table = ? AND c.record_id = t.id WHERE c.seq IS NULL "
                             f"ORDER BY t.id LIMIT {MAX_LISTED}", [table]):
            out.append(Problem(None, table, r["id"], "the record has no link in the chain "
                               "(written past carboy, or its link was removed)"))
    return out


def verify(reader: _Reader, *, expected_head: str | None = None,
           batch: int = 500) -> Verdict:
    """Check every link against its row and its predecessor, rows without a link, (given)
    that ``expected_head`` — a link hash kept from an earlier export — is still in the
    chain, and the guards.  Problems are listed in that order: the first one names the
    first record that does not match, when there is one."""
    verdict = Verdict(expected_head=expected_head)
    previous, seen_expected = GENESIS, expected_head is None
    for ln in _links(reader, 0, batch):
        verdict.problems += _check_link(reader, ln, previous)
        previous = ln["link_sha256"]
        seen_expected = seen_expected or previous == expected_head
        verdict.checked += 1
    verdict.problems += _unlinked(reader)
    if not seen_expected:
        verdict.problems.append(Problem(None, CHAIN_TABLE, None, f"the kept chain head "
                                        f"{expected_head[:16]}… is not in this chain: the "
                                        "history before it was rewritten"))
    verdict.problems += guard_problems(reader)  # after the records: verify names a record first
    verdict.head = head(reader)
    return verdict


def tail_problems(reader: _Reader, count: int = TAIL_CHECKED_AT_OPEN) -> list[Problem]:
    """The quick check made at every open: guards, the last ``count`` links, and rows
    written after the last link."""
    problems = guard_problems(reader)
    last = _last_link(reader)
    if last is not None:
        start = max(last["seq"] - count, 0)
        before = reader.rows(f"SELECT link_sha256 FROM {CHAIN_TABLE} WHERE seq <= ? "
                             "ORDER BY seq DESC LIMIT 1", [start])
        previous = before[0]["link_sha256"] if before else GENESIS
        for ln in _links(reader, start, count + 1):
            problems += _check_link(reader, ln, previous)
            previous = ln["link_sha256"]
    for table in CHAINED:
        newest = reader.rows(f"SELECT max(id) AS id FROM {table}")[0]["id"]
        if newest is not None and not reader.rows(
                f"SELECT 1 FROM {CHAIN_TABLE} WHERE record_table = ? AND record_id = ?",
                [table, newest]):
            problems.append(Problem(None, table, newest, "the newest record has no link in "
                                    "the chain"))
    return problems
