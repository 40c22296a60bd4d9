"""Which path the solver takes, so that the path-agreement tests compare what they claim.

``test_speciation_paths.py`` sets ``speciation.COUPLED_ITER = 0`` to send every point to
the guaranteed (bracketed) path and compares with the fast paths; these tests check that
the setting does reroute every point, that one solution goes through the plain-Python
path and that a batch of several goes through the vectorized one.
"""

from __future__ import annotations

import numpy as np
import pytest
from same_result import assert_same_species

import carboy.model.speciation as sp
from carboy.model.mixture import Mixture, MixtureBatch
from carboy.model.solver import bracketed, coupled, single_pairs

CASES = [
    [("HCl", 0.01), ("H3PO4", 0.003), ("NH4Cl", 0.002), ("NaHCO3", 0.001), ("KCl", 0.005)],
    [("Na2HPO4", 0.05), ("NaH2PO4", 0.05)],
    [("C6H8O7", 0.02), ("NaOH", 0.03)],
    [("CH3COOH", 0.1)],
]


def mixtures(catalog):
    return [Mixture.from_compounds([(catalog.compound(n), c) for n, c in case])
            for case in CASES]


PATHS = {"solve_one": sp, "solve_warm": coupled, "solve_nested": bracketed,
         "solve_pairs_one": single_pairs}
"""Where each path's entry is looked up when it is called (speciation imports the batch
paths' modules inside the functions that take them)."""


def spy(monkeypatch, name):
    """Replace the path ``name`` by a wrapper recording each call's result."""
    module = PATHS[name]
    real = getattr(module, name)
    results = []

    def wrapper(*args, **kwargs):
        out = real(*args, **kwargs)
        results.append(out)
        return out

    monkeypatch.setattr(module, name, wrapper)
    return results


@pytest.mark.parametrize("activity", ["davies", "ideal"])
def test_fast_paths_settle_ordinary_solutions(catalog, monkeypatch, activity):
    mixes = mixtures(catalog)
    one, coupled, nested = (spy(monkeypatch, n) for n in
                            ("solve_one", "solve_warm", "solve_nested"))
    singles = [sp.speciate(m, activity=activity, catalog=catalog) for m in mixes]
    assert len(one) == len(mixes) and all(r is not None for r in one)
    assert not coupled and not nested
    res = sp.speciate_batch(MixtureBatch.of(mixes), activity=activity, catalog=catalog)
    assert len(one) == len(mixes)          # not taken for a batch of several
    assert len(coupled) == 1 and coupled[0][2].all()
    assert not nested
    for i, s in enumerate(singles):
        assert float(res.pH[i]) == pytest.approx(s.pH, abs=1e-9)


def test_zero_coupled_steps_send_every_point_to_the_guaranteed_path(catalog, monkeypatch):
    mixes = mixtures(catalog)
    nested = spy(monkeypatch, "solve_nested")
    monkeypatch.setattr(sp, "COUPLED_ITER", 0)
    for m in mixes:
        assert sp.speciate(m, catalog=catalog).converged
    res = sp.speciate_batch(MixtureBatch.of(mixes), catalog=catalog)
    assert res.converged.all()
    # one call per solution, then one for the whole batch, each solving every point given
    assert [len(x) for x, _, _, _ in nested] == [1] * len(mixes) + [len(mixes)]


def test_davies_takes_the_pairs_only_where_they_form(catalog, monkeypatch):
    from carboy.model.speciation_models import davies_pairs, needs_route

    calls = spy(monkeypatch, "solve_pairs_one")
    plain = sp.speciate(Mixture({"Na+": 0.1, "Cl-": 0.1}), catalog=catalog)
    assert not calls and "NaSO4-" not in plain.species   # no sulfate: charge-only path
    for keys in (("Na+", "Cl-"), ("sulfate", "Cl-"), ("Ca+2", "Na+", "sulfate")):
        lay = sp.cached_layout(catalog, keys, 25.0)
        assert not davies_pairs(lay, 25.0) and not needs_route(lay, "davies", 25.0)
    mix = Mixture({"Na+": 0.1, "sulfate": 0.05})
    res = sp.speciate(mix, catalog=catalog)
    assert len(calls) == 1 and res.species["NaSO4-"] > 0
    assert res.species["Na+"] + res.species["NaSO4-"] == pytest.approx(0.1, rel=1e-12)
    assert res.species["HSO4-"] + res.species["SO4-2"] + res.species["NaSO4-"] == \
        pytest.approx(0.05, rel=1e-12)
    auto = sp.speciate(mix, activity="auto", catalog=catalog)
    assert res.pH == pytest.approx(auto.pH, abs=1e-9)   # (auto: the vectorized loop)
    assert res.activity == "davies" and res.model_part is None
    ideal = sp.speciate(mix, activity="ideal", catalog=catalog)
    assert "NaSO4-" not in ideal.species   # ideal stays charge-only


