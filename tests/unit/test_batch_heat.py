"""The heat of a plan: one sign, the batch's heat capacity, boiling and the stages to stay safe."""

from __future__ import annotations

import json
import math

import pytest

from carboy.model import heat_capacity as hc
from carboy.model.batch_heat import assess, boil_c, default_safe_c, stages_to_stay_below
from carboy.model.catalog import default_catalog
from carboy.model.disposal_profile import STOREROOM, DisposalProfile
from carboy.model.forms.neutralize import NeutralizeFields, evaluate
from carboy.model.mixture import Mixture
from carboy.model.planner import plan_neutralization
from carboy.model.reagents import parse_reagent
from carboy.tui.wording import plan_heat_text

CAT = default_catalog()


def mixture(*items, volume_l=1.0, t_c=25.0):
    return Mixture.from_compounds([(CAT.compound(k), c) for k, c in items], volume_l=volume_l,
                                  temperature_c=t_c)


# -- the heat capacity --------------------------------------------------------------------

def test_pure_water_has_the_heat_capacity_of_water():
    found = hc.batch_heat_capacity({"H+": 1e-7, "OH-": 1e-7}, {"H+": 1, "OH-": -1}, 1.0,
                                   997.0, 25.0)
    assert found.cp_j_gk == pytest.approx(4.1813, abs=1e-4) and not found.from_table


def test_salts_are_paired_by_equivalents():
    species = {"Na+": 0.2, "Cl-": 0.1, "SO4-2": 0.05}
    charges = {"Na+": 1, "Cl-": -1, "SO4-2": -2}
    known, other = hc.salts_of(species, charges)
    assert known == pytest.approx({"NaCl": 0.1, "Na2SO4": 0.05})
    assert other == {}


def test_a_neutral_complex_of_a_salts_ions_counts_as_that_salt():
    """MgSO4° (the metal path's complex) is magnesium sulfate in solution, not an unknown
    solute counted as water."""
    species = {"Mg+2": 0.07, "SO4-2": 0.07, "MgSO4": 0.03}
    known, other = hc.salts_of(species, {"Mg+2": 2, "SO4-2": -2, "MgSO4": 0})
    assert known == pytest.approx({"MgSO4": 0.1}) and other == {}


def test_a_pair_without_parameters_counts_as_water_and_is_named():
    species = {"Cs+": 1.0, "Cl-": 1.0}
    found = hc.batch_heat_capacity(species, {"Cs+": 1, "Cl-": -1}, 1.0, 1100.0, 25.0)
    assert found.as_water == ("Cs+/Cl-",) and "counted as water" in found.note()
    assert found.cp_j_gk == pytest.approx(4.1813, abs=1e-4)


def test_salt_lowers_the_heat_capacity_and_the_note_says_why():
    weak = hc.solution_cp({"NaCl": 0.05}, 25.0)
    strong = hc.solution_cp({"NaCl": 0.20}, 25.0)
    assert strong.cp_j_gk < weak.cp_j_gk < 4.1813
    assert "NaCl" in strong.note() and "Laliberté" in strong.note()


def test_a_solute_beyond_its_fit_is_taken_at_its_edge_and_said():
    found = hc.solution_cp({"Na2SO4": 0.40}, 25.0)   # the fit reaches w = 0.21
    assert found.clamped == ("Na2SO4",) and "edge" in found.note()
    assert math.isfinite(found.cp_j_gk) and 0 < found.cp_j_gk < 4.2


def test_the_solute_of_a_compound_is_found_by_its_composition():
    assert hc.solute_for_formula("CH3COOH") == "HCH3CO2"
    assert hc.solute_for_formula("H2SO4") == "H2SO4"
    assert hc.solute_for_formula("HCOOH") is None


# -- boiling and stages -------------------------------------------------------------------

def test_stages_keep_the_first_and_worst_stage_under_the_safe_temperature():
    q, m_s, m_r, cp, t0, safe = 500.0, 1000.0, 200.0, 4.0, 25.0, 50.0
    n = stages_to_stay_below(q, m_s, m_r, cp, t0, safe)
    first = q / n * 1000.0 / ((m_s + m_r / n) * cp)
    assert first <= safe - t0
    before = q / (n - 1) * 1000.0 / ((m_s + m_r / (n - 1)) * cp)
    assert before > safe - t0                     # one stage fewer is not enough
    assert stages_to_stay_below(-5.0, m_s, m_r, cp, t0, safe) == 1   # it cools
    assert stages_to_stay_below(q, m_s, m_r, cp, 55.0, safe) is None  # already too warm


def test_past_boiling_there_is_no_final_temperature():
    cp = hc.solution_cp({}, 25.0)
    hot = assess(2000.0, 1000.0, 500.0, cp, 25.0)
    assert hot.boils and hot.final_c is None and hot.rise_k > boil_c() - 25.0
    assert hot.safe_c == default_safe_c() == 50.0 and hot.safe_from == "carboy's default"
    assert hot.to_dict()["final_c"] is None and hot.to_dict()["boils"] is True
    mild = assess(20.0, 1000.0, 0.0, cp, 25.0)
    assert not mild.boils and mild.final_c == pytest.approx(25.0 + mild.rise_k)


