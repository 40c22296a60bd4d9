"""The solver's three paths agree: one-solution fast path, vectorized coupled Newton,
and the guaranteed nested solve (bracketed Newton inside the ionic-strength loop)."""

from __future__ import annotations

from types import SimpleNamespace

import numpy as np
import pytest

import carboy.model.speciation as sp
from carboy.errors import InvalidInput
from carboy.model.entities import System
from carboy.model.mixture import Mixture, MixtureBatch

CASES = [
    [("HCl", 0.01), ("H2SO4", 0.005), ("H3PO4", 0.003), ("HNO3", 0.004), ("HF", 0.001),
     ("NH4Cl", 0.002), ("H3BO3", 0.002), ("CaCl2", 0.001), ("NaHCO3", 0.001), ("KCl", 0.005)],
    [("NaOH", 0.8)],
    [("HCl", 3.0)],
    [("Na2HPO4", 0.05), ("NaH2PO4", 0.05)],
    [("C6H8O7", 0.02), ("NaOH", 0.03)],
    [("Tris", 0.05), ("HCl", 0.025)],
]


def mixtures(catalog, t=25.0):
    return [Mixture.from_compounds([(catalog.compound(n), c) for n, c in case], temperature_c=t)
            for case in CASES]


@pytest.mark.parametrize("activity", ["davies", "ideal"])
def test_nested_solve_agrees_with_fast_paths(catalog, monkeypatch, activity):
    mixes = mixtures(catalog, 37.0)
    fast_one = [sp.speciate(m, activity=activity, catalog=catalog) for m in mixes]
    fast_batch = [sp.speciate_batch(MixtureBatch.of([m]), activity=activity, catalog=catalog)
                  for m in mixes]
    monkeypatch.setattr(sp, "COUPLED_ITER", 0)   # every point falls through to the nested solve
    for m, a, b in zip(mixes, fast_one, fast_batch):
        slow = sp.speciate(m, activity=activity, catalog=catalog)
        assert slow.converged
        assert slow.pH == pytest.approx(a.pH, abs=1e-9)
        assert slow.pH == pytest.approx(float(b.pH[0]), abs=1e-9)
        assert slow.ionic_strength_molar == pytest.approx(a.ionic_strength_molar, rel=1e-8)
        for label, c in a.species.items():
            assert slow.species[label] == pytest.approx(c, rel=1e-7, abs=1e-300)


def test_shifted_layout_for_extreme_ladders_agrees(catalog, monkeypatch):
    # a made-up ladder so wide that unshifted exponentials could overflow
    wide = System("wide_test", "wide", tuple(f"W{j}" for j in range(9)), 0,
                  tuple(float(v) for v in np.linspace(1.0, 40.0, 8)), (0.0,) * 8, (0.0,) * 8)
    cat = SimpleNamespace(systems={**catalog.systems, wide.key: wide}, ions=catalog.ions)
    mix = Mixture({"wide_test": 0.01, "Na+": 0.015})
    lay = sp._layout(cat, tuple(mix.totals), 25.0)
    assert lay.needs_shift
    res = sp.speciate_batch(MixtureBatch.of([mix]), catalog=cat)
    assert res.converged.all()
    assert abs(res.charge_residual_molar[0]) < 1e-15
    fr = res.fractions[0, res.system_keys.index("wide_test")]
    assert fr.sum() == pytest.approx(1.0)
    # about 1.5 of 8 protons removed: the pH sits near the second pKa (6.57)
    assert 5.5 < res.pH[0] < 7.5
    one = sp.speciate(mix, catalog=cat)
    assert one.pH == pytest.approx(float(res.pH[0]), abs=1e-9)
    monkeypatch.setattr(sp, "COUPLED_ITER", 0)
    assert sp.speciate(mix, catalog=cat).pH == pytest.approx(float(res.pH[0]), abs=1e-9)


def test_state_at_reproduces_the_solved_fractions(catalog):
    mix = mixtures(catalog)[0]
    batch = MixtureBatch.of([mix])
    res = sp.speciate_batch(batch, catalog=catalog)
    st = sp.state_at(batch.keys, res.pH, res.ionic_strength_molar, catalog=catalog)
    assert st.system_keys == res.system_keys
    np.testing.assert_allclose(st.fractions, res.fractions, rtol=1e-9, atol=1e-300)
    np.testing.assert_allclose(st.log_h, res.log_h, atol=1e-12)


