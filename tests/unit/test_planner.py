"""Unit tests of the planner: shape, direction, validation, carbonate, heat bookkeeping."""

import numpy as np
import pytest

from carboy.errors import HazardRefused, InvalidInput
from carboy.model.mixture import Mixture
from carboy.model.planner import plan_neutralization
from carboy.model.reagents import parse_reagent

JSON_KEYS = {"initial_pH", "proton_equivalents_mol", "full", "to_target", "window", "heat_released_kj",
             "temperature_rise_c", "gas_l", "vented_pH", "stages", "curve",
             "equivalence_points", "precipitates", "cautions"}


def acid(volume_l=0.1, **totals):
    return Mixture(totals or {"Cl-": 0.1}, volume_l=volume_l)


def test_to_dict_keys():
    d = plan_neutralization(acid(), parse_reagent("NaOH=1M")).to_dict()
    assert JSON_KEYS <= set(d)
    assert {"reagent_mol", "reagent_volume_l", "reagent_mass_g", "pH"} <= set(d["full"])
    assert {"target_pH", "reagent_mol", "reagent_volume_l", "reagent_mass_g", "pH",
            "final_volume_l"} <= set(d["to_target"])
    assert d["vented_pH"] is None and d["gas_l"] == 0
    assert all({"code", "severity", "text"} == set(c) for c in d["cautions"])
    assert len(d["curve"]) == 400


def test_solid_has_no_volume():
    d = plan_neutralization(acid(), parse_reagent("NaOH")).to_dict()
    assert d["full"]["reagent_volume_l"] is None


def test_every_proton_counts_what_was_added():
    # NaH2PO4 has two dissociable protons per phosphate, H3PO4 three
    p = plan_neutralization(Mixture({"Na+": 0.1, "phosphate": 0.1}, volume_l=1.0),
                            parse_reagent("NaOH=1M"))
    assert p.proton_equivalents_mol == pytest.approx(0.2)
    p = plan_neutralization(Mixture({"phosphate": 0.1}, volume_l=1.0), parse_reagent("NaOH=1M"))
    assert p.proton_equivalents_mol == pytest.approx(0.3)
    assert p.bound_protons_at_target["phosphate"] < 2.0


def test_breakdown_names_strong_acids():
    p = plan_neutralization(Mixture({"Cl-": 0.1, "sulfate": 0.05}, volume_l=1.0),
                            parse_reagent("NaOH=1M"))
    assert p.breakdown["hydrochloric acid"] == pytest.approx(0.1)
    assert sum(p.breakdown.values()) == pytest.approx(p.proton_equivalents_mol)


def test_alkaline_waste_takes_acid():
    p = plan_neutralization(Mixture({"Na+": 0.1}, volume_l=1.0), parse_reagent("HCl=1M"))
    assert p.direction == "acid"
    assert p.proton_equivalents_mol == pytest.approx(-0.1)
    assert p.to_target.pH == pytest.approx(7.0, abs=1e-6)


def test_wrong_direction_is_clear():
    with pytest.raises(InvalidInput, match="needs a base"):
        plan_neutralization(acid(), parse_reagent("HCl=1M"))
    with pytest.raises(InvalidInput, match="needs an acid"):
        plan_neutralization(Mixture({"Na+": 0.1}, volume_l=1.0), parse_reagent("NaOH=1M"))


@pytest.mark.parametrize("kw", [{"target_pH": 15}, {"target_pH": -1}, {"window": (9, 6)},
                                {"window": (6, 6)}, {"activity": "debye-huckel"}, {"curve_points": 3}])
def test_bad_arguments(kw):
    with pytest.raises(InvalidInput):
        plan_neutralization(acid(), parse_reagent("NaOH=1M"), **kw)


def test_no_volume():
    with pytest.raises(InvalidInput):
        plan_neutralization(Mixture({"Cl-": 0.1}), parse_reagent("NaOH=1M"))


