"""The store at scale: every list, filter and search the app and the command line offer,
on a million journal entries and a million bottles; the strength check of 100,000.

Run by hand (pytest does not collect it)::

    python tests/benchmarks/bench_store.py [--dir DIR] [--rounds 9]
    python tests/benchmarks/bench_store.py --bottles 100000 --entries 100000   # quicker

The storerooms are built first (:mod:`scale_data`, in a child process, outside every
timed region; with ``--dir`` they are kept there and reused).  Each figure is the median
of interleaved rounds (:mod:`benchkit`) of exactly the calls a screen or a command makes
(the Stock screen reads a first page and its count, :func:`carboy.store.stock.listing`,
per keystroke; later pages with :func:`~carboy.store.stock.page`).

The figures are taken twice: first on the file as built, which has no planner
statistics, then after carboy has kept its own (every :class:`~carboy.store.db.Store`
runs ``PRAGMA optimize`` as it closes: the benchmark closes a few, as the app does after
each page).  Nothing here runs ANALYZE.  Target: 20 ms for every list, filter and
search; 500 ms for the strength check of 100,000 bottles (the bottles that need
attention, as ``carboy stock check`` and the app list them; ``--all``, which lists every
bottle in use, is reported beside it).  Peak memory is printed beside the times.
"""

from __future__ import annotations

import argparse
import multiprocessing
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
sys.path.insert(0, str(Path(__file__).resolve().parent))

import scale_data  # noqa: E402
from benchkit import Case, interleaved, machine_note, peak_rss_mb, table  # noqa: E402

from carboy.store import journal, stock, waste  # noqa: E402
from carboy.store.db import open_database  # noqa: E402

LIST_TARGET_MS = 20.0
CHECK_TARGET_MS = 500.0
SEARCHES = ("h", "s", "c", "1", "hy", "su", "ca", "fw", "hyd", "hydro", "hydroxide",
            "hydrochloric", "sulph", "caustic soda", "oil of vit", "muriatic", "cab", "cabinet",
            "cabinet 1", "titration bench 3", "fw-2", "fw-23-00", "fw-23-0004", "q", "zz",
            "#123456", "#7 HCl")
"""Search-as-you-type texts: one- and two-letter prefixes, words, the catalog's other
names, lot codes, nothing found, and bottle ids."""


def _build(path: Path, bottles: int, entries: int) -> None:
    t = time.perf_counter()
    parts = scale_data.build(path, bottles=bottles, entries=entries)
    spent = ", ".join(f"{k} {v:.0f} s" for k, v in parts.items())
    print(f"built {path.name} in {time.perf_counter() - t:.0f} s ({spent}); "
          f"{path.stat().st_size / 1e6:.0f} MB", flush=True)


def _ensure(path: Path, bottles: int, entries: int) -> None:
    """Build the file in a child process (its memory is not the measurement's)."""
    if path.exists():
        print(f"reusing {path}")
        return
    child = multiprocessing.get_context("spawn").Process(target=_build,
                                                         args=(path, bottles, entries))
    child.start()
    child.join()
    if child.exitcode != 0:
        raise SystemExit(f"building {path} failed")


def _in_app(store, call):
    """What one app fetch does: its calls in one read transaction."""
    with store.reading():
        return call()


def _journal_cases(store) -> list[Case]:
    first = journal.entries(store, limit=51)
    middle = journal.entries(store, since="2020-06-01", limit=1)[-1]
    # the page a person reaches with n: the entries after the last one shown
    cases = {
        "journal: newest page": dict(),
        "journal: next page": dict(before_id=first[-1].id),
        "journal: a page in the middle": dict(before_id=middle.id),
        "journal: kind (standardization)": dict(kind="standardization"),
        "journal: rare kind (correction)": dict(kind=scale_data.RARE_KIND),
        "journal: absent kind (disposal)": dict(kind=scale_data.ABSENT_KIND),
        "journal: since last month": dict(since="2025-05-01"),
        "journal: since 2017": dict(since="2017-01-01"),
        "journal: since a future date": dict(since="2099-01-01"),
        "journal: kind + since last month": dict(kind="preparation", since="2025-05-01"),
        "journal: kind + since 2017": dict(kind="preparation", since="2017-01-01"),
        "journal: rare kind + since 2024": dict(kind=scale_data.RARE_KIND, since="2024-01-01"),
        "journal: absent kind + since 2017": dict(kind=scale_data.ABSENT_KIND,
                                                  since="2017-01-01"),
        "journal: kind + future date": dict(kind="preparation", since="2099-01-01"),
        "journal: kind + since, next page": dict(kind="preparation", since="2017-01-01",
                                                 before_id=middle.id),
    }
    out = [Case(name, lambda kw=kw: journal.entries(store, limit=51, **kw), LIST_TARGET_MS)
           for name, kw in cases.items()]
    out.append(Case("journal: one bottle's history", lambda: journal.entries(
        store, bottle_id=4242, limit=20), LIST_TARGET_MS))
    out.append(Case("journal: one container's entries (all)", lambda: journal.entries(
        store, container_id=first[0].container_id or 1, limit=None), LIST_TARGET_MS))
    return out


