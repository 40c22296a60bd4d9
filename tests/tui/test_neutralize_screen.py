"""Pilot tests of the Neutralize screen: plan a demo container, bad input, record it."""

from __future__ import annotations

import shutil
import time

import pytest
from textual.widgets import Input, Static

from carboy.model.forms.neutralize import NeutralizeFields
from carboy.store import journal
from carboy.store.db import open_database
from carboy.store.demo import DEMO_TODAY, create_demo_database
from carboy.tui.app.app import make_app
from carboy.tui.app.live import Computed
from carboy.tui.app.screens.confirm import ConfirmScreen
from carboy.tui.app.screens.neutralize import (
    CURVE_POINTS,
    FormState,
    NeutralizeScreen,
    compute,
)
from carboy.tui.app.screens.neutralize_record import RecordDialog
from carboy.tui.app.widgets.ph_curve import PHCurve
from carboy.tui.app.widgets.plan_view import CautionsPanel, PlanSummary

SIZE = (100, 36)


@pytest.fixture(scope="module")
def demo_template(tmp_path_factory):
    return create_demo_database(tmp_path_factory.mktemp("demo") / "demo.db", today=DEMO_TODAY)


@pytest.fixture
def demo_db(demo_template, tmp_path):
    """A fresh copy of the demo database (closed, so a file copy is a faithful one)."""
    target = tmp_path / "demo.db"
    shutil.copyfile(demo_template, target)
    return target


async def wait_for(pilot, condition, timeout: float = 10.0) -> None:
    deadline = time.monotonic() + timeout
    while not condition():
        if time.monotonic() > deadline:
            raise AssertionError("condition not met in time")
        await pilot.pause(0.05)


async def open_container(app, pilot, label: str) -> NeutralizeScreen:
    app.plan_container(label)
    await wait_for(pilot, lambda: isinstance(app.screen, NeutralizeScreen)
                   and app.screen.container is not None
                   and app.screen.container.label == label)
    return app.screen


async def set_field(pilot, screen: NeutralizeScreen, wid: str, text: str) -> None:
    """Fill a field as if typed: all but the last character set, the last one a keystroke."""
    field = screen.query_one(f"#{wid}", Input)
    field.focus()
    await pilot.pause()  # focusing selects the text; set it only after that
    field.value = text[:-1]
    field.cursor_position = len(field.value)
    await pilot.press(text[-1])


async def settled(pilot, screen: NeutralizeScreen) -> None:
    """Wait until the latest inputs have been planned (a plan or errors shown)."""
    await pilot.pause()
    await wait_for(pilot, lambda: screen.outcome is not None
                   and screen.outcome.generation == screen.live.generation
                   and screen.outcome.state == screen._form_state()
                   and screen.live.settled)


def echo(screen: NeutralizeScreen, name: str) -> str:
    return str(screen.query_one(f"#echo-{name}", Static).content)


async def test_container_plan_reaches_every_view_and_an_older_result_never_wins(demo_db):
    """The plan of a container in its figures, cautions, echo and curve; an older result
    arriving late never replaces it; another container gets its own plan.  (The form's
    reading and echoes: test_forms_neutralize.)"""
    app = make_app(demo_db, today=DEMO_TODAY, who="tester")
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_container(app, pilot, "MA-01")
        await set_field(pilot, screen, "reagent", "NaOH=1M")
        await settled(pilot, screen)
        plan = screen.plan
        assert plan is not None and not screen.stale
        assert plan.to_target.reagent_mol == pytest.approx(4.58, rel=0.01)
        summary = screen.query_one(PlanSummary).text
        assert "To pH 7" in summary and "4.58 L" in summary
        cautions = screen.query_one(CautionsPanel).text
        assert "local disposal rules" in cautions.lower()
        assert "[local-rules]" in cautions
        assert "safety office" in cautions
        assert "understood: NaOH 1 M solution" in echo(screen, "reagent")
        assert screen.check_action("record", ()) is True and screen.record_blocker() is None
        # the curve view: the curve, window, target and equivalence points
        await pilot.press("ctrl+t", "ctrl+t")
        await wait_for(pilot, lambda: screen.query_one("#nz-views").active == "view-curve")
        plot = screen.query_one(PHCurve)
        data = plot.data
        assert data is not None and len(data.x) == len(screen.plan.curve) == CURVE_POINTS
        assert data.window == (6.0, 9.0)
        assert data.x_unit == "L"
        assert data.target_x == pytest.approx(screen.plan.to_target.reagent_volume_l)
        assert [m.tag for m in data.equivalence] == ["E1", "E2"]
        assert data.pH[0] == pytest.approx(screen.plan.initial_pH)
        key = str(screen.query_one("#curve-key", Static).content)
        assert "window pH 6–9" in key and "E1" in key
        # a result computed for older inputs, arriving late, is dropped
        shown = screen.plan
        old = compute(FormState(NeutralizeFields(reagent="NaOH=2M"), screen.container),
                      generation=screen.live.generation - 1)
        assert old.value is not None
        screen.post_message(Computed(old))
        await pilot.pause()  # the message is handled before the pause returns
        assert screen.plan is shown
        # another container: its own plan, never the last one's
        screen = await open_container(app, pilot, "HF-04")
        assert screen.plan is None or screen.plan_state.container.label == "HF-04"
        await settled(pilot, screen)
        assert screen.plan_state.container.label == "HF-04"
        assert screen.plan is not None and not screen.plan.drain_plan


