"""Shared fixtures for every test tier."""

from __future__ import annotations

import pytest


@pytest.fixture(scope="session")
def catalog():
    from carboy.model.catalog import default_catalog

    return default_catalog()
