"""The speed a person feels: first frame of ``carboy --demo``, and keystroke to redraw.

Run by hand (pytest does not collect it)::

    python tests/benchmarks/bench_startup.py [--starts 7] [--keys 40] [--sessions 2]

Everything runs in a real pseudo-terminal (``ptyterm.py``): carboy is started as a
person's shell starts it, draws real escape sequences, and this side reads them as a
terminal would, time-stamping each frame as its last byte arrives.  (Textual's headless
driver would not do: it skips turning each frame into terminal output, part of what a
keystroke costs.)  The terminal answers that it supports synchronized output, as current
terminals do, so each frame arrives whole between two marks.

1. **First frame**: from just before the process is started (the Python interpreter
   included) to the end of the first frame that shows the stock list's first page
   ("rows 1–…"), 80×24.  Measured with the day's demo storeroom already in the cache
   (every run of the day after the first) and with an empty cache (the first run of a
   day or a version: a second process builds it while the app loads).  The cache is a
   private temporary folder (``CARBOY_CACHE_DIR``), never the user's.
2. **Keystroke to redraw**, 100×36: from writing the key to the terminal to the end of
   the first frame that shows what the screen settles on (its text unchanged for
   ``--quiet`` seconds afterwards): ↓/↑ on the stock list (the status line names the
   bottle), ↓/↑ on the waste list (the container's details are read in a worker), and
   a digit typed into the target pH on the Neutralize screen for container AL-03 with
   reagent HCl=1M (the plan is computed in a worker and drawn).  Between two timed
   keys the screen is left idle, as between two keystrokes of a person who reads.

Targets (issue 13, point 7): first frame ≤ 0.6 s median; keystroke to redraw ≤ 50 ms
median and ≤ 100 ms at the 95th percentile.  Figures are noisy on a busy machine: run
``--sessions`` more than once and read the best session (the table's row per screen is
the best session's).  Beside each time, the peak memory (RSS, ``VmHWM``) of the app's
process, read just before it is asked to quit: at its first frame, or over a session.

:func:`figures` (for ``run_all.py``) measures what :func:`main` does with its default
options and returns one ``_bench.Row`` per figure; :func:`main` prints the runs in
detail, then the same table.
"""

from __future__ import annotations

import argparse
import math
import os
import statistics
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

from _bench import Row, print_table  # noqa: E402
from benchkit import machine_note  # noqa: E402
from ptyterm import PtyTerminal  # noqa: E402

FIRST_FRAME_TARGET_S = 0.6
KEY_MEDIAN_TARGET_MS = 50.0
KEY_P95_TARGET_MS = 100.0
FIRST_PAGE = "rows 1–"
CARBOY = [sys.executable, "-P", "-c", "import sys; from carboy.tui.launch import main; "
          "sys.exit(main())"]
"""``carboy`` itself (what the console script runs), for this Python (``-P``: never a
carboy that happens to be in the working directory)."""


SOURCE: Path | None = None
"""A checkout to run instead of the installed carboy (``--source``: before and after)."""


def environment(cache: Path) -> dict[str, str]:
    env = {k: v for k, v in os.environ.items()
           if k != "NO_COLOR" and not k.startswith("TEXTUAL") and k != "PYTHONPATH"}
    env.update(TERM="xterm-256color", CARBOY_CACHE_DIR=str(cache), COLORTERM="truecolor")
    if SOURCE is not None:
        env["PYTHONPATH"] = str(SOURCE)
    return env


def start(cache: Path, cols: int = 80, rows: int = 24) -> PtyTerminal:
    return PtyTerminal([*CARBOY, "--demo"], environment(cache), cols, rows)


def child_peak_mb(pid: int) -> float:
    """Peak resident memory (MB) of the running process ``pid`` so far: ``VmHWM`` of
    /proc/<pid>/status (NaN where there is no /proc)."""
    try:
        with open(f"/proc/{pid}/status", encoding="ascii") as f:
            for line in f:
                if line.startswith("VmHWM:"):
                    return int(line.split()[1]) / 1024.0
    except OSError:
        pass
    return math.nan


def first_frame_s(cache: Path, peaks: list[float] | None = None) -> float:
    """Seconds from process start to the first page of the stock list on screen (and
    the app's peak memory at that frame, in MB, appended to ``peaks``)."""
    term = start(cache)
    try:
        shown = term.until(lambda t: t.contains(FIRST_PAGE)) - term.started
        if peaks is not None:
            peaks.append(child_peak_mb(term.pid))
        return shown
    finally:
        term.close()


