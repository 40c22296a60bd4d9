"""How quickly the terminal app answers: first frame, and a 100,000-bottle stock list.

Run by hand (pytest does not collect it)::

    python tests/benchmarks/bench_tui.py

1. First frame: ``carboy --demo`` in a pseudo-terminal at 80×24, from process start until
   the first page of the stock list is on the terminal, the day's demo storeroom kept
   (target 0.6 s; median of 5 runs; ``bench_startup.py`` has it with the keystrokes).
2. 100,000 bottles, driven headless with a Pilot: next page by key, scrolling past the
   end of a page (the next one is fetched), and search as you type; for each, the time
   from the key to the rows on screen (for search, from the last keystroke, including
   the 150 ms pause the search waits for), and the longest stall of the event loop (a
   10 ms ticker measures how late it runs).  A stall under about 100 ms is not visible.
"""

from __future__ import annotations

import asyncio
import statistics
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_startup import FIRST_FRAME_TARGET_S, first_frames  # noqa: E402

from carboy.store.db import open_database  # noqa: E402
from carboy.store.demo import DEMO_TODAY  # noqa: E402

N_BOTTLES = 100_000

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
    cols = ("compound_key, compound_name, strength_unit, label_strength, current_strength, "
            "measured_at, measured_how, restandardize_days, amount_unit, amount_left, "
            "container_size, location, lot, received_on, opened_on, expires_on, status, notes, "
            "added_at, added_by")
    store.write(lambda s: s.conn.executemany(
        f"INSERT INTO stock_bottles ({cols}) VALUES ({', '.join('?' * 20)})", rows))
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


def ms(values: list[float]) -> str:
    return (f"median {statistics.median(values) * 1000:6.1f} ms, "
            f"worst {max(values) * 1000:6.1f} ms")


def main() -> int:
    runs = first_frames(5, cold=False)["warm cache"]
    verdict = "ok" if statistics.median(runs) <= FIRST_FRAME_TARGET_S else "TOO SLOW"
    print(f"first frame of carboy --demo (pty, 80x24): {ms(runs)}  "
          f"[target {FIRST_FRAME_TARGET_S:.1f} s: {verdict}]")
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "big.db"
        t0 = time.perf_counter()
        build(path)
        print(f"built {N_BOTTLES:,} bottles in {time.perf_counter() - t0:.1f} s")
        figures = asyncio.run(drive(path))
    for name, values in figures.items():
        label = "longest event-loop stall" if name == "stall" else name
        print(f"{label:>28}: {ms(values)}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
