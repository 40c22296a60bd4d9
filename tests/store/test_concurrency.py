"""Several users writing one file at once, and writers killed mid-write."""

from __future__ import annotations

import multiprocessing
import os
import random
import signal
import time

import pytest

from carboy.store import journal, waste
from carboy.store.db import open_database

WORKERS = 8
WRITES = 50
"""Writes per process.  The eight start together (a barrier), so they contend from the
first write; without the barrier, 50 writes each would mostly run one process after the
other."""


def _worker(path, n, results, start):
    try:
        store = open_database(path)
        store.origin = "local"
        start.wait(timeout=60)  # every process connected: they start writing together
        for i in range(WRITES):
            tag = f"w{n}-{i}"
            if i % 2:
                waste.add(store, "SHARED", "HCl=0.1M", "10 mL", note=tag, who=f"user{n}")
            else:
                journal.append(store, "note", summary=tag, snapshot={"i": i}, who=f"user{n}")
        store.close()
        results.put((n, None))
    except BaseException as exc:  # any error reaching a user fails the test
        results.put((n, f"{type(exc).__name__}: {exc}"))


@pytest.mark.slow
def test_eight_processes_writing_at_once_lose_nothing(db_path):
    setup = open_database(db_path)
    waste.new_container(setup, "SHARED", capacity="100 L", who="t")
    setup.close()
    ctx = multiprocessing.get_context("fork")
    results = ctx.Queue()
    start = ctx.Barrier(WORKERS)
    procs = [ctx.Process(target=_worker, args=(db_path, n, results, start))
             for n in range(WORKERS)]
    for p in procs:
        p.start()
    outcome = dict(results.get(timeout=120) for _ in procs)
    for p in procs:
        p.join(timeout=30)
    assert outcome == {n: None for n in range(WORKERS)}
    store = open_database(db_path)
    notes = {a.note for a in waste.additions(store, "SHARED")}
    summaries = {e.summary for e in journal.iter_all(store)}
    expected_adds = {f"w{n}-{i}" for n in range(WORKERS) for i in range(1, WRITES, 2)}
    expected_notes = {f"w{n}-{i}" for n in range(WORKERS) for i in range(0, WRITES, 2)}
    assert notes == expected_adds
    assert summaries == expected_notes
    assert waste.container(store, "SHARED").volume_l == pytest.approx(WORKERS * WRITES / 2 * 0.01)
    assert store.integrity_problems() == []
    verdict = journal.verify(store)  # every write took its own place in the record chain
    assert verdict.ok and verdict.checked == WORKERS * WRITES
    store.close()


def _crash_writer(path, log_path, run):
    store = open_database(path)
    store.origin = "local"
    with open(log_path, "a", encoding="utf-8") as log:
        i = 0
        while True:
            tag = f"r{run}-{i}"
            if i % 3 == 0:
                waste.add(store, "CRASH", "HNO3=0.1M", "1 mL", note=tag, who="k")
            else:
                # rows of every size from the first writes on (some span two pages)
                journal.append(store, "note", summary=tag,
                               snapshot={"pad": "x" * (i * 137 % 500 + 3000 * (i % 7 == 1))},
                               who="k")
            log.write(tag + "\n")     # only after the commit returned
            log.flush()
            i += 1


@pytest.mark.slow
def test_sigkill_at_random_moments_loses_nothing_committed(tmp_path):
    path = tmp_path / "crash.db"
    log_path = tmp_path / "committed.log"
    setup = open_database(path)
    waste.new_container(setup, "CRASH", capacity="1000 L", who="t")
    setup.close()
    ctx = multiprocessing.get_context("fork")
    rng = random.Random(20250314)

    def committed() -> list[str]:
        return log_path.read_text(encoding="utf-8").split() if log_path.exists() else []

    run = 0
    # at least 20 kills, each at a random moment of the first ~60 ms (opening the file, or
    # one of the first few dozen writes), and on until more than 100 writes have committed
    while run < 20 or len(committed()) <= 100:
        assert run < 400, "the writers hardly got to write"
        proc = ctx.Process(target=_crash_writer, args=(path, log_path, run))
        proc.start()
        time.sleep(rng.uniform(0.005, 0.06))
        os.kill(proc.pid, signal.SIGKILL)
        proc.join()
        assert proc.exitcode == -signal.SIGKILL
        run += 1
    committed = committed()
    store = open_database(path)
    assert store.integrity_problems() == []
    present = {a.note for a in waste.additions(store, "CRASH")}
    present |= {e.summary for e in journal.iter_all(store)}
    missing = [t for t in committed if t not in present]
    assert missing == []
    assert journal.verify(store).ok  # no write was killed between its row and its link
    store.close()
