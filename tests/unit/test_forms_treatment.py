"""The treatment and correction forms: every reading checked and named by its field."""

from __future__ import annotations

import pytest

from carboy.model.forms.correction import CorrectionFields
from carboy.model.forms.correction import read as read_correction
from carboy.model.forms.treatment import TreatmentFields, read


def test_a_full_treatment_reads(catalog):
    r = read(TreatmentFields(bottle="#7", added="2,5 L", stage_added=("2 L", "500 mL"),
                             stage_ph=("3,1", "6.9"), vented_ph="7", final_ph="7,2",
                             final_volume="11 L", temperature="31", route="licensed",
                             performed_by="  a.helper ", note="slow"), catalog)
    assert r.ok, r.errors
    v = r.value
    assert (v.bottle_id, v.reagent_text, v.added.value, v.added.unit) == (7, None, 2.5, "L")
    assert v.stage_added == (2.0, 0.5) and v.stage_ph == (3.1, 6.9)
    assert (v.vented_ph, v.final_ph, v.final_volume_l, v.temperature_c) == (7.0, 7.2, 11.0, 31.0)
    assert v.route == "licensed-disposal" and v.performed_by == "a.helper"
    assert v.to_dict()["added"] == {"value": 2.5, "unit": "L", "text": "2,5 L"}


@pytest.mark.parametrize(("fields", "field"), [
    (dict(bottle="7", added="1 L", final_ph="15"), "final_ph"),
    (dict(bottle="7", added="1 L", final_ph="-1"), "final_ph"),
    (dict(bottle="7", added="1 L", final_ph="7", stage_ph=("3", "14.5")), "stage_ph"),
    (dict(bottle="7", added="1 L", final_ph="7", vented_ph="abc"), "vented_ph"),
    (dict(bottle="7", added="0 L", final_ph="7"), "added"),
    (dict(bottle="7", added="2", final_ph="7"), "added"),
    (dict(bottle="7", added="1 L", final_ph="7", stage_added=("500 mL", "200 mL")),
     "stage_added"),
    (dict(bottle="7", added="1 L", final_ph="7", stage_added=("1000 g",)), "stage_added"),
    (dict(bottle="7", added="1 L", final_ph="7", route="sewer"), "route"),
    (dict(bottle="7", added="1 L", final_ph="7", temperature="150"), "temperature"),
    (dict(bottle="7", added="1 L", final_ph="7", final_volume="-2 L"), "final_volume"),
    (dict(bottle="bottle seven", added="1 L", final_ph="7"), "bottle"),
    (dict(bottle="7", reagent="NaOHx=1M", added="1 L", final_ph="7"), "reagent"),
    (dict(added="1 L", final_ph="7"), "bottle"),
    (dict(reagent="NaHCO3", added="1 L", final_ph="7"), "added"),
    (dict(reagent="NaOH=1M", added="40 g", final_ph="7"), "added"),
    (dict(bottle="7", final_ph="7"), "added"),
    (dict(bottle="7", added="1 L"), "final_ph"),
])
def test_each_bad_reading_is_named_by_its_field(catalog, fields, field):
    r = read(TreatmentFields(**fields), catalog)
    assert not r.ok and field in r.errors, r.errors


def test_a_solid_reagent_is_weighed(catalog):
    r = read(TreatmentFields(reagent="NaHCO3", added="850 g", final_ph="6,8"), catalog)
    assert r.ok and r.value.added.unit == "g" and r.value.reagent_text == "NaHCO3"


def test_the_correction_form():
    r = read_correction(CorrectionFields(reason=" meter  misread ", final_ph="6,6",
                                         stage_ph=("3", "6"), added="2.6 L", amount_left="0"))
    assert r.ok
    v = r.value
    assert v.reason == "meter misread" and v.amount_left.value == 0.0
    assert v.readings == {"final_ph": 6.6, "stage_ph": (3.0, 6.0)}
    assert set(v.given()) == {"final_ph", "stage_ph", "added", "amount_left"}
    assert not read_correction(CorrectionFields(final_ph="7")).ok  # a reason is needed
    bad = read_correction(CorrectionFields(reason="x", final_ph="14.2", used="-3 mL"))
    assert {"final_ph", "used"} <= set(bad.errors)
