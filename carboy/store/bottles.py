"""Stock bottles in the database: adding, standardizing, status, and the paged, searched list.

The stock list is paged with keysets on the bottle id (``page(after_id=...)``) and
searched through an FTS5 index (compound key and name, location, lot, and the catalog's
names of each compound: :mod:`carboy.store.stock_search`), so any text a user types is
safe.  Counts are kept by the database for the whole list and each status, and a
search's count stops at :data:`~carboy.store.stock_search.COUNT_BOUND`.
"""

from __future__ import annotations

import math
from collections.abc import Iterator, Mapping
from dataclasses import dataclass
from datetime import date, datetime
from typing import Any

from carboy.errors import InvalidInput
from carboy.model import numbers
from carboy.store import journal, rules, stock_search
from carboy.store.bottle_fields import Bottle, validate
from carboy.store.compounds import catalog_for
from carboy.store.db import Store, current_user, stamp
from carboy.store.errors import NotFound
from carboy.store.readers import format_strength, parse_strength, parse_whole
from carboy.store.statuses import BottleStatus
from carboy.store.stock_search import COUNT_BOUND, Count, Search
from carboy.store.strength import strength_status

PAGE_SIZE = 50


@dataclass(frozen=True)
class Page:
    """A page of the stock list; pass ``next_after`` back as ``after_id`` for the next one."""

    bottles: list[Bottle]
    next_after: int | None
    prev_before: int | None


# -- writes ---------------------------------------------------------------------------

_COLUMNS = ("compound_key", "compound_name", "strength_unit", "label_strength",
            "current_strength", "measured_at", "measured_how", "restandardize_days",
            "amount_unit", "amount_left", "container_size", "location", "lot", "received_on",
            "opened_on", "expires_on", "status", "notes", "added_at", "added_by")
_INSERT = (f"INSERT INTO stock_bottles ({', '.join(_COLUMNS)}) "
           f"VALUES ({', '.join('?' for _ in _COLUMNS)})")


def insert_in(store: Store, columns: Mapping[str, Any], *, who: str | None = None,
              when: datetime | None = None) -> int:
    """Insert validated columns (from :func:`validate`); caller is inside ``Store.write``."""
    row = dict(columns)
    row.setdefault("added_at", stamp(when))
    row.setdefault("added_by", who or current_user())
    cur = store.execute(_INSERT, [row.get(c) for c in _COLUMNS])
    return int(cur.lastrowid)


def add(store: Store, fields: Mapping[str, Any], *, who: str | None = None,
        when: datetime | None = None) -> int:
    """Validate and add one bottle, with a ``receipt`` journal entry; returns the bottle id."""
    columns = validate(fields, catalog_for(store))

    def work(s: Store) -> int:
        bottle_id = insert_in(s, columns, who=who, when=when)
        journal.append_in(s, "receipt", summary=f"bottle {bottle_id} added: "
                          f"{columns['compound_key']} "
                          f"{format_strength(columns['label_strength'], columns['strength_unit'])}",
                          snapshot={"bottle": columns}, bottle_id=bottle_id, who=who, when=when)
        return bottle_id

    return store.write(work)


def _measured(bottle: Bottle, strength: str | float) -> float:
    if isinstance(strength, str):
        value, unit = parse_strength(strength, "measured strength", field="strength")
        if unit != bottle.strength_unit:
            raise InvalidInput("measured strength", strength,
                               f"must be in the label's unit ({bottle.strength_unit})",
                               field="strength")
        return value
    value = float(strength)
    if not math.isfinite(value) or value <= 0:
        raise InvalidInput("measured strength", strength, "must be a positive number",
                           field="strength")
    return value


def record_standardization(store: Store, bottle_id: int, strength: str | float, *,
                           method: str, snapshot: Mapping | None = None,
                           who: str | None = None, when: datetime | None = None) -> int:
    """Set a bottle's measured strength and journal it, in one transaction; returns the entry id.

    ``strength`` is text (``'0.0987 M'``) or a number in the bottle's own unit.
    """
    bottle = get(store, bottle_id)
    value = _measured(bottle, strength)
    if not method or not method.strip():
        raise InvalidInput("method", method, "say how the strength was measured", field="method")
    measured_at = stamp(when)

    def work(s: Store) -> int:
        s.execute("UPDATE stock_bottles SET current_strength = ?, measured_at = ?, "
                  "measured_how = ? WHERE id = ?", [value, measured_at, method.strip(), bottle.id])
        snap = {"label_strength": bottle.label_strength, "previous_strength":
                bottle.current_strength, "measured_strength": value,
                "unit": bottle.strength_unit, "method": method.strip(),
                **(dict(snapshot) if snapshot else {})}
        return journal.append_in(
            s, "standardization", bottle_id=bottle.id, snapshot=snap, who=who, when=when,
            summary=f"bottle {bottle.id} {bottle.compound_key} standardized: "
                    f"{numbers.strength(value, bottle.strength_unit)}")

    return store.write(work)