def first_frames(runs: int, *, cold: bool = True,
                 peaks: dict[str, list[float]] | None = None) -> dict[str, list[float]]:
    """Warm and cold starts, interleaved (a cold one has a cache folder of its own); the
    app's peak memory of each start (MB) into ``peaks``, by the same names."""
    out: dict[str, list[float]] = {"warm cache": [], "cold cache": []}
    rss: dict[str, list[float]] = {name: [] for name in out}
    with tempfile.TemporaryDirectory(prefix="carboy-bench-") as tmp:
        warm = Path(tmp) / "warm"
        first_frame_s(warm)  # builds the day's demo storeroom (and compiles bytecode)
        for n in range(runs):
            out["warm cache"].append(first_frame_s(warm, rss["warm cache"]))
            if cold:
                out["cold cache"].append(first_frame_s(Path(tmp) / f"cold-{n}",
                                                       rss["cold cache"]))
    if peaks is not None:
        peaks.update({name: mb for name, mb in rss.items() if mb})
    return {name: runs for name, runs in out.items() if runs}


def timed_key(term: PtyTerminal, key: str, quiet_s: float) -> float:
    """Milliseconds from ``key`` to the first frame showing what the screen settles on."""
    term.settle(quiet_s)
    frames: list[tuple[float, str]] = []
    sent = term.press(key)
    text = term.settle(quiet_s, on_frame=lambda t: frames.append((t.last_frame_at, t.text())))
    settled_at = next((at for at, shown in frames if shown == text), None)
    if settled_at is None:
        raise RuntimeError(f"the key {key!r} changed nothing on screen:\n{text}")
    return (settled_at - sent) * 1000.0


def keystrokes(keys: int, quiet_s: float,
               peaks: list[float] | None = None) -> dict[str, list[float]]:
    """One session: the stock list, the waste list, the Neutralize screen on AL-03 (the
    app's peak memory over the session, in MB, appended to ``peaks``)."""
    out: dict[str, list[float]] = {}
    with tempfile.TemporaryDirectory(prefix="carboy-bench-") as tmp:
        term = start(Path(tmp), 100, 36)
        try:
            term.until(lambda t: t.contains(FIRST_PAGE))
            out["stock list ↓/↑"] = _alternate(term, ("down", "up"), keys, quiet_s)
            term.press("f3")
            term.until(lambda t: t.contains("Container AL-03"))
            out["waste list ↓/↑"] = _alternate(term, ("down", "up"), keys, quiet_s)
            term.settle(quiet_s)
            term.press("p")
            term.until(lambda t: t.contains("AL-03 · "))
            term.settle(quiet_s)
            for ch in "HCl=1M":  # the reagent field has the focus
                term.press(ch)
            term.press("tab")  # to the target pH, "7.0"
            term.press("\x1b[F")  # End: the cursor after the text, nothing selected
            term.until(lambda t: t.contains("understood: HCl"), timeout=30)
            out["neutralize AL-03, target pH digit"] = _target_digits(term, keys, quiet_s)
            if peaks is not None:
                peaks.append(child_peak_mb(term.pid))
        finally:
            term.close()
    return out


def _alternate(term: PtyTerminal, pair: tuple[str, str], keys: int,
               quiet_s: float) -> list[float]:
    """``keys`` timed keys, the two of ``pair`` in turn; after an odd number one more of
    the second, untimed, so the cursor ends where it started (on the waste list the
    session goes on from AL-03)."""
    times = [timed_key(term, pair[n % 2], quiet_s) for n in range(keys)]
    if keys % 2:
        timed_key(term, pair[1], quiet_s)
    return times


def _target_digits(term: PtyTerminal, keys: int, quiet_s: float) -> list[float]:
    """"7.0" → backspace → "7." (pH 7) → a timed digit: "7.5", then "7.8", in turn."""
    times = []
    for n in range(keys):
        term.press("backspace")
        times.append(timed_key(term, "58"[n % 2], quiet_s))
    return times


def p95(values: list[float]) -> float:
    ordered = sorted(values)
    return ordered[min(len(ordered) - 1, round(0.95 * (len(ordered) - 1)))]


def report_first(frames: dict[str, list[float]]) -> None:
    print(f"\nfirst frame of carboy --demo, process start to the first page "
          f"(real pty, 80x24), target median <= {FIRST_FRAME_TARGET_S:g} s")
    for name, runs in frames.items():
        med = statistics.median(runs)
        verdict = "met" if med <= FIRST_FRAME_TARGET_S else "MISSED"
        print(f"  {name:<11} median {med * 1000:6.0f} ms  best {min(runs) * 1000:6.0f} ms  "
              f"worst {max(runs) * 1000:6.0f} ms  (n={len(runs)})  {verdict}")


def best_sessions(sessions: list[dict[str, list[float]]]) -> dict[str, tuple[float, float]]:
    """Per screen, the (median, p95) of its best session: the lowest median, then p95."""
    best: dict[str, tuple[float, float]] = {}
    for figures in sessions:
        for name, times in figures.items():
            now = (statistics.median(times), p95(times))
            if name not in best or now < best[name]:
                best[name] = now
    return best


