"""The strength check of every bottle in use, as one read of the stock.

:func:`check` lists what is expired, off-label, overdue, never standardized or expiring
soon (:func:`carboy.store.strength.check_row` decides each flag, one bottle at a time).
A storeroom of 100,000 bottles is checked in well under a second: the database reads
every bottle in use once, in one statement, with the re-check interval in force joined
in; by default it also leaves out the bottles that cannot carry a flag (a condition
that is looser than :func:`~carboy.store.strength.check_row`, never stricter: a date
the database cannot read is always handed over), so Python builds records only for
the bottles it lists.
"""

from __future__ import annotations

import contextlib
import gc
from collections.abc import Iterator
from datetime import date, timedelta

from carboy.store import rules
from carboy.store.bottle_fields import Bottle
from carboy.store.db import Store
from carboy.store.statuses import BottleStatus
from carboy.store.strength import (
    EXPIRES_SOON_DAYS,
    OFF_LABEL_TOLERANCE,
    CheckRow,
    check_row,
    strength_status,
)

COLUMNS = ("id", "compound_key", "compound_name", "strength_unit", "label_strength",
           "current_strength", "measured_at", "measured_how", "restandardize_days",
           "amount_unit", "amount_left", "container_size", "location", "lot", "received_on",
           "opened_on", "expires_on", "status", "notes", "added_at", "added_by")
"""The stored columns of a bottle, in :class:`~carboy.store.bottle_fields.Bottle`'s order."""

JULIAN_DAY_OF_ORDINAL_0 = 1721424.5
"""``julianday()`` of the day before 0001-01-01 (proleptic Gregorian): SQLite's Julian day
of a date is its :meth:`datetime.date.toordinal` plus this."""
_ISO_DAY = "[0-9][0-9][0-9][0-9]-[0-9][0-9]-[0-9][0-9]*"
_RECHECK = ("coalesce(nullif(b.restandardize_days, 0), "
            "CASE WHEN b.strength_unit = 'M' THEN {by_compound} END)")
_MAY_BE_FLAGGED = f"""(
    b.expires_on < :after_soon
    OR abs(b.current_strength - b.label_strength) > :tolerance * b.label_strength
    OR (recheck IS NOT NULL
        AND coalesce(:today_jd - julianday(substr(b.measured_at, 1, 10)) > recheck - 1, 1))
    OR b.expires_on NOT GLOB '{_ISO_DAY}')"""
"""Bottles that may carry a flag: a looser condition than check_row's (a margin on every
comparison; a never-measured bottle, or a date not written as carboy writes it, always
passes).  The cheapest tests come first: SQLite stops at the first that holds."""


def _sql(in_force: rules.Rules, everything: bool) -> tuple[str, dict]:
    """The query, and the parameters of the re-check intervals in force (grouped by
    interval: one ``IN`` list each, which SQLite looks up rather than scans)."""
    by_days: dict[int, list[str]] = {}
    for key, days in sorted(in_force.recheck_days.items()):
        by_days.setdefault(int(days), []).append(key)
    params: dict = {}
    branches = []
    for n, (days, keys) in enumerate(sorted(by_days.items())):
        names = [f"k{n}_{i}" for i in range(len(keys))]
        params |= dict(zip(names, keys)) | {f"d{n}": days}
        branches.append(f"WHEN b.compound_key IN ({', '.join(':' + m for m in names)}) "
                        f"THEN :d{n}")
    by_compound = f"CASE {' '.join(branches)} END" if branches else "NULL"
    cols = ", ".join("b." + c for c in COLUMNS)
    sql = (f"SELECT {cols}, {_RECHECK.format(by_compound=by_compound)} AS recheck "
           "FROM stock_bottles b WHERE b.status = :in_use"
           + ("" if everything else f" AND {_MAY_BE_FLAGGED}") + " ORDER BY b.id")
    return sql, params


def _bottle(row: tuple, today: date, in_use: BottleStatus) -> Bottle:
    recheck = row[-1]
    status = strength_status(label_strength=row[4], current_strength=row[5],
                             measured_at=row[6], restandardize_days=recheck,
                             expires_on=row[16], today=today)
    return Bottle.from_stored((*row[:17], in_use, *row[18:21], status, recheck))


@contextlib.contextmanager
def _collector_paused() -> Iterator[None]:
    """Python's cyclic garbage collector paused while a long list of records without
    cycles is built: it would otherwise scan the growing list again and again (twice the
    time at 100,000 bottles, more in the app's larger heap).  It is switched back on
    afterwards if it was on."""
    was_on = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was_on:
            gc.enable()


def check(store: Store, *, today: date | None = None, everything: bool = False,
          batch: int = 5000) -> list[CheckRow]:
    """The strength check of every bottle in use: by default only those with a flag,
    most serious first (expired, off-label, overdue or never standardized, expiring soon);
    with ``everything``, every bottle in use.  ``batch`` rows are fetched at a time."""
    day = today or date.today()
    sql, params = _sql(rules.load(store), everything)
    params |= {"in_use": BottleStatus.IN_USE.value, "tolerance": OFF_LABEL_TOLERANCE,
               "after_soon": (day + timedelta(days=EXPIRES_SOON_DAYS + 1)).isoformat(),
               "today_jd": day.toordinal() + JULIAN_DAY_OF_ORDINAL_0}
    rows: list[CheckRow] = []
    with store.reading(), _collector_paused():
        cur = store.execute(sql, params)
        try:
            while chunk := cur.fetchmany(batch):
                for row in chunk:
                    found = check_row(_bottle(row, day, BottleStatus.IN_USE), day)
                    if everything or found.flags:
                        rows.append(found)
        finally:
            cur.close()
        rows.sort(key=lambda r: r.rank)
    return rows
