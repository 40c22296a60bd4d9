"""A titration curve solved coarse to fine gives every point's own root.

The solver's shortcuts along a curve only save steps: the starts between solved
neighbours (``starts.cubic_between``, a quintic where the curve is smooth), a point
accepted on the prediction of its last two Newton steps (``coupled._quadratic``), the
iteration run over every block at once (``coupled._blockwise``).  Each must leave the
roots where the guaranteed path puts them, and a point not settled must say so.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest

import carboy.model.speciation as sp
from carboy.model.mixture import Mixture, titration_batch
from carboy.model.solver import bracketed, coupled
from carboy.model.solver.starts import cubic_between

WASTE = [("HCl", 0.01), ("H2SO4", 0.005), ("H3PO4", 0.003), ("HNO3", 0.004), ("HF", 0.001),
         ("NH4Cl", 0.002), ("H3BO3", 0.002), ("CaCl2", 0.001), ("NaHCO3", 0.001),
         ("KCl", 0.005)]


def _curve(catalog, points: int, calcium: bool = True):
    comps = WASTE if calcium else [c for c in WASTE if c[0] != "CaCl2"]
    mix = Mixture.from_compounds([(catalog.compound(n), c) for n, c in comps], volume_l=1.0)
    return titration_batch(mix, {"Na+": 1.0}, np.linspace(0.0, 0.08, points), 0.0)[0]


@pytest.mark.parametrize("calcium", [True, False])
@pytest.mark.parametrize("activity", ["davies", "ideal"])
def test_a_long_curve_has_the_guaranteed_paths_roots(catalog, monkeypatch, calcium, activity):
    # long enough to be solved coarse to fine on either path (with calcium, a metal:
    # bracketed.METAL_WARM_MIN points and more)
    n = bracketed.METAL_WARM_MIN + 137
    batch = _curve(catalog, n, calcium)
    fast = sp.speciate_batch(batch, activity=activity, catalog=catalog)
    monkeypatch.setattr(sp, "COUPLED_ITER", 0)   # every point through the guaranteed path
    slow = sp.speciate_batch(batch, activity=activity, catalog=catalog)
    assert fast.converged.all() and slow.converged.all()
    np.testing.assert_allclose(fast.pH, slow.pH, rtol=0, atol=1e-9)
    np.testing.assert_allclose(fast.ionic_strength_molar, slow.ionic_strength_molar,
                               rtol=1e-8)


def test_a_warm_started_curve_equals_its_points_solved_cold(catalog):
    n = bracketed.METAL_WARM_MIN + 50
    batch = _curve(catalog, n)
    res = sp.speciate_batch(batch, catalog=catalog)
    for i in range(0, n, 41):
        one = sp.speciate(batch.mixture(i), catalog=catalog)
        assert float(res.pH[i]) == pytest.approx(one.pH, abs=1e-9)


def test_blocks_of_a_metal_curve_change_nothing(catalog):
    batch = _curve(catalog, bracketed.METAL_WARM_MIN + 100)
    lay = sp.cached_layout(catalog, batch.keys, 25.0)
    whole = sp._solve(batch, lay, "davies", 25.0)
    blocks = sp._solve(batch, dataclasses.replace(lay, chunk=64), "davies", 25.0)
    np.testing.assert_allclose(blocks.pH, whole.pH, atol=1e-10)


def test_a_point_is_accepted_on_two_exact_steps_only():
    size = np.array([1e-7, 1e-7, 1e-7, 1e-7, 1e-5, 1e-7])
    last = np.array([1e-3, 0.0, 1e-3, 1e-5, 1e-2, 1e-2])
    exact = np.array([True, True, False, True, True, True])
    got = coupled._quadratic(size, last, exact)
    # predicted error size**3 / last**2: 1e-15 (accepted); no step before; a plain
    # step; 1e-11 (too large); a step above QUADRATIC_MAX; 1e-17 (accepted)
    assert got.tolist() == [True, False, False, False, False, True]


def test_an_exact_step_below_the_quadratic_size_in_x_and_i_is_accepted(catalog):
    # from the root with the ionic strength off by 5e-9 of itself (as a pairs round
    # leaves it when its correction of the spectators moved that much): the exact 2x2
    # step leaves an error of order its square, so one step is accepted on both paths
    # (the test of I alone wanted its step below I_RTOL, 1e-10, and a second step)
    from carboy.model import water
    from carboy.model.activity import debye_huckel_scale
    from carboy.model.solver.problem import build_problem
    from carboy.model.solver.single import iterate_one

    batch = _curve(catalog, 60, calcium=False)
    lay = sp.cached_layout(catalog, batch.keys, 25.0)
    a_dh = debye_huckel_scale("davies", 25.0)
    pr = build_problem(lay, batch.totals, None, water.pkw(25.0), a_dh)
    root_x, root_i, root_ok, _ = coupled.solve_coupled(pr)   # the problem's own root
    assert root_ok.all()
    x0, i0 = root_x.copy(), root_i * (1.0 + 5e-9)
    x, ionic, ok, it = coupled.solve_coupled(pr, max_iter=1, x0=x0, i0=i0)
    assert ok.all() and it == 1
    np.testing.assert_allclose(x, root_x, rtol=0, atol=1e-13)
    np.testing.assert_allclose(ionic, root_i, rtol=1e-13)
    for n in (0, 29, 59):
        got = iterate_one(lay, batch.totals[n].tolist(), water.pkw(25.0), a_dh,
                          max_iter=1, x0=float(x0[n]), i0=float(i0[n]))
        assert got[3] and got[0] == pytest.approx(root_x[n], abs=1e-13)


def test_points_not_settled_say_so(catalog):
    from carboy.model import water
    from carboy.model.activity import debye_huckel_scale
    from carboy.model.solver.problem import build_problem

    batch = _curve(catalog, 60)
    lay = sp.cached_layout(catalog, batch.keys, 25.0)
    pr = build_problem(lay, batch.totals, None, water.pkw(25.0),
                       debye_huckel_scale("davies", 25.0))
    x, _, ok, _ = coupled.solve_coupled(pr, max_iter=3)
    assert not ok.all()   # three steps from cold settle no curve
    settled = np.flatnonzero(ok)
    ref = sp.speciate_batch(batch, catalog=catalog)
    assert ref.converged.all()
    np.testing.assert_allclose(x[settled], ref.log_h[settled], atol=1e-9)


def test_the_quintic_start_is_closer_on_a_smooth_curve_and_tame_across_a_jump():
    nodes = np.arange(0.0, 40.0, 1.0)
    at = nodes[2:-3] + 0.5
    (got,) = cubic_between(at, nodes, np.sin(nodes / 7.0))
    # the cubic through four nodes misses sin by about 1e-5 here, the quintic by 4e-8
    assert np.max(np.abs(got - np.sin(at / 7.0))) < 1e-7
    jump = np.where(nodes < 20.0, -3.0, -11.0)
    (got,) = cubic_between(at, nodes, jump)
    assert np.all((got >= -11.0) & (got <= -3.0))   # the line across the jump


def test_the_edges_bracket_the_excess_of_h_over_oh_at_every_root(catalog):
    from carboy.model import water
    from carboy.model.activity import debye_huckel_scale
    from carboy.model.solver.problem import build_problem

    batch = _curve(catalog, 120)
    lay = sp.cached_layout(catalog, batch.keys, 25.0)
    pr = build_problem(lay, batch.totals, None, water.pkw(25.0),
                       debye_huckel_scale("davies", 25.0))
    top, bottom, _, _ = pr.edges()
    res = sp.speciate_batch(batch, catalog=catalog)
    excess = 10.0 ** res.log_h - res.species_molar[:, res.species_labels.index("OH-")]
    assert np.all(top <= excess + 1e-12) and np.all(excess <= bottom + 1e-12)
    assert (top > 0).any() and (bottom < 0).any()   # both edges serve along this curve


def test_edge_starts_on_floats_and_arrays_agree():
    from carboy.model.solver.single import edge_start
    from carboy.model.solver.starts import edge_starts

    top = np.array([0.02, -0.01, -0.03, 1e-9])
    bottom = np.array([0.05, 0.02, -0.01, 0.4])
    x, _, buffered = edge_starts(top, bottom, 0 * top, 0 * top, 0 * top, -14.0)
    assert buffered.tolist() == [False, True, False, False]
    for k in (0, 2, 3):
        assert x[k] == pytest.approx(edge_start(top[k], bottom[k], -14.0), abs=1e-12)
    assert edge_start(top[1], bottom[1], -14.0) is None
    h = 10.0 ** x[0]
    assert h - 1e-14 / h == pytest.approx(0.02, rel=1e-12)   # [H+] - Kw/[H+] = top
    oh = 10.0 ** (-14.0 - x[2])
    assert 10.0 ** x[2] - oh == pytest.approx(-0.01, rel=1e-12)


@pytest.mark.parametrize("case", [[("HCl", 0.01), ("CH3COOH", 0.05)], [("NaOH", 0.02),
                                                                      ("NH4Cl", 0.01)],
                                  WASTE, [("CH3COOH", 0.05), ("NaOH", 0.025)]])
def test_one_solution_from_its_edge_or_from_neutral_has_one_root(catalog, case):
    from carboy.model import water
    from carboy.model.activity import debye_huckel_scale
    from carboy.model.solver.single import solve_one

    mix = Mixture.from_compounds([(catalog.compound(n), c) for n, c in case])
    lay = sp.cached_layout(catalog, tuple(mix.totals), 25.0)
    row = list(mix.totals.values())
    args = (lay, row, water.pkw(25.0), debye_huckel_scale("davies", 25.0))
    extra = {}
    if lay.metals is not None:
        from carboy.model.solver.single_metals import compiled

        extra = {"extra": compiled(lay).ladders}
    cold = solve_one(*args, **extra)
    neutral = solve_one(*args, x0=-7.0, **extra)
    assert cold[0] == pytest.approx(neutral[0], abs=1e-10)