def set_status(store: Store, bottle_id: int, status: str, *, note: str = "",
               who: str | None = None, when: datetime | None = None) -> int | None:
    """Mark a bottle ``in-use``, ``empty`` or ``disposed`` (disposal is journaled)."""
    target = BottleStatus.parse(status)
    bottle = get(store, bottle_id)

    def work(s: Store) -> int | None:
        s.execute("UPDATE stock_bottles SET status = ? WHERE id = ?", [target, bottle.id])
        if target.is_disposal:
            return journal.append_in(
                s, "disposal", bottle_id=bottle.id, who=who, when=when,
                summary=f"bottle {bottle.id} {bottle.compound_key} {target.words}",
                snapshot={"previous_status": bottle.status, "note": note})
        return None

    return store.write(work)


# -- reads ----------------------------------------------------------------------------

_BOTTLE_COLUMNS = ("id",) + _COLUMNS


def effective_recheck(row: Mapping[str, Any], in_force: rules.Rules | None) -> int | None:
    """The bottle's own interval, else its compound's rule (molar solutions only)."""
    if row["restandardize_days"]:
        return int(row["restandardize_days"])
    if in_force is None or row["strength_unit"] != "M":
        return None
    return in_force.recheck_for(row["compound_key"])


def _bottle(row: Mapping[str, Any], today: date, in_force: rules.Rules | None = None) -> Bottle:
    days = effective_recheck(row, in_force)
    status = strength_status(label_strength=row["label_strength"],
                             current_strength=row["current_strength"],
                             measured_at=row["measured_at"],
                             restandardize_days=days,
                             expires_on=row["expires_on"], today=today)
    columns = {c: row[c] for c in _BOTTLE_COLUMNS}
    columns["status"] = BottleStatus(columns["status"])
    return Bottle(**columns, strength_status=status, recheck_days=days)


def get(store: Store, bottle_id: int | str, *, today: date | None = None) -> Bottle:
    bid = parse_whole(bottle_id, "bottle id", field="bottle")
    row = store.one(f"SELECT {', '.join(_BOTTLE_COLUMNS)} FROM stock_bottles WHERE id = ?",
                    [bid])
    if row is None:
        raise NotFound("stock bottle", bid)
    return _bottle(row, today or date.today(), rules.load(store))


def _status_filter(status: str | None) -> BottleStatus | None:
    return None if status is None else BottleStatus.parse(status)


def _conditions(found: Search, status: BottleStatus | None, *,
                rows: bool = True) -> tuple[str, str, list[str], list]:
    """The FROM clause, the id column it pages on, and the conditions of a search with
    their parameters (``rows`` False: only counted, the bottles themselves not read).
    With words to match, the search index drives, the status among its conditions."""
    where, params = [], []
    if found.match:
        match = found.match
        if status is not None:
            match = f"({match}) AND {stock_search.status_condition(status)}"
        # CROSS JOIN: the index drives, in id order (never the table asking the index
        # about one bottle at a time)
        source = ("stock_bottles_fts f" if not rows else
                  "stock_bottles_fts f CROSS JOIN stock_bottles b ON b.id = f.rowid")
        where.append("stock_bottles_fts MATCH ?")
        params.append(match)
        key = "f.rowid"
    else:
        source, key = "stock_bottles b", "b.id"
        if status is not None:
            where.append("b.status = ?")
            params.append(status)
    if found.ids:
        where.append(f"{key} IN ({', '.join('?' for _ in found.ids)})")
        params += found.ids
    return source, key, where, params


def _page_query(found: Search, after_id: int | None, before_id: int | None,
                status: BottleStatus | None, limit: int) -> tuple[str, list, bool]:
    """The SQL of one page (one row more than ``limit``), its parameters, and its direction."""
    source, key, clauses, params = _conditions(found, status)
    backwards = before_id is not None and after_id is None
    if after_id is not None:
        clauses.append(f"{key} > ?")
        params.append(int(after_id))
    if backwards:
        clauses.append(f"{key} < ?")
        params.append(int(before_id))
    cols = ", ".join("b." + c for c in _BOTTLE_COLUMNS)
    order = "DESC" if backwards else "ASC"
    sql = (f"SELECT {cols} FROM {source}" + (" WHERE " + " AND ".join(clauses) if clauses
                                              else "")
           + f" ORDER BY {key} {order} LIMIT {int(limit) + 1}")
    return sql, params, backwards


def _search(store: Store, search: str | None) -> Search:
    return stock_search.parse(search, catalog_for(store)) if search else Search()


def page(store: Store, search: str | None = None, *, after_id: int | None = None,
         before_id: int | None = None, limit: int = PAGE_SIZE, status: str | None = None,
         today: date | None = None) -> Page:
    """One page of bottles in id order, optionally matching ``search`` (keyset pagination;
    what a search finds: :mod:`carboy.store.stock_search`).

    ``after_id`` gives the page after that id; ``before_id`` the page before it.
    """
    _check_limit(limit)
    wanted = _status_filter(status)
    if wanted is not None and _kept_count(store, wanted) == 0:
        return Page([], None, None)  # a search would read every match to find none
    sql, params, backwards = _page_query(_search(store, search), after_id, before_id, wanted,
                                         limit)
    rows = store.rows(sql, params)
    more = len(rows) > limit
    rows = rows[:limit]
    if backwards:
        rows.reverse()
    return _page_of(store, rows, more, backwards, after_id is not None, today)


