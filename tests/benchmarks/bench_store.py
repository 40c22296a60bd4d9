"""Storeroom database at scale: 100,000 bottles and 1,000,000 journal entries.

Run by hand (pytest does not collect it)::

    python tests/benchmarks/bench_store.py [--keep PATH]

Builds the database with ``executemany`` inside single transactions, then times
(median of several runs, milliseconds) a page of the stock list, search as you
type (page + count for each growing prefix), a waste container's composition, a
page of the journal and opening the database (quick_check included).  The target
for the first three is 50 ms each; the figures are printed.
"""

from __future__ import annotations

import argparse
import json
import random
import statistics
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from carboy.store import journal, stock, waste  # noqa: E402
from carboy.store.db import open_database  # noqa: E402

N_BOTTLES = 100_000
N_JOURNAL = 1_000_000
N_CONTAINERS = 200
ADDITIONS_PER_CONTAINER = 100
BIG_CONTAINER_ADDITIONS = 5_000
TARGET_MS = 50.0

_COMPOUNDS = [("HCl", "hydrochloric acid"), ("NaOH", "sodium hydroxide"),
              ("H2SO4", "sulfuric acid"), ("HNO3", "nitric acid"), ("KOH", "potassium hydroxide"),
              ("CH3COOH", "acetic acid"), ("H3PO4", "phosphoric acid"), ("NH3", "ammonia solution"),
              ("Na2CO3", "sodium carbonate"), ("KHC8H4O4", "potassium hydrogen phthalate")]
_PLACES = ["Acid cabinet", "Base cabinet", "Titration bench", "Cold room", "Standards cupboard",
           "Flammables cabinet", "Spill station", "Bench rack"]


def build(path: Path) -> None:
    rng = random.Random(7)
    store = open_database(path)
    t0 = time.perf_counter()
    bottles = []
    for i in range(N_BOTTLES):
        key, name = _COMPOUNDS[i % len(_COMPOUNDS)]
        bottles.append((key, name, "M", 0.1, None, None, "", 30, "L", 1.0, 1.0,
                        f"{rng.choice(_PLACES)} {rng.randint(1, 40)}",
                        f"FW-{rng.randint(20, 25)}-{i:06d}", "2024-01-01", None, "2026-01-01",
                        "in-use", "", "2024-01-01T00:00:00.000+00:00", "bench"))
    cols = ("compound_key, compound_name, strength_unit, label_strength, current_strength, "
            "measured_at, measured_how, restandardize_days, amount_unit, amount_left, "
            "container_size, location, lot, received_on, opened_on, expires_on, status, notes, "
            "added_at, added_by")
    store.write(lambda s: s.conn.executemany(
        f"INSERT INTO stock_bottles ({cols}) VALUES ({', '.join('?' * 20)})", bottles))
    t1 = time.perf_counter()
    containers = [(f"W-{n:04d}", "Waste bay", 1000.0, "collecting", "2024-01-01", "", "bench")
                  for n in range(N_CONTAINERS)]
    store.write(lambda s: s.conn.executemany(
        "INSERT INTO waste_containers (label, location, capacity_l, status, opened_on, notes, "
        "created_by) VALUES (?, ?, ?, ?, ?, ?, ?)", containers))
    adds = []
    for cid in range(1, N_CONTAINERS + 1):
        count = BIG_CONTAINER_ADDITIONS if cid == 1 else ADDITIONS_PER_CONTAINER
        for j in range(count):
            conc = rng.choice([0.1, 0.5, 1.0])
            moles = {"Cl-": conc * 0.1} if j % 2 else {"sulfate": conc * 0.1}
            comp = {"Cl-": 1} if j % 2 else {"sulfate": 1}
            adds.append((cid, "HCl" if j % 2 else "H2SO4", conc, 0.1, None, f"x={conc}M",
                         json.dumps(comp), json.dumps(moles), "2024-01-01T00:00:00.000+00:00",
                         "bench", "local", ""))
    store.write(lambda s: s.conn.executemany(
        "INSERT INTO waste_additions (container_id, compound_key, conc_molar, volume_l, mass_g, "
        "entered, composition_json, moles_json, added_at, added_by, origin, note) "
        "VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)", adds))
    t2 = time.perf_counter()
    kinds = ["note", "standardization", "preparation", "neutralization", "receipt"]

    def entries():
        for i in range(N_JOURNAL):
            day = 1 + i * 3000 // N_JOURNAL
            yield (kinds[i % 5], f"20{15 + day // 365:02d}-01-01T00:00:{i % 60:02d}.000+00:00",
                   "bench", "local", 1 + i % N_BOTTLES if i % 5 == 1 else None,
                   1 + i % N_CONTAINERS if i % 5 == 3 else None,
                   f"entry {i}", json.dumps({"i": i, "value": i * 0.001}))

    store.write(lambda s: s.conn.executemany(
        "INSERT INTO journal_entries (kind, recorded_at, recorded_by, origin, bottle_id, "
        "container_id, summary, snapshot_json) VALUES (?, ?, ?, ?, ?, ?, ?, ?)", entries()))
    t3 = time.perf_counter()
    store.conn.execute("PRAGMA optimize")
    store.conn.execute("ANALYZE")
    store.close()
    print(f"built in {t3 - t0:.1f} s (bottles {t1 - t0:.1f} s, waste {t2 - t1:.1f} s, "
          f"journal {t3 - t2:.1f} s); file {path.stat().st_size / 1e6:.0f} MB")


