"""What keeps the store fast at a million rows, checked for correctness (the timings
themselves are tests/benchmarks/bench_store.py's): the journal in time order through its
indexes, the strength check's one read, the statistics carboy keeps, migration 0005."""

from __future__ import annotations

import sqlite3
import time
from datetime import UTC, date, datetime, timedelta

import pytest
import sqlite_utils

from carboy.store import journal, migrations, rules, stock, strength_check
from carboy.store.db import open_database
from carboy.store.strength import check_row

T0 = datetime(2025, 3, 1, 9, 0, tzinfo=UTC)


def _journal(store):
    """Entries written in id order whose times are not: some recorded after the event."""
    offsets_h = [0, 5, 2, 9, 9, 1, 30, 12, 12, 7]  # hours after T0, in the order written
    kinds = ["note", "preparation", "note", "standardization", "note", "receipt",
             "preparation", "note", "note", "preparation"]
    for kind, hours in zip(kinds, offsets_h):
        journal.append(store, kind, summary=f"{kind} +{hours} h", who="t",
                       when=T0 + timedelta(hours=hours))
    return sorted(((T0 + timedelta(hours=h)).isoformat(), i + 1)
                  for i, h in enumerate(offsets_h))


def _newest_first(expected):
    return [i for _at, i in reversed(expected)]


def test_the_journal_is_in_time_order_newest_first(store):
    expected = _journal(store)
    got = [e.id for e in journal.entries(store)]
    assert got == _newest_first(expected)
    times = [e.recorded_at for e in journal.entries(store)]
    assert times == sorted(times, reverse=True)
    assert got != sorted(got, reverse=True)  # id order would differ: the test can fail


@pytest.mark.parametrize("kind", [None, "note", "preparation", "disposal"])
@pytest.mark.parametrize("page", [1, 2, 3])
def test_pages_after_an_entry_cover_the_journal_once_in_time_order(store, kind, page):
    _journal(store)
    everything = [e.id for e in journal.entries(store, kind=kind)]
    seen, before = [], None
    while True:
        got = journal.entries(store, kind=kind, before_id=before, limit=page)
        if not got:
            break
        seen += [e.id for e in got]
        before = got[-1].id
    assert seen == everything


def test_filters_absent_kinds_and_future_dates(store):
    _journal(store)
    assert journal.entries(store, kind="disposal") == []
    assert journal.entries(store, since="2099-01-01") == []
    assert journal.entries(store, kind="note", since="2099-01-01") == []
    later = journal.entries(store, since=(T0 + timedelta(hours=9)).isoformat())
    assert {e.recorded_at >= (T0 + timedelta(hours=9)).isoformat() for e in later} == {True}
    assert len(later) == 5


def _plan(store, where, params):
    sql = journal._SELECT + where + journal.NEWEST_FIRST + " LIMIT 51"
    return [r["detail"] for r in store.rows("EXPLAIN QUERY PLAN " + sql, params)]


@pytest.mark.parametrize(("where", "params", "index"), [
    ("", [], "journal_entries_by_time"),
    (" WHERE j.kind = ?", ["note"], "journal_entries_by_kind (kind=?)"),
    (" WHERE j.recorded_at >= ?", ["2025-01-01"], "journal_entries_by_time (recorded_at>?)"),
    (" WHERE j.kind = ? AND j.recorded_at >= ?", ["note", "2025-01-01"],
     "journal_entries_by_kind (kind=? AND recorded_at>?)"),
    (" WHERE j.recorded_at <= ? AND (j.recorded_at < ? OR j.id < ?)", ["2025", "2025", 9],
     "journal_entries_by_time (recorded_at<?)"),
    (" WHERE j.kind = ? AND j.recorded_at <= ? AND (j.recorded_at < ? OR j.id < ?)",
     ["note", "2025", "2025", 9], "journal_entries_by_kind (kind=? AND recorded_at<?)"),
    (" WHERE j.bottle_id = ?", [1], "journal_entries_by_bottle (bottle_id=?)"),
    (" WHERE j.container_id = ?", [1], "journal_entries_by_container (container_id=?)"),
])
@pytest.mark.parametrize("statistics", [False, True])
def test_every_journal_page_is_an_index_range_without_a_sort(db_path, where, params, index,
                                                             statistics):
    """With or without planner statistics, a page of the journal reads one index range
    in time order (no sort, no scan of the table: flat at a million entries)."""
    store = open_database(db_path)
    _journal(store)
    if statistics:
        store.close()  # carboy's PRAGMA optimize gathers them
        store = open_database(db_path)
        assert store.scalar("SELECT count(*) FROM sqlite_stat1") > 0
    plan = _plan(store, where, params)
    store.close()
    assert plan[0] in (f"SEARCH j USING INDEX {index}", f"SCAN j USING INDEX {index}"), plan
    assert not any("TEMP B-TREE" in p for p in plan), plan


# -- the strength check --------------------------------------------------------------------

TODAY = date(2025, 6, 1)


def _bottle(store, **fields):
    base = {"compound": "NaOH", "label_strength": "0.1 M", "container_size": "1 L"}
    base.update(fields)
    return stock.add(store, base, who="t")


