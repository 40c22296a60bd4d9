"""Stock: paging from SQL, search as you type, a bottle opened with its history."""

from __future__ import annotations

import pytest
from rich.console import Console

from carboy.store import stock
from carboy.store.compounds import catalog_for
from carboy.store.db import open_database
from carboy.tui.app.screens.bottle import BottleScreen
from carboy.tui.app.screens.stock import PAGE_ROWS, StockScreen, StockTable


def cells(table: StockTable, column: str) -> list[str]:
    return [str(table.get_cell(row, column)) for row in table.rows]


async def started(app, pilot, wait_for) -> StockScreen:
    await wait_for(pilot, lambda: isinstance(app.screen, StockScreen) and app.screen.loads)
    return app.screen


async def test_first_page_shows_marks_as_text(make, wait_for):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await started(app, pilot, wait_for)
        table = screen.query_one(StockTable)
        assert table.row_count == 40
        marks = set(cells(table, "check"))
        assert {"✓ current", "◷ overdue", "✗ expired", "≠ off-label"} <= marks
        assert str(screen.query_one("#stock-position").render()) == \
            "rows 1–40 of 40 · page 1 of 1"


async def test_search_as_you_type(make, wait_for):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await started(app, pilot, wait_for)
        await pilot.press("slash", *"naoh")
        await wait_for(pilot, lambda: screen.search_text == "naoh" and not screen.loading)
        table = screen.query_one(StockTable)
        assert table.row_count == 7
        assert set(cells(table, "compound")) == {"NaOH"}
        assert "of 7" in str(screen.query_one("#stock-position").render())


async def test_search_without_match_and_odd_text_keeps_the_text(make, wait_for):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await started(app, pilot, wait_for)
        await pilot.press("slash")  # the search field, then text typed (its last key pressed)
        search = screen.query_one("#stock-search")
        search.value = '"AND (z'
        await pilot.press("z")
        await wait_for(pilot, lambda: screen.search_text == '"AND (zz' and not screen.loading)
        assert screen.query_one(StockTable).row_count == 0
        assert "no bottle matches" in str(screen.query_one("#stock-position").render())
        assert screen.query_one("#stock-search").value == '"AND (zz'
        assert not screen.query_one("#stock-error").display  # no error, no traceback
        await pilot.press("escape")
        await wait_for(pilot, lambda: screen.search_text == "" and not screen.loading)
        assert screen.query_one(StockTable).row_count == 40


async def test_open_a_bottle_with_its_history(make, wait_for):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await started(app, pilot, wait_for)
        table = screen.query_one(StockTable)
        row = cells(table, "check").index("≠ off-label")
        table.move_cursor(row=row)
        await pilot.press("enter")
        await wait_for(pilot, lambda: isinstance(app.screen, BottleScreen) and app.screen.loads)
        bottle = app.screen
        assert bottle.bottle.strength_status == "off-label"
        console = Console(width=120, record=True, color_system=None)
        console.print(bottle.query_one("#bottle-fields").content)
        fields = console.export_text()
        assert bottle.bottle.lot in fields and "off-label" in fields
        history = bottle.query_one("#bottle-history")
        kinds = [str(history.get_cell(r, "kind")) for r in history.rows]
        assert "standardization" in kinds and "receipt" in kinds
        await pilot.press("escape")
        await pilot.pause()
        assert app.screen is screen


async def test_missing_bottle_is_reported_in_place(make, wait_for):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        await started(app, pilot, wait_for)
        app.push_screen(BottleScreen(99999))
        await wait_for(pilot, lambda: isinstance(app.screen, BottleScreen) and app.screen.loads)
        error = app.screen.query_one("#bottle-error")
        assert error.display and "no stock bottle 99999" in str(error.render())


@pytest.fixture
def big_db(demo_db):
    """The demo plus enough bottles for three pages."""
    store = open_database(demo_db)
    base = stock.validate({"compound": "HCl", "label_strength": "0.1 M",
                           "container_size": "1 L", "location": "Overflow shelf"},
                          catalog_for(store))

    def work(s):
        for n in range(PAGE_ROWS * 2):
            stock.insert_in(s, {**base, "lot": f"OV-{n:03d}"}, who="tester")

    store.write(work)
    store.close()
    return demo_db


async def test_paging_by_keys_and_by_scrolling_past_the_end(big_db, wait_for):
    from carboy.store.demo import DEMO_TODAY
    from carboy.tui.app.app import make_app

    app = make_app(big_db, today=DEMO_TODAY, who="tester")
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await started(app, pilot, wait_for)
        position = screen.query_one("#stock-position")
        assert str(position.render()) == "rows 1–50 of 140 · page 1 of 3"
        await pilot.press("n")
        await wait_for(pilot, lambda: screen.page_index == 1 and not screen.loading)
        assert str(position.render()) == "rows 51–100 of 140 · page 2 of 3"
        table = screen.query_one(StockTable)
        table.move_cursor(row=table.row_count - 1)
        await pilot.press("down")  # past the end: the next page, cursor at its top
        await wait_for(pilot, lambda: screen.page_index == 2 and not screen.loading)
        assert str(position.render()) == "rows 101–140 of 140 · page 3 of 3"
        assert table.cursor_row == 0
        assert app.screen.check_action("page", ("next",)) is False
        await pilot.press("up")  # before the start: the previous page, cursor at its end
        await wait_for(pilot, lambda: screen.page_index == 1 and not screen.loading)
        assert table.cursor_row == table.row_count - 1
        await pilot.press("p")
        await wait_for(pilot, lambda: screen.page_index == 0 and not screen.loading)
        assert str(position.render()).startswith("rows 1–50")


async def test_the_first_page_is_read_while_the_screen_is_built(make, monkeypatch):
    """It is on the table when the screen mounts (the first frame shows it), no worker
    asked; a read-ahead that fails or is late leaves the page to the worker."""
    asked = []
    real_load = StockScreen.load
    monkeypatch.setattr(StockScreen, "load", lambda self, request: (asked.append(request),
                                                                    real_load(self, request)))
    seen = {}
    real_mount = StockScreen.on_mount

    def mounted(self):
        real_mount(self)
        seen["rows"] = self.query_one(StockTable).row_count

    monkeypatch.setattr(StockScreen, "on_mount", mounted)
    app = make()
    async with app.run_test(size=(80, 24)):
        assert seen["rows"] == 40 and asked == []


@pytest.mark.parametrize("trouble", ["fails", "late"])
async def test_a_failed_or_late_read_ahead_leaves_the_page_to_the_worker(
        make, wait_for, monkeypatch, trouble):
    import time

    from carboy.tui.app.screens import stock as stock_screen

    real = stock_screen.bottles.listing
    calls = []

    def listing(*args, **kwargs):
        calls.append(1)
        if len(calls) == 1:  # the read-ahead
            if trouble == "fails":
                raise OSError("disk trouble")
            time.sleep(0.5)
        return real(*args, **kwargs)

    monkeypatch.setattr(stock_screen.bottles, "listing", listing)
    monkeypatch.setattr(stock_screen, "FIRST_PAGE_WAIT_S", 0.05)
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await started(app, pilot, wait_for)
        await wait_for(pilot, lambda: screen.query_one(StockTable).row_count == 40)
        assert len(calls) == 2
