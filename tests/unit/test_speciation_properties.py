"""Properties of the speciation solver, checked with hypothesis."""

from __future__ import annotations

import numpy as np
from hypothesis import example, given, settings
from hypothesis import strategies as st

from carboy.model.catalog import default_catalog
from carboy.model.ion_pairs import pairs_with
from carboy.model.metals import metal, metal_data
from carboy.model.mixture import Mixture, MixtureBatch, titration_batch
from carboy.model.speciation import speciate, speciate_batch

CAT = default_catalog()
NAMES = ["HCl", "H2SO4", "H3PO4", "NaH2PO4", "Na2HPO4", "NaOH", "KOH", "Na2CO3", "NaHCO3",
         "NH4Cl", "NH3", "CH3COOH", "CH3COONa", "HF", "H3BO3", "C6H8O7", "KHP", "Tris",
         "NaCl", "Na2SO4", "H2C2O4", "Ca(OH)2"]
conc = st.floats(min_value=1e-6, max_value=0.3, allow_nan=False)
components = st.lists(st.tuples(st.sampled_from(NAMES), conc), min_size=1, max_size=6)
activity = st.sampled_from(["davies", "ideal"])
temps = st.floats(min_value=0.0, max_value=100.0)


def make(comps, t=25.0):
    return Mixture.from_compounds([(CAT.compound(n), c) for n, c in comps], temperature_c=t)


@settings(max_examples=150, deadline=None)
@given(components, activity, temps)
def test_charge_balance_and_mass_balances_close(comps, act, t):
    mix = make(comps, t)
    res = speciate(mix, activity=act, catalog=CAT)
    assert res.converged
    total_charge_scale = sum(abs(v) for v in res.species.values())
    assert abs(res.charge_residual_molar) <= 1e-10 * max(total_charge_scale, 1e-7)
    for key, fr in res.fractions.items():
        assert abs(sum(fr.values()) - 1.0) < 1e-12
        total = sum(res.species[lab] for lab in fr) + _held_in_salts(res, key)
        total += sum(res.species.get(lab, 0.0) for lab in pairs_with(fr))   # NaSO4- ...
        assert np.isclose(total, mix.totals[key], rtol=1e-10, atol=0)
    for key, dissolved in res.dissolved_metals.items():  # metals: dissolved + in solids
        held = sum(res.solids.get(s.name, 0.0) * s.cation_count for s in SALTS
                   if s.cation == key)
        held += res.solids.get(metal(key).solid.name, 0.0)
        assert np.isclose(dissolved + held, mix.totals[key], rtol=1e-9, atol=1e-300)


SALTS = metal_data().ligand_solids


def _held_in_salts(res, system: str) -> float:
    """mol/L of ``system`` in the salts a metal formed with it (gypsum, fluorite...)."""
    return sum(res.solids.get(s.name, 0.0) * s.ligand_count for s in SALTS
               if s.ligand_system == system)


@settings(max_examples=60, deadline=None)
@given(components, activity)
def test_ph_rises_monotonically_with_strong_base(comps, act):
    sample = Mixture(make(comps).totals, volume_l=0.1)
    n = np.linspace(0.0, 0.2, 60)
    # solid base: the sodium total rises at every step, whatever the sample holds
    batch, _ = titration_batch(sample, {"Na+": 1.0}, n, reagent_l_per_mol=0.0)
    ph = speciate_batch(batch, activity=act, catalog=CAT).pH
    assert np.all(np.diff(ph) > 0)


@settings(max_examples=60, deadline=None)
@given(components, st.randoms(use_true_random=False))
def test_order_of_components_changes_nothing(comps, rnd):
    shuffled = list(comps)
    rnd.shuffle(shuffled)
    a = speciate(make(comps), catalog=CAT)
    b = speciate(make(shuffled), catalog=CAT)
    assert abs(a.pH - b.pH) < 1e-9


@settings(max_examples=40, deadline=None)
@given(st.lists(components, min_size=1, max_size=8), activity)
# nearly unbuffered at pH 6.1 with 0.25 M of a ligand CaSO4° takes from: the batch's
# free-ligand search once stopped 2e-12 (relative) off the sulfate balance, 5e-8 pH
@example(many=[[("HCl", 1e-05), ("Na2SO4", 0.25), ("Ca(OH)2", 1e-06)]], act="davies")
def test_batch_equals_one_by_one(many, act):
    mixes = [make(c) for c in many]
    batch = MixtureBatch.of(mixes)
    res = speciate_batch(batch, activity=act, catalog=CAT)
    for i, m in enumerate(mixes):
        # each point alone with the batch's keys (the model depends on the keys: a
        # layout with metals forms no ion pairs), and the one-solution path on its own
        alone = MixtureBatch(batch.keys, batch.totals[i:i + 1], batch.temperature_c)
        assert abs(res.pH[i] - speciate_batch(alone, activity=act, catalog=CAT).pH[0]) < 1e-9
        own = speciate_batch(MixtureBatch.of([m]), activity=act, catalog=CAT).pH[0]
        assert abs(own - speciate(m, activity=act, catalog=CAT).pH) < 1e-9
