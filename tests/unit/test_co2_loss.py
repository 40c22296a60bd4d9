"""The CO2 lost right after a carbonate dose, from a coarse grid and its turns
(carboy.model.co2_loss): the same running maximum as solving every grid amount."""

from __future__ import annotations

import numpy as np
import pytest

from carboy.model import co2_loss, gas
from carboy.model.dosing import grid_losses
from carboy.model.mixture import Mixture


def _model(catalog, totals, reagent="Na2CO3", activity="davies", volume_l=1.0,
           l_per_mol=0.0):
    comp = dict(catalog.compound(reagent).composition)
    return gas.TitrationModel(Mixture(totals, volume_l=volume_l), comp, l_per_mol,
                              activity=activity, catalog=catalog)


def _kinked(peak_at: float, size: int = 400):
    """A loss like the titration's: zero, then rising, a kink, then falling."""
    t = np.arange(size, dtype=float)
    return np.where(t < 40, 0.0, np.where(t < peak_at, t - 40, (peak_at - 40) - 0.7 * (t - peak_at)))


@pytest.mark.parametrize("peak_at", [100.0, 296.4, 297.0, 389.6, 399.5])
def test_the_turn_search_finds_the_grid_maximum(peak_at):
    loss = _kinked(peak_at)
    need = loss > 0
    coarse = co2_loss.loss_amounts(need)
    here = np.where(need, np.nan, 0.0)
    here[coarse] = loss[coarse]
    solved = ~need
    solved[coarse] = True
    asked = []

    def solve(at):
        asked.extend(at.tolist())
        return loss[at]

    assert co2_loss.settle_turns(solve, here, solved, coarse)
    run_lo, run_hi = co2_loss.bounds(np.where(solved, here, 0.0), solved)
    full = np.maximum.accumulate(loss)
    assert run_lo[-1] == full[-1]                      # the peak itself was solved
    # past the turn the running maximum is settled; before it bounded from both sides
    assert np.all(run_lo <= full) and np.all(full <= run_hi)
    after = np.arange(loss.size) >= np.ceil(peak_at)
    np.testing.assert_array_equal(run_lo[after], full[after])
    assert len(asked) <= 6 and coarse.size + len(asked) < need.sum() / 5


@pytest.mark.parametrize("peak_at", [296.5, 297.0, 298.4, 150.2])
def test_a_smooth_turn_is_settled_in_one_solve(peak_at):
    # the parabola through the coarse turn and its neighbours puts the maximum within a
    # grid step: the amounts about its vertex, solved at once, settle it
    t = np.arange(400, dtype=float)
    loss = np.where(t < 40, 0.0, 1.0 + np.cos((t - peak_at) / 150.0))
    need = loss > 0
    coarse = co2_loss.loss_amounts(need)
    here, solved = np.where(need, np.nan, 0.0), ~need
    here[coarse], solved[coarse] = loss[coarse], True
    calls = []

    def solve(at):
        calls.append(at.tolist())
        return loss[at]

    assert co2_loss.settle_turns(solve, here, solved, coarse)
    assert len(calls) == 1 and len(calls[0]) <= 4
    run_lo, _ = co2_loss.bounds(np.where(solved, here, 0.0), solved)
    assert run_lo[-1] == loss.max()


def test_a_loss_that_turns_often_is_solved_everywhere():
    t = np.arange(200, dtype=float)
    loss = 1.0 + np.sin(t / 3.0)          # many turns: no coarse grid can follow it
    coarse = co2_loss.loss_amounts(np.ones(200, dtype=bool))
    here, solved = np.zeros(200), np.zeros(200, dtype=bool)
    here[coarse], solved[coarse] = loss[coarse], True
    assert not co2_loss.settle_turns(lambda at: loss[at], here, solved, coarse)


