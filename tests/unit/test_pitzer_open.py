"""Open systems (a held species, CO2(aq) at a gas's level) on the Pitzer model's own
paths: on floats for a few points (``pitzer_batch.few_outcome`` with an open table,
``pitzer_one.open_table``), on arrays for a batch (``pitzer_batch.batch_outcome``): the
same result as the outer loop (``solver.outer.solve_pitzer``), which solves them from
the Davies solution."""

from __future__ import annotations

import numpy as np
import pytest

from carboy.model import water
from carboy.model.catalog import default_catalog
from carboy.model.mixture import Mixture, titration_batch
from carboy.model.solver import pitzer_one
from carboy.model.solver.layout import cached_layout
from carboy.model.solver.outer import table_of
from carboy.model.speciation import speciate_batch

CAT = default_catalog()
SAT = 0.034       # CO2(aq) at 1 atm, mol/L (about K_H at 25 °C)
AIR = 1.4e-5      # CO2(aq) in equilibrium with air, mol/L


def _batch(components, reagent, amounts, l_per_mol=0.0):
    sample = Mixture.from_compounds([(CAT.compound(k), c) for k, c in components.items()],
                                    volume_l=1.0)
    batch, _ = titration_batch(sample, dict(CAT.compound(reagent).composition),
                               np.asarray(amounts, dtype=float), l_per_mol)
    return batch


def _outer_loop(monkeypatch):
    """Send open systems back to the outer loop (no open float table)."""
    monkeypatch.setattr(pitzer_one, "open_table", lambda ot, held: None)


CASES = [
    ({"HCl": 2.0, "NaCl": 1.0}, "Na2CO3", [0.3, 0.9, 1.2], SAT),        # I 1-4 mol/kg
    ({"CH3COOH": 3.0, "HCOOH": 0.5}, "Na2CO3", [0.5, 1.5, 1.8, 2.5], AIR),
    ({"H2SO4": 1.0}, "NaHCO3", [0.5, 1.5, 2.0], SAT),                     # bisulfate
    ({"HCl": 1.0, "CaCl2": 0.05}, "Na2CO3", [0.2, 0.6], AIR),             # calcium on the path
]


@pytest.mark.parametrize("components, reagent, amounts, co2", CASES)
def test_a_few_open_points_on_floats_give_the_outer_loops_result(components, reagent,
                                                                  amounts, co2, monkeypatch):
    batch = _batch(components, reagent, amounts)
    held = {"carbonate": ("CO2", co2)}
    few = speciate_batch(batch, activity="pitzer", catalog=CAT, held=held)
    _outer_loop(monkeypatch)
    ref = speciate_batch(batch, activity="pitzer", catalog=CAT, held=held)
    _same(few, ref)


@pytest.mark.parametrize("co2", [SAT, AIR])
def test_an_open_curve_on_arrays_gives_the_outer_loops_result(co2, monkeypatch):
    # 40 points: coarse to fine (pitzer_batch.WARM_MIN), through both equivalence points
    batch = _batch({"HCl": 1.0, "CH3COOH": 1.0, "NaCl": 0.5}, "Na2CO3",
                   np.linspace(0.0, 1.5, 40))
    held = {"carbonate": ("CO2", np.full(40, co2))}
    arrays = speciate_batch(batch, activity="pitzer", catalog=CAT, held=held)
    _outer_loop(monkeypatch)
    ref = speciate_batch(batch, activity="pitzer", catalog=CAT, held=held)
    _same(arrays, ref)


def test_a_start_only_saves_steps():
    batch = _batch({"HCl": 2.0, "NaCl": 1.0}, "Na2CO3", [0.3, 1.2])
    held = {"carbonate": ("CO2", SAT)}
    cold = speciate_batch(batch, activity="pitzer", catalog=CAT, held=held)
    warm = speciate_batch(batch, activity="pitzer", catalog=CAT, held=held,
                          start=(cold.log_h + 0.3, cold.ionic_strength_molar))
    assert warm.pH == pytest.approx(cold.pH, abs=1e-9)


def _same(got, ref):
    assert got.model_part.model == ref.model_part.model == "pitzer"
    assert got.converged.all() and ref.converged.all()
    assert got.pH == pytest.approx(ref.pH, abs=1e-8)
    k = ref.system_keys.index("carbonate")
    assert got.system_totals_molar[:, k] == pytest.approx(ref.system_totals_molar[:, k],
                                                          rel=1e-7)
    co2 = ref.species_labels.index("CO2")
    assert got.species_molar[:, co2] == pytest.approx(ref.species_molar[:, co2], rel=1e-12)
    assert got.species_labels == ref.species_labels
    assert got.species_molar == pytest.approx(ref.species_molar, rel=1e-6, abs=1e-14)
    assert got.model_part.water_activity == pytest.approx(ref.model_part.water_activity,
                                                          rel=1e-8)
    assert [set(w) for w in got.warnings] == [set(w) for w in ref.warnings]


