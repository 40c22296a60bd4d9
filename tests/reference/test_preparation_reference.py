"""Solution strengths, dilution heats and recipes against published values.

Each record carries its source; "from memory" marks values not checked against a printed
copy, "DERIVED" arithmetic from cited rows (a check of the code, not an independent
reference).  Shared reference data: shared/reference-data.md (§4 densities, §6 heats).
"""

import pytest

from carboy.model import thermo
from carboy.model.catalog import density_at
from carboy.model.preparation import heat_released_kj, parse_source, plan_recipe
from carboy.model.solutions import molar_from_percent, strength_of

# ----------------------------------------------------------------------------- densities

DENSITY_ROWS = [
    # (compound, % w/w, g/mL at 20 °C, tolerance, source)
    ("H2SO4", 96, 1.8355, 1e-4, "Perry's Chemical Engineers' Handbook 7th ed., sulfuric-acid "
     "density table, 20 °C (from memory; reference-data §4a)"),
    ("H2SO4", 100, 1.8305, 1e-4, "CRC concentrative properties via Engineering ToolBox; Upp & "
     "LaNasa, Flow Measurement (FOUND, reference-data §4a)"),
    ("H2SO4", 10, 1.0661, 1e-4, "CRC concentrative properties (FOUND, reference-data §4a)"),
    ("HCl", 37, 1.1837, 1e-4, "DERIVED: linear interpolation of the CRC 36 and 38 % rows "
     "(reference-data §4b)"),
    ("HCl", 20, 1.0980, 1e-4, "CRC concentrative; Wikipedia 1.098 (FOUND, §4b)"),
    ("HNO3", 68, 1.4048, 1e-4, "Perry's 6th ed. 20 °C table as quoted (FOUND, §4c)"),
    ("H3PO4", 85, 1.6845, 2e-3, "Wikipedia phosphoric-acid infobox, 25 °C (FOUND, §4d); the "
     "catalog holds the 20 °C CRC value 1.6850 (from memory): tolerance covers both"),
    ("NaOH", 20, 1.2192, 1e-4, "CRC concentrative via Engineering ToolBox (FOUND, §4f)"),
    ("KOH", 32, 1.3043, 1e-4, "handbook table quoted in a forum answer (FOUND, §4f)"),
    ("NH3", 30, 0.8920, 1e-4, "CRC concentrative via Engineering ToolBox (FOUND, §4f)"),
]


@pytest.mark.parametrize("key,w,rho,tol,source", DENSITY_ROWS)
def test_density_rows(key, w, rho, tol, source):
    assert density_at(key, w) == pytest.approx(rho, abs=tol), source


MOLARITIES = [
    # reference-data §4, "DERIVED examples" (c = w·ρ·1000/M from the rows above)
    ("H2SO4", 96.0, 17.966), ("HCl", 37.0, 12.012), ("HNO3", 70.0, 15.701),
    ("H3PO4", 85.0, 14.616), ("NaOH", 50.0, 19.068), ("NH3", 28.0, 14.764),
    ("CH3COOH", 100.0, 17.447),
]


@pytest.mark.parametrize("key,w,molar", MOLARITIES)
def test_molarity_of_the_usual_concentrates(key, w, molar):
    # DERIVED from the CRC/Perry rows (reference-data §4); values given to 3 decimals
    assert molar_from_percent(key, w) == pytest.approx(molar, abs=1.5e-3)
    assert parse_source(f"{key}={w:g}%").conc_molar == pytest.approx(molar, abs=1.5e-3)
    # and back, just inside the table: the molarity gives the mass percent
    c = min(molar, molar_from_percent(key, w))
    assert strength_of(key, conc_molar=c).mass_percent == pytest.approx(w, abs=0.01)


@pytest.mark.parametrize("key,w,label_molar,tol,source", [
    ("H2SO4", 96, 18.0, 0.1, "buffer-preparation guide, 'Physical properties of some commonly "
     "used acids': 96 %, sp. gr. 1.84, 36.0 N (FOUND, reference-data §4a)"),
    ("HCl", 37, 12.05, 0.06, "same guide: 37 %, 1.19, 12.1 N; about 12.0-12.1 M (FOUND, §4b)"),
    ("HNO3", 70, 15.7, 0.1, "same guide: 70 %, 1.42, 15.7 N (FOUND, §4c)"),
    ("H3PO4", 85, 14.7, 0.15, "same guide: 85 %, 1.70, 44.1 N = 14.7 M; handbooks spread "
     "1.69-1.83 (ECHA dossier, FOUND, §4d)"),
])
def test_label_strengths(key, w, label_molar, tol, source):
    assert molar_from_percent(key, w) == pytest.approx(label_molar, abs=tol), source


