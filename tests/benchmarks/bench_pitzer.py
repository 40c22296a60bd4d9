"""Speed of the Pitzer activity model: ln γ of 1000 points × 12 species in one call.

Run by hand:  python tests/benchmarks/bench_pitzer.py

Prints the median time of one vectorized evaluation (the model built once, as a solver
iterating to self-consistency would use it), the time per point, and the one-off cost of
building the model (parameter layout and the E-theta table on first use).
"""

from __future__ import annotations

import statistics
import time

import numpy as np

from carboy.model import pitzer
from carboy.model.etheta import _table

SPECIES = ("H+", "Na+", "K+", "Ca+2", "Mg+2", "NH4+", "Cl-", "SO4-2", "HSO4-", "OH-",
           "HCO3-", "CO3-2")
POINTS = 1000
REPEATS = 50


def main() -> None:
    rng = np.random.default_rng(2026)
    molality = rng.uniform(0.0, 0.5, (POINTS, len(SPECIES)))
    t0 = time.perf_counter()
    model = pitzer.PitzerModel(SPECIES, 25.0)
    model.evaluate(molality)
    first = time.perf_counter() - t0
    times = []
    for _ in range(REPEATS):
        t0 = time.perf_counter()
        model.evaluate(molality)
        times.append(time.perf_counter() - t0)
    med = statistics.median(times)
    print(f"first build + call (E-theta table cached: {_table.cache_info().currsize > 0}): "
          f"{first * 1e3:.1f} ms")
    print(f"ln γ, φ, a_w for {POINTS} points x {len(SPECIES)} species: "
          f"median {med * 1e3:.2f} ms ({med / POINTS * 1e6:.2f} µs per point), "
          f"best {min(times) * 1e3:.2f} ms")


if __name__ == "__main__":
    main()