def _tables(components, held):
    mix = Mixture.from_compounds([(CAT.compound(k), v) for k, v in components.items()],
                                 volume_l=1.0)
    keys, row = tuple(mix.totals), list(mix.totals.values())
    lay = cached_layout(CAT, keys, 25.0)
    ot = pitzer_one.compile_one(lay, table_of(lay, "pitzer", 25.0), water.pkw(25.0))
    places = tuple(held.get(k, -1) for k in lay.sys_keys)
    return ot, pitzer_one.open_table(ot, places), row


def test_the_compiled_open_step_equals_the_loops():
    ot, opened, row = _tables({"NaHCO3": 1.0, "CH3COOH": 0.5, "NaCl": 1.0}, {"carbonate": 0})
    assert opened.step is not None and opened.step is not ot.step
    loops = pitzer_one.OneTable(**{**opened.__dict__, "step": None})
    ions = [0.0] * ot.n
    for c, b in ot.ions:
        ions[c] += row[b]
    sys_tot = [row[b] for b, _ in ot.systems]
    rng = np.random.default_rng(5)
    for x in (-3.0, -6.3, -8.0, -10.5):
        lg = rng.uniform(-1.0, 0.5, ot.n).tolist()
        m, dm, g, dg = opened.step(x, lg, -0.03, ions, sys_tot)
        m_ref, dm_ref = pitzer_one._composition(loops, x, lg, -0.03, ions, sys_tot, True)
        assert m == pytest.approx(m_ref, rel=1e-14, abs=0.0)
        assert dm == pytest.approx(dm_ref, rel=1e-14, abs=0.0)
        assert (g, dg) == pytest.approx(pitzer_one._balance(loops, m_ref, dm_ref), rel=1e-13)


def test_an_open_system_that_forms_a_salt_is_left_to_the_outer_loop():
    # calcium with phosphate may form brushite: holding phosphate open takes no salt
    lay = cached_layout(CAT, ("Ca+2", "Cl-", "phosphate"), 25.0, metals=False)
    tab = table_of(lay, "pitzer", 25.0)
    from carboy.model.pitzer_metals import hydroxides, salts

    metal_lay = cached_layout(CAT, ("Ca+2", "Cl-", "phosphate"), 25.0)
    ot = pitzer_one.compile_one(lay, tab, water.pkw(25.0), hydroxides(metal_lay.metals),
                                salts(metal_lay.metals, CAT))
    assert ot.salts
    k = lay.sys_keys.index("phosphate")
    places = tuple(0 if i == k else -1 for i in range(len(lay.sys_keys)))
    assert pitzer_one.open_table(ot, places) is None
    assert pitzer_one.open_table(ot, (-1,) * len(lay.sys_keys)) is not None


@pytest.mark.parametrize("amounts", [[0.3, 0.9, 1.2], list(np.linspace(0.0, 1.5, 30))],
                         ids=["few", "batch"])
def test_started_coefficients_only_save_rounds(amounts):
    # a solved batch's own coefficients (speciation_models.pitzer_start): the same
    # result in fewer rounds; a start of the wrong shape is not taken
    from carboy.model.speciation_models import coefficients_of, start_coefficients

    batch = _batch({"HCl": 2.0, "NaCl": 1.0}, "Na2CO3", amounts)
    held = {"carbonate": ("CO2", SAT)}
    for kw in ({}, {"held": held}):
        cold = speciate_batch(batch, activity="pitzer", catalog=CAT, **kw)
        v0 = coefficients_of(cold)
        with start_coefficients(v0):
            warm = speciate_batch(batch, activity="pitzer", catalog=CAT, **kw)
        with start_coefficients(v0[1:]):
            wrong = speciate_batch(batch, activity="pitzer", catalog=CAT, **kw)
        assert warm.pH == pytest.approx(cold.pH, abs=1e-9)
        assert warm.species_molar == pytest.approx(cold.species_molar, rel=1e-8, abs=1e-15)
        assert warm.iterations < cold.iterations == wrong.iterations
        half = v0.copy()
        half[::2] = np.nan                      # NaN rows: those points start cold
        with start_coefficients(half):
            part = speciate_batch(batch, activity="pitzer", catalog=CAT, **kw)
        assert part.pH == pytest.approx(cold.pH, abs=1e-9)


