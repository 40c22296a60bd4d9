"""Neutralize screen: a keystroke in the form to an updated plan applied (targets: median
50 ms, 95th percentile 100 ms).

Run by hand (pytest does not collect it)::

    python tests/benchmarks/bench_neutralize.py [--repeat N]

For each demo container (and a typed-in sample), with the screen idle, one keystroke
changes the target pH; the time is taken from just before the key is sent to the
moment the new plan has been applied to the widgets (parse, plan in the worker
thread, message back, panels, table, curve and cautions updated).  The planner alone
(:func:`compute`, no screen) is timed too.  Medians, 95th percentiles and maxima in
milliseconds.  This is the app's own view, driven headless; the time until the terminal
shows it (drawing and writing the frame included) is ``bench_startup.py``'s.

Each of the two runs in a fresh Python process of its own (the demo storeroom built
there, in a temporary folder), whose peak memory (RSS, ``VmHWM``: setup and work) is
reported beside the times.  :func:`figures` (for ``run_all.py``) returns one
``_bench.Row`` per case and part, and the two peaks; :func:`main` prints the runs in
detail, then the same table.
"""

from __future__ import annotations

import argparse
import asyncio
import statistics
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parents[1]))
sys.path.insert(0, str(HERE))

from _bench import Row, in_fresh_process, print_table  # noqa: E402
from textual.widgets import Input  # noqa: E402

from carboy.model.forms.neutralize import NeutralizeFields  # noqa: E402
from carboy.store.demo import DEMO_TODAY, create_demo_database  # noqa: E402
from carboy.tui.app.app import make_app  # noqa: E402
from carboy.tui.app.live import DELAY_S as DEBOUNCE_S  # noqa: E402
from carboy.tui.app.screens.neutralize import (  # noqa: E402
    FormState,
    NeutralizeScreen,
    compute,
)

TARGET_MS = 50.0
P95_TARGET_MS = 100.0
CASES = [
    ("MA-01", "NaOH=1M"),
    ("OA-02", "NaOH=1M"),
    ("AL-03", "HCl=1M"),
    ("HF-04", "NaOH@99%"),
    (None, "NaOH=2M"),  # typed: H2SO4=0.05M NaH2PO4=10mM in 250 mL
]
TARGETS = ("7.5", "7.0")
TYPED = "H2SO4=0.05M NaH2PO4=10mM in 250 mL"


async def _wait(pilot, condition, timeout=20.0):
    deadline = time.monotonic() + timeout
    while not condition():
        if time.monotonic() > deadline:
            raise TimeoutError("the screen did not settle")
        await pilot.pause(0.01)


async def bench_screen(db: Path, repeat: int) -> dict[str, list[float]]:
    app = make_app(db, today=DEMO_TODAY, who="bench")
    out: dict[str, list[float]] = {}
    async with app.run_test(size=(100, 36)) as pilot:
        app.action_go("neutralize")
        await _wait(pilot, lambda: isinstance(app.screen, NeutralizeScreen)
                    and app.screen._composed)
        screen: NeutralizeScreen = app.screen
        applied: list[float] = []
        original = screen._apply

        def timed_apply(outcome):
            original(outcome)
            applied.append(time.perf_counter())

        screen._apply = timed_apply
        for label, reagent in CASES:
            name = label or "typed"
            if label:
                screen.load_container(label)
                await _wait(pilot, lambda label=label: screen.container is not None
                            and screen.container.label == label)
            else:
                screen.action_typed_sample()
                screen.query_one("#components", Input).value = "H2SO4=0.05M NaH2PO4=10mM"
                screen.query_one("#volume", Input).value = "250 mL"
            screen.query_one("#reagent", Input).value = reagent
            target = screen.query_one("#target", Input)
            times = []
            for i in range(repeat):
                await _wait(pilot, lambda: screen._plan_is_current())
                await asyncio.sleep(DEBOUNCE_S * 1.5)  # idle: the next key is planned at once
                target.focus()
                await pilot.pause()
                new = TARGETS[i % 2]
                target.value = new[:-1]
                target.cursor_position = len(target.value)
                await _wait(pilot, lambda: screen._plan_is_current())
                await asyncio.sleep(DEBOUNCE_S * 1.5)
                applied.clear()
                t0 = time.perf_counter()
                await pilot.press(new[-1])
                await _wait(pilot, lambda new=new: screen.outcome is not None
                            and screen.outcome.state.fields.target == new and bool(applied))
                times.append((applied[-1] - t0) * 1000.0)
            out[name] = times
    return out