@pytest.mark.parametrize("held", [None, (1, 0), (1, 1), (2, 2), (2, 0)])
def test_closed_forms_equal_the_general_sums(catalog, held):
    # the one-solution path's closed forms for single-signed systems (with or without a
    # held state) against its general weighted sums, which hold for any system
    from carboy.model.solver import single
    from carboy.model.solver.layout import cached_layout

    lay = cached_layout(catalog, ("Na+", "ammonium", "carbonate", "phosphate"), 25.0)
    hold = {} if held is None else {held[0]: (float(held[1]),
                                              float(lay.cmat[held[0], held[1]]), 1e-5)}
    systems = single._inputs(lay, [0.1, 0.02, 0.003, 0.01], hold)[0]
    assert all(fast is not None for *_, fast in systems)
    general = [(c, st, h, None) for c, st, h, _ in systems]
    for x in (-2.0, -7.0, -8.5, -11.0, -13.0):
        for tad in (0.0, 0.2):
            fast_sums = single._sums(systems, x, tad)
            slow_sums = single._sums(general, x, tad)
            assert fast_sums == pytest.approx(slow_sums, rel=1e-10, abs=1e-300)


def _curve(catalog, points):
    from carboy.model.mixture import titration_batch

    mix = Mixture.from_compounds([(catalog.compound(n), c) for n, c in CASES[0]], volume_l=1.0)
    return titration_batch(mix, {"Na+": 1.0}, np.linspace(0.0, 0.08, points), 0.0)[0]


@pytest.mark.parametrize("activity", ["davies", "ideal"])
def test_warm_started_curve_equals_point_by_point(catalog, activity):
    # a long batch is solved coarse to fine (each point from its neighbours' roots);
    # the start never changes a result beyond the tolerances
    batch = _curve(catalog, 300)
    res = sp.speciate_batch(batch, activity=activity, catalog=catalog)
    assert res.converged.all()
    for i in range(0, 300, 37):
        one = sp.speciate(batch.mixture(i), activity=activity, catalog=catalog)
        assert float(res.pH[i]) == pytest.approx(one.pH, abs=1e-9)


def test_blocks_and_starts_change_nothing(catalog):
    import dataclasses

    batch = _curve(catalog, 250)
    lay = sp.cached_layout(catalog, batch.keys, 25.0)
    whole = sp._solve(batch, lay, "davies", 25.0)
    blocks = sp._solve(batch, dataclasses.replace(lay, chunk=64), "davies", 25.0)
    np.testing.assert_allclose(blocks.pH, whole.pH, atol=1e-10)
    np.testing.assert_allclose(blocks.species_molar, whole.species_molar, rtol=1e-8,
                               atol=1e-300)
    # from given starts, near or far (NaN: none), the same roots
    for start in (whole, (whole.log_h + 0.3, whole.ionic_strength_molar * 1.1),
                  (np.where(np.arange(250) % 3 == 0, np.nan, whole.log_h),
                   whole.ionic_strength_molar)):
        again = sp.speciate_batch(batch, catalog=catalog, start=start)
        np.testing.assert_allclose(again.pH, whole.pH, atol=1e-10)
    with pytest.raises(InvalidInput):
        sp.speciate_batch(batch, catalog=catalog, start=(whole.log_h[:5], whole.log_h[:5]))


def test_start_along_returns_the_roots_at_the_nodes(catalog):
    batch = _curve(catalog, 40)
    res = sp.speciate_batch(batch, catalog=catalog)
    nodes = np.arange(40.0)
    x0, i0 = sp.start_along(nodes, nodes, res)
    np.testing.assert_allclose(x0, res.log_h, atol=1e-12)
    np.testing.assert_allclose(i0, res.ionic_strength_molar, rtol=1e-12)
    mid, _ = sp.start_along(nodes[:-1] + 0.5, nodes, res)
    assert np.all((mid >= np.minimum(res.log_h[:-1], res.log_h[1:]) - 0.05)
                  & (mid <= np.maximum(res.log_h[:-1], res.log_h[1:]) + 0.05))


def test_rows_of_a_batch_are_a_batch(catalog):
    batch = _curve(catalog, 30)
    res = sp.speciate_batch(batch, catalog=catalog)
    part = res.rows(slice(5, 12))
    assert len(part) == 7 and part.batch.totals.shape[0] == 7
    np.testing.assert_array_equal(part.pH, res.pH[5:12])
    np.testing.assert_array_equal(part.species_molar, res.species_molar[5:12])
    assert part.point(2).pH == res.point(7).pH
    assert part.warnings == res.warnings[5:12]
