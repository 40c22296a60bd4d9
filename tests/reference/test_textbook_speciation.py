"""Solution pH against textbook worked examples and handbook-derived exact values.

Textbook answers use rounded constants and approximations, so each check names its
source and uses a tolerance that fits the published digits.  The DERIVED rows of
shared/reference-data.md §8 were computed there by an independent exact solve with
the same pKa values (ideal solution, pKw 13.995): they check our arithmetic, not the
chemistry, and are held to 0.003 pH (our pKw at 25 °C is 13.9945).
"""

from __future__ import annotations

import dataclasses
from types import SimpleNamespace

import numpy as np
import pytest

from carboy.model.entities import System
from carboy.model.mixture import Mixture
from carboy.model.speciation import pka_at, speciate


def ph_of(catalog, components, *, activity="ideal", temperature_c=25.0, cat=None):
    cat = cat or catalog
    mix = Mixture.from_compounds(
        [(cat_compound(catalog, name), c) for name, c in components], temperature_c=temperature_c
    )
    return speciate(mix, activity=activity, catalog=cat)


def cat_compound(catalog, name):
    return catalog.compound(name)


def custom_catalog(catalog, *systems):
    return SimpleNamespace(systems={**catalog.systems, **{s.key: s for s in systems}},
                           ions=catalog.ions)


def test_diprotic_h2s_openstax_example(catalog):
    # OpenStax Chemistry 2e §14.5 "Polyprotic Acids", worked example: ~0.1 M H2S,
    # Ka1 = 8.9e-8, Ka2 = 1.0e-19 -> [H3O+] = [HS-] = 9.4e-5 M, pH 4.03 (numbers FOUND in a
    # worked solution; example number from memory).  Exact solve (reference-data §8): 4.026.
    h2s = System("sulfide_test", "hydrogen sulfide", ("H2S", "HS-", "S-2"), 0,
                 (-np.log10(8.9e-8), 19.0), (0.0, 0.0), (0.0, 0.0))
    cat = custom_catalog(catalog, h2s)
    res = speciate(Mixture({"sulfide_test": 0.1}), activity="ideal", catalog=cat)
    assert res.pH == pytest.approx(4.03, abs=0.01)
    assert res.species["HS-"] == pytest.approx(9.4e-5, rel=0.01)
    # [S2-] ~ Ka2 = 1e-19 M
    assert res.species["S-2"] == pytest.approx(1.0e-19, rel=0.02)


def test_diprotic_h2s_0_05_molar_openstax_exercise(catalog):
    # OpenStax Chemistry (1st ed.) ch. 14 exercise 82: 0.050 M H2S -> [H+] = [HS-] = 6.7e-5 M
    # (FOUND); exact solve 6.666e-5 (reference-data §8).
    h2s = System("sulfide_test", "hydrogen sulfide", ("H2S", "HS-", "S-2"), 0,
                 (-np.log10(8.9e-8), 19.0), (0.0, 0.0), (0.0, 0.0))
    res = speciate(Mixture({"sulfide_test": 0.05}), activity="ideal",
                   catalog=custom_catalog(catalog, h2s))
    assert res.h_molar == pytest.approx(6.7e-5, rel=0.01)


def test_sulfuric_acid_common_practice_example(catalog):
    # Common practice example (general-chemistry teaching): 0.10 M H2SO4 with Ka2 = 1.2e-2
    # has pH about 0.96 (first step complete, second solved as a quadratic).
    sulfate = catalog.systems["sulfate"]
    pk = list(sulfate.pka25)
    pk[-1] = -np.log10(1.2e-2)
    alt = dataclasses.replace(sulfate, key="sulfate_ka_1_2e-2", pka25=tuple(pk))
    res = speciate(Mixture({alt.key: 0.10}), activity="ideal",
                   catalog=custom_catalog(catalog, alt))
    assert res.pH == pytest.approx(0.96, abs=0.005)


def test_sodium_carbonate_skoog_example(catalog):
    # Skoog, West, Holler & Crouch, Fundamentals of Analytical Chemistry 9th ed., example
    # "pH of a 0.1000 M Na2CO3 solution": pH 11.66 (MEMORY; Kb1 = 2.13e-4 FOUND).  The book
    # neglects the second hydrolysis and uses Kw = 1.00e-14; exact solve 11.652.
    assert ph_of(catalog, [("Na2CO3", 0.1)]).pH == pytest.approx(11.66, abs=0.01)


def test_sodium_bicarbonate_intermediate_form(catalog):
    # Intermediate form of a diprotic acid: pH ~ (pK1 + pK2)/2 = 8.34 (Harris, Quantitative
    # Chemical Analysis, ch. 10; MEMORY).  Exact solve 8.340 (reference-data §8).
    assert ph_of(catalog, [("NaHCO3", 0.1)]).pH == pytest.approx(8.34, abs=0.01)


