"""A few deterministic pictures of the main screens (fixed demo data, clock, user, env).

Update after an intended change with ``pytest tests/tui/test_snapshots.py --snapshot-update``
and look at the report before committing.
"""

from __future__ import annotations

import time

import pytest
from textual.widgets import Input


async def settle(pilot, mode_key: str | None, ready) -> None:
    app = pilot.app
    if mode_key:
        await pilot.press(mode_key)
    deadline = time.monotonic() + 5
    while not ready(app.screen) or any(w.is_running for w in app.workers):
        assert time.monotonic() < deadline, "screen did not load"
        await pilot.pause(0.02)
    for box in app.screen.query(Input):
        box.cursor_blink = False
    await pilot.wait_for_scheduled_animations()
    # The footer and focus settle after the data arrives, later on a loaded machine: wait
    # until two pictures a moment apart are the same rather than for a fixed time.
    picture = None
    while True:
        await pilot.pause(0.1)
        now = app.export_screenshot()
        if now == picture:
            return
        assert time.monotonic() < deadline + 5, "screen did not stop changing"
        picture = now


SIZES = [pytest.param((80, 24), id="80x24"), pytest.param((120, 40), id="120x40")]


@pytest.mark.parametrize("size", SIZES)
def test_stock(snap_compare, make, size):
    async def run_before(pilot):
        await settle(pilot, None, lambda s: getattr(s, "loads", 0) > 0)

    assert snap_compare(make(), terminal_size=size, run_before=run_before)


@pytest.mark.parametrize("size", SIZES)
def test_waste(snap_compare, make, size):
    async def run_before(pilot):
        await settle(pilot, "f3", lambda s: getattr(s, "detail", None) is not None)

    assert snap_compare(make(), terminal_size=size, run_before=run_before)


def test_journal(snap_compare, make):
    async def run_before(pilot):
        await settle(pilot, "f5", lambda s: getattr(s, "loads", 0) > 0)

    assert snap_compare(make(), terminal_size=(80, 24), run_before=run_before)


def test_prepare(snap_compare, make):
    async def run_before(pilot):
        await settle(pilot, "f7", lambda s: bool(s.query("#source")))
        screen = pilot.app.screen
        screen.query_one("#source", Input).value = "H2SO4=96%"
        screen.query_one("#target", Input).value = "1 M"
        screen.query_one("#volume", Input).value = "1 L"
        await settle(pilot, None, lambda s: getattr(s, "outcome", None) is not None)

    assert snap_compare(make(), terminal_size=(80, 24), run_before=run_before)


def test_strength_check(snap_compare, make):
    async def run_before(pilot):
        await settle(pilot, None, lambda s: getattr(s, "loads", 0) > 0)
        await pilot.press("c")
        await settle(pilot, None, lambda s: type(s).__name__ == "CheckScreen"
                     and getattr(s, "loads", 0) > 0)

    assert snap_compare(make(), terminal_size=(80, 24), run_before=run_before)
