"""Cold start: ``carboy ph …`` and ``carboy neutralize …`` as whole processes, and the
demo database.

Run by hand (pytest does not collect it)::

    python tests/benchmarks/bench_start.py [--rounds 15]   (or run_all.py for every figure)

Each command runs as a new process, as a person or a script starts it (the ``carboy``
script beside this Python), interleaved with the others, round after round; the figure
is the median wall time from start to exit, with the worst run beside it, and the peak
memory of one more run, started from a small launcher (see ``_LAUNCHER``).
Two conditions:

* **bytecode cached**: carboy's modules compiled once and read from ``__pycache__``
  (an installed wheel, or a checkout after its first run);
* **compiled each run**: ``PYTHONDONTWRITEBYTECODE=1`` set, as some environments do, on
  a copy of carboy without ``__pycache__``, so every run compiles carboy's own modules
  (the libraries keep the bytecode their installer wrote).

Both run the carboy this file imports: with ``PYTHONPATH=DIR`` set (a worktree beside an
editable install elsewhere), the commands run ``DIR``'s carboy too.

For scale, ``python -c pass`` and ``python -c "import numpy"`` run in the same rounds.
The modules each command loads are listed once: neither may load the store,
sqlite-utils, pandas (which sqlite-utils imports when it is installed), textual or the
app (``MUST_NOT_LOAD``).
Targets: 200 ms for each command, in each condition; the demo storeroom in one
transaction (one commit), timed in this process (its peak memory is that of a fresh
process that built it once).
"""

from __future__ import annotations

import argparse
import importlib.util
import os
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))
sys.path.insert(0, str(Path(__file__).resolve().parent))

from _bench import Row, peak_rss_mb, print_table  # noqa: E402
from benchkit import machine_note  # noqa: E402

TARGET_MS = 200.0
COMMANDS = {
    "carboy ph H2SO4=0.05M": ["ph", "H2SO4=0.05M"],
    "carboy neutralize (H2SO4, NaOH)": ["neutralize", "H2SO4=0.5M", "--volume", "250mL",
                                        "--reagent", "NaOH=2M"],
}
FLOORS = {"python -c pass": ["-c", "pass"], "python -c 'import numpy'": ["-c", "import numpy"]}
MUST_NOT_LOAD = ("carboy.store", "sqlite_utils", "pandas", "textual", "carboy.tui.app")


