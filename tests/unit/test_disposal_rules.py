"""The plan under the storeroom's disposal rules: each rule of the profile changes the
plan, in both directions (the rule applies; the rule does not apply)."""

from __future__ import annotations

import math

import pytest

from carboy.model import disposal_profile as dp
from carboy.model.disposal_rules import ROUTE_DRAIN, ROUTE_LICENSED, strength_of
from carboy.model.forms.neutralize import ContainerSample, NeutralizeFields, evaluate


def box(catalog, volume_l: float, capacity_l: float = 20.0, stream: str = "acid",
        **compounds_molar: float) -> ContainerSample:
    """A container holding each compound at the molarity given (keys with ``_`` for odd
    characters are not needed by these tests)."""
    contents = {k: c * volume_l for k, c in compounds_molar.items()}
    moles: dict[str, float] = {}
    hazards: set[str] = set()
    for key, mol in contents.items():
        compound = catalog.compound(key)
        hazards |= compound.hazards
        for part, n in compound.composition.items():
            moles[part] = moles.get(part, 0.0) + n * mol
    return ContainerSample("T-1", "collecting", volume_l, capacity_l, "", moles,
                           frozenset(hazards), contents=contents, stream=stream)


def planned(catalog, container, reagent="NaOH=2M", profile=None, **fields):
    profile = profile or dp.shipped()
    reading = evaluate(NeutralizeFields(reagent=reagent, **fields), catalog, container,
                       profile=profile)
    assert reading.ok, reading.errors
    return reading.value, reading.disposal


def rules(**changes) -> dp.DisposalProfile:
    return dp.with_rules(dp.shipped(), changes)


def test_a_plain_acid_waste_may_be_treated_here(catalog):
    plan, d = planned(catalog, box(catalog, 2.0, HCl=1.0))
    assert d.may_treat and d.route == ROUTE_DRAIN and d.reasons == ()
    assert [k for k, _ in d.steps] == ["verdict", "batches", "neutralize", "temperature",
                                      "check", "flush"]
    data = d.to_dict()
    assert data["n_batches"] == len(data["batches"]) == 2
    assert data["profile"]["origin"]["batch_max_l"] == dp.PLACEHOLDER


def test_batch_treatment_forbidden_sends_collected_waste_to_licensed_disposal(catalog):
    container = box(catalog, 2.0, HCl=1.0)
    _, d = planned(catalog, container, profile=rules(batch_treatment=False))
    assert not d.may_treat and d.route == ROUTE_LICENSED and d.batches == ()
    assert "forbid" in d.reasons[0] and d.steps[-1][0] == "route"
    # a typed sample (not collected waste) is not touched by that rule
    reading = evaluate(NeutralizeFields(components="HCl=1M", volume="1 L", reagent="NaOH=2M"),
                       catalog, profile=rules(batch_treatment=False))
    assert reading.disposal.may_treat


@pytest.mark.parametrize(("batch_max", "volume", "expected"), [
    (1.0, 2.5, 3), (0.5, 2.5, 5), (None, 2.5, 1), (1.0, 0.8, 1)])
def test_the_largest_batch_sets_the_number_of_batches(catalog, batch_max, volume, expected):
    profile = rules(batch_max_l=batch_max, vessel_l=100.0)
    _, d = planned(catalog, box(catalog, volume, HCl=0.1), profile=profile)
    assert d.n_batches == expected
    assert sum(b.waste_l for b in d.batches) == pytest.approx(volume)
    assert all(b.waste_l <= (batch_max or volume) + 1e-12 for b in d.batches)


def test_each_batch_fits_its_vessel_below_the_fill_limit(catalog):
    profile = rules(batch_max_l=None, vessel_l=2.0, fill_limit_percent=90.0)
    plan, d = planned(catalog, box(catalog, 3.0, HCl=1.0), reagent="NaOH=1M", profile=profile)
    total = 3.0 + plan.to_target.reagent_volume_l  # no dilution: 1 M HCl is 3.6 % w/w
    assert d.dilution is None
    assert d.n_batches == math.ceil(total / 1.8)
    assert all(b.fits and b.final_l <= 1.8 + 1e-9 for b in d.batches)
    # a larger vessel takes it in one
    _, one = planned(catalog, box(catalog, 3.0, HCl=1.0), reagent="NaOH=1M",
                     profile=rules(batch_max_l=None, vessel_l=20.0))
    assert one.n_batches == 1