PAIR_CASES = [
    {"Na+": 0.1, "sulfate": 0.05},                          # one pair, closed form
    {"Na+": 0.1, "K+": 0.05, "sulfate": 0.08},              # two pairs share SO4-2
    {"Na+": 0.02, "sulfate": 0.06, "Cl-": 0.01},            # acid: HSO4- takes most
    {"K+": 0.3, "sulfate": 0.05, "carbonate": 0.02, "phosphate": 0.01},   # alkaline
    {"Na+": 0.9, "sulfate": 0.4},                           # beyond the Davies range
]


@pytest.mark.parametrize("totals", PAIR_CASES)
@pytest.mark.parametrize("temperature_c", [25.0, 85.0])
def test_pairs_in_plain_python_agree_with_the_vectorized_outer_loop(catalog, monkeypatch,
                                                                    totals, temperature_c):
    mix = Mixture(totals, temperature_c=temperature_c)
    calls = spy(monkeypatch, "solve_pairs_one")
    one = sp.speciate(mix, catalog=catalog)
    assert calls and calls[0] is not None and calls[0].converged   # the plain path took it
    ref = sp.speciate_batch(MixtureBatch.of([mix]), catalog=catalog).point(0)
    assert_same_species(one, ref)
    for key, fr in ref.fractions.items():
        assert one.fractions[key] == pytest.approx(dict(fr), rel=1e-7, abs=1e-300)
    assert one.pkw == ref.pkw


def test_the_pairs_outer_loop_agrees_with_its_guaranteed_inner_solve(catalog, monkeypatch):
    import carboy.model.solver.outer as outer
    from carboy.model.mixture import titration_batch

    sample = Mixture({"sulfate": 0.05, "K+": 0.02, "phosphate": 0.01, "Cl-": 0.03},
                     volume_l=1.0)
    batch, _ = titration_batch(sample, {"Na+": 1.0}, [0.0, 0.03, 0.08, 0.12, 0.2], 0.0)
    monkeypatch.setattr(outer, "PYTHON_PAIRS_MAX", 0)   # the vectorized loop, not single_pairs
    fast = sp.speciate_batch(batch, catalog=catalog)
    monkeypatch.setattr(outer, "COUPLED_ITER", 0)   # every round's inner solve: solve_nested
    monkeypatch.setattr(sp, "COUPLED_ITER", 0)
    sure = sp.speciate_batch(batch, catalog=catalog)
    assert "NaSO4-" in fast.species_labels and "KSO4-" in fast.species_labels
    assert fast.converged.all() and sure.converged.all()
    assert abs(fast.pH - sure.pH).max() <= 1e-9
    assert abs(fast.species_molar - sure.species_molar).max() <= 1e-12


def test_a_few_points_with_pairs_take_the_plain_python_loop_and_agree(catalog, monkeypatch):
    """A batch of a few points (``outer.PYTHON_PAIRS_MAX``) takes ``single_pairs`` point by
    point: the same states as the vectorized outer loop, to its tolerance."""
    import carboy.model.solver.outer as outer
    from carboy.model.mixture import titration_batch

    sample = Mixture({"sulfate": 0.05, "K+": 0.02, "phosphate": 0.01, "Cl-": 0.03},
                     volume_l=1.0)
    batch, _ = titration_batch(sample, {"Na+": 1.0}, [0.0, 0.03, 0.08, 0.12, 0.2], 0.0)
    calls = spy(monkeypatch, "solve_pairs_one")
    few = sp.speciate_batch(batch, catalog=catalog)
    assert len(calls) == 5 and all(c is not None and c.converged for c in calls)
    monkeypatch.setattr(outer, "PYTHON_PAIRS_MAX", 0)
    ref = sp.speciate_batch(batch, catalog=catalog)
    assert few.converged.all() and few.species_labels == ref.species_labels
    assert abs(few.pH - ref.pH).max() <= 1e-9
    assert few.species_molar == pytest.approx(ref.species_molar, rel=1e-9, abs=1e-15)
    assert few.fractions == pytest.approx(ref.fractions, rel=1e-9, abs=1e-15)
    assert np.array_equal(few.system_totals_molar, ref.system_totals_molar)


