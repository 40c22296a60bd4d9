"""Corrections of each kind (a reading, the reagent added, the amount drawn, the amount
left, an addition), refused ones that write nothing, and notes."""

from __future__ import annotations

import pytest
from test_treatments import acid, bottle, counts, readings

from carboy.errors import HazardRefused, InvalidInput
from carboy.model.forms.correction import CorrectionFields
from carboy.model.forms.correction import read as read_correction
from carboy.store import corrections, journal, stock, treatments, waste
from carboy.store.errors import DisposalRefused, NotFound


def fix(**fields):
    r = read_correction(CorrectionFields(**fields))
    assert r.ok, r.errors
    return r.value


@pytest.fixture
def treated(store):
    label, b = acid(store), bottle(store)
    done = treatments.record_treatment(store, label, readings(bottle=str(b), added="3 L",
                                                              final_ph="5.1"))
    return label, b, done.entry_id


def test_a_reading_corrected_into_the_window_lets_the_container_go(store, treated):
    label, _b, entry = treated
    with pytest.raises(DisposalRefused):
        waste.set_status(store, label, "disposed")
    done = corrections.correct(store, entry, fix(reason="misread", final_ph="6.5",
                                                 vented_ph="6.7", stage_ph=("2", "6")))
    new = journal.get(store, done.entry_id)
    assert new.kind == "correction" and new.corrects_id == entry
    assert new.snapshot["changes"]["final_ph"] == {"was": 5.1, "now": 6.5}
    assert journal.get(store, entry).snapshot["readings"]["final_ph"] == 5.1  # unchanged
    waste.set_status(store, label, "disposed")


def test_the_reagent_added_corrected_draws_the_bottle_and_supersedes_the_addition(
        store, treated):
    label, b, entry = treated
    done = corrections.correct(store, entry, fix(reason="3.5 L went in", added="3.5 L"))
    assert stock.get(store, b).amount_left == pytest.approx(1.5)
    assert waste.container(store, label).volume_l == pytest.approx(11.5)
    assert waste.contents(store, label)["NaOH"] == pytest.approx(7.0)
    rows = [a for a in waste.additions(store, label) if a.compound_key == "NaOH"]
    assert [a.superseded for a in rows] == [True, False]
    # correcting the correction: less went in after all, the bottle gets it back
    corrections.correct(store, done.entry_id, fix(reason="2.5 L", added="2.5 L"))
    assert stock.get(store, b).amount_left == pytest.approx(2.5)
    assert waste.container(store, label).volume_l == pytest.approx(10.5)
    assert journal.verify(store).ok


def test_a_correction_the_bottle_cannot_supply_writes_nothing(store, treated):
    _label, _b, entry = treated
    before = counts(store)
    with pytest.raises(InvalidInput, match="only 2 L is left"):
        corrections.correct(store, entry, fix(reason="much more", added="6 L"))
    assert counts(store) == before


def test_the_amount_drawn_by_a_preparation(store):
    b = bottle(store, compound="HCl", strength="37 %", left="2 L", size="2.5 L")
    entry = stock.record_preparation(store, b, "100 mL")
    corrections.correct(store, entry, fix(reason="drew 120 mL", used="120 mL"))
    assert stock.get(store, b).amount_left == pytest.approx(1.88)


def test_the_amount_left_in_a_bottle(store):
    b = bottle(store, left="4 L")
    receipt = journal.entries(store, bottle_id=b, limit=1)[0]
    with pytest.raises(InvalidInput, match="more than bottle"):
        corrections.correct(store, receipt.id, fix(reason="typo", amount_left="9 L"))
    corrections.correct(store, receipt.id, fix(reason="stocktake", amount_left="3.2 L"))
    assert stock.get(store, b).amount_left == pytest.approx(3.2)


def test_an_addition_is_corrected_by_a_superseding_row(store):
    label = acid(store)
    first = waste.additions(store, label)[0]
    new = waste.correct_addition(store, first.id, "was 4 L", component="HCl=1M",
                                 volume="4 L")
    assert waste.container(store, label).volume_l == pytest.approx(7.0)
    assert [a.id for a in waste.additions(store, label) if a.superseded] == [first.id]
    with pytest.raises(InvalidInput, match="already corrected"):
        waste.correct_addition(store, first.id, "again", volume="1 L", component="HCl=1M")
    assert new > first.id


def test_a_corrected_addition_meets_the_rules_an_addition_meets(store):
    """Cyanide refused as an addition to acid waste is refused as a correction too, and
    nothing is written; a question of the rules is answered by the correction's reason."""
    label = acid(store)
    first = waste.additions(store, label)[0]
    with pytest.raises(HazardRefused, match="hydrogen cyanide"):
        waste.add(store, label, "NaCN=1M", "10 mL")
    rows, entries = len(waste.additions(store, label)), len(journal.entries(store))
    with pytest.raises(HazardRefused, match="hydrogen cyanide"):
        waste.correct_addition(store, first.id, "mislogged", component="NaCN=1M",
                               volume="1 L")
    assert len(waste.additions(store, label)) == rows and len(journal.entries(store)) == entries
    assert "NaCN" not in waste.contents(store, label)
    waste.correct_addition(store, first.id, "it was the base", component="NaOH=0.1M",
                           volume="1 L")   # base into an acid container: asked, answered
    note = journal.entries(store, limit=1)[0]
    assert note.snapshot["reason"] == "it was the base"
    assert [f["rule"] for f in note.snapshot["findings"]] == ["base-into-acid-stream"]


@pytest.mark.parametrize(("values", "error"), [
    (dict(reason="x", final_ph="7"), "not a treatment"),
    (dict(reason="x", used="1 mL"), "not a preparation"),
])
def test_a_value_the_entry_does_not_hold_is_refused(store, values, error):
    waste.new_container(store, "N1", stream="acid")
    entry = corrections.note(store, "a note", container="N1")
    before = counts(store)
    with pytest.raises(InvalidInput, match=error):
        corrections.correct(store, entry, fix(**values))
    assert counts(store) == before


def test_missing_and_already_corrected_entries_are_refused(store, treated):
    _label, _b, entry = treated
    with pytest.raises(NotFound):
        corrections.correct(store, 999, fix(reason="x"))
    corrections.correct(store, entry, fix(reason="just a remark"))
    before = counts(store)
    with pytest.raises(InvalidInput, match="already corrected"):
        corrections.correct(store, entry, fix(reason="again", final_ph="7"))
    assert counts(store) == before


def test_notes_on_a_bottle_or_a_container(store):
    b = bottle(store)
    waste.new_container(store, "N2", stream="acid")
    one = corrections.note(store, "cap replaced", bottle=b)
    two = corrections.note(store, " label  redone ", container="N2")
    assert journal.get(store, one).bottle_id == b
    assert journal.get(store, two).summary == "N2: label redone"
    for bad in (dict(), dict(bottle=b, container="N2")):
        with pytest.raises(InvalidInput):
            corrections.note(store, "x", **bad)
    with pytest.raises(InvalidInput):
        corrections.note(store, "  ", bottle=b)
