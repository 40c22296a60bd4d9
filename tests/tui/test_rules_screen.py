"""The Rules screen (f9): the disposal rules with where each comes from, a change through
its dialog (journaled), and the treatment log; the journal's correction key."""

from __future__ import annotations

from datetime import UTC, datetime, time

from textual.widgets import DataTable, Input, Static, TabbedContent

from carboy.model.forms.treatment import TreatmentFields, read
from carboy.store import disposal, journal, stock, treatments, waste
from carboy.store.db import open_database
from carboy.store.demo import DEMO_TODAY
from carboy.tui.app.screens.confirm import ConfirmScreen
from carboy.tui.app.screens.correct_entry import CorrectionDialog
from carboy.tui.app.screens.journal import JournalScreen
from carboy.tui.app.screens.rule_edit import RuleDialog
from carboy.tui.app.screens.rules import RulesScreen

SIZE = (100, 34)


def _treat(path) -> int:
    """A treatment of a new acid container with a fresh NaOH bottle; returns its entry id."""
    with open_database(path) as s:
        waste.new_container(s, "T-01", capacity="5 L", stream="acid")
        waste.add(s, "T-01", "HCl=1M", "1 L")
        bottle = stock.add(s, {"compound": "NaOH", "label_strength": "1 M",
                               "container_size": "5 L", "amount_left": "5 L"})
        readings = read(TreatmentFields(bottle=str(bottle), added="1 L", final_ph="5.2"))
        when = datetime.combine(DEMO_TODAY, time(12), tzinfo=UTC)  # the app's year
        return treatments.record_treatment(s, "T-01", readings.value, when=when).entry_id


async def test_a_rule_changes_through_its_dialog_and_the_log_lists_treatments(
        make, demo_db, wait_for):
    _treat(demo_db)
    app = make()
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("f9")
        await wait_for(pilot, lambda: isinstance(app.screen, RulesScreen)
                       and app.screen.loads > 0)
        screen = app.screen
        table = screen.query_one("#rules-table", DataTable)
        keys = [r.key.value for r in table.ordered_rows]
        table.move_cursor(row=keys.index("batch_max_l"))
        await pilot.pause()
        assert "placeholder" in str(screen.query_one("#rules-source", Static).content)
        await pilot.press("e")
        await wait_for(pilot, lambda: isinstance(app.screen, RuleDialog))
        heading = str(app.screen.query_one(".dialog-title", Static).content)
        assert heading == "Change: largest batch of waste treated at once"
        app.screen.query_one("#rule-value", Input).value = "500 mL"
        await pilot.press("ctrl+s")
        await wait_for(pilot, lambda: app.screen is screen and screen.profile is not None
                       and screen.profile.batch_max_l == 0.5)
        log = str(screen.query_one("#log-text", Static).content)
        assert "1 treatment in" in log and "T-01" in log and "1 outside the window" in log
        # on the log tab no rule is on screen: e and r do not act on one
        await pilot.press("t")
        await wait_for(pilot, lambda: screen.query_one(
            "#rules-tabs", TabbedContent).active == "tab-log")
        assert not screen.check_action("edit", ()) and not screen.check_action("reset", ())
        await pilot.press("e")
        await pilot.pause()
        assert app.screen is screen
    with open_database(demo_db) as s:
        assert disposal.load(s).origin["batch_max_l"] == "storeroom"
        assert "largest batch" in journal.entries(s, limit=1)[0].summary


async def test_the_journal_corrects_the_highlighted_entry(make, demo_db, wait_for, loaded):
    entry_id = _treat(demo_db)
    app = make()
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("f5")
        await wait_for(pilot, lambda: isinstance(app.screen, JournalScreen)
                       and app.screen.loads > 0)
        screen = app.screen
        table = screen.query_one("#journal-table", DataTable)
        table.move_cursor(row=[r.key.value for r in table.ordered_rows].index(str(entry_id)))
        await pilot.press("c")
        await wait_for(pilot, lambda: isinstance(app.screen, CorrectionDialog))
        dialog = app.screen
        await pilot.press("ctrl+s")  # no reason: refused in place
        assert "say what was wrong" in str(dialog.query_one("#correct-error", Static).content)
        dialog.query_one("#cd-reason", Input).value = "read before the CO2 had gone"
        dialog.query_one("#cd-final_ph", Input).value = "6,6"
        await pilot.press("ctrl+s")
        await wait_for(pilot, lambda: isinstance(app.screen, ConfirmScreen))
        await pilot.press("enter", "enter")  # the safe answer, then the question again
        await loaded(pilot)  # a write would have run in a worker: every worker is done
        with open_database(demo_db) as s:
            assert journal.corrections_of(s, entry_id) == []  # nothing written
        await wait_for(pilot, lambda: isinstance(app.screen, ConfirmScreen))
        await pilot.press("y")
        await wait_for(pilot, lambda: app.screen is screen)
    with open_database(demo_db) as s:
        (later,) = journal.corrections_of(s, entry_id)
        assert later.snapshot["readings"]["final_ph"] == 6.6
        waste.set_status(s, "T-01", "disposed")  # the corrected reading allows it


async def test_the_storeroom_name_is_set_and_removed_from_the_rules_screen(
        make, demo_db, wait_for):
    from carboy.store import rules
    from carboy.tui.app.screens.rule_edit import StoreroomNameDialog

    app = make()
    async with app.run_test(size=SIZE) as pilot:
        await pilot.press("f9")
        await wait_for(pilot, lambda: isinstance(app.screen, RulesScreen)
                       and app.screen.loads > 0)
        screen = app.screen
        table = screen.query_one("#rules-table", DataTable)
        table.move_cursor(row=0)
        await pilot.pause()
        assert table.ordered_rows[0].key.value == "storeroom.name"
        assert screen.check_action("reset", ()) is False   # nothing set yet
        await pilot.press("e")
        await wait_for(pilot, lambda: isinstance(app.screen, StoreroomNameDialog))
        dialog = app.screen
        heading = str(dialog.query_one(".dialog-title", Static).content)
        assert heading == "Change: the storeroom's name on paper"
        dialog.query_one("#rule-value", Input).value = "Room\u202e4"
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert "RIGHT-TO-LEFT" in str(dialog.query_one("#rule-error", Static).content)
        dialog.query_one("#rule-value", Input).value = " Stores  Room 4 "
        await pilot.press("ctrl+s")
        await wait_for(pilot, lambda: app.screen is screen and screen.storeroom == "Stores Room 4")
        assert screen.check_action("reset", ()) is True
        await pilot.press("r")
        await wait_for(pilot, lambda: isinstance(app.screen, ConfirmScreen))
        app.screen.query_one("#confirm-yes").press()
        await wait_for(pilot, lambda: app.screen is screen and screen.storeroom == "")
    with open_database(demo_db) as s:
        assert rules.load(s).storeroom_name == ""
        summaries = [e.summary for e in journal.entries(s, limit=2)]
    assert "storeroom name removed" in summaries[0] and "'Stores Room 4'" in summaries[1]
