"""Salts a neutralized batch cannot hold, and the protons a carbonate reagent can take."""

from __future__ import annotations

import pytest

from carboy.model.catalog import default_catalog
from carboy.model.mixture import Mixture
from carboy.model.planner import plan_neutralization
from carboy.model.precipitates import salt_limits, saturated_molality, solubility_table
from carboy.model.reagent_reach import carbonate_levels
from carboy.model.reagents import parse_reagent

CAT = default_catalog()


def mixture(*items, volume_l=1.0, t_c=25.0):
    return Mixture.from_compounds([(CAT.compound(k), c) for k, c in items], volume_l=volume_l,
                                  temperature_c=t_c)


def codes(plan):
    return {c.code for c in plan.cautions}


# -- salt limits ----------------------------------------------------------------------------

def _record(salt):
    return next(r for r in solubility_table() if r["salt"] == salt)


def test_a_pure_saturated_solution_sits_at_its_limit():
    m_sat, _ = saturated_molality(_record("Na2SO4"), 25.0)
    (limit,) = salt_limits({"Na+": 2 * m_sat, "sulfate": m_sat}, 1.0, 25.0)
    assert limit.ratio == pytest.approx(1.0)


def test_sodium_sulfate_crystallizes_when_cold_and_not_when_warm():
    totals = {"Na+": 4.0, "sulfate": 2.0}
    cold = {s.salt: s for s in salt_limits(totals, 1.0, 10.0)}["Na2SO4"]
    warm = {s.salt: s for s in salt_limits(totals, 1.0, 40.0)}["Na2SO4"]
    assert cold.exceeded and not warm.exceeded
    # the water to add brings the batch to its limit
    diluted = {k: v for k, v in totals.items()}
    (again,) = salt_limits(diluted, 1.0 + cold.water_to_add_l, 10.0)
    assert again.ratio == pytest.approx(1.0)


def test_common_ions_count():
    alone = {s.salt: s for s in salt_limits({"K+": 1.0, "sulfate": 0.5}, 1.0, 25.0)}["K2SO4"]
    with_kcl = {s.salt: s for s in salt_limits({"K+": 3.0, "sulfate": 0.5, "Cl-": 2.0}, 1.0,
                                               25.0)}["K2SO4"]
    assert with_kcl.ratio > alone.ratio


def test_a_temperature_outside_the_table_uses_its_edge_and_says_so():
    m, note = saturated_molality(_record("NaCl"), 80.0)
    assert m == pytest.approx(6.222) and "10–40 °C" in note


@pytest.fixture(scope="module")
def concentrated():
    return plan_neutralization(mixture(("H2SO4", 5.0)), parse_reagent("NaOH=30%"))


def test_the_plan_flags_sodium_sulfate_from_a_concentrated_acid(concentrated):
    over = [s for s in concentrated.salt_limits if s.exceeded]
    assert [s.salt for s in over] == ["Na2SO4"]
    assert "salt-limit" in codes(concentrated)
    d = concentrated.to_dict()["salt_solubility"]
    assert d[0]["salt"] == "Na2SO4" and d[0]["exceeded"] is True and d[0]["source"]


def test_a_dilute_batch_holds_its_salt():
    p = plan_neutralization(mixture(("H2SO4", 0.1)), parse_reagent("NaOH=2M"))
    assert not any(s.exceeded for s in p.salt_limits) and "salt-limit" not in codes(p)


def test_potassium_nitrate_from_nitric_acid_and_potash():
    p = plan_neutralization(mixture(("HNO3", 4.0), t_c=15.0), parse_reagent("KOH=45%"))
    assert any(s.salt == "KNO3" and s.exceeded for s in p.salt_limits)


# -- carbonate reagents -------------------------------------------------------------------

def test_carbonate_levels():
    pk1, pk2 = CAT.systems["carbonate"].pka25[:2]
    assert carbonate_levels(parse_reagent("NaHCO3"), CAT) == ((0.5 * (pk1 + pk2), 1),)
    assert carbonate_levels(parse_reagent("Na2CO3"), CAT) == ((0.5 * (pk1 + pk2), 2), (pk2, 1))
    assert carbonate_levels(parse_reagent("NaOH=1M"), CAT) is None