def test_stages_add_up_and_end_at_target():
    p = plan_neutralization(acid(), parse_reagent("NaOH=1M"))
    assert sum(s.add_mol for s in p.stages) == pytest.approx(p.to_target.reagent_mol)
    assert p.stages[-1].pH_after == pytest.approx(7.0, abs=1e-6)
    assert [s.pH_after for s in p.stages] == sorted(s.pH_after for s in p.stages)


def test_carbonate_gas_and_venting():
    p = plan_neutralization(Mixture({"Cl-": 0.5}, volume_l=1.0), parse_reagent("NaHCO3"))
    assert p.gas_l > 0 and p.vented_pH is not None
    assert "1 atm" in p.gas_conditions
    assert "co2-foaming" in {c.code for c in p.cautions}
    # doses are for the vented batch: it reaches the target; right after the addition
    # the dissolved CO2 still holds the pH lower, and more CO2 leaves while it vents
    assert p.vented_pH == pytest.approx(7.0, abs=1e-6)
    assert p.pH_before_venting < p.vented_pH - 0.2
    assert p.vented_gas_l > p.gas_l
    assert "co2-reading" in {c.code for c in p.cautions}
    # the dose is close to stoichiometric once CO2 has gone (0.5 mol HCl)
    assert p.to_target.reagent_mol == pytest.approx(0.5, rel=0.01)
    # the foaming caution quotes the gas in all, not only what leaves as the dose goes in
    foam = next(c.text for c in p.cautions if c.code == "co2-foaming")
    assert f"about {p.vented_gas_l:.3g} L in all once the batch has vented" in foam
    assert f"{p.gas_l:.3g} L of it as the dose goes in" in foam


def test_hf_waste_is_not_a_drain_plan():
    p = plan_neutralization(Mixture({"fluoride": 0.1}, volume_l=1.0), parse_reagent("NaOH=1M"))
    assert not p.drain_plan
    assert p.cautions[0].code == "not-a-drain-plan"
    assert "NOT a drain-disposal plan" in p.cautions[0].text


def test_hazards_from_store_are_used():
    p = plan_neutralization(acid(), parse_reagent("NaOH=1M"), hazards=frozenset({"heavy_metal"}))
    assert not p.drain_plan


def test_slurry_reagent_cautions():
    p = plan_neutralization(acid(), parse_reagent("Ca(OH)2"))
    assert "slurry-reagent" in {c.code for c in p.cautions}


def test_gypsum_expected():
    # 0.5 M H2SO4 with Ca(OH)2: Ca2+ and SO4 2- far above gypsum's solubility
    p = plan_neutralization(Mixture({"sulfate": 0.5}, volume_l=1.0), parse_reagent("Ca(OH)2"))
    gyp = [x for x in p.precipitates if x.solid.startswith("CaSO4")]
    assert gyp and gyp[0].expected
    assert "sludge" in {c.code for c in p.cautions}


def test_heat_of_strong_neutralization_per_mol():
    p = plan_neutralization(Mixture({"Cl-": 0.01}, volume_l=1.0), parse_reagent("NaOH=1M"),
                            activity="ideal")
    assert p.heat_released_kj / p.to_target.reagent_mol == pytest.approx(55.815, rel=2e-3)


def test_solid_naoh_adds_heat_of_solution():
    a = plan_neutralization(acid(), parse_reagent("NaOH=1M"), activity="ideal")
    b = plan_neutralization(acid(), parse_reagent("NaOH"), activity="ideal")
    n = b.to_target.reagent_mol
    assert b.heat_released_kj - a.heat_released_kj == pytest.approx(44.5 * n, rel=0.02)


def test_curve_is_monotone_for_base():
    p = plan_neutralization(Mixture({"phosphate": 0.05, "Cl-": 0.02}, volume_l=1.0),
                            parse_reagent("NaOH=1M"))
    assert np.all(np.diff(p.curve[:, 1]) > -1e-9)


@pytest.mark.parametrize("compound, tag", [("CuSO4", "heavy_metal"), ("CrO3", "chromic"),
                                           ("AgNO3", "heavy_metal")])