def bench_compute(repeat: int) -> dict[str, list[float]]:
    from carboy.store import waste
    from carboy.store.db import open_database
    from carboy.store.planning import container_sample as load_container_info

    with tempfile.TemporaryDirectory() as tmp:
        db = create_demo_database(Path(tmp) / "demo.db", today=DEMO_TODAY)
        store = open_database(db)
        try:
            infos = {c.label: load_container_info(store, c.label) for c in waste.containers(store)}
        finally:
            store.close()
    out = {}
    for label, reagent in CASES:
        if label:
            info, catalog = infos[label]
            state = FormState(NeutralizeFields(reagent=reagent), info)
        else:
            catalog = None
            state = FormState(NeutralizeFields(components="H2SO4=0.05M NaH2PO4=10mM",
                                               volume="250 mL", reagent=reagent))
        compute(state, catalog=catalog)  # warm caches
        times = []
        for _ in range(repeat):
            t0 = time.perf_counter()
            compute(state, catalog=catalog)
            times.append((time.perf_counter() - t0) * 1000.0)
        out[label or "typed"] = times
    return out


def screen_figures(repeat: int) -> dict[str, list[float]]:
    """The keystroke figures of the screen, on a demo storeroom of their own."""
    with tempfile.TemporaryDirectory() as tmp:
        db = create_demo_database(Path(tmp) / "demo.db", today=DEMO_TODAY)
        return asyncio.run(bench_screen(db, repeat))


def p95(times: list[float]) -> float:
    ordered = sorted(times)
    return ordered[min(len(ordered) - 1, round(0.95 * (len(ordered) - 1)))]


def report(title: str, figures: dict[str, list[float]]) -> None:
    print(title)
    for name, times in figures.items():
        med, high, worst = statistics.median(times), p95(times), max(times)
        mark = "ok  " if med <= TARGET_MS and high <= P95_TARGET_MS else "SLOW"
        print(f"  {mark} {name:<7} median {med:7.1f} ms   p95 {high:7.1f} ms   "
              f"max {worst:7.1f} ms   (n={len(times)})")


def rows(what: str, figures: dict[str, list[float]], peak_mb: float, how: str) -> list[Row]:
    """One row per case (median and p95 against both targets), and the peak memory."""
    reagents = {label or "typed": reagent for label, reagent in CASES}
    out = []
    for name, times in figures.items():
        med, high = statistics.median(times), p95(times)
        sample = f"; typed sample {TYPED}" if name == "typed" else ""
        out.append(Row(f"neutralize: {what}, {name} + {reagents[name]}",
                       f"{med:.1f} / {high:.1f} ms",
                       f"median <= {TARGET_MS:g}, p95 <= {P95_TARGET_MS:g} ms",
                       med <= TARGET_MS and high <= P95_TARGET_MS,
                       f"median / p95; max {max(times):.1f} ms, n={len(times)}{sample}"))
    out.append(Row(f"neutralize: {what}, peak RSS", f"{peak_mb:.0f} MB", "reported", True,
                   how))
    return out


def figures(repeat: int = 20, *, show: bool = False) -> list[Row]:
    """The figures :func:`main` measures (same default), one ``Row`` each; ``show``:
    print every case in detail too, as soon as it is measured."""
    targets = f"targets median {TARGET_MS:g} ms, p95 {P95_TARGET_MS:g} ms"
    alone, alone_mb = in_fresh_process("bench_neutralize", "bench_compute", repeat)
    if show:
        report(f"planner alone (compute), {targets}", alone)
    keyed, keyed_mb = in_fresh_process("bench_neutralize", "screen_figures", repeat)
    if show:
        report(f"keystroke -> plan applied (headless), {targets}", keyed)
    return (rows("planner alone", alone, alone_mb,
                 f"its process: the demo storeroom, compute() {repeat + 1} times a case")
            + rows("headless key to plan applied", keyed, keyed_mb,
                   f"its process: the demo storeroom, the app headless at 100x36, "
                   f"{repeat} timed keys a case"))


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=20)
    args = parser.parse_args()
    rows_ = figures(args.repeat, show=True)
    print()
    print_table(rows_, "Neutralize: the planner alone, and a keystroke to the plan applied")


if __name__ == "__main__":
    main()
