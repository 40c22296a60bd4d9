"""Waste: log an addition (good and bad input), new containers, moves that need a yes."""

from __future__ import annotations

from carboy.store import journal, waste
from carboy.store.db import open_database
from carboy.tui.app.screens.confirm import ConfirmScreen
from carboy.tui.app.screens.waste import WasteScreen
from carboy.tui.app.screens.waste_add import AddWasteScreen
from carboy.tui.app.screens.waste_new import NewContainerScreen
from carboy.tui.app.widgets.safety_note import DISPOSAL_NOTE


async def on_waste(app, pilot, wait_for, label: str | None = None) -> WasteScreen:
    await pilot.press("f3")
    await wait_for(pilot, lambda: isinstance(app.screen, WasteScreen) and app.screen.detail)
    screen = app.screen
    if label is not None:
        table = screen.query_one("#waste-table")
        table.move_cursor(row=table.get_row_index(label))
        await wait_for(pilot, lambda: screen.detail and screen.detail.info["label"] == label)
    return screen


def detail_text(screen: WasteScreen) -> str:
    from rich.console import Console

    console = Console(width=120, record=True, color_system=None)
    console.print(screen.query_one("#waste-detail").content)
    return console.export_text()


async def type_into(pilot, screen, field: str, text: str) -> None:
    screen.query_one(f"#{field}").focus()
    await pilot.press(*text) if text else None


async def test_log_an_addition_and_see_the_composition(make, wait_for, demo_db):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await on_waste(app, pilot, wait_for, "OA-02")
        assert "HCl" not in detail_text(screen)
        await pilot.press("a")
        await wait_for(pilot, lambda: isinstance(app.screen, AddWasteScreen))
        form = app.screen
        await type_into(pilot, form, "add-compound", "HCl")
        await type_into(pilot, form, "add-conc", "0,1 M")
        await type_into(pilot, form, "add-volume", "1,5 L")
        await wait_for(pilot, lambda: "1.5 L" in form.row("add-volume").echo_text)
        assert "0.1 M" in form.row("add-conc").echo_text  # the decimal comma understood
        assert "hydrochloric acid" in form.row("add-compound").echo_text
        await pilot.press("ctrl+s")
        await wait_for(pilot, lambda: app.screen is screen and "HCl 1.5 L" in detail_text(screen))
        assert "85 %" in str(screen.query_one("#waste-table").get_cell("OA-02", "fill"))
    with open_database(demo_db) as store:
        last = waste.additions(store, "OA-02")[-1]
    assert (last.compound_key, last.conc_molar, last.volume_l, last.added_by) == \
        ("HCl", 0.1, 1.5, "tester")


async def test_bad_values_are_named_in_place_and_the_text_is_kept(make, wait_for, demo_db):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        await on_waste(app, pilot, wait_for, "OA-02")
        await pilot.press("a")
        await wait_for(pilot, lambda: isinstance(app.screen, AddWasteScreen))
        form = app.screen
        await type_into(pilot, form, "add-compound", "HCl")
        await type_into(pilot, form, "add-conc", "1 M")
        await type_into(pilot, form, "add-volume", "25 q")
        await pilot.press("ctrl+s")
        await wait_for(pilot, lambda: "✗" in form.row("add-volume").echo_text)
        assert "'25 q'" in form.row("add-volume").echo_text
        assert "Not logged" in str(form.query_one("#add-error").render())
        assert app.screen is form and form.values()["add-volume"] == "25 q"
        assert app.focused is form.query_one("#add-volume")
        # an unknown compound is named, with the closest matches
        form.query_one("#add-compound").value = "HClx"
        form.query_one("#add-volume").value = "1 L"
        await pilot.press("ctrl+s")
        await wait_for(pilot, lambda: "HClx" in form.row("add-compound").echo_text)
        assert form.values()["add-compound"] == "HClx"
        # too much for the container: the volume is blamed
        form.query_one("#add-compound").value = "HCl"
        form.query_one("#add-volume").value = "50 L"
        await pilot.press("ctrl+s")
        await wait_for(pilot, lambda: "L free" in form.row("add-volume").echo_text)
        await pilot.press("escape")
        await pilot.pause()
        assert isinstance(app.screen, WasteScreen)
    with open_database(demo_db) as store:
        assert len(waste.additions(store, "OA-02")) == 4  # nothing was stored


async def test_fluoride_waste_goes_to_licensed_disposal_and_offers_no_plan(make, wait_for):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await on_waste(app, pilot, wait_for, "HF-04")
        text = detail_text(screen)
        assert "Licensed disposal only" in text and "fluoride" in text
        assert "Never neutralize it for the drain" in text
        assert screen.check_action("plan", ()) is False
        assert screen.check_action("add", ()) is False
        assert str(screen.query_one("#waste-note").render()) == DISPOSAL_NOTE


