"""Preparation, standardization and the strength check, timed.

Run by hand (pytest does not collect it)::

    python tests/benchmarks/bench_upkeep.py

Times (median, milliseconds) loading the packaged catalog, one recipe (96 % H2SO4 to 1 M), a three-step serial
dilution, a six-replicate standardization, and the strength check over 100,000 bottles
(built as in bench_store.py).  Targets: the catalog within 50 ms (every
command loads it once); a recipe or a standardization within 5 ms (the
screens recompute on every keystroke); the whole strength check of 100,000 bottles (every one flagged, the worst case) within
3 s: a report run now and then, not per keystroke; a real storeroom has a few thousand.
"""

from __future__ import annotations

import sys
import tempfile
from datetime import date
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
sys.path.insert(0, str(Path(__file__).resolve().parent))

from benchkit import timed  # noqa: E402  (median of several runs, ms)

from carboy.model import preparation, standardization  # noqa: E402
from carboy.model.catalog import load_builtin  # noqa: E402
from carboy.store import stock  # noqa: E402
from carboy.store.db import open_database  # noqa: E402

N_BOTTLES = 100_000


def main() -> int:
    src = preparation.parse_source("H2SO4=96%")
    hcl = preparation.parse_source("HCl=12.1M")
    reps = [standardization.Replicate(0.5106 + 0.0004 * k, 25.02 + 0.02 * k) for k in range(6)]
    rows = [
        ("catalog loaded from the packaged files", timed(load_builtin), 50.0),
        ("recipe 96 % H2SO4 -> 1 M, 1 L", timed(lambda: preparation.plan_recipe(src, 1.0, 1.0)),
         5.0),
        ("serial dilution, 3 steps", timed(lambda: preparation.plan_series(
            hcl, [1.0, 0.1, 0.01], 0.1)), 5.0),
        ("standardization, 6 replicates", timed(lambda: standardization.standardize(
            "NaOH", "KHP", reps, purity_percent=99.97)), 5.0),
    ]
    with tempfile.TemporaryDirectory() as tmp:
        store = open_database(Path(tmp) / "bench.db")
        bottles = [("NaOH" if i % 3 else "HCl", "x", "M", 0.1, 0.1 if i % 2 else None,
                    "2024-06-01" if i % 2 else None, "", None, "L", 1.0, 1.0, "Shelf", f"L{i}",
                    "2024-01-01", None, "2026-06-01", "in-use", "",
                    "2024-01-01T00:00:00.000+00:00", "bench") for i in range(N_BOTTLES)]
        cols = ("compound_key, compound_name, strength_unit, label_strength, current_strength, "
                "measured_at, measured_how, restandardize_days, amount_unit, amount_left, "
                "container_size, location, lot, received_on, opened_on, expires_on, status, "
                "notes, added_at, added_by")
        store.write(lambda s: s.conn.executemany(
            f"INSERT INTO stock_bottles ({cols}) VALUES ({', '.join('?' * 20)})", bottles))
        day = date(2025, 3, 14)
        flagged = len(stock.check(store, today=day))
        rows.append((f"strength check, {N_BOTTLES:,} bottles ({flagged:,} flagged)",
                     timed(lambda: stock.check(store, today=day), repeat=3), 3000.0))
        store.close()
    width = max(len(r[0]) for r in rows)
    ok = True
    print(f"{'operation':<{width}}  {'median ms':>10}  target")
    for name, ms, target in rows:
        verdict = "ok" if ms <= target else "SLOW"
        ok &= ms <= target
        print(f"{name:<{width}}  {ms:>10.2f}  {target:g} ms {verdict}")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
