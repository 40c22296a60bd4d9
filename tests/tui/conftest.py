"""Fixtures for the TUI tests: a fixed demo database, a fixed clock and user, a clean env."""

from __future__ import annotations

import os
import time
from collections.abc import Callable
from pathlib import Path

import pytest

from carboy.store.demo import DEMO_TODAY

WHO = "tester"


@pytest.fixture(autouse=True)
def clean_environment(monkeypatch):
    """Snapshots and key tests must not depend on the caller's terminal settings."""
    for name in list(os.environ):
        # TEXTUAL_SNAPSHOT_* belong to the snapshot plugin itself, not to the app
        if name == "NO_COLOR" or (name.startswith("TEXTUAL_")
                                  and not name.startswith("TEXTUAL_SNAPSHOT")):
            monkeypatch.delenv(name, raising=False)
    monkeypatch.setenv("TZ", "UTC")
    time.tzset()
    yield
    monkeypatch.undo()
    time.tzset()


@pytest.fixture
def demo_db(copy_demo) -> Path:
    """A private copy of the demo storeroom."""
    return copy_demo()


@pytest.fixture
def make(demo_db) -> Callable:
    from carboy.tui.app.app import make_app

    def build():
        return make_app(demo_db, demo=True, today=DEMO_TODAY, who=WHO)

    return build


async def wait_for(pilot, condition: Callable[[], bool], timeout: float = 5.0) -> None:
    """Let the app run until ``condition()`` holds (workers finish in their own time)."""
    deadline = time.monotonic() + timeout
    while not condition():
        if time.monotonic() > deadline:
            raise AssertionError("condition not met in time")
        await pilot.pause(0.02)


async def loaded(pilot, timeout: float = 5.0) -> None:
    """Let the app run until no worker is busy (a screen's data has arrived) and the
    messages that followed are handled: a condition, not a fixed sleep."""
    app = pilot.app
    await wait_for(pilot, lambda: not any(w.is_running for w in app.workers), timeout)
    await pilot.pause()


def text_of(widget) -> str:
    """What a Static shows, as plain text."""
    return str(widget.render())


@pytest.fixture(name="wait_for")
def wait_for_fixture():
    return wait_for


@pytest.fixture(name="loaded")
def loaded_fixture():
    return loaded


@pytest.fixture(name="who")
def who_fixture() -> str:
    return WHO