def test_a_long_started_batch_moves_its_starts_as_its_coarse_points_moved(monkeypatch):
    # the plan's vented curve starts from the batch open to air (a nearby curve): every
    # WARM_STRIDE-th point is settled first, then the others from their own starts moved
    # as their neighbours' moved (pitzer_batch._warm_rounds): the same states
    from carboy.model.solver import pitzer_batch
    from carboy.model.speciation_models import coefficients_of, start_coefficients

    amounts = np.linspace(0.0, 1.5, 60)
    batch = _batch({"HCl": 2.0, "NaCl": 1.0}, "Na2CO3", amounts)
    near = _batch({"HCl": 2.0, "NaCl": 1.05}, "Na2CO3", amounts)
    v0 = coefficients_of(speciate_batch(near, activity="pitzer", catalog=CAT))
    cold = speciate_batch(batch, activity="pitzer", catalog=CAT)
    calls = []
    real = pitzer_batch._rounds

    def spy(bt, model, st, idx, *args):
        real(bt, model, st, idx, *args)
        calls.append((idx.size, int(st.rounds[idx].max())))

    monkeypatch.setattr(pitzer_batch, "_rounds", spy)
    with start_coefficients(v0):
        warm = speciate_batch(batch, activity="pitzer", catalog=CAT)
    assert warm.pH == pytest.approx(cold.pH, abs=1e-9)
    assert warm.species_molar == pytest.approx(cold.species_molar, rel=1e-8, abs=1e-15)
    coarse = len(range(0, 60, pitzer_batch.WARM_STRIDE)) + 1   # and the last
    assert [n for n, _ in calls] == [coarse, 60 - coarse]
    assert calls[1][1] < calls[0][1]    # the points between settle in fewer rounds


@pytest.mark.parametrize("held", [None, {"carbonate": ("CO2", SAT)}], ids=["closed", "open"])
def test_a_started_batchs_few_points_without_a_start_are_solved_on_floats(monkeypatch, held):
    # the plan's vented curve: every point but the sample's own starts from the state
    # open to air; the few without a start are solved one by one on floats, from their
    # nearest started point's coefficients (pitzer_batch._left_on_floats): same states
    from carboy.model.solver import pitzer_batch
    from carboy.model.speciation_models import coefficients_of, start_coefficients

    batch = _batch({"HCl": 2.0, "NaCl": 1.0}, "Na2CO3", np.linspace(0.0, 1.5, 40))
    kw = {} if held is None else {"held": held}
    cold = speciate_batch(batch, activity="pitzer", catalog=CAT, **kw)
    v0 = coefficients_of(cold)
    v0[[0, 17]] = np.nan
    alone = []
    real = pitzer_batch.solve_one_pitzer

    def spy(ot, scalar, row, *args):
        alone.append(row)
        return real(ot, scalar, row, *args)

    monkeypatch.setattr(pitzer_batch, "solve_one_pitzer", spy)
    with start_coefficients(v0):
        warm = speciate_batch(batch, activity="pitzer", catalog=CAT, **kw)
    assert alone == [batch.totals[0].tolist(), batch.totals[17].tolist()]
    assert warm.pH == pytest.approx(cold.pH, abs=1e-9)
    assert warm.species_molar == pytest.approx(cold.species_molar, rel=1e-8, abs=1e-15)
    assert warm.model_part.water_activity == pytest.approx(
        cold.model_part.water_activity, rel=1e-9)


def test_a_result_on_another_model_gives_no_coefficients():
    from carboy.model.speciation_models import coefficients_of

    batch = _batch({"HCl": 0.01}, "Na2CO3", [0.001, 0.004])
    assert coefficients_of(speciate_batch(batch, activity="davies", catalog=CAT)) is None


def test_an_open_solve_started_from_an_earlier_one_gives_the_same_states():
    # gas.TitrationModel starts an open solve from the largest one at the same CO2 level
    # (roots and, on the Pitzer model, coefficients straight between its amounts)
    from carboy.model import gas

    sample = Mixture.from_compounds([(CAT.compound("HCl"), 2.0), (CAT.compound("NaCl"), 1.0)],
                                    volume_l=1.0)
    comp = dict(CAT.compound("Na2CO3").composition)

    def model():
        return gas.TitrationModel(sample, comp, 0.0, activity="pitzer", catalog=CAT)

    warm, cold = model(), model()
    warm.forward(np.linspace(0.0, 1.5, 40), co2_molar=SAT)
    n = np.array([0.31, 0.97, 1.02, 1.49, 1.7])          # the last outside the grid
    assert warm._open_coefficients(SAT, n) is not None
    assert np.isnan(warm._open_coefficients(SAT, n)[-1]).all()
    got, ref = warm.forward(n, co2_molar=SAT), cold.forward(n, co2_molar=SAT)
    assert got.pH == pytest.approx(ref.pH, abs=1e-9)
    assert got.carbonate_molar() == pytest.approx(ref.carbonate_molar(), rel=1e-8)
    inside = warm.forward(n[:-1], co2_molar=SAT)         # the most rounds any point took
    assert inside.result.iterations < model().forward(n[:-1], co2_molar=SAT).result.iterations
