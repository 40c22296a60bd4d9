"""The disposal rule profile as data: reading each kind of rule, the never-treat grammar,
rules that must agree, and carboy's placeholders with their sources."""

from __future__ import annotations

import pytest

from carboy.errors import InvalidInput, UnknownCompound
from carboy.model import disposal_profile as dp


@pytest.mark.parametrize(("name", "text", "value"), [
    ("window_low", "5,5", 5.5),
    ("batch_treatment", "no", False),
    ("batch_treatment", "yes", True),
    ("batch_max_l", "500 mL", 0.5),
    ("batch_max_l", "none", None),
    ("vessel_l", "20 L", 20.0),
    ("dilute_to_percent", "10 %", 10.0),
    ("dilute_to_percent", "none", None),
    ("ice_fraction", "30 %", 0.3),
    ("ice_fraction", "0.25", 0.25),
    ("flush_factor", "100", 100.0),
    ("max_temperature_c", "45 °C", 45.0),
    ("fill_limit_percent", "85 %", 85.0),
    ("nearly_full_percent", "75", 75.0),
])
def test_each_kind_of_rule_reads_as_typed_and_back(name, text, value):
    assert dp.read_rule(name, text) == value
    assert dp.read_rule(name, dp.as_text(name, value)) == value


@pytest.mark.parametrize(("name", "text"), [
    ("window_low", "15"), ("window_high", "abc"), ("batch_treatment", "maybe"),
    ("batch_max_l", "0 L"), ("batch_max_l", "2 kg"), ("ice_fraction", "150 %"),
    ("flush_factor", "-1"), ("max_temperature_c", "200 °C"), ("fill_limit_percent", "30"),
    ("window_low", "none"),
])
def test_a_bad_value_names_its_rule(name, text):
    with pytest.raises(InvalidInput) as err:
        dp.read_rule(name, text)
    assert err.value.field == name


def test_an_unknown_rule_lists_the_known_ones():
    with pytest.raises(InvalidInput, match="fill_limit_percent"):
        dp.read_rule("headroom", "10")


def test_never_treat_items(catalog):
    items = dp.read_items("HClO4, HNO3>20%, stream:hf, tag:organic+acutely_toxic", catalog)
    assert [(i.kind, i.keys, i.above_percent) for i in items] == [
        ("compound", ("HClO4",), None), ("compound", ("HNO3",), 20.0),
        ("stream", ("hf",), None), ("tag", ("organic", "acutely_toxic"), None)]
    assert all(i.why == dp.USER_WHY for i in items)
    with pytest.raises(UnknownCompound):
        dp.read_item("Unobtainium", catalog)
    for bad in ("stream:lava", "tag:spicy", "HNO3>150%", ""):
        with pytest.raises(InvalidInput):
            dp.read_item(bad, catalog)


def test_reasons_are_kept_when_the_list_is_typed_again():
    shipped = dp.shipped()
    typed = dp.with_reasons("HClO4, H2SO4>90%", shipped.never_treat)
    items = dp.read_items(typed)
    assert items[0].why == shipped.never_treat[0].why and items[1].why == dp.USER_WHY


def test_rules_that_must_agree():
    base = dp.shipped()
    with pytest.raises(InvalidInput, match="low edge"):
        dp.with_rules(base, {"window_low": 9.5})
    with pytest.raises(InvalidInput, match="fill limit"):
        dp.with_rules(base, {"fill_limit_percent": 70.0})
    changed = dp.with_rules(base, {"batch_max_l": 0.25})
    assert changed.batch_max_l == 0.25 and changed.origin["batch_max_l"] == dp.STOREROOM
    assert changed.origin["flush_factor"] == dp.PLACEHOLDER and not changed.all_placeholders


def test_the_placeholders_are_labelled_and_sourced():
    shipped = dp.shipped()
    assert shipped.all_placeholders and "placeholders" in dp.shipped_notice()
    sources = dp.shipped_sources()
    for r in dp.RULES[:-1]:
        status, source = sources[r.name]
        assert source and status in ("FOUND", "DERIVED", "PRACTICE")
    for item in shipped.never_treat:
        assert sources[f"never_treat {item.item}"][1]
    # common practice (Cornell EHS 7.1; UW-Green Bay): a flush of about 20 volumes
    assert shipped.flush_factor == 20.0
    # the common part of the published windows 5.5-9.5, 5-9 and 6-10 is 6-9 (DERIVED)
    assert shipped.window == (6.0, 9.0)
    data = shipped.to_dict()
    assert data["placeholders"] == list(dp.RULE_NAMES) and data["note"]