def test_a_dose_that_overflows_the_container_says_so_and_proposes_batches(catalog):
    container = box(catalog, 8.5, capacity_l=10.0, HCl=1.0)
    plan, d = planned(catalog, container, reagent="NaOH=1M", profile=rules(vessel_l=None))
    assert d.overflow is not None and not d.overflow.fits
    assert d.overflow.final_l == pytest.approx(8.5 + plan.to_target.reagent_volume_l)
    assert any("overflow" in w for w in d.warnings)
    assert d.n_batches >= d.overflow.batches >= 2
    _, roomy = planned(catalog, box(catalog, 2.0, capacity_l=10.0, HCl=1.0),
                       reagent="NaOH=2M")
    assert roomy.overflow.fits and not any("overflow" in w for w in roomy.warnings)


def test_a_strong_waste_is_diluted_in_ice_water_first(catalog):
    container = box(catalog, 0.5, H2SO4=5.0)  # about 39 % w/w
    _, d = planned(catalog, container, profile=rules(dilute_to_percent=5.0, ice_fraction=0.5))
    w0, rho = strength_of(container.contents, 0.5, catalog)
    assert d.dilution.strength_percent == pytest.approx(w0) and w0 > 30
    mass = 0.5 * rho * 1000.0
    # the solute over waste plus dilution water is the target strength
    assert mass * w0 / 100 / (mass + d.dilution.water_l * 1000) == pytest.approx(0.05)
    assert d.dilution.ice_kg == pytest.approx(d.dilution.water_l * 0.5)
    assert "dilute" in [k for k, _ in d.steps]
    _, weak = planned(catalog, box(catalog, 0.5, H2SO4=0.1),
                      profile=rules(dilute_to_percent=5.0))
    assert weak.dilution is None
    _, none = planned(catalog, container, profile=rules(dilute_to_percent=None))
    assert none.dilution is None


def test_the_flush_is_the_factor_times_the_treated_volume(catalog):
    _, d = planned(catalog, box(catalog, 1.0, HCl=0.5), profile=rules(flush_factor=30.0))
    assert d.flush_l == pytest.approx(30.0 * sum(b.final_l for b in d.batches))


def test_a_batch_hotter_than_the_safe_limit_asks_for_more_ice(catalog):
    container = box(catalog, 1.0, HCl=2.0)  # 7 % w/w: diluted with no ice at all
    hot = rules(max_temperature_c=26.0, ice_fraction=0.0, dilute_to_percent=None)
    _, d = planned(catalog, container, reagent="NaOH=10M", profile=hot)
    assert d.peak_temperature_c > 26.0 and d.extra_ice_kg > 0
    assert any("more ice" in w for w in d.warnings)
    _, cool = planned(catalog, container, reagent="NaOH=10M",
                      profile=rules(max_temperature_c=60.0, dilute_to_percent=None))
    assert cool.extra_ice_kg == 0 and not any("ice" in w for w in cool.warnings)


def test_the_window_of_the_rules_judges_the_plan(catalog):
    container = box(catalog, 1.0, HCl=0.5)
    _, inside = planned(catalog, container, target="7", window_low="6", window_high="9")
    assert inside.warnings == ()
    _, wide = planned(catalog, container, target="7", window_low="5", window_high="10")
    assert any("wider" in w for w in wide.warnings)
    _, off = planned(catalog, container, target="7", profile=rules(window_low=7.5,
                                                                    window_high=9.0))
    assert any("outside the storeroom's window" in w for w in off.warnings)


@pytest.mark.parametrize(("item", "compounds", "stream", "refused"), [
    ("HClO4", {"HClO4": 0.01}, "acid", True),
    ("HClO4", {"HCl": 0.5}, "acid", False),
    ("HNO3>20%", {"HNO3": 6.0}, "acid", True),     # about 33 % w/w
    ("HNO3>20%", {"HNO3": 1.0}, "acid", False),    # about 6 % w/w
    ("stream:hf", {"HCl": 0.5}, "hf", True),
    ("stream:hf", {"HCl": 0.5}, "acid", False),
    ("tag:organic+acutely_toxic", {"HCOOH": 0.5}, "acid", True),
    ("tag:organic+acutely_toxic", {"CH3COOH": 0.5}, "acid", False),
])
def test_each_kind_of_never_treat_item(catalog, item, compounds, stream, refused):
    profile = rules(never_treat=dp.read_items([item], catalog))
    container = box(catalog, 1.0, stream=stream, **compounds)
    _, d = planned(catalog, container, profile=profile)
    assert d.may_treat is not refused
    if refused:
        assert d.reasons[0].startswith(item) and d.route == ROUTE_LICENSED
