"""How quickly the terminal app answers: first frame, and a 100,000-bottle stock list.

Run by hand (pytest does not collect it)::

    python tests/benchmarks/bench_tui.py

1. First frame: ``carboy --demo`` in a pseudo-terminal at 80×24, from process start until
   the first page of the stock list is on the terminal, the day's demo storeroom kept
   (target 0.6 s; median of 5 runs; ``bench_startup.py`` has it with the keystrokes).
2. 100,000 bottles, driven headless with a Pilot: next page by key, scrolling past the
   end of a page (the next one is fetched), and search as you type; for each, the time
   from the key to the rows on screen (for search, from the last keystroke, including
   what is left of the 150 ms pause the search waits for), and the longest stall of the
   event loop (a 10 ms ticker measures how late it runs).  A stall under about 100 ms is
   not visible.  The key is "sent" when the Pilot's press is called, and the search's
   last key when it returns: a press returns once the app has gone idle (at least two
   of Textual's 20 ms idle checks), a floor in the first two figures, part of the
   pause in the third.  The storeroom is built first (not timed), in a temporary
   folder; the app runs in a fresh Python process of its own.

No figure of part 2 has a target: they are reported.  Beside the times, peak memory
(RSS, ``VmHWM``): of the app's process at its first frame, and of the process that drove
part 2.  :func:`figures` (for ``run_all.py``) returns one ``_bench.Row`` per figure;
:func:`main` prints the runs in detail, then the same table.
"""

from __future__ import annotations

import asyncio
import statistics
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parents[1]))
sys.path.insert(0, str(HERE))

import scale_data  # noqa: E402
from _bench import Row, in_fresh_process, print_table  # noqa: E402
from bench_startup import FIRST_FRAME_TARGET_S, first_frames, highest_mb  # noqa: E402

from carboy.store.db import open_database  # noqa: E402
from carboy.store.demo import DEMO_TODAY  # noqa: E402

N_BOTTLES = 100_000
FIRST_FRAMES = 5
STALL_VISIBLE_S = 0.1

_COMPOUNDS = [("HCl", "hydrochloric acid"), ("NaOH", "sodium hydroxide"),
              ("H2SO4", "sulfuric acid"), ("HNO3", "nitric acid"), ("KOH", "potassium hydroxide"),
              ("CH3COOH", "acetic acid"), ("NH3", "ammonia solution")]
_PLACES = ["Acid cabinet", "Base cabinet", "Titration bench", "Cold room", "Spill station"]


def build(path: Path) -> None:
    store = open_database(path)
    rows = []
    for i in range(N_BOTTLES):
        key, name = _COMPOUNDS[i % len(_COMPOUNDS)]
        rows.append((key, name, "M", 0.1, None, None, "", 30, "L", 1.0, 1.0,
                     f"{_PLACES[i % len(_PLACES)]} {i % 40}", f"BX-{i:06d}", "2024-01-01",
                     None, "2026-01-01", "in-use", "", "2024-01-01T00:00:00.000+00:00", "bench"))
    store.write(lambda s: scale_data.insert_bottles(s, rows))
    store.close()


class Stall:
    """Ticks every 10 ms on the event loop; the worst lateness is the longest stall."""

    def __init__(self) -> None:
        self.worst = 0.0
        self._last = time.perf_counter()

    def tick(self) -> None:
        now = time.perf_counter()
        self.worst = max(self.worst, now - self._last - 0.01)
        self._last = now

    def reset(self) -> None:
        self.worst = 0.0
        self._last = time.perf_counter()


