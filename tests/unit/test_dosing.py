"""Doses and the batch after a dose, with and without CO2 leaving."""

from __future__ import annotations

import numpy as np
import pytest

from carboy.model import gas
from carboy.model.dosing import CURVE_SPAN, find_doses
from carboy.model.mixture import Mixture, titration_batch
from carboy.model.molality import water_kg_per_litre
from carboy.model.speciation import speciate_batch


def dosing_for(catalog, totals, reagent_key, targets, *, l_per_mol=0.0, direction="base",
               initial_ph=1.0, n_full=0.1, activity="davies", points=50):
    sample = Mixture(totals, volume_l=1.0)
    comp = dict(catalog.compound(reagent_key).composition)
    model = gas.TitrationModel(sample, comp, l_per_mol, activity=activity, catalog=catalog)
    return find_doses(model, comp, l_per_mol, np.asarray(targets, dtype=float), n_full,
                      initial_pH=initial_ph, direction=direction, points=points)


def test_without_carbonate_the_batch_is_the_titration_batch(catalog):
    d = dosing_for(catalog, {"Cl-": 0.1}, "NaOH", [7.0, 6.0, 9.0], l_per_mol=1.0)
    assert not d.carbonate and d.pco2_atm is None
    n = np.array([0.0, 0.05, 0.1])
    b, vol = d.batch_at(n)
    ref, ref_vol = titration_batch(d.model.sample, {"Na+": 1}, n, 1.0)
    assert b.keys == ref.keys
    np.testing.assert_array_equal(b.totals, ref.totals)
    np.testing.assert_array_equal(vol, ref_vol)
    assert d.co2_lost_mol(0.1) == (0.0, 0.0)
    # the curve covers the largest dose of interest by CURVE_SPAN
    assert d.grid[-1] == pytest.approx(CURVE_SPAN * max(0.1, np.nanmax(d.doses)))


def test_each_dose_reaches_its_ph(catalog):
    d = dosing_for(catalog, {"phosphate": 0.05}, "NaOH", [7.0, 6.0, 9.0])
    b, _ = d.batch_at(d.doses)
    np.testing.assert_allclose(speciate_batch(b, catalog=catalog).pH, [7.0, 6.0, 9.0],
                               atol=1e-6)


def test_with_ion_pairs_each_dose_reaches_its_ph_on_the_forward_solve(catalog):
    # NaOH into sulfuric acid: NaSO4- forms (Davies with pairs), which the exact inverse
    # (charge-only coefficients) does not see: the doses are settled on the forward solve
    d = dosing_for(catalog, {"sulfate": 0.1}, "NaOH", [2.0, 2.5, 7.0], n_full=0.2)
    b, _ = d.batch_at(d.doses)
    res = speciate_batch(b, catalog=catalog)
    assert "NaSO4-" in res.species_labels
    np.testing.assert_allclose(res.pH, [2.0, 2.5, 7.0], atol=1e-6)


def test_targets_behind_the_start_need_no_reagent(catalog):
    d = dosing_for(catalog, {"Cl-": 0.001}, "NaOH", [7.0, 2.5, 9.0], initial_ph=3.0)
    assert d.doses[1] == 0.0 and d.doses[0] > 0


def test_carbonate_only_leaves(catalog):
    # NaHCO3 into HCl: CO2 forms, beyond saturation it leaves at once, more on venting
    d = dosing_for(catalog, {"Cl-": 0.5}, "NaHCO3", [7.0, 6.0, 8.0], n_full=0.5)
    assert d.carbonate and d.pco2_atm == pytest.approx(gas.air_pco2_atm())
    n = np.array([0.1, 0.3, 0.5])
    fresh, _ = d.batch_at(n, vented=False)
    vented, _ = d.batch_at(n)
    k = fresh.keys.index(gas.CARBONATE)
    added = d.model.carbonate_total_mol(n)
    assert np.all(vented.totals[:, k] <= fresh.totals[:, k])
    assert np.all(fresh.totals[:, k] < added)      # volumes are 1 L: mol = mol/L
    lost_fresh, lost_vented = d.co2_lost_mol(0.5)
    assert 0 < lost_fresh <= lost_vented <= 0.5
    assert lost_vented == pytest.approx(0.5 - vented.totals[2, k], rel=1e-9)


def test_gas_read_back_from_a_solve_equals_the_gas_worked_out_afresh(catalog):
    # co2_lost_mol reads amounts a vented solve has worked out; the same figures as
    # working them out for that one amount
    args = (catalog, {"Cl-": 0.5}, "NaHCO3", [7.0, 6.0, 8.0])
    fresh_d = dosing_for(*args, n_full=0.5)
    afresh = fresh_d.co2_lost_mol(0.3)
    solved = dosing_for(*args, n_full=0.5)
    solved.solve(np.array([0.1, 0.3, 0.5]))
    assert 0.3 in solved.seen
    assert solved.co2_lost_mol(0.3) == pytest.approx(afresh, rel=1e-12)


