"""The activity models of the solver against the outside world.

pH against PHREEQC's Pitzer database
------------------------------------
phreeqpython (database="pitzer.dat", HMW 1984 with Appelo 2015's refits, the set
``data/pitzer.toml`` carries) solves each solution given in mol/kg of water with its pH
set by charge balance.  carboy gets the same solution in mol/L, converted with its own
water-per-litre (``molality.molar_from_molal``, the exact inverse of the conversion the
solver makes), so the comparison is of the activity model alone.  Convention on both
sides: pH = -log10(m_H γ_H), molal, single-ion coefficients on the MacInnes scale
(γ(Cl-) = γ±(KCl) at the same ionic strength; PHREEQC's default).  Tolerance: the
issue's 0.05 pH unit (the differences seen are below 0.003: the Debye–Hückel slope and
the HSO4- constant, 1.979 in pitzer.dat against carboy's 1.99).

Calcium and magnesium
---------------------
HCl in CaCl2 and in MgCl2 (0.1 mol/kg HCl, the salt making up the ionic strength to
5 mol/kg) against the same pitzer.dat solutions, same tolerance: the metals stay
dissolved and the Pitzer path takes them as ions (``pitzer_metals``).  Where one of their
solids would form the batch falls back to the Davies metal path and says so.

Carbon dioxide and water activity
---------------------------------
pitzer.dat writes carbonate's first step with water (CO2 + H2O = HCO3- + H+), so where
a_w falls (0.80 in 5 mol/kg NaCl) the bicarbonate buffer's pH falls with it: 0.1 mol/kg
NaHCO3 with 0.1 mol/kg CO2 in NaCl to 5 mol/kg against the same pitzer.dat solutions.
What is left is the same at every ionic strength: carboy's catalog pKa1 6.35 against the
6.337 of pitzer.dat's constants (16.6767 - 10.3393), about 0.01, so the tolerance is 0.02.

Saturated calcium hydroxide
---------------------------
Bates, Bower & Smith, "Calcium hydroxide as a highly alkaline pH standard", J. Res.
Natl. Bur. Stand. 56, 305-312 (1956): the solution saturated at 25 °C is about
0.0203 M and has pH 12.45 (FOUND, the paper's abstract).  The standard pH is on the
Bates–Guggenheim convention, which the Davies equation approximates at this ionic
strength (about 0.06).
"""

from __future__ import annotations

import numpy as np
import pytest

from carboy.errors import InvalidInput
from carboy.model.catalog import default_catalog
from carboy.model.mixture import Mixture, MixtureBatch
from carboy.model.molality import molar_from_molal
from carboy.model.speciation import speciate, speciate_batch
from carboy.model.speciation_models import AUTO_LIMIT_MOLAL

phreeqpython = pytest.importorskip("phreeqpython")

CAT = default_catalog()
PH_TOL = 0.05   # the tolerance (pH units)


def _cases():
    out = []
    for m in (0.5, 1.0, 2.0, 5.0):
        out += [
            (f"HCl {m}", {"Cl-": m}, {"Cl": m, "pH": "0 charge"}),
            (f"NaOH {m}", {"Na+": m}, {"Na": m, "pH": "14 charge"}),
            (f"HCl 0.01 in NaCl, I {m}", {"Na+": m - 0.01, "Cl-": m},
             {"Na": m - 0.01, "Cl": m, "pH": "2 charge"}),
            (f"NaOH 0.01 in NaCl, I {m}", {"Na+": m, "Cl-": m - 0.01},
             {"Na": m, "Cl": m - 0.01, "pH": "12 charge"}),
            (f"H2SO4 {m / 3:.3g}", {"sulfate": m / 3}, {"S(6)": m / 3, "pH": "0 charge"}),
            (f"H2SO4 0.05 in NaCl, I {m}", {"sulfate": 0.05, "Na+": m - 0.15, "Cl-": m - 0.15},
             {"S(6)": 0.05, "Na": m - 0.15, "Cl": m - 0.15, "pH": "1 charge"}),
        ]
    return out


CASES = _cases()


def _metal_cases():
    out = []
    for metal, el in (("Ca+2", "Ca"), ("Mg+2", "Mg")):
        for ionic in (0.6, 1.0, 2.0, 3.0, 5.0):
            m = (ionic - 0.1) / 3.0
            out.append((f"HCl 0.1 in {el}Cl2, I {ionic}", {metal: m, "Cl-": 2 * m + 0.1},
                        {el: m, "Cl": 2 * m + 0.1, "pH": "1 charge"}))
    return out