# ----------------------------------------------------------------------------- heats


def test_nbs_h2so4_infinite_dilution():
    # NBS Tables (Wagman et al. 1982) as quoted in Petrucci et al., General Chemistry 10th
    # ed., Problem 7.126 (reference-data §6a): ΔfH H2SO4(l) -814.0, in ∞ H2O -909.3 kJ/mol,
    # so 1 mol of 100 % H2SO4 diluted to infinite dilution releases 95.3 kJ
    per_mol, note = heat_released_kj("H2SO4", 100.0, 0.0)
    assert per_mol == pytest.approx(95.3, abs=1e-9)
    assert "Petrucci" in note
    # textbook calorimetry answer about -95.5 kJ/mol (Kotz, Chemistry and Chemical
    # Reactivity 9th ed., Ch. 5 study question; FOUND, §6a)
    assert per_mol == pytest.approx(95.5, abs=0.5)


@pytest.mark.parametrize("n,dh_sol", [
    # integral ΔsolH of H2SO4(l) in n H2O, kJ/mol (NBS via Petrucci 10th ed. P7.126, §6a)
    (1.0, -27.8), (10.0, -66.5), (50.0, -72.8), (100.0, -73.7), (1000.0, -78.3),
])
def test_nbs_h2so4_integral_enthalpies(n, dh_sol):
    mm = 98.0783
    w = 100 * mm / (mm + n * thermo.water_MW())
    assert heat_released_kj("H2SO4", 100.0, w)[0] == pytest.approx(-dh_sol, abs=1e-6)


def test_a_very_dilute_h2so4_product_approaches_the_full_heat():
    # NBS (§6a): 95.3 kJ/mol at infinite dilution; 100000 H2O per mol still lacks 2.0 kJ
    r = plan_recipe(parse_source("H2SO4=100%"), 1e-4, 1.0)
    assert 93.3 < r.heat_released_kj / r.amount_mol < 95.3


def test_hcl_37_percent_to_infinite_dilution():
    # reference-data §6b DERIVED test: 37 % HCl is m = 16.11 mol/kg; between the CRC rows
    # 15 m (15.40) and 20 m (19.87): about 16.4 kJ released per mol
    per_mol, _ = heat_released_kj("HCl", 37.0, 0.0)
    assert per_mol == pytest.approx(16.4, abs=0.05)


@pytest.mark.parametrize("key,m,released", [
    # CRC Handbook, Enthalpy of dilution of acids (after Parker, NSRDS-NBS 2, 1965),
    # -ΔdilH in kJ/mol at 25 °C; printed page https://www.scribd.com/document/381060262
    # and the HF/HCl columns https://www.scribd.com/doc/213631091 (FOUND)
    ("HCl", 20.0, 19.87), ("HCl", 1.0, 1.695), ("HCl", 0.1, 0.556), ("HCl", 0.00111, 0.067),
    ("HF", 0.1, 12.80), ("HF", 0.01110, 9.874), ("HF", 20.0, 14.88),
    ("HNO3", 10.0, 3.933), ("HNO3", 55.506, 19.73),
    ("HBr", 5.5506, 4.590), ("HI", 15.0, 14.02),
    ("HClO4", 6.0, -0.351), ("HClO4", 20.0, 13.81),
    ("HCOOH", 10.0, 0.205), ("CH3COOH", 55.506, 2.167),
])
def test_crc_dilution_rows(key, m, released):
    from carboy.model.catalog import default_catalog

    mm = default_catalog().compound(key).molar_mass_g_mol
    w = 100 * m * mm / (1000 + m * mm)
    assert heat_released_kj(key, w, 0.0)[0] == pytest.approx(released, abs=1e-3)


def test_pure_liquid_ends():
    # CRC Handbook, Enthalpy of solution of electrolytes (Parker 1965), 25 °C:
    # HNO3(l) -33.28, CH3COOH(l) -1.51 kJ/mol (FOUND: https://zanotowane.pl/1016/4239)
    assert heat_released_kj("HNO3", 100.0, 0.0)[0] == pytest.approx(33.28)
    assert heat_released_kj("CH3COOH", 100.0, 0.0)[0] == pytest.approx(1.51)


