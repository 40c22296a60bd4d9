"""Properties of plans (hypothesis)."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from carboy.model.catalog import default_catalog
from carboy.model.ion_pairs import pairs_with
from carboy.model.mixture import Mixture
from carboy.model.planner import plan_neutralization
from carboy.model.reagents import parse_reagent

conc = st.floats(1e-3, 0.2)
acids = st.fixed_dictionaries({}, optional={"Cl-": conc, "sulfate": conc, "phosphate": conc,
                                            "acetate": conc, "citrate": conc})
NAOH = parse_reagent("NaOH=1M")


def sample(totals):
    totals = dict(totals) or {"Cl-": 0.01}
    totals.setdefault("Cl-", 0.005)
    return Mixture(totals, volume_l=0.5)


@settings(max_examples=25, deadline=None)
@given(acids, st.floats(4.0, 8.0), st.floats(0.2, 3.0))
def test_dose_rises_with_target(totals, t1, dt):
    m = sample(totals)
    a = plan_neutralization(m, NAOH, target_pH=t1, window=(3.0, 11.0), curve_points=50)
    b = plan_neutralization(m, NAOH, target_pH=min(t1 + dt, 11.0), window=(3.0, 11.0),
                            curve_points=50)
    assert b.to_target.reagent_mol >= a.to_target.reagent_mol


@settings(max_examples=25, deadline=None)
@given(acids)
def test_full_dose_not_below_dose_to_7(totals):
    p = plan_neutralization(sample(totals), NAOH, curve_points=50)
    # up to the few 1e-7 mol/L that move neutral water (pH pKw/2 = 6.998 at 25 °C) to pH 7
    assert p.full.reagent_mol >= p.to_target.reagent_mol - 1e-6 * p.sample.volume_l
    # the dose to the target, re-solved forward, lands on the target (the planner itself
    # warns beyond 1e-4 pH)
    assert p.to_target.pH == pytest.approx(7.0, abs=1e-4)
    assert not any("approximate" in w for w in p.warnings)


@settings(max_examples=15, deadline=None)
@given(acids)
def test_balances_on_the_curve(totals):
    cat = default_catalog()
    p = plan_neutralization(sample(totals), NAOH, curve_points=60)
    res, vol = p.curve_speciation, p.curve_volume_l
    batch = res.batch
    assert np.allclose(vol, 0.5 + p.curve[:, 0] / 1.0)
    for k, key in enumerate(res.system_keys):
        labels = res.system_labels[k]   # and the ion pairs that hold the system (NaSO4-)
        labels += tuple(lab for lab in pairs_with(labels) if lab in res.species_labels)
        cols = [res.species_labels.index(lab) for lab in labels]
        total = res.species_molar[:, cols].sum(axis=1)
        assert np.allclose(total, batch.totals[:, batch.keys.index(key)], rtol=1e-9, atol=1e-15)
    charge = res.species_molar @ np.asarray(res.species_charges, dtype=float)
    scale = res.species_molar @ np.abs(res.species_charges)
    assert np.all(np.abs(charge) <= 1e-8 * scale + 1e-14)
    # amounts (mol): every sample component stays what the 0.5 L sample held, however
    # diluted, and the sodium is what the reagent brought at each point of the curve
    for key, c in p.sample.totals.items():
        assert np.allclose(batch.totals[:, batch.keys.index(key)] * vol, c * 0.5,
                           rtol=1e-12, atol=0)
    na_per_mol = cat.compound("NaOH").composition["Na+"]
    assert np.allclose(batch.totals[:, batch.keys.index("Na+")] * vol,
                       p.curve[:, 0] * na_per_mol, rtol=1e-12, atol=0)
