"""The app's addition dialog and the compatibility rules: every rule in both directions
through the dialog's own logic (``log_addition``, ``preview``), and one Pilot test of
the wiring (a refusal named in the dialog, a question answered with a reason)."""

from __future__ import annotations

import pytest
from test_waste_screen import on_waste
from waste_cases import CASES, IDS, counts, prepare

from carboy.model.forms.waste_addition import AdditionFields
from carboy.store import journal, waste
from carboy.store.db import open_database
from carboy.tui.app.screens.waste_accept import AcceptAdditionScreen, findings_text
from carboy.tui.app.screens.waste_add import AddWasteScreen, log_addition, preview


@pytest.fixture
def store(tmp_path):
    with open_database(tmp_path / "app.db") as s:
        yield s


def _fields(case) -> AdditionFields:
    return AdditionFields.of_component(case.component, case.volume or "", "from the dialog")


@pytest.mark.parametrize("case", CASES, ids=IDS)
def test_the_dialog_refuses_or_asks_for_each_rule(store, case):
    label = prepare(store, case)
    before = counts(store)
    outcome = log_addition(store, label, _fields(case), who="tester")
    expected = "confirm" if case.severity == "confirm" else "refused"
    assert outcome.kind == expected and outcome.field == "add-compound"
    assert case.rule in {f.rule_id for f in outcome.findings}
    assert outcome.message.startswith("refused: " if expected == "refused"
                                      else "needs a reason to go ahead: ")
    assert outcome.what.startswith("adding ") and label in outcome.what
    assert counts(store) == before
    word = "Will be refused" if expected == "refused" else "Needs a reason"
    assert preview(store, label, _fields(case)).startswith(f"⚠ {word}: ")
    again = log_addition(store, label, _fields(case), accept="checked with the supervisor",
                         who="tester")
    if expected == "refused":
        assert again.kind == "refused" and counts(store) == before
    else:
        assert again.kind == "logged" and counts(store) == (before[0] + 1, before[1] + 1)


def test_a_fitting_addition_is_logged_with_no_warning(store):
    waste.new_container(store, "A-1", stream="acid")
    fields = AdditionFields("HCl", "1 M", "1 L")
    assert preview(store, "A-1", fields) == ""
    assert log_addition(store, "A-1", fields).kind == "logged"
    assert preview(store, "A-1", AdditionFields("HCl", "1 q", "1 L")) == ""  # unreadable yet


def test_the_question_lists_each_finding_with_its_advice(store):
    case = next(c for c in CASES if c.rule == "base-into-acid-stream")
    label = prepare(store, case)
    outcome = log_addition(store, label, _fields(case))
    text = findings_text(outcome.findings)
    assert text.startswith("• A base in an acid-waste container neutralizes it there")
    assert "\n  Bases go to an alkaline-waste container" in text


async def test_the_dialog_names_a_refusal_and_logs_a_question_only_with_a_reason(
        make, wait_for, demo_db):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        await on_waste(app, pilot, wait_for, "OA-02")
        await pilot.press("a")
        await wait_for(pilot, lambda: isinstance(app.screen, AddWasteScreen))
        form = app.screen
        for field, text in (("add-compound", "NaCN"), ("add-conc", "0.1 M"),
                            ("add-volume", "100 mL")):
            form.query_one(f"#{field}").value = text
        await wait_for(pilot, lambda: "Will be refused" in str(form.query_one("#add-hazard")
                                                               .render()))
        await pilot.press("ctrl+s")
        await wait_for(pilot, lambda: "hydrogen cyanide" in str(form.query_one("#add-error")
                                                                .render()))
        assert "Not logged: refused" in str(form.query_one("#add-error").render())
        assert app.screen is form
        form.query_one("#add-compound").value = "NaOH"
        await pilot.press("ctrl+s")
        await wait_for(pilot, lambda: isinstance(app.screen, AcceptAdditionScreen))
        ask = app.screen
        assert app.focused is ask.query_one("#accept-no")  # the safe answer
        await pilot.press("ctrl+s")  # no reason: asked for one, nothing logged
        await wait_for(pilot, lambda: "needed: say why"
                       in ask.query_one("#row-accept-reason").echo_text)
        ask.query_one("#accept-reason").value = "neutralizing a rinse, staged"
        await pilot.press("ctrl+s")
        await wait_for(pilot, lambda: not isinstance(app.screen, (AddWasteScreen,
                                                                  AcceptAdditionScreen)))
    with open_database(demo_db) as store:
        last = waste.additions(store, "OA-02")[-1]
        entry = journal.entries(store, limit=1)[0]
    assert last.compound_key == "NaOH" and last.added_by == "tester"
    assert entry.snapshot["reason"] == "neutralizing a rinse, staged"
    assert entry.snapshot["addition_id"] == last.id
