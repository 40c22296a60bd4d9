"""Shared fixtures for every test tier."""

from __future__ import annotations

import os

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
