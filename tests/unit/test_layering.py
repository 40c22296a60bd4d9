"""The layering rule of design.md, enforced: model is pure, store knows no UI."""

from __future__ import annotations

import functools
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


@functools.cache
def loaded(module: str, extra: str = "") -> frozenset[str]:
    out = subprocess.run([sys.executable, "-c", PROBE.format(module=module, extra=extra)],
                         capture_output=True, text=True, check=True)
    return frozenset(json.loads(out.stdout))


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


def _imports_of(package: str) -> dict[str, set[str]]:
    """Every carboy module under ``package`` and the carboy modules it imports (at module
    level or inside functions), read from the source with the ast module."""
    import ast
    import pathlib

    import carboy

    root = pathlib.Path(carboy.__file__).parent.parent
    found: dict[str, set[str]] = {}
    for path in (root / package.replace(".", "/")).rglob("*.py"):
        module = ".".join(path.relative_to(root).with_suffix("").parts)
        module = module.removesuffix(".__init__")
        names: set[str] = set()
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.Import):
                names |= {a.name for a in node.names}
            elif isinstance(node, ast.ImportFrom) and node.module and node.level == 0:
                names.add(node.module)
                names |= {f"{node.module}.{a.name}" for a in node.names}
        found[module] = names
    return found


def _reaches(names: set[str], root: str) -> set[str]:
    return {n for n in names if n == root or n.startswith(root + ".")}


def test_the_app_never_imports_the_command_line():
    bad = {m: _reaches(n, "carboy.tui.cli") for m, n in _imports_of("carboy.tui.app").items()}
    assert not {m: n for m, n in bad.items() if n}


@pytest.mark.parametrize("forbidden", ["carboy.tui.app", "textual"])
def test_the_command_line_never_imports_the_app_or_textual(forbidden):
    bad = {m: _reaches(n, forbidden) for m, n in _imports_of("carboy.tui.cli").items()}
    assert not {m: n for m, n in bad.items() if n}


def test_the_command_line_loads_no_textual_at_run_time():
    mods = loaded("carboy.tui.cli.main", "carboy.tui.cli.main.build_parser()")
    assert not _has(mods, "textual") and not _has(mods, "carboy.tui.app")


def test_the_import_reader_sees_real_imports():
    app = _imports_of("carboy.tui.app")
    cli = _imports_of("carboy.tui.cli")
    assert "textual.app" in app["carboy.tui.app.app"]
    assert "carboy.tui.cli.kit" in cli["carboy.tui.cli.neutralize"]
