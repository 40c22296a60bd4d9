"""What `carboy --demo` loads before its first frame: the app, the stock list and the
copy of the kept demo storeroom, and none of the heavy parts other screens need (numpy,
scipy, pint, sqlite-utils, the planner, the recipes, the label tables, the command
line's commands)."""

from __future__ import annotations

import subprocess
import sys

HEAVY = ("numpy", "scipy", "pint", "sqlite_utils", "pandas", "carboy.model.planner",
         "carboy.store.stock", "carboy.store.preparations", "carboy.tui.cli.ph",
         "carboy.tui.app.screens.neutralize", "carboy.model.label_documents",
         "carboy.model.ghs")
FIRST_FRAME = ("carboy.tui.launch", "carboy.store.demo_cache", "carboy.tui.app.app",
               "carboy.tui.app.screens.stock")


def test_the_first_screen_loads_nothing_heavy():
    code = (f"import importlib, sys\nfor m in {FIRST_FRAME!r}: importlib.import_module(m)\n"
            f"print(' '.join(m for m in {HEAVY!r} if m in sys.modules))")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=60)
    assert done.returncode == 0, done.stderr
    assert done.stdout.split() == []
