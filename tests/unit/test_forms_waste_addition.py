"""The waste-addition form as a plain object: what went into a container, read once for
the app's dialog and ``carboy waste add``; every problem named by its field."""

from __future__ import annotations

import pytest

from carboy.model.forms.waste_addition import AdditionFields, read


def test_a_solution_reads_with_decimal_commas_and_echoes_each_field(catalog):
    reading = read(AdditionFields("HCl", "0,1 M", "1,5 L", " rinse "), catalog)
    assert reading.ok
    addition = reading.value
    assert addition.component.compound.key == "HCl"
    assert addition.component.conc_molar == pytest.approx(0.1)
    assert (addition.volume_l, addition.note) == (1.5, "rinse")
    assert reading.echoes == {"compound": "→ hydrochloric acid (HCl)", "amount": "→ 0.1 M",
                              "volume": "→ 1.5 L"}


def test_a_solid_needs_no_volume_and_a_solution_does(catalog):
    solid = read(AdditionFields("NaOH", "2 g", ""), catalog)
    assert solid.ok and solid.value.component.mass_g == 2.0 and solid.value.volume_l == 0.0
    assert "g of solid" in solid.echoes["amount"]
    solution = read(AdditionFields("HCl", "1 M", ""), catalog)
    assert solution.value is None and "required" in solution.errors["volume"]


@pytest.mark.parametrize(("fields", "field", "needle"), [
    (AdditionFields("HCl", "1 M", "25 q"), "volume", "'25 q'"),
    (AdditionFields("HClx", "1 M", "1 L"), "compound", "HClx"),
    (AdditionFields("HCl", "1 X", "1 L"), "amount", "1 X"),
    (AdditionFields("HCl", "1 M", "2000 L"), "volume", "more than any container holds"),
    (AdditionFields("HCl", "1 M", "0 L"), "volume", "greater than zero"),
    (AdditionFields("HCl", "1 M", "1 L", "x" * 2001), "note", "too long"),
])
def test_each_bad_field_is_named(catalog, fields, field, needle):
    reading = read(fields, catalog)
    assert reading.value is None and field in reading.errors, reading.errors
    assert needle in reading.errors[field]


def test_an_unknown_compound_names_the_closest_matches(catalog):
    reading = read(AdditionFields("HClx", "1 M", "1 L"), catalog)
    assert "closest matches: HCl" in reading.errors["compound"]


def test_the_command_lines_name_and_amount_split_into_the_same_fields(catalog):
    fields = AdditionFields.of_component("HCl=0,1M", "1,5 L", "rinse")
    assert (fields.compound, fields.amount) == ("HCl", "0,1M")
    typed = read(AdditionFields("HCl", "0,1 M", "1,5 L", "rinse"), catalog).value
    assert read(fields, catalog).value.component.conc_molar == typed.component.conc_molar
    assert AdditionFields.of_component("HCl").amount == ""  # no '=': no amount yet


def test_empty_fields_are_hints(catalog):
    reading = read(AdditionFields(), catalog)
    assert reading.missing == {"compound", "amount"}
