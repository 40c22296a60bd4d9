"""The paper layer keeps the layering: documents are pure, the renderer knows no app."""

from __future__ import annotations

import functools
import json
import subprocess
import sys

import pytest

PROBE = """
import json, sys
{code}
print(json.dumps(sorted(sys.modules)))
"""


@functools.cache
def loaded(code: str) -> frozenset[str]:
    out = subprocess.run([sys.executable, "-c", PROBE.format(code=code)], capture_output=True,
                         text=True, check=True)
    return frozenset(json.loads(out.stdout))


def _has(mods: set[str], root: str) -> bool:
    return any(m == root or m.startswith(root + ".") for m in mods)


@pytest.mark.parametrize("forbidden", ["fpdf", "segno", "sqlite3", "carboy.store",
                                       "carboy.tui", "textual"])
def test_documents_are_pure_data(forbidden):
    mods = loaded("import carboy.model.documents, carboy.model.label_documents")
    assert not _has(mods, forbidden)


@pytest.mark.parametrize("forbidden", ["fpdf", "carboy.tui", "textual"])
def test_store_builders_know_no_renderer(forbidden):
    mods = loaded("import carboy.store.documents, carboy.store.disposal_record")
    assert not _has(mods, forbidden)


@pytest.mark.parametrize("forbidden", ["textual", "carboy.tui.app", "carboy.tui.cli"])
def test_renderer_imports_neither_front_end(forbidden):
    mods = loaded("import carboy.tui.paper.render\n"
                  "from carboy.model.documents import Document, Title\n"
                  "carboy.tui.paper.render.render([Document('x', 'x', (Title('x'),))])")
    assert _has(mods, "fpdf") and not _has(mods, forbidden)
