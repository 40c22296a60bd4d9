"""The Davies model with its ion pairs against PHREEQC (phreeqpython, phreeqc.dat).

With ``activity="davies"`` a spectator Na+ or K+ with sulfate forms NaSO4- and KSO4-
(``data/ion_pairs.toml``: WATEQ4F's constants, which phreeqc.dat shares).  PHREEQC
(phreeqc.dat as shipped in phreeqpython 1.6.2, its WATEQ Debye–Hückel coefficients and
its own pairs) solves the same totals in mmol/kgw with the pH set by charge balance.
Measured here: pH within 0.019, ionic strength within 0.6 %, the pair within 4 %
(K2SO4 0.05 M: 9.01 against 8.66 mmol/L); the tolerances below are those plus a margin,
and the ionic strength's would fail without the pairs (Na2SO4 0.05 M: 0.150 without,
PHREEQC 0.1365).  Up to 0.05 M the difference between mol/L and mol/kgw is < 0.3 %.

Saturated calcium hydroxide: Bates, Bower & Smith, "Calcium hydroxide as a highly
alkaline pH standard", J. Res. Natl. Bur. Stand. 56, 305-312 (1956): pH 12.45 at 25 °C
(FOUND, the paper's abstract).  Ca2+ is a modelled metal: CaOH+ (phreeqc.dat, log *K
-12.78) and portlandite are solved with it under ``davies`` as under ``auto``.
"""

from __future__ import annotations

import pytest

from carboy.model.catalog import default_catalog
from carboy.model.mixture import Mixture
from carboy.model.speciation import speciate

phreeqpython = pytest.importorskip("phreeqpython")

CAT = default_catalog()
PH_TOL = 0.025
I_RTOL = 0.01
PAIR_RTOL = 0.06

# (id, carboy totals mol/L, PHREEQC totals mmol/kgw, the pair)
CASES = [
    ("Na2SO4 10 mM", {"Na+": 0.02, "sulfate": 0.01}, {"Na": 20, "S(6)": 10}, "NaSO4-"),
    ("Na2SO4 50 mM", {"Na+": 0.10, "sulfate": 0.05}, {"Na": 100, "S(6)": 50}, "NaSO4-"),
    ("K2SO4 50 mM", {"K+": 0.10, "sulfate": 0.05}, {"K": 100, "S(6)": 50}, "KSO4-"),
    ("NaHSO4 20 mM", {"Na+": 0.02, "sulfate": 0.02}, {"Na": 20, "S(6)": 20}, "NaSO4-"),
    ("H2SO4 10 mM in Na2SO4 50 mM", {"Na+": 0.10, "sulfate": 0.06},
     {"Na": 100, "S(6)": 60}, "NaSO4-"),
]


@pytest.fixture(scope="module")
def phreeqc_dat():
    return phreeqpython.PhreeqPython(database="phreeqc.dat")


@pytest.mark.parametrize("name, ours, theirs, pair", CASES, ids=[c[0] for c in CASES])
def test_sulfate_pairs_against_phreeqc_dat(phreeqc_dat, name, ours, theirs, pair):
    sol = phreeqc_dat.add_solution({"units": "mmol/kgw", "pH": "7 charge", "temp": 25.0,
                                    **theirs})
    ref_ph, ref_i, ref_pair = sol.pH, sol.I, sol.species[pair]
    sol.forget()
    res = speciate(Mixture(ours, 25.0), activity="davies", catalog=CAT)
    assert res.converged and res.activity == "davies" and res.ph_scale == "davies"
    assert res.pH == pytest.approx(ref_ph, abs=PH_TOL)
    assert res.ionic_strength_molar == pytest.approx(ref_i, rel=I_RTOL)
    assert res.species[pair] == pytest.approx(ref_pair, rel=PAIR_RTOL)


def test_saturated_calcium_hydroxide_under_davies():
    mix = Mixture.from_compounds([(CAT.compound("Ca(OH)2"), 0.03)], temperature_c=25.0)
    res = speciate(mix, activity="davies", catalog=CAT)   # excess solid: saturated
    assert res.solids["Ca(OH)2 (portlandite)"] > 0 and res.species["CaOH+"] > 0
    assert res.pH == pytest.approx(12.45, abs=0.03)    # see test_activity_models_reference
    assert res.pH == pytest.approx(speciate(mix, activity="auto", catalog=CAT).pH, abs=1e-9)
