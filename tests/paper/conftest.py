"""Fixtures for the paper tests: a demo storeroom.  PDF reading helpers are in
``pdf_reading.py`` (importing from a ``conftest`` breaks when several tiers run together)."""

from __future__ import annotations

import pytest

from carboy.store.db import open_database


@pytest.fixture
def demo_path(copy_demo):
    """A private copy of the demo storeroom."""
    return copy_demo()


@pytest.fixture
def demo_store(demo_path):
    s = open_database(demo_path)
    yield s
    s.close()
