"""Cold start: ``carboy ph …`` and ``carboy neutralize …`` as whole processes, and the
demo database.

Run by hand (pytest does not collect it)::

    python tests/benchmarks/bench_start.py [--rounds 15]

Each command runs as a new process, as a person or a script starts it (the ``carboy``
script beside this Python), interleaved with the others, round after round; the figure
is the median wall time from start to exit, with the peak memory of the slowest run.
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
sqlite-utils or pandas (which sqlite-utils imports when it is installed).
Targets: 200 ms for each command, in each condition; the demo storeroom in one
transaction (one commit), timed in this process.
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

from benchkit import Figure, machine_note, table  # noqa: E402

TARGET_MS = 200.0
COMMANDS = {
    "carboy ph H2SO4=0.05M": ["ph", "H2SO4=0.05M"],
    "carboy neutralize (H2SO4, NaOH)": ["neutralize", "H2SO4=0.5M", "--volume", "250mL",
                                        "--reagent", "NaOH=2M"],
}
FLOORS = {"python -c pass": ["-c", "pass"], "python -c 'import numpy'": ["-c", "import numpy"]}
MUST_NOT_LOAD = ("carboy.store", "sqlite_utils", "pandas", "textual", "carboy.tui.app")


def _run(argv: list[str], env: dict) -> tuple[float, float]:
    """Wall milliseconds from start to exit, and the child's peak memory in MB."""
    start = time.perf_counter()
    proc = subprocess.Popen(argv, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _pid, status, usage = os.wait4(proc.pid, 0)
    wall = (time.perf_counter() - start) * 1000
    proc.returncode = os.waitstatus_to_exitcode(status)
    err = proc.stderr.read().decode() if proc.stderr else ""
    proc.stderr.close()
    if proc.returncode != 0:
        raise SystemExit(f"{' '.join(argv)} failed ({proc.returncode}): {err}")
    return wall, usage.ru_maxrss / 1024


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


def measure(rounds: int) -> bool:
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
        peaks: dict[str, float] = {r[0]: 0.0 for r in runs}
        for _ in range(rounds):
            for name, argv, env, _t in runs:
                wall, peak = _run(argv, env)
                walls[name].append(wall)
                peaks[name] = max(peaks[name], peak)
        figures = [Figure(f"{name} (peak {peaks[name]:.0f} MB)",
                          statistics.median(walls[name]), max(walls[name]), target)
                   for name, _a, _e, target in runs]
        ok = table(f"cold start, whole process ({rounds} interleaved rounds)", figures)
        pandas = importlib.util.find_spec("pandas") is not None
        print(f"\npandas installed: {'yes' if pandas else 'no'}")
        for name, args in COMMANDS.items():
            found = _loaded(args, conditions["bytecode cached"])
            ok &= not found
            print(f"{name} loads {', '.join(found) if found else 'none of'} "
                  f"{'' if found else ', '.join(MUST_NOT_LOAD)}")
    return ok


def measure_demo(rounds: int) -> bool:
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
    table("the demo storeroom", [Figure("create_demo_database (schema included)",
                                        statistics.median(times), max(times), None)])
    print(f"transactions committed after the schema: {max(commits)} (target: 1)")
    return max(commits) == 1


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rounds", type=int, default=15)
    args = parser.parse_args()
    print(machine_note())
    ok = measure(args.rounds)
    ok &= measure_demo(max(5, args.rounds // 2))
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
