"""Activity coefficients against published tables where the Davies equation applies."""

from __future__ import annotations

import math

import numpy as np
import pytest

from carboy.model import water
from carboy.model.mixture import Mixture
from carboy.model.speciation import _davies_d, speciate

# Mean activity coefficient of HCl at 25 °C, molal (CRC "Mean activity coefficients of
# electrolytes", after Hamer & Wu, J. Phys. Chem. Ref. Data 1, 1047 (1972); row values from
# MEMORY, reference-data §5).  Davies is within ~2 % for 1:1 electrolytes up to 0.1 m
# (FOUND, reference-data §5), so the tolerance is 2.5 %.
HCL_MEAN_GAMMA = [(0.001, 0.965), (0.005, 0.929), (0.01, 0.905), (0.05, 0.830), (0.1, 0.796)]


@pytest.mark.parametrize("m, gamma", HCL_MEAN_GAMMA)
def test_davies_mean_gamma_of_hcl(catalog, m, gamma):
    res = speciate(Mixture.from_compounds([(catalog.compound("HCl"), m)]), catalog=catalog)
    g = (res.activity_coefficients["H+"] * res.activity_coefficients["Cl-"]) ** 0.5
    assert g == pytest.approx(gamma, rel=0.025)


# Kielland (1937) single-ion coefficients as reproduced in Harris QCA Table 8-1 (MEMORY,
# reference-data §5): z = 1 (K+, Cl-, 300 pm), z = 2 (SO4 2-, 400 pm), z = 3 (PO4 3-).
# Davies has no ion-size term, so agreement is looser than for the mean coefficient:
# 3 % for z = 1, 8 % for z = 2 and 15 % for z = 3 at I <= 0.05.
KIELLAND = [
    (0.001, 1, 0.964, 0.03), (0.01, 1, 0.899, 0.03), (0.05, 1, 0.805, 0.03),
    (0.001, 2, 0.867, 0.08), (0.01, 2, 0.660, 0.08), (0.05, 2, 0.44, 0.08),
    (0.001, 3, 0.725, 0.15), (0.01, 3, 0.395, 0.15),
]


@pytest.mark.parametrize("ionic, z, gamma, rel", KIELLAND)
def test_davies_single_ion_against_kielland(catalog, ionic, z, gamma, rel):
    # a KCl solution of the given ionic strength, and the coefficient by charge
    res = speciate(Mixture.from_compounds([(catalog.compound("KCl"), ionic)]), catalog=catalog)
    assert res.ionic_strength_molar == pytest.approx(ionic, rel=1e-3)
    log_g = -water.debye_huckel_a(25.0) * z * z * _davies_d(np.array(res.ionic_strength_molar))
    assert 10 ** float(log_g) == pytest.approx(gamma, rel=rel)
    if z == 1:
        assert res.activity_coefficients["K+"] == pytest.approx(gamma, rel=rel)


def test_ideal_mode_has_unit_coefficients(catalog):
    res = speciate(Mixture.from_compounds([(catalog.compound("Na2SO4"), 0.05)]),
                   activity="ideal", catalog=catalog)
    assert set(res.activity_coefficients.values()) == {1.0}
    assert res.pH == pytest.approx(-math.log10(res.h_molar))


def test_ionic_strength_is_self_consistent(catalog):
    # Na2SO4 0.05 M: I = 0.5 (0.1 * 1 + 0.05 * 4) = 0.15 (plus a trace of HSO4-) less
    # what the NaSO4- pair takes: 0.5 [NaSO4-] (1 + 4 - 1) = 2 [NaSO4-]
    res = speciate(Mixture.from_compounds([(catalog.compound("Na2SO4"), 0.05)]), catalog=catalog)
    pair = res.species["NaSO4-"]
    assert 0.005 < pair < 0.01   # about 7 mmol/L (PHREEQC phreeqc.dat: 6.8, measured)
    assert res.ionic_strength_molar == pytest.approx(0.15 - 2.0 * pair, rel=1e-4)
    z = {"H+": 1, "OH-": -1, "Na+": 1, "HSO4-": -1, "SO4-2": -2, "NaSO4-": -1}
    assert set(res.species) == set(z)
    assert res.ionic_strength_molar == pytest.approx(
        0.5 * sum(c * z[lab] ** 2 for lab, c in res.species.items()), rel=1e-9)
    assert res.converged


def test_warning_above_davies_range(catalog):
    res = speciate(Mixture.from_compounds([(catalog.compound("NaCl"), 0.6)]), catalog=catalog)
    assert any("outside the validity" in w for w in res.warnings)
    res = speciate(Mixture.from_compounds([(catalog.compound("NaCl"), 0.4)]), catalog=catalog)
    assert res.warnings == ()