@pytest.mark.parametrize("activity, totals, volume_l, reagent, l_per_mol", [
    ("davies", {"Cl-": 0.5}, 1.0, "Na2CO3", 0.0),
    ("davies", {"Cl-": 0.3, "acetate": 0.4}, 2.0, "Na2CO3", 0.0),
    ("davies", {"Cl-": 1.0}, 1.0, "Na2CO3", 1.0),          # a 1 M solution: the volume grows
    ("davies", {"Cl-": 1.0, "carbonate": 0.05}, 1.0, "NaHCO3", 0.0),
    ("pitzer", {"Cl-": 2.0, "sulfate": 0.5}, 1.5, "Na2CO3", 0.0),
])
def test_the_coarse_loss_equals_the_loss_solved_at_every_amount(catalog, activity, totals,
                                                                 volume_l, reagent, l_per_mol):
    """The grid's running maximum from the coarse grid and its turns is the one solving
    every amount gives (to the solver's tolerance), anywhere on or between the grid's
    amounts; ``upper`` is never below it, and the amounts it calls open to air are."""
    model = _model(catalog, totals, reagent, activity, volume_l, l_per_mol)
    n_full = sum(v for v in totals.values()) * volume_l / (2.0 if reagent == "Na2CO3" else 1.0)
    grid = np.linspace(0.0, 1.3 * n_full, 400)
    s_sat = gas.henry_co2_molar_per_atm(25.0)
    s_air = s_sat * gas.air_pco2_atm()
    loss, air = grid_losses(model, grid, s_sat, s_air)
    full = np.maximum.accumulate(model.saturation_loss_mol(grid, s_sat))
    assert np.count_nonzero(loss.run_hi > loss.run_lo) > 0.5 * grid.size   # coarse indeed
    np.testing.assert_allclose(loss(grid), full, rtol=1e-9, atol=1e-13)
    between = np.sort(np.r_[grid[1:] - 0.37 * np.diff(grid), 1.31 * n_full])
    idx = np.searchsorted(grid, between, side="right") - 1
    ref = np.maximum(full[idx], model.saturation_loss_mol(between, s_sat))
    np.testing.assert_allclose(loss(between), ref, rtol=1e-9, atol=1e-13)
    assert np.all(loss.upper(between) >= ref * (1 - 1e-12))
    assert np.all(loss.upper(grid) >= full * (1 - 1e-12))
    at_air = air.carbonate_molar() * air.volume_l
    from carboy.model.dosing import open_to_air

    sure = open_to_air(loss, grid, at_air, True)
    assert sure.sum() > 0.9 * grid.size
    assert np.all(at_air[sure] <= model.carbonate_total_mol(grid)[sure] - full[sure])


@pytest.mark.parametrize("spacing, peak_at", [(5, 297.6), (6, 243.2), (3, 101.4)])
def test_the_turn_search_covers_a_spacing_that_is_no_power_of_two(spacing, peak_at):
    loss = _kinked(peak_at)
    coarse = np.arange(40, 400, spacing)
    here, solved = np.where(loss > 0, np.nan, 0.0), ~(loss > 0)
    here[coarse], solved[coarse] = loss[coarse], True
    assert co2_loss.settle_turns(lambda at: loss[at], here, solved, coarse)
    run_lo, _ = co2_loss.bounds(np.where(solved, here, 0.0), solved)
    assert run_lo[-1] == loss.max()


def test_every_amount_solved_at_once_and_settled_grid_amounts_take_no_solve(catalog,
                                                                             monkeypatch):
    """``every=True`` (a batch made acid) solves the loss at every grid amount in the one
    solve; asked again at grid amounts whose running maximum is settled, the loss
    function solves nothing."""
    model = _model(catalog, {"Cl-": 0.5})
    grid = np.linspace(0.0, 0.35, 120)
    s_sat = gas.henry_co2_molar_per_atm(25.0)
    loss, _ = grid_losses(model, grid, s_sat, every=True)
    np.testing.assert_array_equal(loss.run_lo, loss.run_hi)
    full = np.maximum.accumulate(model.saturation_loss_mol(grid, s_sat))
    np.testing.assert_allclose(loss.run_lo, full, rtol=1e-9, atol=1e-13)
    asked = []
    real = gas.TitrationModel.saturation_loss_mol

    def counted(self, n, co2):
        asked.append(np.size(n))
        return real(self, n, co2)

    monkeypatch.setattr(gas.TitrationModel, "saturation_loss_mol", counted)
    np.testing.assert_array_equal(loss(grid[5::7]), loss.run_lo[5::7])
    assert asked == []
    loss(np.r_[grid[3], 0.5 * (grid[3] + grid[4])])
    assert asked == [1]
