"""Shared pieces of the benchmarks: interleaved medians, peak memory, the verdict table.

Every figure is the median of several *interleaved* rounds (each round runs every case
once, in turn), so a burst of load on the machine lands on all cases alike instead of
on the one that happened to run then.  Setup happens before timing starts; only the
call itself is inside the timed region.
"""

from __future__ import annotations

import os
import resource
import statistics
import sys
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass


@dataclass(frozen=True)
class Case:
    """One timed call: a name, the call, and its target in milliseconds (None: reported
    only)."""

    name: str
    call: Callable[[], object]
    target_ms: float | None


@dataclass(frozen=True)
class Figure:
    name: str
    median_ms: float
    worst_ms: float
    target_ms: float | None

    @property
    def verdict(self) -> str:
        if self.target_ms is None:
            return "(reported)"
        return "ok" if self.median_ms <= self.target_ms else "SLOW"


def interleaved(cases: Sequence[Case], rounds: int, *, warm: bool = True) -> list[Figure]:
    """Median and worst of ``rounds`` interleaved runs of each case (one untimed warm-up
    run each first, so every case meets the same page cache)."""
    if warm:
        for case in cases:
            case.call()
    runs: dict[str, list[float]] = {c.name: [] for c in cases}
    for _ in range(rounds):
        for case in cases:
            start = time.perf_counter()
            case.call()
            runs[case.name].append((time.perf_counter() - start) * 1000)
    return [Figure(c.name, statistics.median(runs[c.name]), max(runs[c.name]), c.target_ms)
            for c in cases]


def peak_rss_mb(children: bool = False) -> float:
    """Peak resident memory of this process (or of its finished children), in MB."""
    who = resource.RUSAGE_CHILDREN if children else resource.RUSAGE_SELF
    kb = resource.getrusage(who).ru_maxrss
    return kb / 1024 if sys.platform != "darwin" else kb / 1024 / 1024


def table(title: str, figures: Sequence[Figure], out=None) -> bool:
    """Print a table of figure, target and verdict; True when every target is met."""
    out = out or sys.stdout
    width = max([len(f.name) for f in figures] + [9])
    print(f"\n{title}", file=out)
    print(f"{'figure':<{width}}  {'median ms':>10}  {'worst ms':>9}  {'target ms':>9}  verdict",
          file=out)
    for f in figures:
        target = "—" if f.target_ms is None else f"{f.target_ms:g}"
        print(f"{f.name:<{width}}  {f.median_ms:10.2f}  {f.worst_ms:9.2f}  {target:>9}  "
              f"{f.verdict}", file=out)
    return all(f.verdict != "SLOW" for f in figures)


def machine_note() -> str:
    """One line about the machine: cores and load, printed beside the figures."""
    try:
        load = " ".join(f"{x:.2f}" for x in os.getloadavg())
    except OSError:
        load = "unknown"
    return f"{os.cpu_count()} cores, load average {load}, Python {sys.version.split()[0]}"


def timed(fn: Callable[[], object], repeat: int = 7) -> float:
    """Median milliseconds of ``repeat`` runs of one call, after one untimed run."""
    fn()
    runs = []
    for _ in range(repeat):
        start = time.perf_counter()
        fn()
        runs.append((time.perf_counter() - start) * 1000)
    return statistics.median(runs)
