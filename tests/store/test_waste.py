"""Waste containers: additions, composition for the planner, refusals, status moves."""

from __future__ import annotations

import pytest

from carboy.errors import InvalidInput, UnknownCompound
from carboy.model.mixture import Mixture
from carboy.store import disposal, journal, waste
from carboy.store.errors import AlreadyExists, ContainerClosed, NotFound, OverCapacity


@pytest.fixture
def carboy(store):
    waste.new_container(store, "MA-01", location="Bay 1", capacity="10 L")
    return store


def test_new_container(store):
    c = waste.new_container(store, "  AL-3 ", location="Shelf", capacity="5000 mL")
    assert (c.label, c.capacity_l, c.status, c.volume_l) == ("AL-3", 5.0, "collecting", 0.0)
    assert waste.new_container(store, "X").capacity_l == waste.DEFAULT_CAPACITY_L
    with pytest.raises(AlreadyExists):
        waste.new_container(store, "al-3")
    for bad in ("0 L", "-2 L", "2 kg", "5000 L"):
        with pytest.raises(InvalidInput, match="capacity"):
            waste.new_container(store, "Y", capacity=bad)
    with pytest.raises(InvalidInput, match="label"):
        waste.new_container(store, "  ")


def test_composition_moles_and_volume(carboy):
    waste.add(carboy, "MA-01", "HCl=1M", "2 L", who="t")
    waste.add(carboy, "MA-01", "H2SO4=0.5 M", "500 mL", who="t")
    waste.add(carboy, "MA-01", "NaF=4.1988 g", who="t")     # 0.1 mol, no volume
    moles, volume = waste.moles(carboy, "MA-01")
    assert volume == pytest.approx(2.5)
    assert moles["Cl-"] == pytest.approx(2.0)
    assert moles["sulfate"] == pytest.approx(0.25)
    assert moles["Na+"] == pytest.approx(0.1, rel=1e-4)
    assert moles["fluoride"] == pytest.approx(0.1, rel=1e-4)
    mix = waste.composition(carboy, "MA-01")
    assert isinstance(mix, Mixture)
    assert mix.volume_l == pytest.approx(2.5)
    assert mix.totals["Cl-"] == pytest.approx(0.8)
    assert mix.moles()["sulfate"] == pytest.approx(0.25)


def test_percent_concentration_uses_density(carboy, catalog):
    from carboy.model.catalog import molarity_at

    waste.add(carboy, "MA-01", "H2SO4=10 %w/w", "100 mL", who="t")
    moles, _ = waste.moles(carboy, "MA-01")
    assert moles["sulfate"] == pytest.approx(0.1 * molarity_at("H2SO4", 10.0))


def test_history_keeps_composition_as_it_was(carboy):
    waste.add(carboy, "MA-01", "H3PO4=0.1M", "1 L", who="t", note="old rinse")
    (a,) = waste.additions(carboy, "MA-01")
    assert a.composition == {"phosphate": 1}
    assert a.moles == {"phosphate": pytest.approx(0.1)}
    assert (a.entered, a.note, a.conc_molar, a.volume_l) == ("H3PO4=0.1M", "old rinse", 0.1, 1.0)


@pytest.mark.parametrize("component, volume, error, match", [
    ("Unobtainium=1M", "1 L", UnknownCompound, "unknown compound"),
    ("HCl=1M", "-1 L", InvalidInput, "negative"),
    ("HCl=1M", "0 L", InvalidInput, "greater than zero"),
    ("HCl=1M", "2000 L", InvalidInput, "more than any container"),
    ("HCl=1M", "1 kg", InvalidInput, "is a mass"),
    ("HCl=1M", None, InvalidInput, "required"),
    ("HCl=-1M", "1 L", InvalidInput, "negative"),
    ("HCl=99M", "1 L", InvalidInput, "stronger"),
    ("HCl=1 g/L", "1 L", InvalidInput, "not a concentration"),
    ("HCl=2N", "1 L", InvalidInput, "normality"),
    ("HCl", "1 L", InvalidInput, "NAME=CONC"),
    ("=1M", "1 L", InvalidInput, "name is missing"),
    ("HCl=", "1 L", InvalidInput, "missing after"),
    ("HCl=1M", "eleven", InvalidInput, "volume"),
    ("NaOH=200 %", "1 L", InvalidInput, "exceed 100"),
])
def test_bad_additions_write_nothing(carboy, component, volume, error, match):
    with pytest.raises(error, match=match):
        waste.add(carboy, "MA-01", component, volume, who="t")
    assert waste.additions(carboy, "MA-01") == []


