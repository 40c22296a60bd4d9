"""The planner with metals: doses count the hydroxide the metals take, the plan reports the
sludge, the metal left dissolved and cations without data, keeps the licensed-disposal
route, and bases the steep-end-point caution on the real curve; the waste's own
cautions and refusals come from the planner itself (direct callers get them too)."""

from __future__ import annotations

import json

import pytest

from carboy.errors import InvalidInput
from carboy.model.catalog import default_catalog
from carboy.model.forms import neutralize as form
from carboy.model.mixture import Mixture
from carboy.model.planner import plan_neutralization
from carboy.model.reagents import parse_reagent

CAT = default_catalog()
NAOH = parse_reagent("NaOH=1M")
CURVE = 60


def waste(components, volume_l=1.0) -> Mixture:
    return Mixture.from_compounds([(CAT.compound(n), c) for n, c in components],
                                  volume_l=volume_l)


def zinc_plan(target=9.0, reagent=NAOH):
    return plan_neutralization(waste([("HCl", 0.1), ("ZnCl2", 0.05)]), reagent,
                               target_pH=target, window=(target - 1.0, target + 1.0),
                               curve_points=CURVE)


def test_the_dose_counts_the_zinc_hydroxide():
    # the case: HCl 0.1 M + ZnCl2 0.05 M to pH 9 takes 0.200 mol NaOH per L
    p = zinc_plan()
    assert p.to_target.reagent_mol == pytest.approx(0.200, rel=0.01)
    assert p.to_target.pH == pytest.approx(9.0, abs=1e-3)
    assert p.metal_hydroxide_mol == pytest.approx(0.100, rel=0.01)
    # every dissociable proton: the zinc counts as its hydroxide (2 OH- per Zn)
    assert p.full.reagent_mol == pytest.approx(0.200, rel=1e-9)
    # the breakdown shows the zinc's charge and its hydroxide's OH- (they cancel), so the
    # chloride it came with is not read as 0.2 mol of acid
    assert p.breakdown["zinc"] == pytest.approx(-0.100, rel=1e-9)
    assert p.breakdown["zinc, as its hydroxide"] == pytest.approx(0.100, rel=1e-9)
    assert p.breakdown["hydrochloric acid"] == pytest.approx(0.200, rel=1e-9)
    assert sum(p.breakdown.values()) == pytest.approx(p.full.reagent_mol, rel=1e-9)


def test_the_plan_reports_the_sludge_and_the_zinc_left_dissolved():
    p = zinc_plan()
    (sludge,) = p.sludge
    assert sludge.formula == "Zn(OH)2" and sludge.mol == pytest.approx(0.05, rel=1e-3)
    assert sludge.dry_mass_g == pytest.approx(sludge.mol * 99.40, rel=1e-3)  # molmass
    # at pH 9: Zn2+ and its complexes over Zn(OH)2, about 1.5e-6 M: well below 1 mg/L
    assert 0.0 < p.dissolved_metals_mg_l["Zn+2"] < 1.0
    expected = [x for x in p.precipitates if x.expected]
    assert [x.solid for x in expected] == [sludge.solid]
    codes = [c.code for c in p.cautions]
    assert codes[0] == "not-a-drain-plan" and "sludge" in codes and not p.drain_plan
    assert any("metals:" in a for a in p.assumptions)


def test_the_json_names_of_the_metals():
    d = json.loads(json.dumps(zinc_plan().to_dict()))
    assert d["sludge"][0].keys() == {"solid", "formula", "mol", "dry_mass_g"}
    assert set(d["dissolved_metals_mg_l"]) == {"Zn+2"}
    assert d["metal_hydroxide_mol"] > 0.09 and d["unmodelled_metals"] == []
    plain = plan_neutralization(Mixture({"Cl-": 0.1}, volume_l=1.0), NAOH,
                                curve_points=CURVE).to_dict()
    assert (plain["sludge"], plain["dissolved_metals_mg_l"], plain["metal_hydroxide_mol"],
            plain["unmodelled_metals"]) == ([], {}, 0.0, [])


def test_no_steep_end_point_where_the_metal_buffers():
    # to pH 7 the zinc hydroxide still settling holds the pH: the real curve is gentle
    # there, where hydrochloric acid alone jumps
    p = zinc_plan(target=7.0)
    assert p.sensitivity_pH_per_percent < 0.5
    assert "steep-end-point" not in [c.code for c in p.cautions]
    acid = plan_neutralization(Mixture({"Cl-": 0.1}, volume_l=1.0), NAOH, target_pH=7.0,
                               curve_points=CURVE)
    assert "steep-end-point" in [c.code for c in acid.cautions]