async def test_bad_reagent_is_explained_in_place_and_the_plan_goes_stale(demo_db):
    app = make_app(demo_db, today=DEMO_TODAY, who="tester")
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_container(app, pilot, "MA-01")
        await set_field(pilot, screen, "reagent", "NaOH=1M")
        await settled(pilot, screen)
        good = screen.plan
        await set_field(pilot, screen, "reagent", "NaOX=1M")
        await settled(pilot, screen)
        assert screen.query_one("#reagent", Input).value == "NaOX=1M"
        assert "✗" in echo(screen, "reagent") and "NaOX" in echo(screen, "reagent")
        assert screen.query_one("#reagent", Input).has_class("-invalid")
        assert screen.plan is good and screen.stale
        assert screen.query_one(PlanSummary).has_class("-stale")
        assert screen.query_one(PHCurve).stale
        assert "STALE" in str(screen.query_one("#nz-status", Static).content)
        assert "[local-rules]" in screen.query_one(CautionsPanel).text
        assert "stale" in screen.record_blocker()  # shown, and it says why it cannot record


async def test_typed_sample_with_bad_volume_keeps_the_text(demo_db):
    app = make_app(demo_db, today=DEMO_TODAY, who="tester")
    async with app.run_test(size=SIZE) as pilot:
        app.action_go("neutralize")
        await wait_for(pilot, lambda: isinstance(app.screen, NeutralizeScreen)
                       and app.screen._composed)
        screen = app.screen
        for wid, text in (("components", "H2SO4=0.05M NaH2PO4=10mM"), ("volume", "1,5 L")):
            screen.query_one(f"#{wid}", Input).value = text
        await set_field(pilot, screen, "reagent", "NaOH@97%")
        await settled(pilot, screen)
        assert screen.plan is not None
        assert "understood: 1.5 L" in echo(screen, "volume")
        assert screen.check_action("record", ()) is False  # no container: hidden
        await set_field(pilot, screen, "volume", "abc mL")
        await settled(pilot, screen)
        assert screen.query_one("#volume", Input).value == "abc mL"
        assert "✗" in echo(screen, "volume") and "abc" in echo(screen, "volume")
        assert screen.stale


def journal_count(path) -> int:
    store = open_database(path)
    try:
        return journal.count(store, kind="neutralization")
    finally:
        store.close()


