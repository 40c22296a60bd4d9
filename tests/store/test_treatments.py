"""Recording a treatment: one transaction (bottle drawn down, reagent in the container,
status moved on, journal entry with plan and readings), refusals that write nothing, the
fill levels, and the storeroom's disposal rules in the database."""

from __future__ import annotations

import sqlite3

import pytest

from carboy.errors import InvalidInput, Refused
from carboy.model.forms.treatment import TreatmentFields, read
from carboy.store import disposal, journal, stock, treatments, waste
from carboy.store.db import open_database
from carboy.store.errors import ContainerClosed, DisposalRefused, HeadspaceRefused


def bottle(store, strength="2 M", left="5 L", compound="NaOH", size="5 L") -> int:
    return stock.add(store, {"compound": compound, "label_strength": strength,
                             "container_size": size, "amount_left": left})


def acid(store, label="A1", capacity="10 L") -> str:
    waste.new_container(store, label, capacity=capacity, stream="acid")
    waste.add(store, label, "HCl=1M", "5 L")
    waste.add(store, label, "H2SO4=0.5M", "3 L")
    return label


def readings(**fields):
    r = read(TreatmentFields(**fields))
    assert r.ok, r.errors
    return r.value


def counts(store) -> tuple:
    return (journal.count(store), store.scalar("SELECT count(*) FROM waste_additions"),
            store.scalar("SELECT group_concat(amount_left) FROM stock_bottles"),
            store.scalar("SELECT group_concat(status) FROM waste_containers"))


def test_a_treatment_is_one_transaction(store):
    label, b = acid(store), bottle(store)
    reading, fields = treatments.plan_for(store, label, "NaOH=2M")
    plan = {"plan": reading.value.to_dict(), "disposal": reading.disposal.to_dict()}
    done = treatments.record_treatment(store, label, readings(
        bottle=str(b), added="4 L", stage_ph=("2.5", "6.6"), vented_ph="6.9", final_ph="7.1",
        final_volume="12.5 L", temperature="29"), plan_snapshot=plan)
    assert done.in_window and done.status == "neutralized" and done.warnings == ()
    assert stock.get(store, b).amount_left == pytest.approx(1.0)
    c = waste.container(store, label)
    assert c.volume_l == pytest.approx(12.5) and c.status == "neutralized"
    # the reagent is in the contents: 8 mol NaOH (4 L of 2 M) besides the acids
    assert waste.contents(store, label)["NaOH"] == pytest.approx(8.0)
    entry = journal.get(store, done.entry_id)
    assert entry.kind == "neutralization" and entry.bottle_id == b
    snap = entry.snapshot
    assert snap["event"] == "treatment" and snap["readings"]["stage_ph"] == [2.5, 6.6]
    assert snap["container"]["volume_l"] == pytest.approx(8.0)
    assert snap["container"]["contents"] == {"HCl": pytest.approx(5.0),
                                             "H2SO4": pytest.approx(1.5)}
    assert snap["reagent"]["left_before"] == 5.0 and snap["reagent"]["left_after"] == 1.0
    assert snap["plan"]["disposal"]["n_batches"] == reading.disposal.n_batches
    assert snap["window"] == [6.0, 9.0] and snap["in_window"] is True
    assert journal.verify(store).ok


def test_a_short_bottle_is_refused_and_nothing_is_written(store):
    label, b = acid(store), bottle(store, left="0.75 L")
    before = counts(store)
    with pytest.raises(InvalidInput, match="only 750 mL is left in bottle"):
        treatments.record_treatment(store, label, readings(bottle=str(b), added="4.59 L",
                                                           final_ph="7"))
    assert counts(store) == before


@pytest.mark.parametrize(("fields", "error"), [
    (dict(bottle="99", added="1 L", final_ph="7"), "no stock bottle"),
    (dict(bottle="1", added="100 g", final_ph="7"), "kept in L"),
    (dict(bottle="1", reagent="KOH=2M", added="1 L", final_ph="7"), "bottle 1 holds NaOH"),
])
def test_a_bottle_that_cannot_supply_it_writes_nothing(store, fields, error):
    label = acid(store)
    bottle(store)
    before = counts(store)
    with pytest.raises(Exception, match=error):
        treatments.record_treatment(store, label, readings(**fields))
    assert counts(store) == before