def report_keys(sessions: list[dict[str, list[float]]]) -> None:
    print(f"\nkeystroke to redraw (real pty, 100x36), targets median <= "
          f"{KEY_MEDIAN_TARGET_MS:g} ms, p95 <= {KEY_P95_TARGET_MS:g} ms")
    for n, figures in enumerate(sessions, 1):
        print(f" session {n}")
        for name, times in figures.items():
            med, high = statistics.median(times), p95(times)
            print(f"  {name:<36} median {med:6.1f} ms  p95 {high:6.1f} ms  "
                  f"max {max(times):6.1f} ms  (n={len(times)})  {_verdict(med, high)}")
    if len(sessions) > 1:
        print(" best session per screen")
        for name, (med, high) in best_sessions(sessions).items():
            print(f"  {name:<36} median {med:6.1f} ms  p95 {high:6.1f} ms  "
                  f"{_verdict(med, high)}")


def _verdict(med: float, high: float) -> str:
    return "met" if _met(med, high) else "MISSED"


def _met(med: float, high: float) -> bool:
    return med <= KEY_MEDIAN_TARGET_MS and high <= KEY_P95_TARGET_MS


def highest_mb(values: list[float]) -> str:
    """The highest of some peak-memory readings, in MB ("n/a" without /proc)."""
    known = [v for v in values if not math.isnan(v)]
    return f"{max(known):.0f} MB" if known else "n/a"


def first_frame_rows(frames: dict[str, list[float]],
                     peaks: dict[str, list[float]]) -> list[Row]:
    """One row per kind of start: the median, against the target."""
    rows = []
    for name, runs in frames.items():
        med = statistics.median(runs)
        rows.append(Row(f"startup: first frame, {name}", f"{med * 1000:.0f} ms",
                        f"median <= {FIRST_FRAME_TARGET_S:g} s", med <= FIRST_FRAME_TARGET_S,
                        f"best {min(runs) * 1000:.0f} ms, worst {max(runs) * 1000:.0f} ms, "
                        f"n={len(runs)}, real pty 80x24; app's peak RSS at its first frame "
                        f"{highest_mb(peaks.get(name, []))}"))
    return rows


def key_rows(sessions: list[dict[str, list[float]]], peaks: list[float]) -> list[Row]:
    """One row per screen: the best session's median and p95, against both targets; and
    the app's peak memory over a session."""
    rows = []
    for name, (med, high) in best_sessions(sessions).items():
        every = ", ".join(f"{statistics.median(s[name]):.1f}" for s in sessions)
        which = (f"best of {len(sessions)} sessions (lowest median, then p95); medians "
                 f"{every} ms" if len(sessions) > 1 else "one session")
        rows.append(Row(f"startup: key to redraw, {name}", f"{med:.1f} / {high:.1f} ms",
                        f"median <= {KEY_MEDIAN_TARGET_MS:g}, p95 <= {KEY_P95_TARGET_MS:g} ms",
                        _met(med, high),
                        f"median / p95; {which}; n={len(sessions[0][name])} keys a session, "
                        "real pty 100x36"))
    rows.append(Row("startup: key sessions, app's peak RSS", highest_mb(peaks), "reported",
                    True, f"the app's VmHWM just before it quits, the highest of "
                    f"{len(sessions)} session(s) (each: all three screens)"))
    return rows


def figures(starts: int = 7, keys: int = 40, sessions: int = 2, quiet: float = 0.4,
            only: str | None = None, *, show: bool = False) -> list[Row]:
    """The figures :func:`main` measures (same defaults), one ``Row`` each; ``show``:
    print every run in detail too, each half as soon as it is measured."""
    rows = []
    if only != "keys":
        peaks: dict[str, list[float]] = {}
        frames = first_frames(starts, peaks=peaks)
        if show:
            report_first(frames)
        rows += first_frame_rows(frames, peaks)
    if only != "starts":
        rss: list[float] = []
        runs = [keystrokes(keys, quiet, rss) for _ in range(sessions)]
        if show:
            report_keys(runs)
        rows += key_rows(runs, rss)
    return rows


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--starts", type=int, default=7, help="first frames of each kind")
    parser.add_argument("--keys", type=int, default=40, help="timed keys per screen")
    parser.add_argument("--sessions", type=int, default=2, help="app sessions for the keys")
    parser.add_argument("--quiet", type=float, default=0.4,
                        help="seconds without a change that count as settled")
    parser.add_argument("--source", type=Path, help="run the carboy of this checkout")
    parser.add_argument("--only", choices=("starts", "keys"), help="one half of the figures")
    args = parser.parse_args(argv)
    global SOURCE
    SOURCE = args.source
    print(machine_note() + (f"; carboy from {SOURCE}" if SOURCE else ""))
    rows = figures(args.starts, args.keys, args.sessions, args.quiet, args.only, show=True)
    print()
    print_table(rows, "first frame and keystroke to redraw, real pty" + (
        f" (carboy from {SOURCE})" if SOURCE else ""))
    return 0


if __name__ == "__main__":
    sys.exit(main())