def _stock_cases(store, bottles: int) -> list[Case]:
    today = scale_data.TODAY

    def listed(search=None, **kw):
        # the first page and its count, as the Stock screen and `carboy stock list` read them
        return lambda: _in_app(store, lambda: stock.listing(store, search, today=today,
                                                             limit=50, **kw))

    cases = [
        Case("stock: first page + count", listed(), LIST_TARGET_MS),
        Case("stock: a page in the middle", lambda: stock.page(
            store, after_id=bottles // 2, today=today), LIST_TARGET_MS),
        Case("stock: the page before", lambda: stock.page(
            store, before_id=bottles // 2, today=today), LIST_TARGET_MS),
        Case("stock: status disposed + count", listed(status="disposed"), LIST_TARGET_MS),
        Case("stock: a later page of a search ('h')", lambda: stock.page(
            store, "h", after_id=bottles // 2, today=today), LIST_TARGET_MS),
        Case("stock: reagent bottles of NaOH", lambda: stock.page(
            store, "NaOH", status="in-use", limit=20, today=today), LIST_TARGET_MS),
        Case("stock: 'hydro' among disposed", listed("hydro", status="disposed"),
             LIST_TARGET_MS),
    ]
    cases += [Case(f"search {text!r}: page + count", listed(text), LIST_TARGET_MS)
              for text in SEARCHES]
    return cases


def _other_cases(store, path: Path, closing: bool) -> list[Case]:
    def app_open():
        opened = open_database(path, check=False, create=False)
        if closing:
            opened.close()  # with carboy's optimize, as the app closes it
        else:
            opened.conn.close()  # the first state must not gather statistics

    def command_open():
        opened = open_database(path, check=True, create=False)
        if closing:
            opened.close()
        else:
            opened.conn.close()

    return [
        Case("waste: the container list", lambda: waste.containers(store), LIST_TARGET_MS),
        Case("open, as the app does for each page", app_open, LIST_TARGET_MS),
        Case("open, as a command and the app's start do (with its check)", command_open,
             LIST_TARGET_MS),
    ]


def _let_carboy_keep_statistics(path: Path, cases_of) -> None:
    """Run every case once on fresh stores that close normally (carboy's own
    ``PRAGMA optimize`` at close: what the app and the commands do)."""
    for make in cases_of:
        store = open_database(path, check=False, create=False)
        for case in make(store):
            case.call()
        store.close()


def _has_statistics(path: Path) -> bool:
    store = open_database(path, check=False, create=False)
    try:
        return bool(store.scalar("SELECT count(*) FROM sqlite_master "
                                 "WHERE name = 'sqlite_stat1'"))
    finally:
        store.conn.close()  # no optimize: this look must not change the file


def measure_scale(path: Path, bottles: int, rounds: int) -> bool:
    def cases_of(store, closing=True):
        return (_journal_cases(store) + _stock_cases(store, bottles)
                + _other_cases(store, path, closing))

    ok = True
    states = ["as built, no statistics", "with carboy's own statistics"]
    if _has_statistics(path):
        states = ["with carboy's own statistics (the file already had them)"]
    for state in states:
        fresh = state.startswith("as built")
        if not fresh and len(states) == 2:
            _let_carboy_keep_statistics(path, [cases_of])
        store = open_database(path, check=False, create=False)
        figures = interleaved(cases_of(store, closing=not fresh), rounds)
        store.conn.close()  # no optimize inside the first state
        ok &= table(f"{path.name}: {state} ({rounds} interleaved rounds)", figures)
    return ok


def measure_check(path: Path, rounds: int) -> bool:
    store = open_database(path, check=False, create=False)
    today = scale_data.TODAY
    flagged = len(stock.check(store, today=today))
    in_use = stock.count_upto(store, status="in-use").n
    figures = interleaved([
        Case(f"strength check: flagged ({flagged:,} of {in_use:,} in use)",
             lambda: stock.check(store, today=today), CHECK_TARGET_MS),
        # --all lists every bottle in use (the command prints each): reported, no target;
        # reading 85,000 whole rows into Python alone takes about 0.45 s on a 2-core VM
        Case(f"strength check --all ({in_use:,} bottles)",
             lambda: stock.check(store, today=today, everything=True), None),
    ], max(3, rounds // 2))
    store.close()
    return table(f"{path.name}: the strength check", figures)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--dir", metavar="DIR", help="build the files here and keep them "
                        "(reused by later runs)")
    parser.add_argument("--bottles", type=int, default=1_000_000)
    parser.add_argument("--entries", type=int, default=1_000_000)
    parser.add_argument("--check-bottles", type=int, default=100_000)
    parser.add_argument("--rounds", type=int, default=9)
    args = parser.parse_args()
    with tempfile.TemporaryDirectory(prefix="carboy-bench-") as tmp:
        where = Path(args.dir) if args.dir else Path(tmp)
        where.mkdir(parents=True, exist_ok=True)
        scale = where / f"scale-{args.bottles}-{args.entries}.db"
        check = where / f"check-{args.check_bottles}.db"
        _ensure(scale, args.bottles, args.entries)
        _ensure(check, args.check_bottles, 1000)
        print(f"building: peak memory {peak_rss_mb(children=True):.0f} MB")
        print(machine_note())
        ok = measure_scale(scale, args.bottles, args.rounds)
        ok &= measure_check(check, args.rounds)
        print(f"\nmeasuring: peak memory {peak_rss_mb():.0f} MB; {machine_note()}")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