METAL_CASES = _metal_cases()


@pytest.fixture(scope="module")
def pitzer_dat():
    return phreeqpython.PhreeqPython(database="pitzer.dat")


def _molar(comp: dict) -> Mixture:
    keys = tuple(comp)
    c = molar_from_molal(CAT, keys, [list(comp.values())], 25.0)[0]
    return Mixture(dict(zip(keys, c.tolist())), temperature_c=25.0)


@pytest.mark.parametrize("name, comp, peer", CASES, ids=[c[0] for c in CASES])
def test_ph_against_phreeqc_pitzer_dat(pitzer_dat, name, comp, peer):
    sol = pitzer_dat.add_solution({"units": "mol/kgw", "temp": 25.0, **peer})
    expected, ionic = sol.pH, sol.I
    sol.forget()
    res = speciate(_molar(comp), activity="pitzer", catalog=CAT)
    assert res.converged
    assert res.ph_scale == "macinnes" and res.model_part.model == "pitzer"
    assert res.model_part.ionic_strength_molal == pytest.approx(ionic, rel=0.02)
    assert res.pH == pytest.approx(expected, abs=PH_TOL)


@pytest.mark.parametrize("name, comp, peer", METAL_CASES, ids=[c[0] for c in METAL_CASES])
def test_calcium_and_magnesium_against_phreeqc_pitzer_dat(pitzer_dat, name, comp, peer):
    sol = pitzer_dat.add_solution({"units": "mol/kgw", "temp": 25.0, **peer})
    expected, ionic = sol.pH, sol.I
    sol.forget()
    for activity in ("pitzer", "auto"):   # auto: above 0.5 mol/kg, the same model
        res = speciate(_molar(comp), activity=activity, catalog=CAT)
        assert res.converged and res.model_part.model == "pitzer"
        assert res.model_part.ionic_strength_molal == pytest.approx(ionic, rel=0.02)
        assert res.pH == pytest.approx(expected, abs=PH_TOL)
    metal = next(k for k in comp if k != "Cl-")
    total = _molar(comp).totals[metal]
    assert res.dissolved_metals[metal] == pytest.approx(total, rel=1e-9)
    assert all(v == 0.0 for v in res.solids.values())
    assert all(v < 0.0 for v in res.saturation_indices.values())


@pytest.mark.parametrize("nacl", [0.0, 1.0, 3.0, 5.0])
def test_bicarbonate_buffer_takes_the_water_activity(pitzer_dat, nacl):
    sol = pitzer_dat.add_solution({"units": "mol/kgw", "temp": 25.0, "C(4)": 0.2,
                                   "Na": nacl + 0.1, "Cl": nacl, "pH": "6 charge"})
    expected = sol.pH
    sol.forget()
    res = speciate(_molar({"carbonate": 0.2, "Na+": nacl + 0.1, "Cl-": nacl}),
                   activity="pitzer", catalog=CAT)
    assert res.pH == pytest.approx(expected, abs=0.02)


def test_a_saturated_metal_solid_falls_back_to_the_davies_metal_path():
    # CaCl2 1 M with NaF: fluorite (CaF2, two ligands per cation) is past saturation at
    # the second point; the Pitzer path settles only hydroxides and 1:1 salts, so the
    # whole batch goes to the metal path
    keys = ("Ca+2", "Cl-", "Na+", "fluoride")
    batch = MixtureBatch(keys, np.array([[1.0, 2.0, 0.0, 0.0], [1.0, 2.0, 0.1, 0.1]]), 25.0)
    res = speciate_batch(batch, activity="pitzer", catalog=CAT)
    assert res.model_part.model == "davies"             # the whole batch, one model
    assert all("CaF2 (fluorite) would precipitate" in " ".join(w) for w in res.warnings)
    fluorite = res.solid_names.index("CaF2 (fluorite)")
    assert res.solids_molar[0, fluorite] == 0.0
    assert res.solids_molar[1, fluorite] == pytest.approx(0.05, rel=0.01)
    alone = speciate_batch(MixtureBatch(batch.keys, batch.totals[:1], 25.0),
                           activity="pitzer", catalog=CAT)
    assert alone.model_part.model == "pitzer"           # dissolved: the Pitzer path


