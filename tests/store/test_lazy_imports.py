"""What the store loads: sqlite-utils (which loads numpy, and pandas when installed) only
to apply migrations or nest a write; a copy of the kept demo storeroom needs neither it
nor the store's record modules.  Each probe runs in a fresh interpreter."""

from __future__ import annotations

import json
import subprocess
import sys

from carboy.store import demo
from carboy.store.db import init_database
from carboy.store.demo_cache import throwaway

WATCHED = ("sqlite_utils", "numpy", "carboy.store.journal", "carboy.store.stock",
           "carboy.store.waste", "carboy.store.migrations")


def _loaded_after(code: str, *argv: str) -> set[str]:
    probe = (f"import json, sys\n{code}\n"
             f"print(json.dumps(sorted(m for m in sys.modules if m in {WATCHED!r})))")
    done = subprocess.run([sys.executable, "-c", probe, *argv], capture_output=True,
                          text=True, timeout=120)
    assert done.returncode == 0, done.stderr
    return set(json.loads(done.stdout.splitlines()[-1]))


READ_AND_WRITE = """
from carboy.store import bottles
from carboy.store.db import open_database
store = open_database(sys.argv[1], create=sys.argv[2] == "new")
bottles.listing(store, None, limit=50)
store.write(lambda s: s.conn.execute("UPDATE stock_bottles SET notes = notes"))
store.close()
"""


def test_an_up_to_date_database_is_opened_read_and_written_without_sqlite_utils(tmp_path):
    path = tmp_path / "store.db"
    init_database(path).close()
    assert "sqlite_utils" not in _loaded_after(READ_AND_WRITE, str(path), "current")


def test_a_new_database_loads_sqlite_utils_for_its_migrations(tmp_path):
    assert "sqlite_utils" in _loaded_after(READ_AND_WRITE, str(tmp_path / "new.db"), "new")


COPY_DEMO = """
from datetime import date
from carboy.store.db import open_database
from carboy.store.demo_cache import throwaway
with throwaway(date.fromisoformat(sys.argv[1])) as path:
    open_database(path, create=False, check=False).close()
"""


def test_a_copy_of_the_kept_demo_loads_neither_sqlite_utils_nor_the_record_modules():
    with throwaway(demo.DEMO_TODAY):  # kept in the tests' private cache folder
        pass
    found = _loaded_after(COPY_DEMO, demo.DEMO_TODAY.isoformat())
    assert found <= {"carboy.store.migrations"}, found