def test_metal_bearing_waste_is_not_a_drain_plan(compound, tag):
    from carboy.model.catalog import default_catalog

    cat = default_catalog()
    sample = Mixture.from_compounds([(cat.compound(compound), 0.01),
                                     (cat.compound("H2SO4"), 0.05)], volume_l=1.0)
    p = plan_neutralization(sample, parse_reagent("NaOH=1M"))
    assert tag in p.hazards
    assert not p.drain_plan
    assert p.cautions[0].code == "not-a-drain-plan"


@pytest.mark.parametrize("compound", ["NaCN", "Na2S"])
def test_cyanide_and_sulfide_waste_must_never_be_acidified(compound):
    # the planner itself refuses (its start step), so a direct caller gets no dose either
    from carboy.model.catalog import default_catalog

    cat = default_catalog()
    sample = Mixture.from_compounds([(cat.compound(compound), 0.01),
                                     (cat.compound("NaOH"), 0.05)], volume_l=1.0)
    with pytest.raises(HazardRefused, match="no acidification dose"):
        plan_neutralization(sample, parse_reagent("HCl=1M"), target_pH=9.0, window=(8.5, 10))
    p = plan_neutralization(sample, parse_reagent("NaOH=1M"), target_pH=12.8,
                            window=(12.5, 13.0))   # kept alkaline: planned, never drained
    codes = [c.code for c in p.cautions]
    assert "never-acidify" in codes and "not-a-drain-plan" in codes
    assert not p.drain_plan


@pytest.mark.parametrize("activity", ["auto", "davies"])
def test_the_sample_is_solved_once_when_auto_settles_on_its_model(monkeypatch, activity):
    """``auto`` settled for the plan: with a reagent that moves the pH one way only the
    batch that settles the model solves the sample too (no solve of the sample alone,
    ``plan_activity.one_way``), with ``davies`` the sample is solved alone once; the
    reagent's own pH once either way; and the plan is the one ``davies`` gives."""
    from carboy.model import gas

    alone = []
    real = gas.TitrationModel.forward

    def counted(self, n, **kw):
        if np.size(n) == 1 and float(np.ravel(n)[0]) == 0.0 and not kw:
            alone.append(self.activity)
        return real(self, n, **kw)

    monkeypatch.setattr(gas.TitrationModel, "forward", counted)
    sample = Mixture({"Cl-": 0.2, "sulfate": 0.05}, volume_l=2.0)
    plan = plan_neutralization(sample, parse_reagent("NaOH=1M"), activity=activity)
    # the reagent (Davies), and with "davies" the sample (with "auto", in the settling batch)
    assert alone == (["davies"] if activity == "auto" else ["davies", "davies"]), alone
    assert plan.activity_model == "davies"
    if activity == "auto":
        monkeypatch.setattr(gas.TitrationModel, "forward", real)
        ref = plan_neutralization(sample, parse_reagent("NaOH=1M"), activity="davies")
        assert plan.initial_pH == ref.initial_pH
        assert plan.to_target.reagent_mol == ref.to_target.reagent_mol


@pytest.mark.parametrize("activity", ["davies", "pitzer"])
def test_the_states_solved_with_the_curve_are_those_solved_alone(monkeypatch, activity):
    """Without carbonate the plan's states (full dose, doses, stages, ±1 %, equivalence
    points) are solved in the curve's batch, among its amounts: one solve, the same
    states as each solved alone."""
    from carboy.model import dosing, speciation
    from carboy.model.mixture import titration_batch

    calls = []
    real = speciation.speciate_batch

    def counted(batch, **kw):
        calls.append(len(batch.totals))
        return real(batch, **kw)

    monkeypatch.setattr(dosing, "speciate_batch", counted)
    sample = Mixture({"Cl-": 0.4, "sulfate": 0.3, "phosphate": 0.05}, volume_l=2.0)
    reagent = parse_reagent("NaOH=1M")
    plan = plan_neutralization(sample, reagent, activity=activity, curve_points=60)
    assert max(calls) > 60     # the curve's 60 amounts and the states in one batch
    doses = [plan.full, plan.to_target, *plan.window_doses]
    amounts = [d.reagent_mol for d in doses] + [e.reagent_mol for e in plan.equivalence_points]
    batch, _ = titration_batch(sample, dict(reagent.compound.composition),
                               np.array(amounts), reagent.l_per_mol)
    alone = real(batch, activity=activity)
    assert [d.pH for d in doses] + [e.pH for e in plan.equivalence_points] == pytest.approx(
        alone.pH.tolist(), abs=1e-9)
    assert len(plan.curve) == 60 and np.all(np.diff(plan.curve[:, 0]) > 0)


