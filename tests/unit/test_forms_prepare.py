"""The preparation form as a plain object: fields in, a request (and its recipes, new
bottles and labels) or field-named errors out.  Every expected number comes from the
model's own :func:`carboy.model.preparation.plan_recipe` on the same inputs."""

from __future__ import annotations

from datetime import date

import pytest

from carboy.model import preparation
from carboy.model.forms.prepare import PrepareFields, plan, read

TODAY = date(2025, 3, 14)


def test_a_concentrate_reads_and_plans_as_the_model_does(catalog):
    reading = read(PrepareFields(source="H2SO4=96%", target="1 M", volume="1 L",
                                 location="Shelf 2", lot="PREP-1"), catalog)
    assert reading.ok, reading.errors
    assert reading.echoes["source"] == "→ H2SO4 96 % w/w"
    assert reading.echoes["volume"] == "→ 1000 mL" and reading.echoes["target"] == "→ 1 M"
    request = reading.value
    assert (request.bottle_id, request.targets, request.volumes) == (None, (1.0,), (1.0,))
    made = plan(request.source, request, today=TODAY, prepared_by="a.helper")
    want = preparation.plan_recipe(preparation.parse_source("H2SO4=96%"), 1.0, 1.0)
    assert made.recipes[0].stock_volume_ml == pytest.approx(want.stock_volume_ml)
    bottle = made.bottles[0]
    assert (bottle["compound"], bottle["label_strength"], bottle["container_size"]) == \
        ("H2SO4", "1 M", "1000 mL")
    assert (bottle["location"], bottle["lot"], bottle["received_on"]) == \
        ("Shelf 2", "PREP-1", "2025-03-14")
    assert bottle["expires_on"] > bottle["received_on"]  # the storeroom shelf life
    assert len(made.labels) == 1


def test_a_series_takes_one_volume_for_every_step(catalog):
    reading = read(PrepareFields(source="HCl=37%", target=("1 M", "0.1 M"), volume="100 mL"),
                   catalog)
    assert reading.ok and reading.value.volumes == (0.1, 0.1)
    assert reading.echoes["target"] == "→ 1 M, then 0.1 M"
    made = plan(reading.value.source, reading.value, today=TODAY, prepared_by="x")
    assert [r.target_molar for r in made.recipes] == [1.0, 0.1]
    assert made.recipes[1].source.basis == "prepared"  # made from the step before


@pytest.mark.parametrize(("fields", "field", "needle"), [
    (dict(source="H2SO4=96%", target="1 M", volume="1 q"), "volume", "'1 q'"),
    (dict(source="H2SO4=96%", target="1 Q", volume="1 L"), "target", "'1 Q'"),
    (dict(source="H2SO4=96%", target=("1 M", "0.1 M"), volume=("1 L", "2 L", "3 L")),
     "volume", "one per target"),
    (dict(source="#23", target="1 M", volume="1 L", purity="99"), "purity", "bottle"),
    (dict(source="NaOH@97%", target="1 M", volume="1 L", purity="98"), "source", "once"),
    (dict(source="H2SO4=96%", target="1 M", volume="1 L", purity="98"), "purity",
     "only a solid"),
    (dict(source="H2SO4=96%", target="1 M", volume="1 L", expires="2025-02-30"), "expires",
     "2025-02-30"),
    (dict(source="XyZ=1M", target="1 M", volume="1 L"), "source", "XyZ"),
])
def test_each_bad_field_is_named(catalog, fields, field, needle):
    reading = read(PrepareFields(**fields), catalog)
    assert reading.value is None and field in reading.errors, reading.errors
    assert needle in reading.errors[field]


def test_a_bottle_source_comes_back_as_its_id(catalog):
    reading = read(PrepareFields(source="# 23", target="0.1 M", volume="250 mL"), catalog)
    assert reading.ok and reading.value.bottle_id == 23 and reading.value.source is None


def test_empty_fields_are_hints_not_faults(catalog):
    reading = read(PrepareFields(), catalog)
    assert reading.missing == {"source", "target", "volume"}
    assert all(reading.errors[f].startswith("needed:") for f in reading.missing)