async def test_a_cancelled_record_writes_nothing_and_a_confirmed_one_is_journaled(demo_db):
    app = make_app(demo_db, today=DEMO_TODAY, who="tester")
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_container(app, pilot, "MA-01")
        await set_field(pilot, screen, "reagent", "NaOH=1M")
        await settled(pilot, screen)
        before = journal_count(demo_db)
        # cancelled: Enter, Enter gives the safe answer twice, and nothing is written
        await pilot.press("ctrl+r")
        await wait_for(pilot, lambda: isinstance(app.screen, RecordDialog))
        app.screen.query_one("#added", Input).value = "4 L"
        await pilot.press(*"7.1", "enter")
        await wait_for(pilot, lambda: isinstance(app.screen, ConfirmScreen))
        await pilot.press("enter", "enter")
        await wait_for(pilot, lambda: app.screen is screen)
        await wait_for(pilot, lambda: not any(w.is_running for w in app.workers))
        assert journal_count(demo_db) == before
        # recorded: bad readings are refused in place, then an explicit yes writes it
        await pilot.press("ctrl+r")
        await wait_for(pilot, lambda: isinstance(app.screen, RecordDialog))
        dialog = app.screen
        assert dialog.query_one("#who", Input).value == "tester"
        await pilot.press("1", "5", "enter")
        assert "✗" in str(dialog.query_one("#measured-echo", Static).content)
        assert app.screen is dialog  # a bad reading is never accepted
        dialog.query_one("#who", Input).value = "a.helper"  # who did the work
        dialog.query_one("#bottle", Input).value = ""  # the reagent was not from a bottle
        dialog.query_one("#measured", Input).value = "7,"
        await pilot.press("2", "enter")
        assert "added" in str(dialog.query_one("#measured-echo", Static).content)
        assert app.screen is dialog  # a pH without the amount added is not a treatment
        dialog.query_one("#added", Input).value = "4.6 L"
        await pilot.press("enter")  # asks to confirm, with the safe answer focused
        await wait_for(pilot, lambda: isinstance(app.screen, ConfirmScreen))
        assert "from planned to neutralized" in app.screen.message
        assert app.focused.id == "confirm-no"
        await pilot.press("y")  # an explicit yes
        await wait_for(pilot, lambda: screen.last_journal_id is not None)
        entry_id = screen.last_journal_id
        await settled(pilot, screen)
        assert f"#{entry_id}" in str(screen.query_one("#nz-status", Static).content)
    store = open_database(demo_db)
    try:
        entry = journal.entries(store, kind="neutralization", limit=1)[0]
    finally:
        store.close()
    assert entry.id == entry_id
    assert entry.container_label == "MA-01"
    # the name typed is kept as who did the work; the entry records the account (app.who)
    assert entry.recorded_by == "tester"
    assert entry.snapshot["plan"]["performed_by"] == "a.helper"
    assert entry.snapshot["readings"]["final_ph"] == 7.2
    assert entry.snapshot["readings"]["added"]["value"] == pytest.approx(4.6)
    assert entry.snapshot["status"] == "neutralized"
    assert entry.snapshot["plan"]["disposal"]["route"] == "drain"
    assert entry.snapshot["plan"]["inputs"]["reagent"] == "NaOH=1M"
    assert entry.snapshot["plan"]["plan"]["to_target"]["reagent_mol"] == pytest.approx(
        4.58, rel=0.01)


async def test_a_fluoride_container_is_no_drain_plan_and_its_cautions_are_one_key_away(
        demo_db):
    from carboy.tui.app.widgets.plan_view import CautionsScreen

    app = make_app(demo_db, today=DEMO_TODAY, who="tester")
    async with app.run_test(size=(80, 24)) as pilot:
        screen = await open_container(app, pilot, "HF-04")
        await set_field(pilot, screen, "reagent", "NaOH=1M")
        await settled(pilot, screen)
        # the drain verdict reaches every view, nothing to record
        assert screen.plan_state.container.label == "HF-04"
        assert screen.plan is not None and not screen.plan.drain_plan
        panel = screen.query_one(CautionsPanel)
        assert panel.has_class("-no-drain")
        assert "NOT FOR DRAIN DISPOSAL" in panel.text and "[not-a-drain-plan]" in panel.text
        assert "NOT FOR DRAIN DISPOSAL" in screen.query_one(PlanSummary).text
        # the most serious caution in one line on screen; one key opens them all
        line = panel.query_one("#cautions-headline", Static)
        first = str(line.content)
        assert line.region.height == 1 and line.region.y < 24  # on screen, one line
        assert "DANGER" in first and f"{len(screen.plan.cautions) - 1} more: ctrl+g" in first
        await pilot.press("ctrl+g")
        await wait_for(pilot, lambda: isinstance(app.screen, CautionsScreen))
        shown = " ".join(str(w.content) for w in app.screen.query(Static))
        assert all(f"[{c.code}]" in shown for c in screen.plan.cautions)
        await pilot.press("escape")
        await wait_for(pilot, lambda: app.screen is screen)
        # held for licensed disposal: the key says why nothing can be recorded
        assert "held for licensed disposal" in screen.record_blocker()
        await pilot.press("ctrl+r")
        assert "cannot record" in str(screen.query_one("#nz-status", Static).content)


