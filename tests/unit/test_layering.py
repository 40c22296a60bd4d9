"""The layering rule of design.md, enforced: model is pure, store knows no UI."""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

PROBE = """
import json, sys
import {module}
{extra}
print(json.dumps(sorted(m for m in sys.modules)))
"""


def loaded(module: str, extra: str = "") -> set[str]:
    out = subprocess.run([sys.executable, "-c", PROBE.format(module=module, extra=extra)],
                         capture_output=True, text=True, check=True)
    return set(json.loads(out.stdout))


def _has(mods: set[str], root: str) -> bool:
    return any(m == root or m.startswith(root + ".") for m in mods)


MODEL_USE = """
from carboy.model.catalog import default_catalog
from carboy.model.mixture import Mixture
from carboy.model.speciation import speciate
cat = default_catalog()
speciate(Mixture.from_compounds([(cat.compound("HCl"), 0.1)]), catalog=cat)
"""


@pytest.mark.parametrize("forbidden", ["textual", "sqlite_utils", "sqlite3", "carboy.store",
                                       "carboy.tui"])
def test_model_loads_no_ui_and_no_database(forbidden):
    mods = loaded("carboy.model", MODEL_USE)
    assert not _has(mods, forbidden)


@pytest.mark.parametrize("forbidden", ["textual", "carboy.tui"])
def test_store_loads_no_ui(forbidden):
    mods = loaded("carboy.store.db", "import carboy.store.stock, carboy.store.waste, "
                  "carboy.store.journal, carboy.store.demo")
    assert not _has(mods, forbidden)
