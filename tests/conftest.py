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



def _identity_only(self, other):
    """``==`` of a record declared ``eq=False``: it would be an identity test."""
    if other is not self and type(other) is type(self):
        raise AssertionError(
            f"two {type(self).__name__} records compared with ==: the record is declared "
            "eq=False, so that is an identity test; give it eq=True (and a test)")
    return NotImplemented


@pytest.fixture(autouse=True, scope="session")
def records_without_eq_are_never_compared():
    """The model's and the store's records declared ``eq=False`` (no ``__eq__`` made:
    cheaper to create, see DEVELOPERS.md) equal only themselves: through the whole
    suite, ``==`` between two distinct such records fails instead of quietly answering
    False."""
    import dataclasses
    import importlib
    import pkgutil
    import sys

    import carboy.model
    import carboy.store

    for package in (carboy.model, carboy.store):
        for info in pkgutil.walk_packages(package.__path__, package.__name__ + "."):
            importlib.import_module(info.name)
    patched = []
    for name, module in list(sys.modules.items()):
        if not name.startswith("carboy.") or module is None:
            continue
        for obj in list(vars(module).values()):
            if (isinstance(obj, type) and dataclasses.is_dataclass(obj)
                    and obj.__module__ == name and not obj.__dataclass_params__.eq
                    and "__eq__" not in obj.__dict__):
                obj.__eq__ = _identity_only
                patched.append(obj)
    assert patched   # the records this guards exist
    yield
    for obj in patched:
        del obj.__eq__