# Gypsum on the Pitzer path, against pitzer.dat with the solid given carboy's solubility
# product (metals.toml via planning.toml, log Ksp -4.503; pitzer.dat's Gypsum is -4.58):
# mol/kg of Ca, Na, S(6) and Cl (the balance H+ from acid).  Tolerance 0.02 pH: where
# much sulfate is HSO4- carboy's pKa 1.99 against pitzer.dat's 1.979 shows (0.015).
GYPSUM = [(1.0, 0.4, 0.2, 2.0), (0.5, 0.2, 0.1, 1.01), (1.0, 0.0, 0.5, 2.0),
          (2.0, 1.0, 0.5, 4.0), (0.2, 0.0, 0.1, 0.4)]


@pytest.mark.parametrize("ca, na, s6, cl", GYPSUM, ids=[f"ca{g[0]}-s{g[2]}" for g in GYPSUM])
def test_gypsum_precipitates_on_the_pitzer_path(pitzer_dat, ca, na, s6, cl):
    from carboy.model.metal_data import metal_data

    log_ksp = next(s.log_ksp for s in metal_data().ligand_solids if "gypsum" in s.name)
    pitzer_dat.ip.run_string(
        f"PHASES\nOwn\n  CaSO4:2H2O = Ca+2 + SO4-2 + 2 H2O\n  log_k {log_ksp}\n"
        f"SOLUTION 1\n  units mol/kgw\n  temp 25\n  Ca {ca}\n  Na {na}\n  S(6) {s6}\n"
        f"  Cl {cl}\n  pH 3 charge\nEQUILIBRIUM_PHASES 1\n  Own 0 0\n"
        "SELECTED_OUTPUT 1\n  -reset false\n  -pH true\n  -equilibrium_phases Own\nEND\n")
    ph, amount, _ = pitzer_dat.ip.get_selected_output_array()[-1]   # pH, mol of solid
    res = speciate(_molar({"Ca+2": ca, "Na+": na, "sulfate": s6, "Cl-": cl}),
                   activity="pitzer", catalog=CAT)
    assert res.model_part.model == "pitzer" and res.converged
    gypsum = res.solids["CaSO4·2H2O (gypsum)"]
    assert gypsum / res.model_part.water_kg_per_l == pytest.approx(amount, rel=0.015)
    assert res.pH == pytest.approx(ph, abs=0.02)
    assert res.saturation_indices["CaSO4·2H2O (gypsum)"] == 0.0
    assert sum(res.fractions["sulfate"].values()) == pytest.approx(1.0, rel=1e-12)


# Hydroxides on the Pitzer path, against pitzer.dat with the solid given carboy's own
# solubility product (metals.toml: portlandite log Ksp -5.299, brucite -11.251, CRC
# from memory; pitzer.dat's own Portlandite -5.19 and Brucite -10.88 would differ by
# design): (cation, element, formula, log Ksp, mol/kg of the chloride, mol/kg NaOH)
HYDROXIDES = [("Mg+2", "Mg", "Mg(OH)2", -11.251, 1.0, 0.5),
              ("Mg+2", "Mg", "Mg(OH)2", -11.251, 2.0, 0.2),
              ("Ca+2", "Ca", "Ca(OH)2", -5.299, 1.0, 0.5),
              ("Ca+2", "Ca", "Ca(OH)2", -5.299, 1.5, 1.0)]


@pytest.mark.parametrize("metal, el, formula, log_ksp, m, naoh", HYDROXIDES,
                         ids=[f"{h[2]}-{h[4]}" for h in HYDROXIDES])
def test_hydroxide_precipitates_on_the_pitzer_path(pitzer_dat, metal, el, formula, log_ksp,
                                                   m, naoh):
    pitzer_dat.ip.run_string(
        f"PHASES\nOwn\n  {formula} = {el}+2 + 2 OH-\n  log_k {log_ksp}\n"
        f"SOLUTION 1\n  units mol/kgw\n  temp 25\n  {el} {m}\n  Cl {2 * m}\n"
        f"  Na {naoh}\n  pH 12 charge\nEQUILIBRIUM_PHASES 1\n  Own 0 0\n"
        "SELECTED_OUTPUT 1\n  -reset false\n  -pH true\n  -equilibrium_phases Own\nEND\n")
    ph, amount, _ = pitzer_dat.ip.get_selected_output_array()[-1]   # pH, mol of solid
    res = speciate(_molar({metal: m, "Cl-": 2 * m, "Na+": naoh}), activity="pitzer",
                   catalog=CAT)
    assert res.model_part.model == "pitzer" and res.converged
    solid = next(v for k, v in res.solids.items() if formula in k)
    assert solid / res.model_part.water_kg_per_l == pytest.approx(amount, rel=0.005)
    assert res.pH == pytest.approx(ph, abs=0.01)
    assert res.saturation_indices[next(k for k in res.solids if formula in k)] == 0.0