def test_over_capacity_when_the_rules_allow_filling_to_the_brim(carboy):
    disposal.set_rules(carboy, {"fill_limit_percent": "100", "nearly_full_percent": "80"})
    waste.add(carboy, "MA-01", "HCl=1M", "9.5 L", who="t")
    with pytest.raises(OverCapacity) as info:
        waste.add(carboy, "MA-01", "HCl=1M", "600 mL", who="t")
    assert info.value.capacity_l == 10.0 and info.value.would_be_l == pytest.approx(10.1)
    assert "10 L" in str(info.value)
    waste.add(carboy, "MA-01", "HCl=1M", "500 mL", who="t")     # exactly full is fine
    assert waste.container(carboy, "MA-01").volume_l == pytest.approx(10.0)


def test_unknown_container(store):
    with pytest.raises(NotFound, match="waste container"):
        waste.add(store, "nope", "HCl=1M", "1 L")
    with pytest.raises(NotFound):
        waste.composition(store, "nope")


def test_closed_container_refuses_additions(carboy):
    waste.add(carboy, "MA-01", "HCl=1M", "1 L", who="t")
    waste.record_neutralization(carboy, "MA-01", {"reagent": "NaOH"}, 7.2, who="t")
    waste.set_status(carboy, "MA-01", "disposed", note="per safety office", who="t")
    with pytest.raises(ContainerClosed, match="disposed"):
        waste.add(carboy, "MA-01", "HCl=1M", "1 L", who="t")
    assert len(waste.additions(carboy, "MA-01")) == 1


def test_status_moves(carboy):
    with pytest.raises(ContainerClosed):
        waste.set_status(carboy, "MA-01", "disposed")   # must be neutralized first
    with pytest.raises(InvalidInput):
        waste.set_status(carboy, "MA-01", "poured")
    eid = waste.set_status(carboy, "MA-01", "licensed-disposal", who="t")
    assert journal.get(carboy, eid).kind == "disposal"
    c = waste.container(carboy, "MA-01")
    assert c.status == "licensed-disposal" and c.closed_on is not None
    with pytest.raises(ContainerClosed):
        waste.record_neutralization(carboy, "MA-01", {}, 7.0)


def test_record_neutralization_plan_then_done(carboy):
    waste.add(carboy, "MA-01", "HCl=1M", "2 L", who="t")
    plan = {"reagent": "NaOH 1 M", "dose_l": 2.0, "final_pH": 7.0}
    e1 = waste.record_neutralization(carboy, "MA-01", plan, None, who="t")
    assert waste.container(carboy, "MA-01").status == "planned"
    with pytest.raises(ContainerClosed):
        waste.add(carboy, "MA-01", "HCl=1M", "1 L")
    e2 = waste.record_neutralization(carboy, "MA-01", plan, 6.8, who="t")
    assert waste.container(carboy, "MA-01").status == "neutralized"
    entry = journal.get(carboy, e2)
    assert entry.kind == "neutralization" and entry.container_label == "MA-01"
    assert entry.snapshot["plan"] == plan and entry.snapshot["measured_ph"] == 6.8
    assert entry.snapshot["container"]["moles"] == {"Cl-": 2.0}
    assert journal.get(carboy, e1).snapshot["measured_ph"] is None