async def test_plan_key_opens_the_planner_for_the_container(make, wait_for, monkeypatch):
    from carboy.tui.app.app import CarboyApp

    asked = []
    monkeypatch.setattr(CarboyApp, "plan_container", lambda self, label: asked.append(label))
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        await on_waste(app, pilot, wait_for, "MA-01")
        await pilot.press("p")
        assert asked == ["MA-01"]


async def test_licensed_disposal_asks_first(make, wait_for, demo_db):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await on_waste(app, pilot, wait_for, "AL-03")
        await pilot.press("l")
        await wait_for(pilot, lambda: isinstance(app.screen, ConfirmScreen))
        assert "cannot be undone" in str(app.screen.query_one("#confirm-message").render())
        await pilot.press("n")
        await pilot.pause()
        assert app.screen is screen and screen.containers["AL-03"].status == "collecting"
        await pilot.press("l")
        await wait_for(pilot, lambda: isinstance(app.screen, ConfirmScreen))
        await pilot.press("enter", "enter")  # Enter, Enter: the safe answer holds the focus
        await pilot.pause(0.2)
        with open_database(demo_db) as store:
            assert waste.container(store, "AL-03").status == "collecting"
        while isinstance(app.screen, ConfirmScreen):
            await pilot.press("escape")
            await pilot.pause()
        await pilot.press("l")
        await wait_for(pilot, lambda: isinstance(app.screen, ConfirmScreen))
        await pilot.press("y")
        await wait_for(pilot, lambda: screen.containers["AL-03"].status == "licensed-disposal")
        assert screen.check_action("licensed", ()) is False
    with open_database(demo_db) as store:
        assert waste.container(store, "AL-03").status == "licensed-disposal"


async def test_mark_disposed_only_when_neutralized(make, wait_for):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await on_waste(app, pilot, wait_for, "MA-01")
        assert screen.check_action("mark_disposed", ()) is False


async def test_open_a_new_container_with_its_stream_then_change_it(make, wait_for, demo_db):
    from carboy.tui.app.screens.waste_stream import ChangeStreamScreen

    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await on_waste(app, pilot, wait_for)
        await pilot.press("c")
        await wait_for(pilot, lambda: isinstance(app.screen, NewContainerScreen))
        form = app.screen
        await type_into(pilot, form, "new-label", "MA-01")
        await pilot.press("ctrl+s")  # no stream chosen yet: asked for, nothing stored
        await wait_for(pilot, lambda: "needed: what the container collects"
                       in form.query_one("#row-new-stream").echo_text)
        form.query_one("#new-stream").value = "acid"
        await wait_for(pilot, lambda: "Acids and their salts"
                       in form.query_one("#row-new-stream").echo_text)
        await pilot.press("ctrl+s")
        await wait_for(pilot, lambda: "exists already" in str(form.query_one("#new-error").render()))
        assert form.values()["new-label"] == "MA-01"
        form.query_one("#new-label").value = "MA-05"
        form.query_one("#new-capacity").value = "2,5 L"
        form.query_one("#new-material").value = "glass"
        await pilot.press("ctrl+s")
        await wait_for(pilot, lambda: "MA-05" in screen.containers)
        made = screen.containers["MA-05"]
        assert (made.capacity_l, made.stream, made.material) == (2.5, "acid", "glass")
        assert screen.query_one("#waste-table").get_cell("MA-05", "stream") == "acid"
        await wait_for(pilot, lambda: screen.selected == "MA-05" and screen.detail
                       and screen.detail.info["label"] == "MA-05")
        assert "acid waste · glass" in detail_text(screen)
        # the stream changes only with a reason, which the journal keeps
        await pilot.press("s")
        await wait_for(pilot, lambda: isinstance(app.screen, ChangeStreamScreen))
        dialog = app.screen
        dialog.query_one("#change-stream").value = "alkaline"
        await pilot.press("ctrl+s")
        await wait_for(pilot, lambda: "needed: say why"
                       in dialog.query_one("#row-change-reason").echo_text)
        dialog.query_one("#change-reason").value = "moved to the base bay"
        await pilot.press("ctrl+s")
        await wait_for(pilot, lambda: screen.containers["MA-05"].stream == "alkaline")
    with open_database(demo_db) as store:
        entry = journal.entries(store, limit=1)[0]
    assert entry.snapshot["event"] == "stream-change"
    assert entry.snapshot["reason"] == "moved to the base bay"
