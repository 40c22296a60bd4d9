"""The store at scale: every list, filter and search the app and the command line offer,
on a million journal entries and a million bottles; the strength check of 100,000.

Run by hand (pytest does not collect it)::

    python tests/benchmarks/bench_store.py [--dir DIR] [--rounds 9]
    python tests/benchmarks/bench_store.py --bottles 100000 --entries 100000   # quicker

or with every other figure: ``python tests/benchmarks/run_all.py store``.

The storerooms are built first (:mod:`scale_data`, in a child process, outside every
timed region; minutes for the million rows).  They are built in a temporary folder
removed afterwards, or, with ``--dir DIR`` or the environment variable
``CARBOY_BENCH_DIR`` (which run_all.py's ``figures()`` honours), kept in that folder and
reused by later runs.  Each figure is the median of interleaved rounds (:mod:`benchkit`)
of exactly the calls a screen or a command makes (the Stock screen reads a first page and
its count, :func:`carboy.store.stock.listing`, per keystroke; later pages with
:func:`~carboy.store.stock.page`).

The figures are taken twice: first on the file as built, which has no planner
statistics, then after carboy has kept its own (every :class:`~carboy.store.db.Store`
runs ``PRAGMA optimize`` as it closes: the benchmark closes a few, as the app does after
each page).  Nothing here runs ANALYZE.  A kept file stays as built: the second state is
taken on a copy, removed afterwards, so every run takes both (a file that already has
statistics, kept by an earlier version of this benchmark, gives the second state only).
Target: 20 ms for every list, filter and search; 500 ms for the strength check of
100,000 bottles (the bottles that need attention, as ``carboy stock check`` and the app
list them; ``--all``, which lists every bottle in use, is reported beside it).  Peak
memory (RSS) is reported beside the times: of the child that built each file, and of a
fresh process that ran every case of a state (or both checks) once.
"""

from __future__ import annotations

import argparse
import contextlib
import multiprocessing
import os
import sqlite3
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
sys.path.insert(0, str(Path(__file__).resolve().parent))

import scale_data  # noqa: E402
from _bench import Row, own_peak_kb, print_table  # noqa: E402
from _bench import peak_rss_mb as fresh_peak_mb  # noqa: E402
from benchkit import Case, Figure, interleaved, machine_note, peak_rss_mb  # noqa: E402

from carboy.store import journal, stock, waste  # noqa: E402
from carboy.store.db import open_database  # noqa: E402

BENCH_DIR = "CARBOY_BENCH_DIR"
"""The environment variable naming a folder where the built storerooms are kept."""
LIST_TARGET_MS = 20.0
CHECK_TARGET_MS = 500.0
SEARCHES = ("h", "s", "c", "1", "hy", "su", "ca", "fw", "hyd", "hydro", "hydroxide",
            "hydrochloric", "sulph", "caustic soda", "oil of vit", "muriatic", "cab", "cabinet",
            "cabinet 1", "titration bench 3", "fw-2", "fw-23-00", "fw-23-0004", "q", "zz",
            "#123456", "#7 HCl")
"""Search-as-you-type texts: one- and two-letter prefixes, words, the catalog's other
names, lot codes, nothing found, and bottle ids."""


def _build(path: Path, bottles: int, entries: int, report) -> None:
    """In the child: build the file under a temporary name, rename it when complete (an
    interrupted build leaves nothing to reuse); send back the seconds and the peak MB."""
    t = time.perf_counter()
    partial = path.with_name(path.name + ".partial")
    for leftover in (partial, *_siblings(partial)):
        leftover.unlink(missing_ok=True)
    parts = scale_data.build(partial, bottles=bottles, entries=entries)
    wal = partial.with_name(partial.name + "-wal")
    if wal.exists() and wal.stat().st_size:  # not folded into the file: it is not complete
        raise RuntimeError(f"{partial} kept a write-ahead log after closing")
    os.replace(partial, path)
    for leftover in _siblings(partial):
        leftover.unlink(missing_ok=True)
    spent = ", ".join(f"{k} {v:.0f} s" for k, v in parts.items())
    seconds = time.perf_counter() - t
    print(f"built {path.name} in {seconds:.0f} s ({spent}); "
          f"{path.stat().st_size / 1e6:.0f} MB", flush=True)
    report.send((seconds, own_peak_kb() / 1024))
    report.close()


