"""Shared pieces of the benchmarks: a busy core, interleaved medians, peak memory, the table.

Every figure is the median of interleaved runs (carboy, then the peer, then carboy...),
with a second process keeping one core busy the whole time (a shared server is rarely
idle), the setup of both sides outside the timed region.  Peak memory (RSS) is that of a
fresh process that did the setup and the work once, side by side.
"""

from __future__ import annotations

import contextlib
import json
import statistics
import subprocess
import sys
import time
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from pathlib import Path

HERE = Path(__file__).resolve().parent


@contextlib.contextmanager
def busy_core() -> Iterator[None]:
    """A second process spinning on one core while the benchmark runs."""
    spin = subprocess.Popen([sys.executable, "-c", "while True: pass"])
    try:
        time.sleep(0.2)
        yield
    finally:
        spin.kill()
        spin.wait()


def interleaved(sides: dict[str, Callable[[], object]], rounds: int) -> dict[str, float]:
    """Median seconds of each side, run in turn ``rounds`` times (the order alternates)."""
    for fn in sides.values():   # one untimed run each: caches, first-call costs
        fn()
    times: dict[str, list[float]] = {name: [] for name in sides}
    names = list(sides)
    for r in range(rounds):
        for name in (names if r % 2 == 0 else names[::-1]):
            t0 = time.perf_counter()
            sides[name]()
            times[name].append(time.perf_counter() - t0)
    return {name: statistics.median(ts) for name, ts in times.items()}


def peak_rss_mb(module: str, function: str, *args) -> float:
    """Peak resident memory (MB) of a fresh process that runs ``module.function(*args)``
    once (its setup and its work)."""
    return in_fresh_process(module, function, *args)[1]


def in_fresh_process(module: str, function: str, *args) -> tuple[object, float]:
    """``module.function(*args)`` (a benchmark module here) run in a fresh Python
    process: what it returns (through JSON) and that process's peak resident memory in
    MB (its setup and its work)."""
    code = (f"import sys, json; sys.path.insert(0, {str(HERE)!r}); import _bench; "
            f"import {module} as m; got = m.{function}(*json.loads(sys.argv[1])); "
            "print(json.dumps([got, _bench.own_peak_kb()]))")
    done = subprocess.run([sys.executable, "-c", code, json.dumps(list(args))],
                          capture_output=True, text=True)
    if done.returncode:
        raise RuntimeError(f"{module}.{function} failed in its process:\n"
                           f"{done.stderr[-3000:]}")
    got, kb = json.loads(done.stdout.splitlines()[-1])
    return got, kb / 1024.0


def own_peak_kb() -> int:
    """This process's peak resident memory in kB: VmHWM, which starts afresh at exec
    (getrusage's ru_maxrss would carry the parent's peak into a fresh child)."""
    try:
        with open("/proc/self/status", encoding="ascii") as f:
            for line in f:
                if line.startswith("VmHWM:"):
                    return int(line.split()[1])
    except OSError:
        pass
    import resource

    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss


@dataclass(frozen=True)
class Row:
    """One figure of a benchmark: what, the measured value, the target, met or not."""

    figure: str
    value: str
    target: str
    ok: bool
    detail: str = ""


def print_table(rows: list[Row], title: str = "") -> None:
    """The figures as a table: figure, value, target, verdict, detail."""
    if title:
        print(title)
    w1 = max(len(r.figure) for r in rows)
    w2 = max(len(r.value) for r in rows)
    w3 = max(len(r.target) for r in rows)
    for r in rows:
        verdict = "met" if r.ok else "MISSED"
        print(f"  {r.figure:<{w1}}  {r.value:>{w2}}  {r.target:<{w3}}  {verdict:<6}  {r.detail}")
