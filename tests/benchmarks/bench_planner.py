"""Speed of a whole neutralization plan for every demo waste container (target 10 ms).

Run by hand:  python tests/benchmarks/bench_planner.py   (or run_all.py for every figure)

The demo storeroom is built once (``create_demo_database``), each container read with
``container_sample`` (setup, outside the timed region); the timed work is the plan the
Neutralize form makes, ``carboy.model.forms.neutralize.evaluate``: reading the fields,
planning, cautions.  Each container with the reagent the app offers first (a base for
acid waste, an acid for alkaline waste), and the carbonate reagent for acid waste (its
CO2 makes the plan solve open systems).  Medians of interleaved runs with one core
kept busy; peak memory of a fresh process that planned every case once.
"""

from __future__ import annotations

import sys
import tempfile
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))

from _bench import Row, busy_core, interleaved, peak_rss_mb, print_table  # noqa: E402

TARGET_MS = 10.0
CASES = [("MA-01", "NaOH=1M"), ("OA-02", "NaOH=1M"), ("AL-03", "HCl=1M"),
         ("HF-04", "NaOH@99%"), ("MA-01", "Na2CO3"), ("OA-02", "Na2CO3"),
         ("HF-04", "Na2CO3")]


def setup():
    """(label, reagent) -> (fields, container, catalog), read from a fresh demo store."""
    from carboy.model.forms.neutralize import NeutralizeFields
    from carboy.store.db import open_database
    from carboy.store.demo import create_demo_database
    from carboy.store.planning import container_sample

    with tempfile.TemporaryDirectory() as tmp:
        store = open_database(create_demo_database(Path(tmp) / "demo.db"))
        try:
            found = {label: container_sample(store, label) for label, _ in CASES}
        finally:
            store.close()
    return {(label, reagent): (NeutralizeFields(reagent=reagent), *found[label])
            for label, reagent in CASES}


def plan_all() -> None:
    """Setup and one plan of every case (for the peak-memory figure)."""
    from carboy.model.forms.neutralize import evaluate

    for fields, container, catalog in setup().values():
        evaluate(fields, catalog, container)


def figures() -> list[Row]:
    """One row per case, and the peak memory."""
    from carboy.model.forms.neutralize import evaluate

    cases = setup()
    for (label, reagent), (fields, container, catalog) in cases.items():
        got = evaluate(fields, catalog, container)
        assert got.value is not None, (label, reagent, got.errors)
    with busy_core():
        med = interleaved({key: (lambda c=c: evaluate(c[0], c[2], c[1]))
                           for key, c in cases.items()}, rounds=21)
    rss = peak_rss_mb("bench_planner", "plan_all")
    rows = [Row(f"plan: {label} with {reagent}", f"{t * 1e3:.1f} ms", f"<= {TARGET_MS:g} ms",
                t * 1e3 <= TARGET_MS) for (label, reagent), t in med.items()]
    rows.append(Row("plan: peak RSS, every case once", f"{rss:.0f} MB", "reported", True))
    return rows


def main() -> None:
    print_table(figures(), "neutralization plans of the demo containers (medians, one core "
                "kept busy)")


if __name__ == "__main__":
    main()