def test_bad_measured_ph_changes_nothing(carboy):
    for bad in ("seven", float("nan"), 22):
        with pytest.raises(InvalidInput, match="pH"):
            waste.record_neutralization(carboy, "MA-01", {}, bad)
    assert waste.container(carboy, "MA-01").status == "collecting"
    assert journal.count(carboy) == 0


def test_correct_addition_supersedes(carboy):
    a1 = waste.add(carboy, "MA-01", "HCl=10M", "1 L", who="t")
    a2 = waste.correct_addition(carboy, a1, "label said 1 M", component="HCl=1M", volume="1 L",
                                who="t")
    moles, volume = waste.moles(carboy, "MA-01")
    assert moles == {"Cl-": pytest.approx(1.0)} and volume == pytest.approx(1.0)
    rows = waste.additions(carboy, "MA-01")
    assert [(r.id, r.superseded, r.supersedes_id) for r in rows] == [(a1, True, None),
                                                                     (a2, False, a1)]
    with pytest.raises(InvalidInput, match="already corrected"):
        waste.correct_addition(carboy, a1, "again")
    waste.correct_addition(carboy, a2, "never went in", who="t")
    assert waste.moles(carboy, "MA-01") == ({}, 0.0)
    with pytest.raises(InvalidInput, match="no recorded volume"):
        waste.composition(carboy, "MA-01")


def test_show_json_keys(carboy):
    waste.add(carboy, "MA-01", "HCl=1M", "1 L", who="t")
    info = waste.show(carboy, "ma-01")
    assert {"label", "status", "volume_l", "capacity_l", "composition", "additions"} <= set(info)
    assert info["label"] == "MA-01" and info["composition"] == {"Cl-": 1.0}
    assert info["additions"][0]["entered"] == "HCl=1M"


def test_containers_list(carboy):
    waste.new_container(carboy, "AL-02")
    assert [c.label for c in waste.containers(carboy)] == ["AL-02", "MA-01"]
    assert waste.containers(carboy, status="planned") == []


def test_hazard_tags_follow_what_is_counted(tmp_path):
    from carboy.store import db as store_db
    from carboy.store import waste as w

    store = store_db.open_database(tmp_path / "h.db")
    w.new_container(store, "T-1")
    first = w.add(store, "T-1", "NaF=0.1M", "1 L")
    assert "hf_type" in w.hazard_tags(store, "T-1")
    w.correct_addition(store, first, "wrong bottle", component="NaCl=0.1M", volume="1 L")
    assert "hf_type" not in w.hazard_tags(store, "T-1")
    store.close()


@pytest.mark.parametrize("call, field", [
    (lambda s: waste.add(s, "MA-01", "HCl=1M", "eleven"), "volume"),
    (lambda s: waste.add(s, "MA-01", "HCl=1M", None), "volume"),
    (lambda s: waste.add(s, "MA-01", "HCl=1M", 2000.0), "volume"),
    (lambda s: waste.add(s, "MA-01", "HCl=99M", "1 L"), "component"),
    (lambda s: waste.add(s, "MA-01", "HCl", "1 L"), "component"),
    (lambda s: waste.add(s, "MA-01", "HCl=1M", "1 L", note="n" * 2001), "note"),
    (lambda s: waste.new_container(s, "Y", capacity="2 kg"), "capacity"),
    (lambda s: waste.new_container(s, "Y", capacity=-1.0), "capacity"),
    (lambda s: waste.new_container(s, " "), "label"),
    (lambda s: waste.set_status(s, "MA-01", "poured"), "status"),
    (lambda s: waste.containers(s, status="poured"), "status"),
    (lambda s: waste.record_neutralization(s, "MA-01", {}, "seven"), "measured_ph"),
    (lambda s: waste.correct_addition(s, 1, " "), "reason"),
])
def test_bad_input_names_its_field(carboy, call, field):
    with pytest.raises(InvalidInput) as info:
        call(carboy)
    assert info.value.field == field