def test_pairs_warnings_point_by_point(catalog):
    # Na2SO4 from 0.05 to 0.4 M: the ionic strength crosses the Davies range on the way
    c = [0.05, 0.1, 0.2, 0.3, 0.4]
    batch = MixtureBatch(("Na+", "sulfate"), [[2 * v, v] for v in c], 25.0)
    res = sp.speciate_batch(batch, catalog=catalog)
    high = [i > sp.DAVIES_LIMIT_MOLAR for i in res.ionic_strength_molar]
    assert any(high) and not all(high)
    for n, v in enumerate(c):
        one = sp.speciate(Mixture({"Na+": 2 * v, "sulfate": v}), catalog=catalog)
        assert res.warnings[n] == one.warnings
        assert any("outside" in w for w in one.warnings) == high[n]


@pytest.mark.parametrize("few", [False, True])
def test_pairs_rounds_of_one_newton_step_settle_where_full_solves_do(catalog, monkeypatch,
                                                                     few):
    """The pairs' outer loops take one Newton step a round (``LAGGED_ROUNDS``): the states
    they settle on are those of rounds that solve the inner problem in full, on the
    vectorized loop and on the plain-Python one (``few``)."""
    import carboy.model.solver.outer as outer
    import carboy.model.solver.single_pairs as single_pairs
    from carboy.model.mixture import titration_batch

    sample = Mixture({"sulfate": 0.08, "K+": 0.03, "phosphate": 0.01, "Cl-": 0.2,
                      "NO3-": 0.05}, volume_l=1.0)
    n = [0.0, 0.05, 0.1, 0.2, 0.25, 0.3] if few else list(np.linspace(0.0, 0.4, 60))
    batch, _ = titration_batch(sample, {"Na+": 1.0}, n, 0.0)
    if not few:
        monkeypatch.setattr(outer, "PYTHON_PAIRS_MAX", 0)
    lagged = sp.speciate_batch(batch, catalog=catalog)
    monkeypatch.setattr(outer, "LAGGED_ROUNDS", 0)
    monkeypatch.setattr(single_pairs, "LAGGED_ROUNDS", 0)
    full = sp.speciate_batch(batch, catalog=catalog)
    assert "NaSO4-" in lagged.species_labels
    assert lagged.converged.all() and full.converged.all()
    assert abs(lagged.pH - full.pH).max() <= 1e-9
    assert lagged.species_molar == pytest.approx(full.species_molar, rel=1e-8, abs=1e-14)




RESULT_FIELDS = ("pH", "log_h", "ionic_strength_molar", "charge_residual_molar", "converged",
                 "species_molar", "fractions", "log_gamma_by_charge", "system_totals_molar")


@pytest.mark.parametrize("points", [1, 3, 40])
@pytest.mark.parametrize(("acid", "salt", "activity"), [
    (0.01, 0.02, "davies"), (0.01, 0.02, "auto"),   # Davies with NaSO4-
    (0.5, 1.0, "auto"),                             # auto's Pitzer branch
])
def test_pairs_start_from_the_charge_only_root_alone(catalog, monkeypatch, points, acid,
                                                     salt, activity):
    """Where ion pairs form, the charge-only solve the route starts from is asked for its
    root only (no species): its root, ionic strength, convergence and warnings are the
    full result's, and the answer is the one from the full result, bit for bit."""
    from carboy.model.mixture import titration_batch

    mix = Mixture.from_compounds([(catalog.compound("H2SO4"), acid),
                                  (catalog.compound("Na2SO4"), salt)], volume_l=1.0)
    batch, _ = titration_batch(mix, {"Na+": 1.0}, np.linspace(0.0, 2.0 * acid, points), 0.0)
    real = sp._solve
    asked = []

    def checked(*args, root_only=False, **kwargs):
        out = real(*args, root_only=root_only, **kwargs)
        asked.append(root_only)
        if root_only:
            full = real(*args, **kwargs)
            for name in ("pH", "log_h", "ionic_strength_molar", "converged"):
                np.testing.assert_array_equal(getattr(out, name), getattr(full, name))
            assert out.warnings == full.warnings and out.iterations == full.iterations
            assert out.species_molar.shape == (len(out), 0)
        return out

    monkeypatch.setattr(sp, "_solve", checked)
    got = sp.speciate_batch(batch, activity=activity, catalog=catalog)
    assert True in asked
    monkeypatch.setattr(sp, "_solve", lambda *a, root_only=False, **k: real(*a, **k))
    want = sp.speciate_batch(batch, activity=activity, catalog=catalog)
    assert got.species_labels == want.species_labels and got.warnings == want.warnings
    for name in RESULT_FIELDS:
        np.testing.assert_array_equal(getattr(got, name), getattr(want, name), name)
    if acid < 0.1:
        assert "NaSO4-" in got.species_labels