# -- in the plan --------------------------------------------------------------------------

@pytest.fixture(scope="module")
def violent():
    """10 M H2SO4 with 50 % NaOH: the case of issue 16 that predicted about 148 °C."""
    return plan_neutralization(mixture(("H2SO4", 10.0)), parse_reagent("NaOH=50%"))


def test_heat_released_is_positive_when_the_batch_warms(violent):
    assert violent.heat_released_kj > 1000 and violent.temperature_rise_c > 0
    d = json.loads(json.dumps(violent.to_dict()))
    assert "heat_kj" not in d and d["heat_released_kj"] == pytest.approx(violent.heat_released_kj)
    cold = plan_neutralization(mixture(("HCl", 1.0)), parse_reagent("NaHCO3"))
    assert cold.heat_released_kj < 0 and cold.temperature_rise_c < 0   # NaHCO3 cools


def test_a_batch_that_would_boil_is_said_to_boil_with_the_stages_to_stay_safe(violent):
    bh = violent.batch_heat
    assert bh.boils and bh.final_c is None and bh.stages >= 2
    danger = next(c for c in violent.cautions if c.code == "heat-danger")
    assert "past boiling" in danger.text and f"at least {bh.stages} equal stages" in danger.text
    assert "148" not in danger.text and "°C)" not in danger.text.split("boiling")[0]
    line = plan_heat_text(violent)
    assert "boil" in line and f"{bh.stages} stages" in line
    assert bh.heat_capacity.from_table and "Na2SO4" in bh.heat_capacity.solutes


def test_the_storeroom_safe_temperature_is_used_under_its_rules():
    profile = DisposalProfile(max_temperature_c=35.0, origin={"max_temperature_c": STOREROOM})
    fields = NeutralizeFields(components="HCl=2M", volume="1 L", reagent="NaOH=10M")
    reading = evaluate(fields, CAT, profile=profile)
    bh = reading.value.batch_heat
    assert bh.safe_c == 35.0 and bh.safe_from == "the storeroom's disposal rules"
    plain = plan_neutralization(mixture(("HCl", 2.0)), parse_reagent("NaOH=10M"))
    assert plain.batch_heat.safe_c == 50.0
    assert bh.stages > plain.batch_heat.stages   # a lower limit needs more stages


def test_a_solid_without_heat_of_solution_data_says_so():
    p = plan_neutralization(mixture(("HCl", 0.1)), parse_reagent("CaCO3"))
    assert any("no heat-of-solution data for CaCO3" in w for w in p.warnings)


def test_a_concentrate_without_dilution_data_is_not_estimated():
    p = plan_neutralization(mixture(("HCl", 1.0)), parse_reagent("KOH=45%"))
    assert any("not estimated" in w and "KOH" in w for w in p.warnings)
    q = plan_neutralization(mixture(("HCl", 1.0)), parse_reagent("NaOH=30%"))
    assert not any("dilution-heat" in w for w in q.warnings)


# -- recipes --------------------------------------------------------------------------------

@pytest.mark.parametrize("source", ["NaOH=30%", "NH3=28%", "H3PO4=85%"])
def test_recipes_from_naoh_ammonia_and_phosphoric_concentrates_count_their_heat(source):
    from carboy.model.preparation import parse_source, plan_recipe

    r = plan_recipe(parse_source(source), 1.0, 1.0)
    assert r.heat_released_kj is not None and r.heat_released_kj > 0
    assert r.to_dict()["heat_released_kj"] == r.heat_released_kj and "heat_kj" not in r.to_dict()
    assert any("Koretsky" in n for n in r.notes)


def test_a_recipe_past_boiling_says_it_would_boil():
    from carboy.model.preparation import parse_source, plan_recipe
    from carboy.tui.wording import heat_text

    r = plan_recipe(parse_source("H2SO4=96%"), 12.0, 1.0)
    assert r.temperature_c + max(r.mixing_rise_c, r.temperature_rise_c) >= boil_c()
    danger = next(c.text for c in r.cautions if c.code == "heat-danger")
    assert "past boiling" in danger and "portions keep each below 50 °C" in danger
    assert "past boiling" in heat_text(r) and " K " not in heat_text(r)
    mild = plan_recipe(parse_source("H2SO4=96%"), 0.5, 1.0)
    assert "released" in heat_text(mild) and "once made up" in heat_text(mild)


def test_the_reported_rise_stops_at_boiling(violent):
    bh = violent.batch_heat
    assert bh.rise_k > bh.boil_c - bh.start_c
    assert violent.temperature_rise_c == pytest.approx(bh.boil_c - bh.start_c)
    assert violent.to_dict()["heat"]["adiabatic_rise_k"] == pytest.approx(bh.rise_k)