def _run(argv: list[str], env: dict) -> float:
    """Wall milliseconds from start to exit."""
    start = time.perf_counter()
    proc = subprocess.Popen(argv, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _pid, status, _usage = os.wait4(proc.pid, 0)
    wall = (time.perf_counter() - start) * 1000
    proc.returncode = os.waitstatus_to_exitcode(status)
    err = proc.stderr.read().decode() if proc.stderr else ""
    proc.stderr.close()
    if proc.returncode != 0:
        raise SystemExit(f"{' '.join(argv)} failed ({proc.returncode}): {err}")
    return wall


_LAUNCHER = """import os, sys
pid = os.fork()
if pid == 0:
    null = os.open(os.devnull, os.O_WRONLY)
    os.dup2(null, 1)
    os.execve(sys.argv[1], sys.argv[1:], os.environ)
_pid, status, usage = os.wait4(pid, 0)
print(usage.ru_maxrss, os.waitstatus_to_exitcode(status))
"""
"""Starts a command and prints its peak memory (kB) and exit status.  A child's peak
(``ru_maxrss``) starts from the memory of the process it was forked from, so the
command is started from this small launcher, not from the benchmark (which may hold
hundreds of MB when run_all.py has run other benchmarks before it)."""


def _peak_mb(argv: list[str], env: dict) -> float:
    """The peak memory (MB) of one run of ``argv``, started from the small launcher."""
    out = subprocess.run([sys.executable, "-c", _LAUNCHER, *argv], env=env,
                         capture_output=True, text=True, check=True)
    kb, status = out.stdout.split()
    if status != "0":
        raise SystemExit(f"{' '.join(argv)} failed ({status}): {out.stderr}")
    return int(kb) / 1024


def _carboy_script() -> list[str]:
    script = Path(sys.executable).with_name("carboy")
    return [str(script)] if script.exists() else [sys.executable, "-m", "carboy"]


def _loaded(args: list[str], env: dict) -> list[str]:
    code = ("import sys, io, contextlib\nfrom carboy.tui.launch import main\n"
            "with contextlib.redirect_stdout(io.StringIO()): main(sys.argv[1:])\n"
            f"print(sorted(m for m in sys.modules if m.startswith({MUST_NOT_LOAD!r})))")
    out = subprocess.run([sys.executable, "-c", code, *args], env=env, capture_output=True,
                         text=True, check=True)
    return eval(out.stdout.strip().splitlines()[-1])  # a list of names this file printed


def _conditions(tmp: Path) -> dict[str, dict]:
    base = {k: v for k, v in os.environ.items()
            if k not in ("PYTHONDONTWRITEBYTECODE", "PYTHONPATH")}
    source = Path(importlib.util.find_spec("carboy").origin).parent
    cached = dict(base)
    if "PYTHONPATH" in os.environ:  # a checkout run as PYTHONPATH=DIR: time that carboy
        cached["PYTHONPATH"] = os.environ["PYTHONPATH"]
    copy = tmp / "src"
    shutil.copytree(source, copy / "carboy", ignore=shutil.ignore_patterns("__pycache__"))
    compiled = dict(base, PYTHONDONTWRITEBYTECODE="1", PYTHONPATH=str(copy))
    return {"bytecode cached": cached, "compiled each run": compiled}


def measure(rounds: int) -> list[Row]:
    """The commands and the floors, interleaved round after round; and the modules each
    command loads."""
    carboy = _carboy_script()
    with tempfile.TemporaryDirectory(prefix="carboy-start-") as tmp:
        conditions = _conditions(Path(tmp))
        runs = []
        for cond, env in conditions.items():
            for name, args in COMMANDS.items():
                runs.append((f"{name} [{cond}]", carboy + args, env, TARGET_MS))
        for name, args in FLOORS.items():
            runs.append((name, [sys.executable, *args], conditions["bytecode cached"], None))
        for _name, argv, env, _t in runs:  # warm: caches written, files in the page cache
            _run(argv, env)
        walls: dict[str, list[float]] = {r[0]: [] for r in runs}
        for _ in range(rounds):
            for name, argv, env, _t in runs:
                walls[name].append(_run(argv, env))
        peaks = {name: _peak_mb(argv, env) for name, argv, env, _t in runs}
        rows = []
        for name, _a, _e, target in runs:
            med = statistics.median(walls[name])
            rows.append(Row(f"start: {name}", f"{med:.0f} ms",
                            "reported" if target is None else f"<= {target:g} ms",
                            target is None or med <= target,
                            f"worst {max(walls[name]):.0f} ms of {rounds}; peak RSS "
                            f"{peaks[name]:.0f} MB (one more run, from a small launcher)"))
        pandas = "yes" if importlib.util.find_spec("pandas") is not None else "no"
        for name, args in COMMANDS.items():
            found = _loaded(args, conditions["bytecode cached"])
            rows.append(Row(f"start: modules {name} loads", ", ".join(found) or "none",
                            "none listed", not found,
                            f"listed: {', '.join(MUST_NOT_LOAD)}; pandas installed: {pandas}"))
    return rows


def create_demo_once() -> None:
    """One demo storeroom, in a folder removed afterwards (for the peak-memory figure)."""
    from carboy.store.demo import create_demo_database

    with tempfile.TemporaryDirectory() as tmp:
        create_demo_database(Path(tmp) / "demo.db")


def measure_demo(rounds: int) -> list[Row]:
    """The demo storeroom's build time, and the transactions it commits after the schema
    (every statement is traced on the demo's own connection)."""
    from carboy.store import demo

    real_open = demo.open_database
    statements: list[str] = []

    def traced(path, *args, **kwargs):
        store = real_open(path, *args, **kwargs)
        store.conn.set_trace_callback(statements.append)
        return store

    times, commits = [], []
    demo.open_database = traced
    try:
        for _ in range(rounds):
            statements.clear()
            with tempfile.TemporaryDirectory() as tmp:
                start = time.perf_counter()
                demo.create_demo_database(Path(tmp) / "demo.db")
                times.append((time.perf_counter() - start) * 1000)
            commits.append(sum(s.strip().upper().startswith("COMMIT") for s in statements))
    finally:
        demo.open_database = real_open
    rss = peak_rss_mb("bench_start", "create_demo_once")
    return [Row("start: demo storeroom, create_demo_database (schema included)",
                f"{statistics.median(times):.0f} ms", "reported", True,
                f"worst {max(times):.0f} ms of {rounds}; peak RSS {rss:.0f} MB (a fresh "
                "process, one build)"),
            Row("start: demo storeroom, transactions committed after the schema",
                str(max(commits)), "1", max(commits) == 1, f"most of {rounds} builds")]


def figures(rounds: int = 15) -> list[Row]:
    """Every figure: the commands in both conditions, the floors, the modules loaded, the
    demo storeroom."""
    return measure(rounds) + measure_demo(max(5, rounds // 2))


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rounds", type=int, default=15)
    args = parser.parse_args()
    print(machine_note())
    rows = figures(args.rounds)
    print_table(rows, f"cold start, whole process ({args.rounds} interleaved rounds), and the "
                "demo storeroom")
    return 0 if all(r.ok for r in rows) else 1


if __name__ == "__main__":
    sys.exit(main())