def test_a_never_treat_container_is_refused_by_rule(store):
    waste.new_container(store, "HF-1", stream="hf")
    waste.add(store, "HF-1", "HF=1M", "1 L", accept="test")
    b = bottle(store)
    before = counts(store)
    with pytest.raises(DisposalRefused, match="stream:hf") as err:
        treatments.record_treatment(store, "HF-1", readings(bottle=str(b), added="0.5 L",
                                                            final_ph="7"))
    assert isinstance(err.value, Refused) and counts(store) == before


def test_an_out_of_window_ph_is_recorded_with_a_warning_and_blocks_disposal(store):
    label, b = acid(store), bottle(store)
    done = treatments.record_treatment(store, label, readings(bottle=str(b), added="3 L",
                                                              final_ph="4.2"))
    assert not done.in_window and "outside the storeroom's window" in done.warnings[0]
    with pytest.raises(DisposalRefused, match="pH 4.2, outside the window"):
        waste.set_status(store, label, "disposed")
    assert waste.container(store, label).status == "neutralized"
    # a further treatment is allowed and brings it in; then it may go
    again = treatments.record_treatment(store, label, readings(bottle=str(b), added="1 L",
                                                               final_ph="7.4"))
    assert again.in_window
    waste.set_status(store, label, "disposed")


def test_licensed_disposal_route_and_closed_containers(store):
    label, b = acid(store), bottle(store)
    done = treatments.record_treatment(store, label, readings(
        bottle=str(b), added="4 L", final_ph="7", route="licensed-disposal"))
    assert done.status == "licensed-disposal"
    with pytest.raises(ContainerClosed):
        treatments.record_treatment(store, label, readings(bottle=str(b), added="0.1 L",
                                                           final_ph="7"))


def test_a_reagent_not_from_a_bottle_and_a_solid(store):
    label = acid(store)
    done = treatments.record_treatment(store, label, readings(reagent="NaHCO3", added="800 g",
                                                              final_ph="6.8"))
    assert done.bottle_id is None
    # 800 g of NaHCO3 (84.007 g/mol, from the formula): 9.52 mol; a solid adds no volume
    assert waste.contents(store, label)["NaHCO3"] == pytest.approx(800 / 84.007, rel=1e-4)
    assert waste.container(store, label).volume_l == pytest.approx(8.0)


# -- fill levels ---------------------------------------------------------------------------

def test_additions_past_the_fill_limit_are_refused_naming_the_free_volume(store):
    waste.new_container(store, "F1", capacity="10 L", stream="acid")
    waste.add(store, "F1", "HCl=1M", "7.9 L")
    assert not waste.container(store, "F1").nearly_full
    waste.add(store, "F1", "HCl=1M", "100 mL")
    c = waste.container(store, "F1")
    assert c.nearly_full and not c.full and c.fill_percent == pytest.approx(80.0)
    assert [x.label for x in waste.containers(store, nearly_full=True)] == ["F1"]
    before = counts(store)
    with pytest.raises(HeadspaceRefused, match="1 L free") as err:
        waste.add(store, "F1", "HCl=1M", "1.5 L")
    assert err.value.free_l == pytest.approx(1.0) and counts(store) == before
    waste.add(store, "F1", "HCl=1M", "1 L")  # exactly to the limit
    assert waste.container(store, "F1").full
    disposal.set_rules(store, {"fill_limit_percent": "95 %"})
    waste.add(store, "F1", "HCl=1M", "0.5 L")


def test_a_correction_that_grows_an_addition_obeys_the_fill_limit(store):
    waste.new_container(store, "F2", capacity="10 L", stream="acid")
    first = waste.add(store, "F2", "HCl=1M", "8 L")
    with pytest.raises(HeadspaceRefused):
        waste.correct_addition(store, first, "was more", component="HCl=1M", volume="9.5 L")
    waste.correct_addition(store, first, "was less", component="HCl=1M", volume="6 L")
    assert waste.container(store, "F2").volume_l == pytest.approx(6.0)


# -- the profile in the database -------------------------------------------------------------