def test_bicarbonate_does_not_claim_boric_acid():
    # issue 16: the full dose with NaHCO3 reported pH 9.57 for boric acid, whose fresh mix
    # with bicarbonate stays near 8.3; now the full dose counts none of boric acid's protons
    p = plan_neutralization(mixture(("H3BO3", 0.1)), parse_reagent("NaHCO3"))
    assert p.full.reagent_mol == pytest.approx(0.0, abs=1e-4)
    assert p.full.pH < 8.3
    assert p.reagent_reach.cannot == pytest.approx({"boric acid": 0.1}, rel=1e-3)
    text = next(c.text for c in p.cautions if c.code == "weak-reagent")
    assert "boric acid" in text and "NaOH" in text and "Na2CO3" in text
    assert p.to_dict()["full"]["reagent_reach"]["cannot_take_mol"]["boric acid"] > 0


@pytest.mark.parametrize(("sample", "cannot"), [
    ((("NH4Cl", 0.1), ("HCl", 0.1)), "ammonium"),
    ((("NaH2PO4", 0.1),), "HPO4 2-"),
])
def test_bicarbonate_names_what_it_cannot_take(sample, cannot):
    p = plan_neutralization(mixture(*sample), parse_reagent("NaHCO3"))
    assert any(cannot in name for name in p.reagent_reach.cannot)
    # it still takes the others: HCl's proton, H2PO4-'s (pKa 7.2)
    assert p.full.reagent_mol == pytest.approx(0.1, rel=1e-3)


def test_carbonate_takes_boric_acid_one_proton_per_unit_but_not_hpo4():
    boric = plan_neutralization(mixture(("H3BO3", 0.1)), parse_reagent("Na2CO3"))
    assert boric.reagent_reach.cannot == {} and boric.full.reagent_mol == pytest.approx(0.1,
                                                                                        rel=1e-3)
    strong = plan_neutralization(mixture(("HCl", 0.2)), parse_reagent("Na2CO3"))
    assert strong.full.reagent_mol == pytest.approx(0.1, rel=1e-3)      # two per unit
    phosphate = plan_neutralization(mixture(("NaH2PO4", 0.1)), parse_reagent("Na2CO3"))
    assert any("HPO4 2-" in k for k in phosphate.reagent_reach.cannot)


def test_a_hydroxide_takes_every_proton():
    p = plan_neutralization(mixture(("H3BO3", 0.1)), parse_reagent("NaOH=1M"))
    assert p.reagent_reach is None and p.full.reagent_mol == pytest.approx(0.1, rel=1e-6)


def test_a_reagent_that_cannot_move_the_ph_far_enough_suggests_a_stronger_one():
    from carboy.errors import InvalidInput

    with pytest.raises(InvalidInput) as err:
        plan_neutralization(mixture(("H3BO3", 0.1)), parse_reagent("NaHCO3"), target_pH=9.8,
                            window=(9.5, 10.5))
    assert "NaOH" in str(err.value) and "Na2CO3" in str(err.value)


def test_bicarbonate_does_not_offer_a_dose_above_about_ph_8_3():
    # the window's high edge (pH 9) is reached only as dissolved CO2 slowly leaves for the
    # air; the plan does not offer it with NaHCO3, and says the batch stays near 8.3
    p = plan_neutralization(mixture(("H3BO3", 0.1), ("HCl", 0.05)), parse_reagent("NaHCO3"))
    assert p.to_target.reachable and p.window_doses[0].reachable
    assert not p.window_doses[1].reachable
    assert any("high edge" in w for w in p.warnings)
    carbonate = plan_neutralization(mixture(("H3BO3", 0.1), ("HCl", 0.05)),
                                    parse_reagent("Na2CO3"))
    assert carbonate.window_doses[1].reachable
