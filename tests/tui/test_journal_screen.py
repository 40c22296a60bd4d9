"""Journal: filter by kind and since-date, open an entry whole; a bad date said in place."""

from __future__ import annotations

from textual.widgets import Select

from carboy.tui.app.screens.entry import EntryScreen
from carboy.tui.app.screens.journal import EntryTable, JournalScreen


async def on_journal(app, pilot, wait_for) -> JournalScreen:
    await pilot.press("f5")
    await wait_for(pilot, lambda: isinstance(app.screen, JournalScreen) and app.screen.loads)
    return app.screen


async def type_last_key(pilot, box, text: str) -> None:
    """Fill a focused field as if typed: all but the last character set, the last a key."""
    box.value = text[:-1]
    box.cursor_position = len(box.value)
    await pilot.press(text[-1])


def column(table, key: str) -> list[str]:
    return [str(table.get_cell(r, key)) for r in table.rows]


async def test_filter_by_kind_and_open_an_entry_as_a_page_or_raw(make, wait_for):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await on_journal(app, pilot, wait_for)
        table = screen.query_one(EntryTable)
        assert len(set(column(table, "kind"))) > 2
        assert "who" in [str(c.key.value) for c in table.columns.values()][:3]
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
        page = str(entry.query_one("#entry-json").content)
        assert "plan" in page and "{" not in page  # sections and lines, not JSON
        await pilot.press("r")
        await pilot.pause()
        assert entry.raw and "as stored" in str(entry.query_one("#entry-section").content)
        await pilot.press("escape")
        await pilot.pause()
        assert app.screen is screen


async def test_since_date_filters_and_a_bad_date_is_named(make, wait_for):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await on_journal(app, pilot, wait_for)
        table = screen.query_one(EntryTable)
        total = table.row_count
        box = screen.query_one("#journal-since")
        await pilot.press("s")  # the key that leads to the since-date field
        assert app.focused is box
        await type_last_key(pilot, box, "2025-03-13")
        await wait_for(pilot, lambda: screen.since == "2025-03-13" and table.row_count < total)
        assert all(w >= "2025-03-13" for w in column(table, "when"))
        await type_last_key(pilot, box, "2025-13-45")
        await pilot.press("enter")
        error = screen.query_one("#journal-error")
        await wait_for(pilot, lambda: error.display)
        assert "2025-13-45" in str(error.render())
        assert box.value == "2025-13-45"
        await pilot.press("escape")
        await wait_for(pilot, lambda: not error.display and table.row_count == total)


def test_a_list_of_sentences_reads_as_sentences():
    """A standardization's notes (each a sentence with its stop) are not joined with
    commas ("... 120 °C., Weigh ..."); a list of values still is."""
    from carboy.tui.app.screens.entry import readable

    text = readable({"notes": ["Dry it at 120 °C.", "Weigh at least 175 mg."],
                     "replicates": [0.5106, 0.5098]}).plain
    assert "Dry it at 120 °C. Weigh at least 175 mg." in text and "°C.," not in text
    assert "0.5106, 0.5098" in text