@pytest.mark.parametrize("reagent", ["Na2CO3", "Ca(OH)2", "NaOH=50%"])
def test_every_kind_of_reagent_doses_the_metal(reagent):
    p = zinc_plan(target=8.5, reagent=parse_reagent(reagent))
    assert p.to_target.reachable and p.to_target.pH == pytest.approx(8.5, abs=0.01)
    capacity = 2 if reagent != "NaOH=50%" else 1
    assert p.to_target.reagent_mol * capacity == pytest.approx(0.2, rel=0.05)
    assert p.sludge


def test_lime_and_sulfuric_acid_settle_gypsum():
    p = plan_neutralization(Mixture({"sulfate": 0.5}, volume_l=1.0), parse_reagent("Ca(OH)2"),
                            curve_points=CURVE)
    names = [s.solid for s in p.sludge]
    assert "CaSO4·2H2O (gypsum)" in names
    gypsum = next(x for x in p.precipitates if x.solid.startswith("CaSO4"))
    assert gypsum.expected
    assert p.to_target.reagent_mol == pytest.approx(0.5, rel=0.02)


def test_a_cation_without_data_is_named_in_a_warning():
    p = plan_neutralization(waste([("HNO3", 0.1), ("AgNO3", 0.01)]), NAOH, curve_points=CURVE)
    assert p.unmodelled_metals == ("Ag+",)
    assert any("Ag+" in w and "not counted" in w for w in p.warnings)
    assert not p.drain_plan


def test_an_unknown_component_is_an_error_that_names_it():
    with pytest.raises(InvalidInput) as err:
        plan_neutralization(Mixture({"Cl-": 0.1, "Co+2": 0.01, "Hg+2": 0.01}, volume_l=1.0),
                            NAOH)
    assert err.value.field == "sample"
    assert "Co+2" in str(err.value) and "Hg+2" in str(err.value)
    # the form puts it on the field the sample came from
    assert form._field_of(err.value, None) == "components"
    box = form.ContainerSample("HM-9", "open", 1.0, 5.0, "shelf", {}, frozenset())
    assert form._field_of(err.value, box) == "sample"


def test_direct_callers_get_the_waste_cautions():
    # ammonium driven off above pH 9: a caution and no drain plan, without the form
    p = plan_neutralization(Mixture({"ammonium": 1.0, "Cl-": 1.0}, volume_l=1.0),
                            parse_reagent("NaOH=5M"), target_pH=10.5, window=(10.0, 11.0),
                            curve_points=CURVE)
    assert "ammonia-release" in [c.code for c in p.cautions] and not p.drain_plan


def test_metal_salts_solubility_counts_what_stays_dissolved():
    # a concentrated zinc sulfate waste: at pH 4.5 the zinc stays dissolved and more
    # ZnSO4 is there than its water dissolves (CRC: about 3.5 mol/kg at 25 °C)...
    zinc, lye = {"Zn+2": 3.3, "sulfate": 3.8}, parse_reagent("NaOH=50%")
    acid = plan_neutralization(Mixture(zinc, volume_l=1.0), lye, target_pH=4.5,
                               window=(3.5, 5.5), curve_points=CURVE)
    znso4 = next(s for s in acid.salt_limits if s.salt == "ZnSO4")
    assert znso4.exceeded and "salt-limit" in [c.code for c in acid.cautions]
    # ...at pH 8 it has settled as the hydroxide: no ZnSO4 left to crystallize
    settled = plan_neutralization(Mixture(zinc, volume_l=1.0), lye, target_pH=8.0,
                                  window=(7.0, 9.0), curve_points=CURVE)
    assert settled.sludge[0].formula == "Zn(OH)2"
    znso4 = next(s for s in settled.salt_limits if s.salt == "ZnSO4")
    assert znso4.ratio < 0.05 and not znso4.exceeded


def test_gypsum_is_in_the_sludge_not_a_salt_limit():
    # calcium with sulfuric acid: the solver settles gypsum (in the sludge and the dose),
    # so the soluble-salt check does not flag it again as a salt to dissolve with water
    p = plan_neutralization(Mixture({"sulfate": 0.5, "Ca+2": 0.3, "Cl-": 0.4}, volume_l=1.0),
                            NAOH, curve_points=CURVE)
    assert "CaSO4·2H2O (gypsum)" in [s.solid for s in p.sludge]
    assert "CaSO4" not in [s.salt for s in p.salt_limits]
    sodium = next(s for s in p.salt_limits if s.salt == "Na2SO4")
    # the sulfate gypsum took is not counted: 0.2 mol/L left of 0.5 (volume grows with
    # the 1 M reagent, so a little less per kg)
    assert sodium.molality < 0.2


