"""The metals' sulfate complexes (CaSO4°, MgSO4° ...) on the Davies path, against
PHREEQC (phreeqpython 1.6.2, phreeqc.dat) and the handbook solubility of gypsum.

carboy takes log K of CaSO4° (2.25) and MgSO4° (2.37) and gypsum's log Ksp (-4.58) from
phreeqc.dat itself (``ion_pairs.toml``, ``planning.toml``): these comparisons check the
arithmetic and the activity model (Davies here; phreeqc.dat's WATEQ Debye–Hückel with
its ion sizes there), not the data.  Gypsum-saturated water is also checked against the
CRC Handbook's solubility of CaSO4 at 25 °C, 0.205 g per 100 g of solution (the
``[[solubility]]`` table of planning.toml, from memory): 2.054 g/kg of water / 136.14
g/mol = 15.09 mmol/kg, DERIVED.  Without the complex carboy gave 12.3 mM (log Ksp
-4.503, CRC from memory), and 0.01 M MgSO4 an ionic strength of 0.040 (PHREEQC 0.0271).
Up to 0.05 M the difference between mol/L and mol/kgw is below 0.3 %.

Measured when written (carboy / PHREEQC): gypsum water total Ca 15.54 / 15.09 mmol
(Davies's coefficients at I 0.043 are a little lower than WATEQ's), pH 7.068 / 7.064,
CaSO4° 4.68 / 4.63 mmol; MgSO4 0.01 M: I 0.0275 / 0.0271, pH 6.88 / 6.87, MgSO4° 3.13 /
3.23 mmol; CaCl2 + Na2SO4 10 mM each: CaSO4° 2.20 / 2.21 mmol, I 0.0512 / 0.0505
(PHREEQC also forms NaSO4-, 0.34 mmol, which the metal path does not).
"""

from __future__ import annotations

import pytest

from carboy.model.catalog import default_catalog
from carboy.model.mixture import Mixture
from carboy.model.speciation import speciate

phreeqpython = pytest.importorskip("phreeqpython")

CAT = default_catalog()
GYPSUM_CRC_MMOL_KG = 15.09   # CRC, 0.205 % at 25 °C (from memory), DERIVED as above


@pytest.fixture(scope="module")
def phreeqc_dat():
    return phreeqpython.PhreeqPython(database="phreeqc.dat")


def _phreeqc(pp, totals, equilibrate_gypsum=False):
    sol = pp.add_solution({"units": "mmol/kgw", "pH": "7 charge", "temp": 25.0, **totals})
    if equilibrate_gypsum:
        sol.saturate("Gypsum", 0.0)
    out = {"pH": sol.pH, "I": sol.I, "Ca": sol.total_element("Ca", "mmol"),
           "species": dict(sol.species)}   # mol/kgw
    sol.forget()
    return out


def test_gypsum_saturated_water(phreeqc_dat):
    ref = _phreeqc(phreeqc_dat, {}, equilibrate_gypsum=True)
    assert ref["Ca"] == pytest.approx(GYPSUM_CRC_MMOL_KG, rel=0.01)
    # 0.1 mol/L of CaSO4 offered: gypsum settles, the rest stays dissolved
    res = speciate(Mixture({"Ca+2": 0.1, "sulfate": 0.1}, 25.0), activity="davies",
                   catalog=CAT)
    assert res.solids["CaSO4·2H2O (gypsum)"] > 0
    dissolved_mmol = 1e3 * res.dissolved_metals["Ca+2"]
    assert dissolved_mmol == pytest.approx(ref["Ca"], rel=0.04)
    assert dissolved_mmol == pytest.approx(GYPSUM_CRC_MMOL_KG, rel=0.04)
    assert res.pH == pytest.approx(ref["pH"], abs=0.02)
    assert res.species["CaSO4"] == pytest.approx(ref["species"]["CaSO4"], rel=0.02)
    # the complex is K Ksp (activity 1 for a neutral species): 10**(2.25 - 4.58) M
    assert res.species["CaSO4"] == pytest.approx(10 ** -2.33, rel=1e-6)


def test_magnesium_sulfate_10_mm(phreeqc_dat):
    ref = _phreeqc(phreeqc_dat, {"Mg": 10, "S(6)": 10})
    res = speciate(Mixture({"Mg+2": 0.01, "sulfate": 0.01}, 25.0), activity="davies",
                   catalog=CAT)
    assert res.ionic_strength_molar == pytest.approx(ref["I"], rel=0.03)
    assert res.pH == pytest.approx(ref["pH"], abs=0.02)
    assert res.species["MgSO4"] == pytest.approx(ref["species"]["MgSO4"], rel=0.05)


def test_calcium_sulfate_complex_in_a_mixture(phreeqc_dat):
    ref = _phreeqc(phreeqc_dat, {"Ca": 10, "Cl": 20, "Na": 20, "S(6)": 10})
    res = speciate(Mixture({"Ca+2": 0.01, "Cl-": 0.02, "Na+": 0.02, "sulfate": 0.01}, 25.0),
                   activity="davies", catalog=CAT)
    share = res.species["CaSO4"] / 0.01
    assert share == pytest.approx(ref["species"]["CaSO4"] / 0.01, rel=0.03)
    assert res.ionic_strength_molar == pytest.approx(ref["I"], rel=0.03)