def _edge_bottles(store):
    """Bottles on each edge of each flag (a day either side, 2 % either side)."""
    day = TODAY.isoformat
    for n in (29, 30, 31, -1, 0, 1):  # expiry relative to today
        _bottle(store, compound="HCl", label_strength="37 %", expires_on=(
            TODAY + timedelta(days=n)).isoformat())
    for every, ago in ((14, 13), (14, 14), (14, 15), (30, 31)):
        bid = _bottle(store, restandardize_days=str(every))
        stock.record_standardization(store, bid, "0.1 M", method="t", who="t", when=datetime(
            *(TODAY - timedelta(days=ago)).timetuple()[:3], 23, 59, tzinfo=UTC))
    for measured in ("0.098 M", "0.0979 M", "0.102 M", "0.1021 M"):
        bid = _bottle(store, compound="HCl", label_strength="0.1 M")
        stock.record_standardization(store, bid, measured, method="t", who="t")
    _bottle(store)  # NaOH: the default 14-day rule, never standardized
    _bottle(store, compound="HCl", label_strength="0.1 M")  # no rule for HCl by default
    _bottle(store, compound="NaOH", label_strength="50 %")  # a %w/w bottle: no rule
    rules.set_recheck(store, "HCl", 7, who="t")  # a storeroom's own rule joins in
    gone = _bottle(store, expires_on=day())
    stock.set_status(store, gone, "disposed", who="t")
    # dates not written as carboy writes them: always handed over, check_row decides
    store.write(lambda s: s.execute(
        "UPDATE stock_bottles SET expires_on = '20250101', measured_at = 'last week' "
        "WHERE id = (SELECT max(id) FROM stock_bottles WHERE status = 'in-use')"))


def test_the_strength_check_lists_exactly_what_check_row_flags(store):
    _edge_bottles(store)
    one_by_one = [check_row(b, TODAY) for b in stock.all_bottles(store, today=TODAY,
                                                                   status="in-use")]
    flagged = sorted((r for r in one_by_one if r.flags), key=lambda r: r.rank)
    assert stock.check(store, today=TODAY) == flagged
    assert stock.check(store, today=TODAY, everything=True) == sorted(
        one_by_one, key=lambda r: r.rank)
    assert 0 < len(flagged) < len(one_by_one)  # both sides of the filter are exercised


def test_the_strength_check_reads_the_stock_once_and_leaves_the_collector_on(store):
    import gc

    _edge_bottles(store)
    statements = []
    store.conn.set_trace_callback(statements.append)
    stock.check(store, today=TODAY)
    store.conn.set_trace_callback(None)
    assert sum("FROM stock_bottles" in s for s in statements) == 1
    assert gc.isenabled()


def test_julian_day_constant_matches_sqlite(store):
    got = store.scalar("SELECT julianday('2025-06-01')")
    assert got == TODAY.toordinal() + strength_check.JULIAN_DAY_OF_ORDINAL_0


# -- statistics kept by carboy ----------------------------------------------------------------

def test_closing_keeps_the_planners_statistics(db_path):
    store = open_database(db_path)
    _journal(store)
    journal.entries(store, kind="note")
    store.close()
    with sqlite3.connect(db_path) as raw:
        tables = {r[0] for r in raw.execute("SELECT tbl FROM sqlite_stat1")}
    assert "journal_entries" in tables


def test_closing_never_waits_for_another_writer(db_path):
    store = open_database(db_path)
    journal.entries(store, kind="note")
    other = sqlite3.connect(db_path, isolation_level=None)
    other.execute("BEGIN IMMEDIATE")
    try:
        started = time.perf_counter()
        store.close()
        assert time.perf_counter() - started < 1.0  # the busy timeout is 5 s
    finally:
        other.execute("ROLLBACK")
        other.close()


# -- migration 0005 on a database from before it ----------------------------------------------

def test_an_older_database_gets_the_new_index_counts_and_order(tmp_path):
    path = tmp_path / "old.db"
    db = sqlite_utils.Database(path)
    migrations.migrations.apply(db, stop_before="0005_speed_at_scale")
    for n, (key, name, status) in enumerate([("H2SO4", "sulfuric acid", "in-use"),
                                             ("NaOH", "sodium hydroxide", "empty"),
                                             ("HCl", "hydrochloric acid", "in-use")]):
        db.execute("INSERT INTO stock_bottles (compound_key, compound_name, strength_unit, "
                   "label_strength, amount_unit, amount_left, container_size, location, lot, "
                   "status, added_at, added_by) VALUES (?, ?, 'M', 1, 'L', 1, 1, 'Cabinet', "
                   "?, ?, '2025-01-01T00:00:00.000+00:00', 'old')", [key, name, f"FW-{n}",
                                                                     status])
    db.conn.commit()
    db.close()
    store = open_database(path)
    try:
        assert "0005_speed_at_scale" in migrations.applied_names(store)
        assert stock.count_upto(store).n == 3
        assert stock.count_upto(store, status="empty").n == 1
        assert [b.compound_key for b in stock.page(store, "sulph").bottles] == ["H2SO4"]
        assert [b.compound_key for b in stock.page(store, "cab", status="empty").bottles] == \
            ["NaOH"]
        assert store.scalar("SELECT count(*) FROM stock_bottles_fts WHERE "
                            "stock_bottles_fts MATCH 'status : disposed'") == 0
    finally:
        store.close()


def test_the_demo_storeroom_is_written_in_one_transaction(tmp_path, monkeypatch):
    from carboy.store import demo

    statements: list[str] = []
    real_open = demo.open_database

    def traced(path, *args, **kwargs):
        store = real_open(path, *args, **kwargs)
        store.conn.set_trace_callback(statements.append)
        return store

    monkeypatch.setattr(demo, "open_database", traced)
    demo.create_demo_database(tmp_path / "demo.db")
    begins = [s for s in statements if s.upper().startswith("BEGIN")]
    commits = [s for s in statements if s.upper().startswith("COMMIT")]
    assert (len(begins), len(commits)) == (1, 1)
    assert any(s.upper().startswith("SAVEPOINT") for s in statements)  # the steps nest
