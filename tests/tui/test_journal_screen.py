"""Journal: filter by kind and since-date, open an entry whole; a bad date said in place."""

from __future__ import annotations

from textual.widgets import Select

from carboy.tui.app.screens.entry import EntryScreen
from carboy.tui.app.screens.journal import EntryTable, JournalScreen


async def on_journal(app, pilot, wait_for) -> JournalScreen:
    await pilot.press("f5")
    await wait_for(pilot, lambda: isinstance(app.screen, JournalScreen) and app.screen.loads)
    return app.screen


def column(table, key: str) -> list[str]:
    return [str(table.get_cell(r, key)) for r in table.rows]


async def test_filter_by_kind_and_open_an_entry(make, wait_for):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await on_journal(app, pilot, wait_for)
        table = screen.query_one(EntryTable)
        assert len(set(column(table, "kind"))) > 2
        loads = screen.loads
        screen.query_one("#journal-kind", Select).value = "neutralization"
        await wait_for(pilot, lambda: screen.loads > loads)
        assert set(column(table, "kind")) == {"neutralization"}
        assert column(table, "about") == ["MA-01"]
        table.focus()
        await pilot.press("enter")
        await wait_for(pilot, lambda: isinstance(app.screen, EntryScreen) and app.screen.loads)
        entry = app.screen
        assert entry.entry.snapshot["status"] == "planned"
        assert entry.query_one("#entry-note").display  # disposal note on a neutralization
        await pilot.press("escape")
        await pilot.pause()
        assert app.screen is screen


async def test_since_date_filters_and_a_bad_date_is_named(make, wait_for):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await on_journal(app, pilot, wait_for)
        table = screen.query_one(EntryTable)
        total = table.row_count
        await pilot.press("s", *"2025-03-13")
        await wait_for(pilot, lambda: screen.since == "2025-03-13" and table.row_count < total)
        assert all(w >= "2025-03-13" for w in column(table, "when"))
        box = screen.query_one("#journal-since")
        box.value = ""
        await pilot.press(*"2025-13-45", "enter")
        error = screen.query_one("#journal-error")
        await wait_for(pilot, lambda: error.display)
        assert "2025-13-45" in str(error.render())
        assert box.value == "2025-13-45"
        await pilot.press("escape")
        await wait_for(pilot, lambda: not error.display and table.row_count == total)


async def test_an_entry_reads_as_a_page_and_the_raw_snapshot_is_one_key_away(make, wait_for):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await on_journal(app, pilot, wait_for)
        table = screen.query_one(EntryTable)
        assert "who" in [str(c.key.value) for c in table.columns.values()][:3]
        screen.query_one("#journal-kind", Select).value = "neutralization"
        await wait_for(pilot, lambda: set(column(table, "kind")) == {"neutralization"})
        table.focus()
        await pilot.press("enter")
        await wait_for(pilot, lambda: isinstance(app.screen, EntryScreen) and app.screen.loads)
        page = str(app.screen.query_one("#entry-json").content)
        assert "plan" in page and "{" not in page  # sections and lines, not JSON
        await pilot.press("r")
        await pilot.pause()
        assert app.screen.raw and "as stored" in str(app.screen.query_one("#entry-section")
                                                     .content)