def test_the_curve_axis_has_even_ticks_that_cover_the_dose():
    from carboy.tui.app.widgets.ph_curve import even_ticks

    for end in (6.8, 0.34, 4.59, 0.0021, 137.0):
        ticks = even_ticks(end)
        steps = {round(b - a, 12) for a, b in zip(ticks, ticks[1:])}
        assert ticks[0] == 0 and ticks[-1] >= end and len(steps) == 1 and len(ticks) <= 6


@pytest.mark.parametrize("slow", [False, True])
async def test_planning_is_said_only_while_a_plan_takes_long(demo_db, monkeypatch, slow):
    """A plan quicker than the note's delay draws no "… planning" frame before it."""
    import carboy.tui.app.screens.neutralize as nz

    monkeypatch.setattr(nz, "PLANNING_NOTE_S", 0.05 if slow else 30.0)
    if slow:
        quick = nz.compute

        def slow_compute(*args, **kwargs):
            time.sleep(0.4)
            return quick(*args, **kwargs)

        monkeypatch.setattr(nz, "compute", slow_compute)
    app = make_app(demo_db, today=DEMO_TODAY, who="tester")
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_container(app, pilot, "MA-01")
        await settled(pilot, screen)
        said: list[str] = []
        original = screen._set_status
        screen._set_status = lambda text, keep_result=False: (said.append(text),
                                                             original(text, keep_result))
        await set_field(pilot, screen, "reagent", "NaOH=1M")
        await settled(pilot, screen)
        assert any(text.startswith("… planning") for text in said) is slow
        assert said[-1].startswith("✓ plan up to date")
        assert screen._planning_note is None


async def test_a_planned_container_opens_on_its_recorded_plan(demo_db):
    """MA-01 is planned in the demo: its form opens with the recorded reagent, target and
    temperature and says whose plan it is; a collecting container keeps what was typed."""
    app = make_app(demo_db, today=DEMO_TODAY, who="tester")
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_container(app, pilot, "AL-03")
        assert screen.query_one("#reagent", Input).value == ""
        screen = await open_container(app, pilot, "MA-01")
        await settled(pilot, screen)
        assert screen.query_one("#reagent", Input).value == "NaOH=1M"
        assert screen.query_one("#temperature", Input).value == "20 °C"
        assert "h.ostervald) loaded" in str(screen.query_one("#sample-info", Static).content)
        assert screen.plan is not None and screen.plan.sample.temperature_c == pytest.approx(20.0)


async def test_a_dialog_stays_with_its_plan_until_it_is_closed(demo_db):
    """F-keys and the palette do nothing while a dialog is open (it holds the plan under
    it: recording it after another container was loaded ended the app); a container
    opened on the Neutralize screen from elsewhere closes what was left open there."""
    app = make_app(demo_db, today=DEMO_TODAY, who="tester")
    async with app.run_test(size=SIZE) as pilot:
        screen = await open_container(app, pilot, "MA-01")
        await set_field(pilot, screen, "reagent", "NaOH=1M")
        await settled(pilot, screen)
        await pilot.press("ctrl+r")
        await wait_for(pilot, lambda: isinstance(app.screen, RecordDialog))
        dialog = app.screen
        await pilot.press("f3")
        await pilot.pause(0.1)
        assert app.current_mode == "neutralize" and app.screen is dialog
        assert not app.check_action("command_palette", ())
        app.plan_container("AL-03")   # as the Waste screen's p does
        await wait_for(pilot, lambda: isinstance(app.screen, NeutralizeScreen)
                       and app.screen.container is not None
                       and app.screen.container.label == "AL-03")
        assert not any(isinstance(s, RecordDialog) for s in app.screen_stack)
        await pilot.press("f3")
        await wait_for(pilot, lambda: app.current_mode == "waste")


async def test_the_banner_says_licensed_disposal_where_the_rules_send_it(demo_db):
    """OA-02's plan is drawn, but the storeroom's rules send it to licensed disposal: the
    cautions panel's banner says so on top, as it does for a waste never for the drain."""
    app = make_app(demo_db, today=DEMO_TODAY, who="tester")
    async with app.run_test(size=SIZE) as pilot:
        for label, banner in (("OA-02", True), ("MA-01", False)):
            screen = await open_container(app, pilot, label)
            await set_field(pilot, screen, "reagent", "NaOH=1M")
            await settled(pilot, screen)
            panel = screen.query_one(CautionsPanel)
            assert panel.has_class("-no-drain") == banner, label
            assert ("NOT FOR DRAIN DISPOSAL" in panel.text) == banner
