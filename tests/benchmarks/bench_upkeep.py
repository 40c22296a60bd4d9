"""Preparation, standardization and the strength check, timed.

Run by hand (pytest does not collect it)::

    python tests/benchmarks/bench_upkeep.py   (or run_all.py for every figure)

Times (median, milliseconds) loading the packaged catalog, one recipe (96 % H2SO4 to
1 M), a three-step serial dilution, a six-replicate standardization, and the strength
check over 100,000 bottles.  The bottles are written here in one insert (not the
storeroom of bench_store.py): NaOH and HCl, half never standardized and half last
measured long ago, so that every one is flagged, the worst case.  Targets: the catalog
within 50 ms (every command loads it once); a recipe or a standardization within 5 ms
(the screens recompute on every keystroke); the whole strength check of 100,000 bottles
(every one flagged) within 3 s: a report run now and then, not per keystroke; a real
storeroom has a few thousand.  Peak memory is that of a fresh process that did every
operation once (the 100,000 bottles included).
"""

from __future__ import annotations

import sys
import tempfile
from datetime import date
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
sys.path.insert(0, str(Path(__file__).resolve().parent))

import scale_data  # noqa: E402
from _bench import Row, peak_rss_mb, print_table  # noqa: E402
from benchkit import timed  # noqa: E402  (median of several runs, ms)

from carboy.model import preparation, standardization  # noqa: E402
from carboy.model.catalog import load_builtin  # noqa: E402
from carboy.store import stock  # noqa: E402
from carboy.store.db import open_database  # noqa: E402

N_BOTTLES = 100_000
DAY = date(2025, 3, 14)
CHECK_TARGET_MS = 3000.0


def _operations() -> list[tuple[str, object, float]]:
    """(name, call, target ms) of the operations that need no storeroom."""
    src = preparation.parse_source("H2SO4=96%")
    hcl = preparation.parse_source("HCl=12.1M")
    reps = [standardization.Replicate(0.5106 + 0.0004 * k, 25.02 + 0.02 * k) for k in range(6)]
    return [
        ("catalog loaded from the packaged files", load_builtin, 50.0),
        ("recipe 96 % H2SO4 -> 1 M, 1 L", lambda: preparation.plan_recipe(src, 1.0, 1.0), 5.0),
        ("serial dilution, 3 steps", lambda: preparation.plan_series(
            hcl, [1.0, 0.1, 0.01], 0.1), 5.0),
        ("standardization, 6 replicates", lambda: standardization.standardize(
            "NaOH", "KHP", reps, purity_percent=99.97), 5.0),
    ]


def _fill(store) -> None:
    """The 100,000 bottles, in one insert."""
    bottles = [("NaOH" if i % 3 else "HCl", "x", "M", 0.1, 0.1 if i % 2 else None,
                "2024-06-01" if i % 2 else None, "", None, "L", 1.0, 1.0, "Shelf", f"L{i}",
                "2024-01-01", None, "2026-06-01", "in-use", "",
                "2024-01-01T00:00:00.000+00:00", "bench") for i in range(N_BOTTLES)]
    store.write(lambda s: scale_data.insert_bottles(s, bottles))


REPEAT, CHECK_REPEAT = 7, 3
"""Timed runs of each operation, and of the strength check (after one untimed run)."""


def measure() -> list[tuple[str, float, float]]:
    """(name, median ms, target ms) of every operation."""
    rows = [(name, timed(call, REPEAT), target) for name, call, target in _operations()]
    with tempfile.TemporaryDirectory() as tmp:
        store = open_database(Path(tmp) / "bench.db")
        _fill(store)
        flagged = len(stock.check(store, today=DAY))
        rows.append((f"strength check, {N_BOTTLES:,} bottles ({flagged:,} flagged)",
                     timed(lambda: stock.check(store, today=DAY), CHECK_REPEAT), CHECK_TARGET_MS))
        store.close()
    return rows


def every_operation_once() -> None:
    """Every operation once, the bottles written first (for the peak-memory figure)."""
    for _name, call, _target in _operations():
        call()
    with tempfile.TemporaryDirectory() as tmp:
        store = open_database(Path(tmp) / "bench.db")
        _fill(store)
        stock.check(store, today=DAY)
        store.close()


def figures() -> list[Row]:
    """One row per operation, and the peak memory."""
    rows = [Row(f"upkeep: {name}", f"{ms:.2f} ms", f"<= {target:g} ms", ms <= target,
                f"median of {CHECK_REPEAT if name.startswith('strength') else REPEAT} runs")
            for name, ms, target in measure()]
    rss = peak_rss_mb("bench_upkeep", "every_operation_once")
    rows.append(Row(f"upkeep: peak RSS, every operation once ({N_BOTTLES:,} bottles)",
                    f"{rss:.0f} MB", "reported", True))
    return rows


def main() -> int:
    rows = figures()
    print_table(rows, "upkeep operations (median ms of several runs)")
    return 0 if all(r.ok for r in rows) else 1


if __name__ == "__main__":
    sys.exit(main())