def test_sodium_dihydrogen_phosphate(catalog):
    # 0.1 M NaH2PO4: (2.15 + 7.20)/2 = 4.675 by the textbook formula (FOUND, reference-data
    # §8); the exact value 4.688 (DERIVED with pKa 2.148/7.198/12.35).
    res = ph_of(catalog, [("NaH2PO4", 0.1)])
    assert res.pH == pytest.approx(4.675, abs=0.02)


def test_ammonium_chloride(catalog):
    # Weak acid salt: 0.10 M NH4Cl, pH 5.12 (DERIVED exact with pKa 9.245, Harris App. G).
    assert ph_of(catalog, [("NH4Cl", 0.1)]).pH == pytest.approx(5.122, abs=0.003)


def test_sodium_acetate_weak_acid_salt(catalog):
    # 0.10 M sodium acetate: pOH = (pKb - log C)/2 with pKb = 13.995 - 4.756 = 9.239 gives
    # pH 8.88 (textbook weak-base formula, Harris App. G constants; MEMORY for the example).
    assert ph_of(catalog, [("CH3COONa", 0.1)]).pH == pytest.approx(8.88, abs=0.01)


@pytest.mark.parametrize(
    "components, expected",
    [
        ([("CH3COOH", 0.10)], 2.881),
        ([("H2SO4", 0.0100)], 1.848),
        ([("H2SO4", 0.100)], 0.964),
        ([("H3PO4", 0.100)], 1.632),
        ([("Na2HPO4", 0.1)], 9.729),
        ([("Na3PO4", 0.1)], 12.570),
    ],
)
def test_derived_exact_values(catalog, components, expected):
    # shared/reference-data.md §8 "Other DERIVED exact values" (arithmetic check)
    assert ph_of(catalog, components).pH == pytest.approx(expected, abs=0.003)


@pytest.mark.parametrize(
    "naoh_ml, expected",
    [(0, 1.632), (12.5, 1.953), (25, 2.284), (37.5, 2.708), (50, 4.702), (75, 7.198),
     (100, 9.661), (125, 11.859), (150, 12.172)],
)
def test_phosphoric_acid_titration_table(catalog, naoh_ml, expected):
    # 50.00 mL 0.1000 M H3PO4 titrated with 0.1000 M NaOH, ideal solution
    # (DERIVED table, reference-data §8, pKa 2.148/7.198/12.35).
    v = 0.050 + naoh_ml / 1000
    comps = [("H3PO4", 0.005 / v)]
    if naoh_ml:
        comps.append(("NaOH", 0.1 * naoh_ml / 1000 / v))
    assert ph_of(catalog, comps).pH == pytest.approx(expected, abs=0.004)


def test_half_equivalence_of_second_step_is_pka2(catalog):
    # Textbook rule: at the second half-equivalence point of H3PO4, pH = pKa2 (holds well
    # for the middle step only; reference-data §8 note).
    v = 0.125
    res = ph_of(catalog, [("H3PO4", 0.005 / v), ("NaOH", 0.0075 / v)])
    assert res.pH == pytest.approx(catalog.systems["phosphate"].pka25[1], abs=0.01)


def test_concentrated_acid_below_ph_zero(catalog):
    res = ph_of(catalog, [("HCl", 2.0)])
    assert res.pH < 0
    assert res.converged
    assert any("0.5 M" in w for w in res.warnings)


def test_strong_base_above_ph_14(catalog):
    res = ph_of(catalog, [("NaOH", 2.0)])
    assert res.pH > 14
    assert res.converged


# Temperature: van 't Hoff with ΔH and ΔCp (Goldberg, Kishore & Lennen 2002, values from
# memory); the pK(T) table in shared/reference-data.md appendix is DERIVED with them.  The
# appendix's acetate rows used ΔH +0.41 kJ/mol, the wrong sign; the acetate rows here are
# DERIVED with -0.41 (they agree with Harned & Ehlers 1933 within 0.003, see
# test_ionization_enthalpies.py).
@pytest.mark.parametrize(
    "system, t_c, step, expected",
    [("ammonium", 0, 0, 10.076), ("ammonium", 37, 0, 8.893), ("ammonium", 50, 0, 8.540),
     ("acetate", 0, 0, 4.779), ("acetate", 50, 0, 4.785),
     ("phosphate", 0, 1, 7.303), ("phosphate", 50, 1, 7.187),
     ("carbonate", 10, 0, 6.462), ("carbonate", 50, 1, 10.171), ("tris", 37, 0, 7.753)],
)
def test_pka_temperature_correction(catalog, system, t_c, step, expected):
    assert pka_at(catalog.systems[system], t_c)[step] == pytest.approx(expected, abs=0.003)


def test_pure_water_is_neutral_at_every_temperature(catalog):
    from carboy.model import water

    for t in (0, 25, 60, 100):
        res = speciate(Mixture({}, temperature_c=t), activity="ideal", catalog=catalog)
        assert res.pH == pytest.approx(water.pkw(t) / 2, abs=1e-9)