def _siblings(path: Path) -> list[Path]:
    """The files SQLite and carboy keep beside a database file."""
    return [path.with_name(path.name + end) for end in ("-wal", "-shm", "-journal", ".lock")]


def _ensure(path: Path, bottles: int, entries: int) -> tuple[float, float] | None:
    """Build the file in a child process (its memory is not the measurement's): the
    seconds it took and the child's peak MB, or None when the file was there already."""
    if path.exists():
        print(f"reusing {path}", flush=True)
        return None
    ctx = multiprocessing.get_context("spawn")
    receive, send = ctx.Pipe(duplex=False)
    child = ctx.Process(target=_build, args=(path, bottles, entries, send))
    child.start()
    send.close()
    try:
        got = receive.recv()
    except EOFError:
        got = None
    child.join()
    if child.exitcode != 0 or got is None:
        raise SystemExit(f"building {path} failed")
    return got


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


def _cases(store, path: Path, bottles: int, closing: bool) -> list[Case]:
    return (_journal_cases(store) + _stock_cases(store, bottles)
            + _other_cases(store, path, closing))


def _copy(src: Path, dst: Path) -> None:
    """A copy of a database file (SQLite's backup: complete even with a write-ahead log)."""
    _remove(dst)
    with contextlib.closing(sqlite3.connect(src)) as a, \
            contextlib.closing(sqlite3.connect(dst)) as b:
        a.backup(b)


def _remove(path: Path) -> None:
    for leftover in (path, *_siblings(path)):
        leftover.unlink(missing_ok=True)


def _take(path: Path, bottles: int, rounds: int, fresh: bool) -> tuple[list[Figure], float]:
    """One state's figures, and the peak MB of a fresh process running each case once."""
    store = open_database(path, check=False, create=False)
    try:
        figures = interleaved(_cases(store, path, bottles, closing=not fresh), rounds)
    finally:
        store.conn.close()  # no optimize inside the first state
    return figures, fresh_peak_mb("bench_store", "every_case_once", str(path), bottles, fresh)


def every_case_once(path: str, bottles: int, fresh: bool) -> None:
    """Open the file and run every case of a state once (for the peak-memory figure); the
    first state's file is left without statistics."""
    store = open_database(Path(path), check=False, create=False)
    for case in _cases(store, Path(path), bottles, closing=not fresh):
        case.call()
    store.conn.close()


def measure_scale(path: Path, bottles: int, rounds: int, *,
                  keep_built: bool = False) -> list[tuple[str, list[Figure], float]]:
    """(state, figures, peak MB) of each state taken.  With ``keep_built`` the file stays
    as built: carboy keeps its statistics on a copy, removed afterwards."""
    if _has_statistics(path):
        state = "with carboy's own statistics (the file already had them)"
        return [(state, *_take(path, bottles, rounds, fresh=False))]
    taken = [("as built, no statistics", *_take(path, bottles, rounds, fresh=True))]
    work = path.with_name(path.stem + ".with-statistics.db") if keep_built else path
    try:
        if keep_built:
            _copy(path, work)
        _let_carboy_keep_statistics(
            work, [lambda store: _cases(store, work, bottles, closing=True)])
        taken.append(("with carboy's own statistics",
                      *_take(work, bottles, rounds, fresh=False)))
    finally:
        if keep_built:
            _remove(work)
    return taken


def check_once(path: str) -> None:
    """Both strength checks once (for the peak-memory figure)."""
    store = open_database(Path(path), check=False, create=False)
    stock.check(store, today=scale_data.TODAY)
    stock.check(store, today=scale_data.TODAY, everything=True)
    store.conn.close()


def measure_check(path: Path, rounds: int, *,
                  keep_built: bool = False) -> tuple[list[Figure], float]:
    """The figures of the strength check, and the peak MB of a fresh process running both
    checks once.  With ``keep_built`` the file is closed without gathering statistics."""
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
    if keep_built:
        store.conn.close()
    else:
        store.close()
    return figures, fresh_peak_mb("bench_store", "check_once", str(path))