def test_other_metals_stay_outside_the_pitzer_model():
    mix = Mixture({"Zn+2": 1.0, "Cl-": 2.1}, 25.0)
    with pytest.raises(InvalidInput, match="calcium and magnesium only"):
        speciate(mix, activity="pitzer", catalog=CAT)
    auto = speciate(mix, activity="auto", catalog=CAT)
    assert auto.model_part.model == "davies"
    assert any("calcium and magnesium only" in w for w in auto.warnings)


def test_the_same_solution_batched_gives_the_same_ph(pitzer_dat):
    mixes = [_molar(c) for _, c, _ in CASES if set(c) == {"Na+", "Cl-"}]
    keys = ("Na+", "Cl-")
    batch = MixtureBatch(keys, np.array([[m.totals[k] for k in keys] for m in mixes]), 25.0)
    res = speciate_batch(batch, activity="pitzer", catalog=CAT)
    one = [speciate(m, activity="pitzer", catalog=CAT).pH for m in mixes]
    np.testing.assert_allclose(res.pH, one, atol=1e-8)


def test_saturated_calcium_hydroxide():
    # Bates, Bower & Smith 1956: saturated at 25 °C about 0.0203 M, pH 12.45 (FOUND).
    # Ca2+ is one of the modelled metals: CaOH+ (log *K -12.78) and portlandite, whose
    # solubility product in metals.toml (CRC 5.02e-6, from memory) leaves about 0.0184 M
    # dissolved, a little below the paper's 0.0203 M: pH 12.43, hence 0.03.
    mix = Mixture.from_compounds([(CAT.compound("Ca(OH)2"), 0.03)], temperature_c=25.0)
    auto = speciate(mix, activity="auto", catalog=CAT)   # excess solid: saturated
    assert auto.model_part.model == "davies"
    assert auto.solids["Ca(OH)2 (portlandite)"] > 0
    assert auto.species["CaOH+"] > 0.1 * 0.0184          # the pair holds a fifth of the calcium
    assert auto.pH == pytest.approx(12.45, abs=0.03)


@pytest.mark.parametrize("molal, model", [(0.45, "davies"), (0.55, "pitzer")])
def test_auto_switches_at_its_ionic_strength(molal, model):
    assert AUTO_LIMIT_MOLAL == 0.5
    res = speciate(_molar({"Na+": molal - 0.01, "Cl-": molal}), activity="auto", catalog=CAT)
    assert res.activity == "auto"
    assert res.model_part.model == model
    assert res.ph_scale == {"davies": "davies", "pitzer": "macinnes"}[model]
    assert res.model_part.ionic_strength_molal == pytest.approx(molal, rel=1e-6)


def test_ions_outside_the_set_fall_back_and_say_so():
    mix = Mixture({"phosphate": 0.5, "Na+": 1.0, "Cl-": 0.5}, 25.0)
    res = speciate(mix, activity="pitzer", catalog=CAT)
    text = " ".join(res.warnings)
    assert "no specific-interaction parameters" in text and "HPO4-2" in text
    assert "Davies" in text


def test_beyond_six_molal_a_validity_warning_and_no_frozen_coefficient():
    lo = speciate(_molar({"Na+": 6.5, "Cl-": 6.5}), activity="pitzer", catalog=CAT)
    hi = speciate(_molar({"Na+": 7.5, "Cl-": 7.5}), activity="pitzer", catalog=CAT)
    assert any("above 6 mol/kg" in w for w in lo.warnings + hi.warnings)
    assert lo.activity_coefficients["Na+"] != pytest.approx(hi.activity_coefficients["Na+"],
                                                            rel=1e-3)
    ok = speciate(_molar({"Na+": 3.0, "Cl-": 3.0}), activity="pitzer", catalog=CAT)
    assert not any("above 6 mol/kg" in w for w in ok.warnings)


def test_molality_reported_beside_concentration():
    res = speciate(_molar({"Na+": 2.0, "Cl-": 2.0}), activity="pitzer", catalog=CAT)
    assert res.molality["Na+"] == pytest.approx(2.0, rel=1e-9)
    assert res.species["Na+"] < res.molality["Na+"]          # a litre holds < 1 kg of water
    assert 0.9 < res.model_part.water_activity < 0.95          # 2 m NaCl: a_w 0.932 (R&S φ 0.983, from memory)