def timed(fn, repeat: int = 7) -> float:
    fn()  # warm the page cache
    runs = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        runs.append((time.perf_counter() - t) * 1000)
    return statistics.median(runs)


def measure(path: Path) -> bool:
    ok = True
    t = time.perf_counter()
    store = open_database(path)
    open_ms = (time.perf_counter() - t) * 1000
    rows: list[tuple[str, float, bool]] = []

    def report(name: str, ms: float, target: bool = True) -> None:
        nonlocal ok
        passed = ms <= TARGET_MS
        ok &= passed or not target
        rows.append((name, ms, target))

    report("stock: first page", timed(lambda: stock.page(store)))
    mid = stock.page(store, after_id=N_BOTTLES // 2)
    report("stock: page in the middle", timed(lambda: stock.page(store, after_id=N_BOTTLES // 2)))
    assert len(mid.bottles) == stock.PAGE_SIZE
    report("stock: count all", timed(lambda: stock.count(store)))
    for text in ("h", "hy", "hyd", "hydro", "hydroxide", "s", "su", "sul", "cab", "cabinet 1",
                 "q", "fw-2", "fw-23-00", "fw-23-0004", "titr", "titration bench 3", "KHC"):
        report(f"search {text!r}: page",
               timed(lambda text=text: stock.page(store, text)))
        report(f"search {text!r}: count",
               timed(lambda text=text: stock.count(store, text)))
        report(f"search {text!r}: page + count",
               timed(lambda text=text: (stock.page(store, text), stock.count(store, text))))
    report(f"waste: composition ({BIG_CONTAINER_ADDITIONS} additions)",
           timed(lambda: waste.composition(store, "W-0000")))
    report(f"waste: composition ({ADDITIONS_PER_CONTAINER} additions)",
           timed(lambda: waste.composition(store, "W-0100")))
    report("waste: show (5000 additions)", timed(lambda: waste.show(store, "W-0000"), 3), False)
    report("journal: newest page", timed(lambda: journal.entries(store, limit=50)))
    report("journal: page by kind", timed(lambda: journal.entries(store, kind="preparation",
                                                                    limit=50)))
    report("journal: since a date",
           timed(lambda: journal.entries(store, since="2022-01-01", limit=50)))
    report("journal: one bottle's entries",
           timed(lambda: journal.entries(store, bottle_id=4242, limit=50)))
    report("journal: append one entry",
           timed(lambda: journal.append(store, "note", summary="bench", who="bench")))
    store.close()
    report("open (with quick_check)", open_ms, False)
    t = time.perf_counter()
    open_database(path, check=False).close()
    report("open (no check)", (time.perf_counter() - t) * 1000, False)
    width = max(len(r[0]) for r in rows)
    print(f"{'operation':<{width}}  {'median ms':>9}  target {TARGET_MS:g} ms")
    for name, ms, target in rows:
        verdict = ("ok" if ms <= TARGET_MS else "SLOW") if target else "(not a target)"
        print(f"{name:<{width}}  {ms:9.2f}  {verdict}")
    return ok


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--keep", metavar="PATH", help="build (or reuse) the database here")
    args = parser.parse_args()
    if args.keep:
        path = Path(args.keep)
        if not path.exists():
            build(path)
        return 0 if measure(path) else 1
    with tempfile.TemporaryDirectory(prefix="carboy-bench-") as tmp:
        path = Path(tmp) / "bench.db"
        build(path)
        return 0 if measure(path) else 1


if __name__ == "__main__":
    sys.exit(main())