def test_every_rule_change_is_journaled_and_the_database_holds_to_it(store):
    entry = disposal.set_rules(store, {"window_low": "5.5", "batch_max_l": "250 mL"})
    snap = journal.get(store, entry).snapshot
    assert snap["event"] == "disposal-rules"
    assert snap["changes"]["batch_max_l"] == {"before": 1.0, "after": 0.25}
    assert disposal.load(store).window == (5.5, 9.0)
    with pytest.raises(sqlite3.IntegrityError, match="journal entry that records it"):
        store.write(lambda s: s.execute("UPDATE disposal_rules SET value_json = '7' "
                                        "WHERE name = 'window_low'"))
    with pytest.raises(sqlite3.IntegrityError):
        store.write(lambda s: s.execute("DELETE FROM disposal_rules"))
    back = disposal.reset(store, ["window_low"])
    assert journal.get(store, back).snapshot["back_to_placeholder"] is True
    assert disposal.load(store).window == (6.0, 9.0)
    assert disposal.reset(store, ["window_low"]) is None  # nothing of its own left
    with pytest.raises(InvalidInput):
        disposal.set_rules(store, {"window_low": "9.5"})  # above the high edge
    assert disposal.load(store).batch_max_l == 0.25 and journal.verify(store).ok


def test_a_bottle_with_its_reagent_named_too_draws_the_bottle(store):
    label, b = acid(store), bottle(store)
    done = treatments.record_treatment(store, label, readings(
        bottle=str(b), reagent="NaOH=2M", added="1 L", final_ph="7"))
    assert done.bottle_id == b and stock.get(store, b).amount_left == pytest.approx(4.0)


def test_a_planned_container_gives_back_the_inputs_of_its_recorded_plan(copy_demo):
    """The demo's MA-01 is planned (entry with the form's inputs); a collecting container
    has no recorded plan, and once a plan of it is recorded its inputs come back."""
    from carboy.model.forms.neutralize import NeutralizeFields, evaluate, snapshot
    from carboy.store.planning import container_sample, recorded_plan

    store = open_database(copy_demo())
    try:
        ma01 = recorded_plan(store, "MA-01")
        assert ma01 is not None and ma01.fields["reagent"] == "NaOH=1M"
        assert ma01.recorded_by == "h.ostervald"
        assert "#" in ma01.heading() and "loaded" in ma01.heading()
        assert recorded_plan(store, "AL-03") is None
        sample, catalog = container_sample(store, "AL-03")
        fields = NeutralizeFields(reagent="HCl=1M", target="8", window_low="6.5",
                                  window_high="9", temperature="22 °C", activity="davies")
        reading = evaluate(fields, catalog, sample)
        assert reading.value is not None, reading.errors
        waste.record_neutralization(store, "AL-03", snapshot(
            fields, reading.value, container_label="AL-03", reagent_bottle_id=None,
            recorded_from="test"))
        again = container_sample(store, "AL-03")[0].recorded
        assert again is not None
        assert dict(again.fields) == {"reagent": "HCl=1M", "target": "8", "window_low": "6.5",
                                      "window_high": "9", "temperature": "22 °C",
                                      "activity": "davies"}
    finally:
        store.close()


def test_a_drawn_down_bottle_keeps_no_rounding_noise(store):
    """0.75 L less 0.6 L is stored as 0.15 L, not 0.15000000000000002 (scripts read
    ``amount_left`` from the JSON)."""
    label, b = acid(store), bottle(store, left="0.75 L")
    treatments.record_treatment(store, label, readings(bottle=str(b), added="0.6 L",
                                                       final_ph="1.0"))
    assert stock.get(store, b).amount_left == 0.15


def test_a_dose_that_cannot_give_the_ph_read_is_recorded_with_a_warning(store):
    """5 L of 1 M HCl and 3 L of 0.5 M H2SO4 need about 8 mol of NaOH for pH 7; 0.5 L of
    2 M logged with pH 7.1 read is kept as given, with the warning in the record."""
    label, b = acid(store), bottle(store)
    done = treatments.record_treatment(store, label, readings(
        bottle=str(b), added="0.5 L", final_ph="7.1"))
    assert done.in_window   # the reading is what was measured
    doubt = done.warnings[0]
    assert "1 mol of NaOH" in doubt and "before anything is disposed" in doubt
    entry = journal.get(store, done.entry_id)
    assert entry.snapshot["warnings"][0] == doubt