def _rows(prefix: str, figures: list[Figure], rounds: int) -> list[Row]:
    out = []
    for f in figures:
        target = "reported" if f.target_ms is None else f"<= {f.target_ms:g} ms"
        out.append(Row(f"{prefix}{f.name}", f"{f.median_ms:.2f} ms", target,
                       f.verdict != "SLOW", f"worst {f.worst_ms:.2f} ms of {rounds}"))
    return out


def _built_row(path: Path, built: tuple[float, float] | None) -> Row:
    if built is None:
        return Row(f"store: building {path.name}", "reused", "reported", True,
                   f"built by an earlier run, kept in {path.parent}")
    return Row(f"store: building {path.name}", f"{built[0]:.0f} s", "reported", True,
               f"peak RSS {built[1]:.0f} MB (the building child); "
               f"{path.stat().st_size / 1e6:.0f} MB file")


def collect(where: Path, bottles: int, entries: int, check_bottles: int, rounds: int, *,
            keep_built: bool) -> list[Row]:
    """Build (or reuse) the files in ``where`` and take every figure, as rows."""
    where.mkdir(parents=True, exist_ok=True)
    scale = where / f"scale-{bottles}-{entries}.db"
    check = where / f"check-{check_bottles}.db"
    rows = [_built_row(scale, _ensure(scale, bottles, entries)),
            _built_row(check, _ensure(check, check_bottles, 1000))]
    print(machine_note(), flush=True)
    taken = measure_scale(scale, bottles, rounds, keep_built=keep_built)
    if len(taken) == 1:
        rows.append(Row("store [as built]: every list, filter and search", "not taken",
                        "taken", False, f"{scale} already has carboy's statistics: remove "
                        "it to have it built afresh"))
    for state, figures, peak in taken:
        short = "as built" if state.startswith("as built") else "own statistics"
        rows += _rows(f"store [{short}] ", figures, rounds)
        rows.append(Row(f"store [{short}] peak RSS, every case once", f"{peak:.0f} MB",
                        "reported", True, f"{scale.name}: {state}; a fresh process"))
    figures, peak = measure_check(check, rounds, keep_built=keep_built)
    rows += _rows("store: ", figures, max(3, rounds // 2))
    rows.append(Row("store: strength check, peak RSS, both checks once", f"{peak:.0f} MB",
                    "reported", True, f"{check.name}; a fresh process"))
    return rows


def figures(rounds: int = 9, bottles: int = 1_000_000, entries: int = 1_000_000,
            check_bottles: int = 100_000) -> list[Row]:
    """Every figure of this benchmark, the storerooms built first: in the folder
    ``CARBOY_BENCH_DIR`` names (kept and reused), else in a temporary one."""
    kept = os.environ.get(BENCH_DIR)
    if kept:
        return collect(Path(kept), bottles, entries, check_bottles, rounds, keep_built=True)
    with tempfile.TemporaryDirectory(prefix="carboy-bench-") as tmp:
        return collect(Path(tmp), bottles, entries, check_bottles, rounds, keep_built=False)


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--dir", metavar="DIR", default=os.environ.get(BENCH_DIR),
                        help="build the files here and keep them (reused by later runs; "
                        f"default: ${BENCH_DIR} if set, else a temporary folder)")
    parser.add_argument("--bottles", type=int, default=1_000_000)
    parser.add_argument("--entries", type=int, default=1_000_000)
    parser.add_argument("--check-bottles", type=int, default=100_000)
    parser.add_argument("--rounds", type=int, default=9)
    args = parser.parse_args()
    with tempfile.TemporaryDirectory(prefix="carboy-bench-") as tmp:
        where = Path(args.dir) if args.dir else Path(tmp)
        rows = collect(where, args.bottles, args.entries, args.check_bottles, args.rounds,
                       keep_built=bool(args.dir))
    print_table(rows, f"the store at scale ({args.rounds} interleaved rounds)")
    print(f"\nmeasuring: peak memory {peak_rss_mb():.0f} MB (this process); "
          f"{machine_note()}")
    return 0 if all(r.ok for r in rows) else 1


if __name__ == "__main__":
    sys.exit(main())