@pytest.mark.parametrize("key,dh", [("NaOH", -44.51), ("KOH", -57.61), ("NaCl", 3.88)])
def test_heat_of_solution_of_solids(key, dh):
    # CRC Handbook, Enthalpy of solution of electrolytes (Parker 1965), 25 °C, to infinite
    # dilution (FOUND: https://zanotowane.pl/1016/4239)
    r = plan_recipe(parse_source(key), 1.0, 1.0)
    assert r.heat_released_kj == pytest.approx(-dh * 1.0, abs=1e-9)


# ----------------------------------------------------------------------------- recipes


def test_copper_sulfate_pentahydrate_for_1_l_of_0_1_m():
    # IUPAC abridged standard atomic weights (CIAAW; from memory): Cu 63.546, S 32.06,
    # O 15.999, H 1.008 -> CuSO4·5H2O 249.68 g/mol; 0.100 mol needs 24.97 g
    iupac = 63.546 + 32.06 + 9 * 15.999 + 10 * 1.008
    src = parse_source("CuSO4·5H2O")
    assert src.molar_mass_g_mol == pytest.approx(iupac, abs=0.01)
    assert src.molar_mass_g_mol == pytest.approx(249.68, abs=0.01)
    r = plan_recipe(src, 0.100, 1.0)
    assert r.stock_mass_g == pytest.approx(24.97, abs=0.005)
    assert any("24.97 g" in s for s in r.steps)


def test_magnesium_sulfate_heptahydrate_built_from_its_base():
    # IUPAC abridged atomic weights (from memory): Mg 24.305 -> MgSO4·7H2O 246.47 g/mol
    iupac = 24.305 + 32.06 + 11 * 15.999 + 14 * 1.008
    assert parse_source("MgSO4·7H2O").molar_mass_g_mol == pytest.approx(iupac, abs=0.01)


def test_khp_molar_mass():
    # BAM certificate U2-0113 (acidimetric standard): KHP 204.2212 g/mol (FOUND, §7)
    assert parse_source("KHC8H4O4").molar_mass_g_mol == pytest.approx(204.2212, abs=0.005)


@pytest.mark.parametrize("source,target,volume_l,given,what,tol,ref", [
    ("HCl=36%", 1.0, 1.0, 85.0, "stock_volume_ml", 0.03,
     "pharmacopoeial 1 M HCl VS: 'dilute 85 ml of hydrochloric acid with water to produce "
     "1000 ml', then standardize (FOUND: http://www.pharmaguideline.com/2010/09/"
     "preparation-and-standardization-of-1m.html); HCl reagent about 36 % (from memory)"),
    ("HCl=36%", 1.0, 1.0, 103.0, "stock_mass_g", 0.03,
     "BP 1 M HCl VS: 'dilute 103.0 g of hydrochloric acid to 1000 ml' (FOUND: "
     "https://tech-publish.com/preparation-of-1-m-hydrochloric-acid-bp/); reagent about 36 % "
     "(from memory)"),
    ("HCl=36%", 0.1, 1.0, 8.5, "stock_volume_ml", 0.03,
     "0.1 M HCl: 'take 8.5 ml of hydrochloric acid with water to produce 1000 ml' (FOUND: "
     "https://chemicalslearning.com/2024/08/prepare-1M-0.5M-0.1M-0.2M-HCl-from-concentrated-"
     "HCl.html)"),
    ("H2SO4=96%", 0.5, 1.0, 27.0, "stock_volume_ml", 0.05,
     "0.5 M H2SO4: 'add slowly, with stirring, 27 mL of sulphuric acid to about 1000 mL of "
     "water' (FOUND: https://solutionpharmacy.in/0-5-m-of-sulphuric-acid/)"),
])
def test_pharmacopoeial_preparations(source, target, volume_l, given, what, tol, ref):
    # These procedures round the amount and standardize the product afterwards, so they
    # agree with the exact figure within a few per cent, not to the last digit.
    r = plan_recipe(parse_source(source), target, volume_l)
    assert getattr(r, what) == pytest.approx(given, rel=tol), ref
    assert "add-to-water" in {c.code for c in r.cautions}