def test_solve_equals_solving_the_batch(catalog):
    # Dosing.solve starts vented points from the state open to air: same states
    d = dosing_for(catalog, {"Cl-": 0.5}, "NaHCO3", [7.0, 6.0, 8.0], n_full=0.5)
    n = np.linspace(0.0, 0.6, 30)
    res, vol = d.solve(n)
    b, vol_b = d.batch_at(n)
    ref = speciate_batch(b, catalog=catalog)
    np.testing.assert_allclose(res.pH, ref.pH, atol=1e-9)
    np.testing.assert_array_equal(vol, vol_b)


def test_points_started_from_the_vented_curve_give_the_same_states(catalog, monkeypatch):
    # on the Pitzer model the planner's points start their coefficients from the vented
    # curve (Dosing.solve(curve=)): the same states in fewer rounds where the vented
    # state is not the one open to air (an alkaline batch keeps less carbonate than the
    # air would leave it); a point vented to the state open to air starts from that
    # state's own root and coefficients and settles in one round either way
    from carboy.model.solver import pitzer_batch

    d = dosing_for(catalog, {"Na+": 1.0, "carbonate": 0.1}, "HCl", [8.0, 9.0, 7.0],
                   n_full=1.0, activity="pitzer", points=400, direction="acid",
                   initial_ph=13.5)   # the planner's grid
    curve, _ = d.solve(d.grid)
    n = np.array([0.05, 0.2, 0.4, 0.6, 0.9, 1.0, 1.1])
    at_air = np.isfinite(d._batch_and_air(n, True).air_pH)
    assert at_air.tolist() == [False] * 4 + [True] * 3
    rounds = []
    real = pitzer_batch.one_outcome

    def spy(*args):
        out = real(*args)
        rounds.append(out.iterations)
        return out

    monkeypatch.setattr(pitzer_batch, "one_outcome", spy)
    ref, _ = d.solve(n)
    cold = np.array(rounds[-n.size:])
    got, _ = d.solve(n, curve=curve)
    warm = np.array(rounds[-n.size:])
    np.testing.assert_allclose(got.pH, ref.pH, atol=1e-9)
    np.testing.assert_allclose(got.species_molar, ref.species_molar, rtol=1e-8, atol=1e-15)
    assert warm[~at_air].sum() < cold[~at_air].sum()
    assert (cold[at_air] == 1).all() and (warm[at_air] == 1).all()


def test_on_pitzer_the_state_open_to_air_is_the_closed_batch_holding_its_carbonate(catalog):
    # an open solve's water per litre follows the carbonate it holds (settled in the
    # Pitzer rounds), so the batch holding that carbonate closed is the same solution;
    # with the water of the carbonate as added the two differed by up to 4e-4 pH
    d = dosing_for(catalog, {"Na+": 1.0, "Cl-": 2.0}, "Na2CO3", [7.0, 6.0, 8.0],
                   n_full=0.35, activity="pitzer")
    model = d.model
    # 3 and 12 points (one by one on floats), 40 (on arrays, coarse to fine)
    for amounts in (np.array([0.05, 0.2, 0.31]), np.linspace(0.02, 0.6, 12),
                    np.linspace(0.02, 0.6, 40)):
        air = model.forward(amounts, co2_molar=d.s_air)
        b, _ = d.batch_at(amounts)
        held = air.carbonate_molar()
        np.testing.assert_allclose(b.totals[:, b.keys.index(gas.CARBONATE)], held, rtol=1e-12)
        closed = speciate_batch(b, activity="pitzer", catalog=catalog)
        # (to the rounds' tolerance: the coefficients settle to ONE_TOL, 1e-8 in log10)
        np.testing.assert_allclose(closed.pH, air.result.pH, rtol=0, atol=1e-8)
        np.testing.assert_allclose(closed.model_part.water_kg_per_l,
                                   air.result.model_part.water_kg_per_l, rtol=1e-9)
        # the water the open solve settled with is not the water of the carbonate added
        as_added, _ = titration_batch(model.sample, d.composition, amounts, d.l_per_mol)
        added, _ = water_kg_per_litre(catalog, as_added.keys, as_added.totals, 25.0)
        assert np.abs(added - air.result.model_part.water_kg_per_l).max() > 1e-4