def test_the_heat_counts_the_hydroxides_own_heat_of_precipitation():
    """ZnCl2 0.05 M taken to pH 9: 0.05 mol Zn(OH)2 settles.  Zn+2 + 2 OH- = epsilon-Zn(OH)2
    has ΔH = -643.25 - (-153.89 + 2 x -229.994) = -29.37 kJ/mol (Wagman et al. 1982, NBS
    tables, ΔfH of the solid, the ion and OH-(aq); from memory), so the batch receives
    about 0.05 x 29.37 = 1.47 kJ, not the 5.58 kJ of 0.1 mol OH- forming water."""
    p = plan_neutralization(waste([("ZnCl2", 0.05)]), parse_reagent("NaOH=1M"),
                            target_pH=9.0, window=(8.0, 10.0), curve_points=CURVE)
    (sludge,) = p.sludge
    assert sludge.mol == pytest.approx(0.05, rel=1e-3)
    assert p.heat_released_kj == pytest.approx(0.05 * 29.37, abs=0.05)
    assert any("Zn(OH)2 (epsilon): heat of precipitation" in a for a in p.assumptions)


def test_a_hydroxide_without_a_heat_of_precipitation_is_counted_as_water_and_said_so():
    p = plan_neutralization(waste([("NiCl2", 0.05)]), parse_reagent("NaOH=1M"),
                            target_pH=9.5, window=(8.5, 10.5), curve_points=CURVE)
    assert p.sludge and p.heat_released_kj == pytest.approx(
        p.metal_hydroxide_mol * 55.815, rel=0.02)   # CODATA water formation, as thermo.py
    assert any("Ni(OH)2: no heat of precipitation held" in a for a in p.assumptions)


def test_a_calcium_solid_on_the_curve_puts_the_whole_plan_on_the_davies_metal_path():
    # HCl 2 M + HF 0.05 M + CaCl2 0.5 M: the sample alone takes the Pitzer path
    # (fluoride as HF, fluorite undersaturated), but NaOH turns it to F- and fluorite
    # forms (two ligands per cation), which only the Davies metal path settles: every
    # state of the plan uses that model
    from carboy.model.speciation import speciate

    sample = waste([("HCl", 2.0), ("HF", 0.05), ("CaCl2", 0.5)])
    p = plan_neutralization(sample, parse_reagent("NaOH=10M"), target_pH=7.0,
                            window=(6.0, 9.0), activity="auto", curve_points=CURVE)
    assert speciate(sample, activity="auto", catalog=CAT).model_part.model == "pitzer"
    assert p.activity_model == "davies"
    assert p.initial_pH == pytest.approx(speciate(sample, activity="davies",
                                                  catalog=CAT).pH, abs=1e-9)


def test_lime_hydroxide_precipitates_on_the_pitzer_path():
    # HCl 1 M + CaCl2 1 M with NaOH past the end point: portlandite forms, and the
    # Pitzer path settles it itself (no fallback): the plan stays on that model
    sample = waste([("HCl", 1.0), ("CaCl2", 1.0)])
    p = plan_neutralization(sample, parse_reagent("NaOH=5M"), target_pH=7.0,
                            window=(6.0, 9.0), activity="auto", curve_points=CURVE)
    assert p.activity_model == "pitzer"
    assert not any("would precipitate" in w for w in p.warnings)


def test_where_lime_and_gypsum_both_cap_calcium_the_ligand_search_is_short(monkeypatch):
    """MgSO4 in sulfuric acid taken up with lime: at many trial states calcium is capped
    by its hydroxide below one free-sulfate level and by gypsum above it, and the
    search's g jumps there.  Judged at the jump itself the two caps are equal to the last
    bit, the jump went unseen and the search bisected onto it for some forty steps; it
    is now taken as both solids at once, and no search needs more than a few steps."""
    from carboy.model import metal_complexes as mc

    steps = []
    real_search, real_at = mc._search, mc._at_f

    def counted(ps, total, both=None, v_both=None, start=None):
        calls = []
        monkeypatch.setattr(mc, "_at_f", lambda *a: calls.append(1) or real_at(*a))
        try:
            return real_search(ps, total, both, v_both, start)
        finally:
            monkeypatch.setattr(mc, "_at_f", real_at)
            steps.append(len(calls) // len(ps))

    monkeypatch.setattr(mc, "_search", counted)
    sample = Mixture.from_compounds([(CAT.compound("H2SO4"), 0.1),
                                     (CAT.compound("MgSO4"), 0.2)], volume_l=10.0)
    plan = plan_neutralization(sample, parse_reagent("Ca(OH)2"), catalog=CAT)
    assert plan.to_target.reachable and any("gypsum" in s.solid for s in plan.sludge)
    assert steps and max(steps) <= 20, sorted(steps)[-5:]
