"""The app as a whole: modes, the contract other screens rely on, size guard, colours."""

from __future__ import annotations

from datetime import date

from carboy.store.db import Store
from carboy.store.demo import DEMO_TODAY
from carboy.tui.app.screens.neutralize import NeutralizeScreen
from carboy.tui.app.screens.stock import StockScreen, StockTable
from carboy.tui.app.screens.too_small import TooSmallScreen
from carboy.tui.app.screens.waste import WasteScreen


async def test_starts_on_stock_with_the_contract(make, demo_db, wait_for, who):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        await wait_for(pilot, lambda: isinstance(app.screen, StockScreen) and app.screen.loads)
        assert app.current_mode == "stock"
        assert app.db_path == demo_db and app.today == DEMO_TODAY and app.who == who
        first, second = app.open_store(), app.open_store()
        try:
            assert isinstance(first, Store) and first is not second
        finally:
            first.close()
            second.close()


async def test_bare_keys_never_switch_screens(make):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        app.screen.query_one(StockTable).focus()   # outside any text field
        await pilot.press(*"H2SO4=1M", "question_mark")
        await pilot.pause()
        assert app.current_mode == "stock"


async def test_keys_switch_screens_but_typing_stays_in_its_field(make):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        await pilot.press("slash", "0", ".", "1")    # typing in the stock search field
        await pilot.pause()
        assert app.current_mode == "stock"
        assert app.screen.query_one("#stock-search").value == "0.1"
        for key, mode in (("f3", "waste"), ("f5", "journal"), ("f1", "help"), ("f2", "stock"),
                          ("f4", "neutralize"), ("f7", "prepare"), ("f8", "standardize")):
            await pilot.press(key)      # function keys work even while typing
            await pilot.pause()
            assert app.current_mode == mode, key


async def test_plan_container_opens_neutralize_and_loads_it(make, monkeypatch, wait_for):
    loaded = []
    monkeypatch.setattr(NeutralizeScreen, "load_container",
                        lambda self, label: loaded.append(label))
    app = make()
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.pause()
        app.plan_container("OA-02")
        await wait_for(pilot, lambda: loaded == ["OA-02"])
        assert app.current_mode == "neutralize"
        assert isinstance(app.screen_stack[0], NeutralizeScreen)


async def test_refresh_data_reloads_waste(make, wait_for):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.press("f3")
        await wait_for(pilot, lambda: isinstance(app.screen, WasteScreen) and app.screen.loads)
        before = app.screen.loads
        app.refresh_data()
        await wait_for(pilot, lambda: app.screen.loads > before)


async def test_too_small_terminal_gets_a_message_then_recovers(make):
    app = make()
    async with app.run_test(size=(70, 20)) as pilot:
        await pilot.pause()
        assert isinstance(app.screen, TooSmallScreen)
        message = str(app.screen.query_one("#too-small-message").render())
        assert "80×24" in message and "70×20" in message
        await pilot.press("f3")  # screen keys do not apply while too small
        assert app.current_mode == "stock"
        await pilot.resize_terminal(80, 24)
        await pilot.pause(0.1)
        assert isinstance(app.screen, StockScreen)


async def test_theme_follows_the_terminal_and_no_color_is_honoured(make, monkeypatch):
    monkeypatch.setenv("NO_COLOR", "1")
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        assert app.theme.startswith("ansi")
        assert app.no_color


async def test_today_defaults_to_the_real_day(demo_db):
    from carboy.tui.app.app import make_app

    assert make_app(demo_db).today == date.today()


def _burst(app, keys: str | list[str]) -> None:
    """Keys as a terminal delivers them in one read: posted at once, none waiting for the
    one before to be handled (a Pilot's press waits, which hides lost or misrouted keys)."""
    from textual import events

    for key in keys:
        name = {"\t": "tab", " ": "space", "/": "slash"}.get(key, key)
        app.post_message(events.Key(name, None if name == "tab" else key))


async def test_keys_typed_faster_than_the_screen_are_never_lost_or_misrouted(make, wait_for):
    from textual.widgets import Input

    from carboy.tui.app.screens.waste_add import AddWasteScreen

    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        app.screen.query_one(StockTable).focus()
        await pilot.pause()
        _burst(app, "/KOH")  # the search takes every key typed after /
        await wait_for(pilot, lambda: app.screen.query_one("#stock-search").value == "KOH")
        await pilot.press("f3")
        await wait_for(pilot, lambda: isinstance(app.screen, WasteScreen) and app.screen.loads)
        await pilot.press("a")
        await wait_for(pilot, lambda: isinstance(app.screen, AddWasteScreen))
        await pilot.pause()
        _burst(app, list("HCl") + ["\t"] + list("1 M") + ["\t"] + list("2 L"))
        await pilot.pause(0.5)
        values = [app.screen.query_one(f"#{f}", Input).value
                  for f in ("add-compound", "add-conc", "add-volume")]
        assert values == ["HCl", "1 M", "2 L"]
