"""The Prepare screen (recipe, label, record) and the strength check, driven by Pilot."""

from __future__ import annotations

import pytest
from pypdf import PdfReader
from textual.widgets import DataTable, Input

from carboy.model import preparation
from carboy.store import journal, stock
from carboy.store.db import open_database
from carboy.store.demo import DEMO_TODAY
from carboy.tui.app.screens.check import CheckScreen
from carboy.tui.app.screens.prepare import PrepareScreen
from carboy.tui.app.screens.print_pdf import PrintDialog


def _demo_bottle(demo_db, compound: str, unit: str = "%w/w") -> stock.Bottle:
    s = open_database(demo_db)
    try:
        return next(b for b in stock.all_bottles(s, today=DEMO_TODAY)
                    if b.compound_key == compound and b.strength_unit == unit
                    and b.status == "in-use" and b.amount_left > 0.2)
    finally:
        s.close()


async def test_recipe_matches_the_model_and_bad_fields_are_named(make, wait_for):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.press("f7")
        await pilot.pause()
        screen = app.screen
        assert isinstance(screen, PrepareScreen)
        screen.query_one("#source", Input).value = "H2SO4=96%"
        # the source alone: echoed, the empty fields not marked wrong, no recipe to record
        await wait_for(pilot, lambda: screen.results > 0 and screen.live.settled)
        assert "H2SO4 96 % w/w" in screen.query_one("#row-source").echo_text
        assert not screen.query_one("#row-target").has_class("-invalid")
        assert screen.outcome is None and not screen.check_action("record", ())
        screen.query_one("#target", Input).value = "1 M"
        screen.query_one("#volume", Input).value = "1 L"
        await wait_for(pilot, lambda: screen.outcome is not None)
        want = preparation.plan_recipe(preparation.parse_source("H2SO4=96%"), 1.0, 1.0)
        assert screen.outcome.recipe.stock_volume_ml == pytest.approx(want.stock_volume_ml)
        assert "never water" in screen.query_one("#prep-cautions").text
        screen.query_one("#volume", Input).value = "1 q"
        row = screen.query_one("#row-volume")
        await wait_for(pilot, lambda: "'1 q'" in row.echo_text)
        assert screen.query_one("#volume", Input).value == "1 q"  # typed text kept
        assert screen.has_class("-stale")
        assert not screen.check_action("record", ())
        # beside the field there is room for its name: the line under the fields says it
        # all, and that the recipe shown is the last good one
        line = screen.query_one("#prep-error").message
        assert "'1 q'" in line and "STALE" in line


async def test_record_from_a_bottle_draws_and_adds_one_bottle(make, wait_for, demo_db,
                                                              tmp_path):
    src = _demo_bottle(demo_db, "HCl")
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        app.prepare_from(f"#{src.id}")
        await wait_for(pilot, lambda: isinstance(app.screen, PrepareScreen))
        screen = app.screen
        await wait_for(pilot, lambda: bool(screen.query("#source"))
                       and screen.query_one("#source", Input).value == f"#{src.id}")
        screen.query_one("#target", Input).value = "1 M"
        screen.query_one("#volume", Input).value = "100 mL"
        await wait_for(pilot, lambda: screen.outcome is not None
                       and screen.outcome.bottle is not None)
        used_ml = screen.outcome.recipe.stock_volume_ml
        await pilot.press("ctrl+s")
        await pilot.pause()
        await pilot.press("y")
        await wait_for(pilot, lambda: screen.last_recorded is not None)
        # the new bottle's label is offered for printing at once
        await wait_for(pilot, lambda: isinstance(app.screen, PrintDialog)
                       and bool(app.screen.query("#print-path")))
        pdf = tmp_path / "new-label.pdf"
        app.screen.query_one("#print-path", Input).value = str(pdf)
        await pilot.press("enter")
        await wait_for(pilot, lambda: app.screen is screen)
    text = "".join(page.extract_text() for page in PdfReader(pdf).pages)
    assert f"bottle {screen.last_recorded['new_bottle_id']}" in text and "H290" in text
    s = open_database(demo_db)
    try:
        assert stock.get(s, src.id).amount_left == pytest.approx(src.amount_left
                                                                 - used_ml / 1000)
        new = stock.get(s, screen.last_recorded["new_bottle_id"])
        assert (new.compound_key, new.label_strength) == ("HCl", 1.0)
        entry = journal.get(s, screen.last_recorded["entry_id"])
        assert entry.kind == "preparation" and entry.recorded_by == "tester"
    finally:
        s.close()


async def test_check_lists_flagged_bottles_and_opens_standardize(make, wait_for, demo_db):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.press("c")
        await wait_for(pilot, lambda: isinstance(app.screen, CheckScreen))
        screen = app.screen
        await wait_for(pilot, lambda: screen.loads > 0)
        s = open_database(demo_db)
        try:
            want = [r.bottle.id for r in stock.check(s, today=DEMO_TODAY)]
        finally:
            s.close()
        assert [r.bottle.id for r in screen.rows] == want and want
        table = screen.query_one("#check-table", DataTable)
        assert table.row_count == len(want)
        reason = str(screen.query_one("#check-reason").render())
        assert screen.rows[0].reasons[0][:30] in reason
