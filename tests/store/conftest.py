"""Fixtures for the store tests: a fresh database file and a demo database."""

from __future__ import annotations

import pytest

from carboy.store.db import open_database


@pytest.fixture
def db_path(tmp_path):
    return tmp_path / "store.db"


@pytest.fixture
def store(db_path):
    s = open_database(db_path)
    s.origin = "local"
    yield s
    s.close()


@pytest.fixture
def demo_path(copy_demo):
    """A private copy of the demo storeroom."""
    return copy_demo()


@pytest.fixture
def demo_store(demo_path):
    s = open_database(demo_path)
    yield s
    s.close()
