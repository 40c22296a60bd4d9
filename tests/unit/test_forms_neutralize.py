"""The neutralization form as a plain object: fields in, a plan or field-named errors out."""

from __future__ import annotations

import pytest

from carboy.errors import InvalidInput, MissingInput
from carboy.model.forms.neutralize import (
    ContainerSample,
    NeutralizeFields,
    evaluate,
    read,
    split_components,
)


def fields(**kw) -> NeutralizeFields:
    base = {"components": "HCl=0.1M", "volume": "1 L", "reagent": "NaOH=1M"}
    return NeutralizeFields(**{**base, **kw})


def test_components_split_as_people_type_them():
    assert split_components("H2SO4=0.05M NaH2PO4=10mM") == ["H2SO4=0.05M", "NaH2PO4=10mM"]
    assert split_components("HCl=0,1 M, H3PO4=10 mM") == ["HCl=0,1 M", "H3PO4=10 mM"]
    assert split_components("acetic acid=1M") == ["acetic acid=1M"]


def test_a_good_form_reads_into_a_request(catalog):
    reading = read(fields(components="H2SO4=0.05M NaH2PO4=10mM", volume="1,5 L",
                          target="6,5", temperature="30"), catalog)
    assert reading.ok and not reading.errors
    request = reading.value
    assert request.mixture.volume_l == pytest.approx(1.5)
    assert request.target_pH == 6.5 and request.window == (6.0, 9.0)
    assert request.temperature_c == 30.0 and request.activity == "auto"   # the default
    assert reading.echoes["volume"] == "understood: 1.5 L"


def test_each_bad_field_is_named_and_carries_its_field(catalog):
    reading = read(fields(volume="abc mL", target="15", window_low="9", window_high="6",
                          temperature="500 K"), catalog)
    assert not reading.ok
    assert set(reading.errors) == {"volume", "target", "window", "temperature"}
    assert "abc" in reading.errors["volume"]
    assert [name for name, _ in reading.problems] == ["temperature", "volume", "target",
                                                        "window"]
    assert all(p.field == name for name, p in reading.problems if isinstance(p, InvalidInput))


def test_empty_fields_are_missing_not_wrong(catalog):
    reading = read(NeutralizeFields(), catalog)
    assert reading.missing == {"components", "volume", "reagent"}
    assert all(isinstance(p, MissingInput) for _, p in reading.problems)
    assert reading.errors["volume"].startswith("needed:")


def test_a_mass_is_refused_in_a_typed_sample(catalog):
    reading = read(fields(components="NaF=2 g"), catalog)
    assert "components" in reading.errors and "mass" in reading.errors["components"]


def test_the_sequence_form_of_components_reads_the_same(catalog):
    a = read(fields(components="HCl=0.1M H3PO4=10mM"), catalog)
    b = read(fields(components=("HCl=0.1M", "H3PO4=10mM")), catalog)
    assert a.value.mixture.totals == b.value.mixture.totals


def test_a_wrong_direction_reagent_lands_on_the_reagent_field(catalog):
    out = evaluate(fields(reagent="HCl=1M"), catalog)
    assert out.value is None
    assert "needs a base" in out.errors["reagent"]
    assert out.direction == "base"


def test_the_target_changes_the_dose(catalog):
    at_7 = evaluate(fields(components="CH3COOH=0.1M"), catalog).value.to_target.reagent_mol
    at_5 = evaluate(fields(components="CH3COOH=0.1M", target="5"),
                    catalog).value.to_target.reagent_mol
    assert at_5 < at_7


def test_a_container_sample_replaces_typed_components(catalog):
    container = ContainerSample("X-1", "collecting", 2.0, 10.0, "", {"Cl-": 0.2},
                                frozenset())
    out = evaluate(NeutralizeFields(reagent="NaOH=1M"), catalog, container)
    assert out.ok
    assert out.value.to_target.reagent_mol == pytest.approx(0.2, rel=1e-3)


