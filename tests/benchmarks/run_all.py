"""Every benchmark figure in one table: figure, measured value, target, verdict.

Run by hand:  python tests/benchmarks/run_all.py [name ...]

Each benchmark module named ``bench_*.py`` here has a ``figures()`` function (a list of
``_bench.Row``) and is run in turn; names on the command line pick some (``speciation``,
``planner``, ``store``, ``start``, ``startup``, ``tui``, ``neutralize``, ``upkeep``,
``pitzer``).  The exit status is 1 when a target is missed.  Every module also runs alone
(``python tests/benchmarks/bench_NAME.py``, with its own options).

The whole run takes some minutes: about 3 of them build the store's storerooms (a
million bottles and a million journal entries), unless ``CARBOY_BENCH_DIR`` names a
folder where they are kept from an earlier run (``bench_store.py``).
"""

from __future__ import annotations

import importlib
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from _bench import Row, print_table  # noqa: E402


def main(argv: list[str]) -> int:
    names = argv or sorted(p.stem.removeprefix("bench_") for p in HERE.glob("bench_*.py"))
    rows, by_hand = [], []
    for name in names:
        try:
            module = importlib.import_module(f"bench_{name}")
        except Exception as exc:  # noqa: BLE001 - one broken benchmark must not hide the rest
            rows.append(Row(f"{name}: could not be loaded", "error", "runs", False,
                            f"{type(exc).__name__}: {exc}"))
            continue
        if hasattr(module, "figures"):
            rows.extend(module.figures())
        else:
            by_hand.append(name)
    print_table(rows, "carboy benchmarks: figure, measured, target, verdict (medians; how each "
                      "is taken, peer and load included: its module's docstring)")
    if by_hand:
        print("no figures() yet, run by hand: " + ", ".join(f"bench_{n}.py" for n in by_hand))
    return 0 if all(r.ok for r in rows) else 1


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