def test_grid_losses_in_one_solve_equal_the_separate_solves(catalog):
    # the saturation loss and the state open to air on the grid come from one solve
    from carboy.model.dosing import grid_losses

    d = dosing_for(catalog, {"Cl-": 0.5}, "NaHCO3", [7.0, 6.0, 8.0], n_full=0.5)
    model, grid = d.model, d.grid
    s_sat = gas.henry_co2_molar_per_atm(25.0)
    loss_of, air = grid_losses(model, grid, s_sat, d.s_air)
    alone = gas.TitrationModel(model.sample, model.composition, model.lpm,
                               activity="davies", catalog=catalog)
    np.testing.assert_allclose(loss_of(grid), np.maximum.accumulate(
        alone.saturation_loss_mol(grid, s_sat)), rtol=1e-9, atol=1e-15)
    ref = alone.forward(grid, co2_molar=d.s_air)
    np.testing.assert_allclose(air.pH, ref.pH, atol=1e-9)
    np.testing.assert_allclose(air.carbonate_molar(), ref.carbonate_molar(), rtol=1e-9)


@pytest.mark.parametrize("activity, totals", [
    ("davies", {"Na+": 0.4, "sulfate": 0.3}),     # NaSO4- forms: a routed Davies solve
    ("pitzer", {"Na+": 1.0, "Cl-": 2.0}),         # an open solve's water per litre differs
])
def test_the_vented_ph_is_the_solved_batchs(catalog, activity, totals):
    # vented_pH takes the state open to air where the vented batch is that state (not
    # on the Pitzer model, whose open solve reckons water per litre from every carbonate
    # added): the pH of solve() either way
    d = dosing_for(catalog, totals, "NaHCO3", [7.0, 6.0, 8.0], n_full=0.7, activity=activity)
    n = np.array([0.1, 0.55, 0.62, 0.7, 0.8])
    assert np.isfinite(d._batch_and_air(n, True).air_pH).any()
    np.testing.assert_allclose(d.vented_pH(n), d.solve(n)[0].pH, atol=1e-8)


@pytest.mark.parametrize("totals", [
    {"sulfate": 0.3, "Mg+2": 0.2},                 # MgSO4° complexes: the metals' search
    {"Cl-": 0.2, "Zn+2": 0.05, "sulfate": 0.02},   # a hydroxide settles
    {"phosphate": 0.05, "Na+": 0.02},              # no metals: the linear root
])
def test_an_inverse_is_the_same_whatever_the_inverses_before_it(catalog, totals):
    """A model's inverse starts its ionic strength from those it settled before (and
    the metals' root near the last one of its own iteration), and remembers what it was
    asked: the same amounts as a fresh model's, to the tolerances."""
    comp = dict(catalog.compound("NaOH").composition)

    def model():
        return gas.TitrationModel(Mixture(totals, volume_l=2.0), comp, 1.0,
                                  activity="davies", catalog=catalog)

    used = model()
    used.amount_at_pH([6.0, 7.0, 9.0])
    again = used.amount_at_pH(np.array([6.93, 8.97]))
    fresh = model().amount_at_pH(np.array([6.93, 8.97]))
    assert np.all(np.isfinite(fresh))
    np.testing.assert_allclose(again, fresh, rtol=1e-11)
    assert np.array_equal(used.amount_at_pH([6.93, 8.97]), again)   # remembered


@pytest.mark.parametrize(("totals", "reagent"), [
    ({"Cl-": 0.05, "Na+": 0.238, "fluoride": 0.738}, "NaOH@99%"),
    ({"Cl-": 2.4 / 11, "NO3-": 0.6 / 11, "phosphate": 0.05 / 11, "sulfate": 0.75 / 11},
     "Na2CO3"),                                         # each dose's own (vented) scale
])
def test_the_first_secant_step_takes_the_curves_steepness(monkeypatch, totals, reagent):
    """The refine's first step on the Davies dose scale takes g's slope from the two
    curves' steepness (``dosing._first_slope``): about an equivalence point (HF 0.74 M
    with solid NaOH; a mixed acid waste with sodium carbonate; both on the Pitzer model)
    it reaches every pH within the tolerance in fewer forward solves than slope one, and
    at doses that reach their pH."""
    import carboy.model.dosing as dosing_module
    from carboy.model.planner import plan_neutralization
    from carboy.model.reagents import parse_reagent

    sample = Mixture(totals, volume_l=1.5)
    solves = []
    real = dosing_module.Dosing.vented_pH

    def counted(self, n):
        solves.append(np.size(n))
        return real(self, n)

    monkeypatch.setattr(dosing_module.Dosing, "vented_pH", counted)

    def plan():
        solves.clear()
        p = plan_neutralization(sample, parse_reagent(reagent), activity="auto")
        assert p.activity_model == "pitzer"
        for dose, want in ((p.to_target, 7.0), *zip(p.window_doses, (6.0, 9.0))):
            assert abs(dose.pH - want) <= 2 * dosing_module.REFINE_PH_TOL
        return len(solves)

    with_slope = plan()
    monkeypatch.setattr(dosing_module, "_first_slope", lambda inverse, want: (
        lambda miss, which: np.full(np.size(which), np.nan)))   # slope one
    assert with_slope < plan()
