"""Speed of the Pitzer activity model: ln γ of 1000 points × 12 species in one call.

Run by hand:  python tests/benchmarks/bench_pitzer.py   (or run_all.py for every figure)

Reports (no target) the median time of one vectorized evaluation (the model built once,
as a solver iterating to self-consistency would use it), the time per point, and the
one-off cost of building the model (parameter layout and the E-theta table on first use,
unless this process has already built that table); beside them, the peak memory of a
fresh process that built the model and evaluated it once.
"""

from __future__ import annotations

import statistics
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

from _bench import Row, peak_rss_mb, print_table  # noqa: E402

from carboy.model import pitzer  # noqa: E402
from carboy.model.etheta import _table  # noqa: E402

SPECIES = ("H+", "Na+", "K+", "Ca+2", "Mg+2", "NH4+", "Cl-", "SO4-2", "HSO4-", "OH-",
           "HCO3-", "CO3-2")
POINTS = 1000
REPEATS = 50


def _molality() -> np.ndarray:
    rng = np.random.default_rng(2026)
    return rng.uniform(0.0, 0.5, (POINTS, len(SPECIES)))


def evaluate_once() -> None:
    """The model built and evaluated once (for the peak-memory figure)."""
    pitzer.PitzerModel(SPECIES, 25.0).evaluate(_molality())


def measure() -> dict:
    """The first build and call, and the repeated evaluations: seconds."""
    molality = _molality()
    cached = _table.cache_info().currsize > 0
    t0 = time.perf_counter()
    model = pitzer.PitzerModel(SPECIES, 25.0)
    model.evaluate(molality)
    first = time.perf_counter() - t0
    times = []
    for _ in range(REPEATS):
        t0 = time.perf_counter()
        model.evaluate(molality)
        times.append(time.perf_counter() - t0)
    return {"first": first, "cached": cached, "median": statistics.median(times),
            "best": min(times)}


def figures() -> list[Row]:
    """The first build, the median evaluation and the peak memory: reported, no target."""
    got = measure()
    rss = peak_rss_mb("bench_pitzer", "evaluate_once")
    med = got["median"]
    return [
        Row("Pitzer: first build + call", f"{got['first'] * 1e3:.1f} ms", "reported", True,
            f"E-theta table already built in this process: {'yes' if got['cached'] else 'no'}"),
        Row(f"Pitzer: ln γ, φ, a_w of {POINTS} points x {len(SPECIES)} species",
            f"{med * 1e3:.2f} ms", "reported", True,
            f"median of {REPEATS}; {med / POINTS * 1e6:.2f} µs per point, best "
            f"{got['best'] * 1e3:.2f} ms"),
        Row("Pitzer: peak RSS, model built and evaluated once", f"{rss:.0f} MB", "reported",
            True),
    ]


def main() -> None:
    print_table(figures(), "the Pitzer activity model (no target: reported)")


if __name__ == "__main__":
    main()
