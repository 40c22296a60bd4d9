"""Shared fixtures for every test tier."""

from __future__ import annotations

import os
import shutil
from pathlib import Path

import pytest


@pytest.fixture(autouse=True, scope="session")
def private_cache(tmp_path_factory):
    """Every test (and every process a test starts) keeps the demo storeroom in a
    temporary folder: never in the user cache directory of whoever runs the tests."""
    folder = tmp_path_factory.mktemp("carboy-cache")
    before = os.environ.get("CARBOY_CACHE_DIR")
    os.environ["CARBOY_CACHE_DIR"] = str(folder)
    yield folder
    if before is None:
        os.environ.pop("CARBOY_CACHE_DIR", None)
    else:
        os.environ["CARBOY_CACHE_DIR"] = before


@pytest.fixture(scope="session")
def catalog():
    from carboy.model.catalog import default_catalog

    return default_catalog()


@pytest.fixture(scope="session")
def demo_template(tmp_path_factory) -> Path:
    """The demo storeroom (dated ``DEMO_TODAY``), built once per test process.

    Never open it: take a private copy with :func:`copy_demo`.  The builder closes the
    file, so its write-ahead log is merged and the one file is the whole database.
    """
    from carboy.store.demo import DEMO_TODAY, create_demo_database

    path = create_demo_database(tmp_path_factory.mktemp("demo-template") / "demo.db",
                                today=DEMO_TODAY)
    assert not path.with_name(path.name + "-wal").exists()
    return path


@pytest.fixture
def copy_demo(demo_template, tmp_path):
    """``copy_demo(name='demo.db')``: a private copy of the demo storeroom in ``tmp_path``
    (the same database ``create_demo_database`` writes, without building it again)."""

    def copy(name: str = "demo.db") -> Path:
        target = tmp_path / name
        shutil.copyfile(demo_template, target)
        return target

    return copy

