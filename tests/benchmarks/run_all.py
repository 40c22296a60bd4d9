"""Every benchmark figure in one table: figure, measured value, target, verdict.

Run by hand:  python tests/benchmarks/run_all.py [name ...]

Each benchmark module named ``bench_*.py`` here that has a ``figures()`` function (a
list of ``_bench.Row``) is run in turn; names on the command line pick some
(``speciation``, ``planner``).  The exit status is 1 when a target is missed.
"""

from __future__ import annotations

import importlib
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from _bench import print_table  # noqa: E402


def main(argv: list[str]) -> int:
    names = argv or sorted(p.stem.removeprefix("bench_") for p in HERE.glob("bench_*.py"))
    rows = []
    for name in names:
        module = importlib.import_module(f"bench_{name}")
        if hasattr(module, "figures"):
            rows.extend(module.figures())
    print_table(rows, "carboy benchmarks (medians of interleaved runs, one core kept busy)")
    return 0 if all(r.ok for r in rows) else 1


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