SETTLE_CASES = [
    ({"Cl-": 0.2, "sulfate": 0.05}, "NaOH=1M", 7.0, (6.0, 9.0)),        # Davies, pairs
    ({"Cl-": 3.0, "sulfate": 1.0}, "NaOH@99%", 7.0, (6.0, 9.0)),        # Pitzer
    ({"Na+": 0.5, "fluoride": 1.5}, "NaOH@99%", 7.0, (6.0, 9.0)),       # Davies, then Pitzer
    ({"Na+": 0.3, "ammonium": 0.1}, "HCl=1M", 7.0, (6.0, 9.0)),         # alkaline, HCl
    ({"Na+": 0.3, "ammonium": 0.1}, "NaOH=1M", 7.0, (6.0, 9.0)),        # the wrong way
    ({"Na+": 0.05, "cyanide": 0.01}, "HCl=1M", 9.0, (8.5, 10.0)),       # refused
]


@pytest.mark.parametrize(("totals", "reagent", "target", "window"), SETTLE_CASES)
def test_settling_the_model_with_the_sample_changes_no_plan(monkeypatch, totals, reagent,
                                                            target, window):
    """The sample solved in the batch that settles ``auto`` (``plan_activity.one_way``)
    and solved first, alone: the same plan, the same refusal, the same error."""
    from carboy.model import planner

    sample = Mixture(totals, volume_l=2.0)
    ways = []
    real = planner.one_way

    def outcome():
        try:
            return plan_neutralization(sample, parse_reagent(reagent), target_pH=target,
                                       window=window, activity="auto")
        except (InvalidInput, HazardRefused) as exc:
            return exc

    monkeypatch.setattr(planner, "one_way", lambda req: ways.append(real(req)) or ways[-1])
    early = outcome()
    assert ways and ways[0] in ("base", "acid")     # the early settling was taken
    monkeypatch.setattr(planner, "one_way", lambda req: None)
    first = outcome()
    if isinstance(first, Exception):
        assert type(early) is type(first) and str(early) == str(first)
        return
    assert early.activity_model == first.activity_model == (
        "pitzer" if reagent == "NaOH@99%" else "davies")
    assert early.initial_pH == pytest.approx(first.initial_pH, abs=1e-12)
    for a, b in ((early.full, first.full), (early.to_target, first.to_target)):
        assert a.reagent_mol == pytest.approx(b.reagent_mol, rel=1e-11)
        assert a.pH == pytest.approx(b.pH, abs=1e-9)
    np.testing.assert_allclose(early.curve, first.curve, rtol=1e-9, atol=1e-12)


def test_one_way_only_where_the_sample_needs_no_state_first():
    """The early settling takes "auto", a one-way reagent without carbonate and no
    modelled metal; anything else solves the sample first."""
    from carboy.model.plan_activity import one_way
    from carboy.model.plan_request import check_request

    def way(totals, reagent, activity="auto"):
        req = check_request(Mixture(totals, volume_l=1.0), parse_reagent(reagent), 7.0,
                            (6.0, 9.0), activity, None, frozenset(), 400, None)
        return one_way(req)

    acid = {"Cl-": 0.1}
    assert way(acid, "NaOH=1M") == "base"
    assert way({"Na+": 0.1}, "HCl=1M") == "acid"
    assert way(acid, "NaOH=1M", "davies") is None
    assert way(acid, "NaOH=1M", "pitzer") is None
    assert way(acid, "Na2CO3") is None                      # its reach needs the sample
    assert way({"Cl-": 0.1, "Zn+2": 0.02}, "NaOH=1M") is None   # a solid may form