def test_a_container_with_unknown_contents_is_named(catalog):
    container = ContainerSample("X-3", "collecting", 1.0, 10.0, "", {"Zz+": 0.1}, frozenset())
    out = evaluate(NeutralizeFields(reagent="NaOH=1M"), catalog, container)
    assert not out.ok and "Zz+" in out.errors["sample"]


def test_an_empty_container_is_named(catalog):
    container = ContainerSample("X-2", "collecting", 0.0, 10.0, "", {}, frozenset())
    out = evaluate(NeutralizeFields(reagent="NaOH=1M"), catalog, container)
    assert not out.ok and "no recorded volume" in out.errors["sample"]


def test_raise_first_gives_the_first_problem(catalog):
    reading = read(fields(volume="abc mL"), catalog)
    with pytest.raises(InvalidInput) as caught:
        reading.raise_first()
    assert caught.value.field == "volume"


def test_a_fluoride_sample_is_never_a_drain_plan(catalog):
    out = evaluate(fields(components="HF=0.5M NaF=0.1M"), catalog)
    assert out.ok and out.value.drain_plan is False
    assert any(c.code == "not-a-drain-plan" for c in out.value.cautions)


def test_each_field_echoes_what_was_understood(catalog):
    """What the Neutralize screen shows beside each field (its Pilot tests check only that
    an echo reaches its place)."""
    reading = read(fields(components="H2SO4=0.05M NaH2PO4=10mM", volume="1,5 L"), catalog)
    assert reading.echoes["components"] == ("understood: H2SO4 50 mM · NaH2PO4 10 mM "
                                            "in 1.5 L")
    assert reading.echoes["reagent"].startswith("understood: NaOH 1 M solution")
    assert reading.echoes["target"] == "understood: pH 7"
    assert reading.echoes["window"].startswith("window pH 6–9")


def test_an_unknown_reagent_is_named_on_the_reagent_field(catalog):
    reading = read(fields(reagent="NaOX=1M"), catalog)
    assert reading.value is None and set(reading.errors) == {"reagent"}
    assert "NaOX" in reading.errors["reagent"] and "NaOH" in reading.errors["reagent"]


def test_a_typed_sample_with_a_solid_reagent_of_given_assay_is_planned(catalog):
    out = evaluate(fields(components="H2SO4=0.05M NaH2PO4=10mM", volume="1,5 L",
                          reagent="NaOH@97%"), catalog)
    assert out.ok and out.direction == "base"
    assert out.echoes["reagent"].startswith("understood: NaOH solid, assay 97 %")
    # stoichiometry of the inputs: 0.075 mol H2SO4 gives 0.15 mol H+, and the 0.015 mol of
    # H2PO4- gives up part of one proton each on the way to pH 7 (its pKa2 is near 7)
    assert 0.15 < out.value.to_target.reagent_mol < 0.15 + 0.015


def test_recorded_fields_read_only_what_a_plan_entry_holds_as_text():
    from carboy.model.forms.neutralize import recorded_fields

    snap = {"plan": {"inputs": {"reagent": "KOH=2M", "target_pH": "7.5", "window": ["6", "9"],
                                "temperature": "18 °C", "activity": "davies"}}}
    assert recorded_fields(snap) == {"reagent": "KOH=2M", "target": "7.5", "window_low": "6",
                                     "window_high": "9", "temperature": "18 °C",
                                     "activity": "davies"}
    # an older record (no inputs), a foreign one, wrong types and an unknown model
    assert recorded_fields({"plan": {"reagent": "NaOH 1 M"}}) == {}
    assert recorded_fields({"plan": "text"}) == {}
    assert recorded_fields({}) == {}
    odd = {"plan": {"inputs": {"reagent": ["NaOH"], "target_pH": 7.25, "window": [6],
                               "temperature": True, "activity": "exotic"}}}
    assert recorded_fields(odd) == {"target": "7.25"}