def _check_limit(limit: int) -> None:
    if not 0 < limit <= 1000:
        raise InvalidInput("page size", limit, "expected 1 to 1000", field="limit")


def _page_of(store: Store, rows: list[dict], more: bool, backwards: bool, anchored: bool,
             today: date | None) -> Page:
    day = today or date.today()
    in_force = rules.load(store)
    bottles = [_bottle(r, day, in_force) for r in rows]
    if not bottles:
        return Page([], None, None)
    if backwards:
        return Page(bottles, bottles[-1].id, bottles[0].id if more else None)
    return Page(bottles, bottles[-1].id if more else None, bottles[0].id if anchored else None)


def listing(store: Store, search: str | None = None, *, limit: int = PAGE_SIZE,
            status: str | None = None, today: date | None = None,
            bound: int = COUNT_BOUND) -> tuple[Page, Count]:
    """The first page of a list and how many it holds, as the lists show them ("rows
    1–50 of N"): :func:`page` and :func:`count_upto` in one read of the search index
    (its matching ids, up to ``bound`` and one more, give both)."""
    _check_limit(limit)
    found = _search(store, search)
    wanted = _status_filter(status)
    if not found.match:
        return (page(store, search, limit=limit, status=status, today=today),
                count_upto(store, search, status=status, bound=bound))
    source, key, where, params = _conditions(found, wanted, rows=False)
    if wanted is not None and _kept_count(store, wanted) == 0:
        return Page([], None, None), Count(0)
    cols = ", ".join("b." + c for c in _BOTTLE_COLUMNS)
    rows = store.rows(
        f"WITH hits(id) AS MATERIALIZED (SELECT {key} FROM {source} "
        f"WHERE {' AND '.join(where)} ORDER BY {key} LIMIT {max(int(bound), limit) + 1}), "
        f"shown(id) AS (SELECT id FROM hits ORDER BY id LIMIT {limit + 1}) "
        f"SELECT (SELECT count(*) FROM hits) AS matched, {cols} "
        "FROM shown JOIN stock_bottles b ON b.id = shown.id ORDER BY b.id", params)
    matched = rows[0].pop("matched") if rows else 0
    for row in rows[1:]:
        del row["matched"]
    total = Count(matched) if matched <= bound else Count(bound, exact=False)
    return _page_of(store, rows[:limit], len(rows) > limit, False, False, today), total


def _kept_count(store: Store, status: BottleStatus | None = None) -> int:
    """The bottles the database counts as they change (``stock_bottle_counts``)."""
    if status is None:
        return int(store.scalar("SELECT coalesce(sum(bottles), 0) FROM stock_bottle_counts"))
    return int(store.scalar("SELECT coalesce(sum(bottles), 0) FROM stock_bottle_counts "
                            "WHERE status = ?", [status]))


def count_upto(store: Store, search: str | None = None, *, status: str | None = None,
               bound: int = COUNT_BOUND) -> Count:
    """How many bottles match ``search`` (and ``status``), counting no further than
    ``bound``: exact for the whole list or a status (the database keeps those counts),
    else exact up to ``bound`` and "more than ``bound``" beyond it."""
    wanted = _status_filter(status)
    found = _search(store, search)
    if not found.anything:
        return Count(_kept_count(store, wanted))
    if wanted is not None and _kept_count(store, wanted) == 0:
        return Count(0)
    source, _key, where, params = _conditions(found, wanted, rows=False)
    n = int(store.scalar(f"SELECT count(*) FROM (SELECT 1 FROM {source} "
                         f"WHERE {' AND '.join(where)} LIMIT {int(bound) + 1})", params))
    return Count(n) if n <= bound else Count(bound, exact=False)


def count(store: Store, search: str | None = None, *, status: str | None = None) -> int:
    """How many bottles match ``search`` (and ``status``), exactly (a search that matches
    a large part of a very large stock takes time: the lists use :func:`count_upto`)."""
    wanted = _status_filter(status)
    found = _search(store, search)
    if not found.anything:
        return _kept_count(store, wanted)
    source, _key, where, params = _conditions(found, wanted, rows=False)
    return int(store.scalar(f"SELECT count(*) FROM {source} WHERE {' AND '.join(where)}",
                            params))


def all_bottles(store: Store, *, today: date | None = None, batch: int = 1000,
                status: str | None = None) -> Iterator[Bottle]:
    """Every bottle (optionally of one status) in id order, read in short batches."""
    after = None
    while True:
        got = page(store, after_id=after, limit=batch, status=status, today=today)
        yield from got.bottles
        if got.next_after is None:
            return
        after = got.next_after
