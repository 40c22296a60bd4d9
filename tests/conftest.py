"""Shared fixtures for every test tier."""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest


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


@pytest.hookimpl(optionalhook=True)  # a hook of pytest-xdist: unused when it is not loaded
def pytest_xdist_make_scheduler(config, log):
    """Hand out tests by work stealing when the run uses xdist's default ``load`` mode.

    ``load`` sends each worker long runs of consecutive tests, counted not timed, so one
    worker would get nearly all the slow app tests (tests/tui) and the other sit idle for
    a minute.  With work stealing an idle worker takes half of what the other still has
    queued.  (``--dist worksteal`` in the pytest options does the same; then this is not
    used.)"""
    if config.getoption("dist") != "load":
        return None
    from xdist.scheduler import WorkStealingScheduling

    return WorkStealingScheduling(config, log)