async def drive(path: Path) -> dict[str, list[float]]:
    from carboy.tui.app.app import make_app
    from carboy.tui.app.screens.stock import StockScreen

    app = make_app(path, today=DEMO_TODAY, who="bench")
    figures: dict[str, list[float]] = {"next page (key n)": [], "scroll past page end": [],
                                       "search: last key to rows": [], "stall": []}
    async with app.run_test(size=(80, 24)) as pilot:
        stall = Stall()
        app.set_interval(0.01, stall.tick)

        async def until(cond, timeout=10.0):
            t0 = time.perf_counter()
            while not cond():
                await asyncio.sleep(0.001)
                if time.perf_counter() - t0 > timeout:
                    raise RuntimeError(f"timed out: search={app.screen.search_text!r} "
                                   f"loading={app.screen.loading} focused={app.focused}")

        await until(lambda: isinstance(app.screen, StockScreen) and app.screen.loads)
        screen = app.screen
        table = screen.query_one("#stock-table")
        for _ in range(10):
            stall.reset()
            loads = screen.loads
            t0 = time.perf_counter()
            await pilot.press("n")
            await until(lambda n=loads: screen.loads > n)
            figures["next page (key n)"].append(time.perf_counter() - t0)
            figures["stall"].append(stall.worst)
        for _ in range(10):
            table.move_cursor(row=table.row_count - 1)
            await pilot.pause()
            stall.reset()
            loads = screen.loads
            t0 = time.perf_counter()
            await pilot.press("down")
            await until(lambda n=loads: screen.loads > n)
            figures["scroll past page end"].append(time.perf_counter() - t0)
            figures["stall"].append(stall.worst)
        for word in ("naoh", "acid cab", "bx-0999", "titration 3"):
            await pilot.press("slash")
            screen.query_one("#stock-search").value = ""
            await until(lambda: screen.search_text == "" and not screen.loading)
            stall.reset()
            for ch in word:
                await asyncio.sleep(0.03)  # a fast typist
                await pilot.press(ch if ch != " " else "space")
                last_key = time.perf_counter()
            await until(lambda w=word: screen.search_text == w and not screen.loading)
            figures["search: last key to rows"].append(time.perf_counter() - last_key)
            figures["stall"].append(stall.worst)
            await pilot.press("enter")
    return figures


def drive_figures(path: str) -> dict[str, list[float]]:
    """:func:`drive` on the storeroom at ``path`` (for a process of its own)."""
    return asyncio.run(drive(Path(path)))


def ms(values: list[float]) -> str:
    return (f"median {statistics.median(values) * 1000:6.1f} ms, "
            f"worst {max(values) * 1000:6.1f} ms")


def rows(runs: list[float], frame_mb: list[float], timed: dict[str, list[float]],
         drive_mb: float, built_s: float) -> list[Row]:
    """The first frame against its target; part 2's figures and peak memory reported."""
    med = statistics.median(runs)
    out = [Row("tui: first frame, warm cache", f"{med * 1000:.0f} ms",
               f"median <= {FIRST_FRAME_TARGET_S:g} s", med <= FIRST_FRAME_TARGET_S,
               f"best {min(runs) * 1000:.0f} ms, worst {max(runs) * 1000:.0f} ms, "
               f"n={len(runs)}, real pty 80x24; app's peak RSS at its first frame "
               f"{highest_mb(frame_mb)}")]
    for name, values in timed.items():
        if name == "stall":
            name, note = "longest event-loop stall", (
                f"each timed action's longest, {len(values)} actions; under about "
                f"{STALL_VISIBLE_S * 1000:.0f} ms is not visible")
        else:
            note = f"n={len(values)}; headless 80x24"
        out.append(Row(f"tui: {name}, {N_BOTTLES:,} bottles",
                       f"{statistics.median(values) * 1000:.1f} ms", "reported", True,
                       f"median; worst {max(values) * 1000:.1f} ms, {note}"))
    out.append(Row(f"tui: headless app on {N_BOTTLES:,} bottles, peak RSS",
                   f"{drive_mb:.0f} MB", "reported", True,
                   f"the process that drove the figures above; storeroom built "
                   f"beforehand in {built_s:.1f} s (not timed)"))
    return out


def figures(*, show: bool = False) -> list[Row]:
    """The figures :func:`main` measures, one ``Row`` each; ``show``: print the runs in
    detail too, as they are measured."""
    peaks: dict[str, list[float]] = {}
    runs = first_frames(FIRST_FRAMES, cold=False, peaks=peaks)["warm cache"]
    if show:
        verdict = "ok" if statistics.median(runs) <= FIRST_FRAME_TARGET_S else "TOO SLOW"
        print(f"first frame of carboy --demo (pty, 80x24): {ms(runs)}  "
              f"[target {FIRST_FRAME_TARGET_S:.1f} s: {verdict}]")
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "big.db"
        t0 = time.perf_counter()
        build(path)
        built_s = time.perf_counter() - t0
        if show:
            print(f"built {N_BOTTLES:,} bottles in {built_s:.1f} s")
        timed, drive_mb = in_fresh_process("bench_tui", "drive_figures", str(path))
    if show:
        for name, values in timed.items():
            label = "longest event-loop stall" if name == "stall" else name
            print(f"{label:>28}: {ms(values)}")
    return rows(runs, peaks.get("warm cache", []), timed, drive_mb, built_s)


def main() -> int:
    table = figures(show=True)
    print()
    print_table(table, "the terminal app: first frame, and a large stock list")
    return 0


if __name__ == "__main__":
    sys.exit(main())
