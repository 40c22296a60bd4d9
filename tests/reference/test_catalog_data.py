"""The packaged catalog against published values (shared/reference-data.md).

Each record: id, inputs, expected value, tolerance, source and status.  MEMORY rows are
from memory and say so; DERIVED rows check arithmetic, not an independent reference.
Tolerances follow the number of decimals published: ±0.005 for three decimals, ±0.02 for
two, looser where the value is an order-of-magnitude estimate.
"""

from __future__ import annotations

import pytest

from carboy.model.catalog import default_catalog, density_at, molarity_at

# (id, system key, step index, expected pKa, tolerance, source, status)
PKA_RECORDS = [
    ("HSO4-", "sulfate", 1, 1.99, 0.005, "CRC 86th ed. p. 8-41 via OpenStax", "FOUND"),
    ("H3PO4-1", "phosphate", 0, 2.148, 0.0005, "Robinson & Stokes via Kaye & Laby 3.9.7", "FOUND"),
    ("H3PO4-2", "phosphate", 1, 7.198, 0.0005, "Robinson & Stokes via Kaye & Laby 3.9.7", "FOUND"),
    ("H3PO4-3", "phosphate", 2, 12.35, 0.005, "Goldberg et al. 2002, from memory", "MEMORY"),
    ("CO2-1", "carbonate", 0, 6.35, 0.005, "CRC 86th ed. p. 8-40", "FOUND"),
    ("CO2-1-G", "carbonate", 0, 6.351, 0.0005, "Goldberg et al. 2002, from memory", "MEMORY"),
    ("HCO3-", "carbonate", 1, 10.329, 0.0005, "Fromm table; Goldberg 2002", "FOUND"),
    ("acetic", "acetate", 0, 4.756, 0.0005, "Harris App. G (NIST SRD 46)", "FOUND"),
    ("acetic-MS", "acetate", 0, 4.757, 0.005, "Martell & Smith via LibreTexts E5", "FOUND"),
    ("citric-1", "citrate", 0, 3.13, 0.005, "CRC organic table via LibreTexts E1", "FOUND"),
    ("citric-2", "citrate", 1, 4.76, 0.005, "CRC organic table via LibreTexts E1", "FOUND"),
    ("citric-3", "citrate", 2, 6.40, 0.005, "CRC organic table via LibreTexts E1", "FOUND"),
    ("citric-G", "citrate", 2, 6.396, 0.0005, "Goldberg et al. 2002, from memory", "MEMORY"),
    ("oxalic-1", "oxalate", 0, 1.271, 0.0005, "Robinson & Stokes via Kaye & Laby", "FOUND"),
    ("oxalic-2", "oxalate", 1, 4.266, 0.0005, "Robinson & Stokes via Kaye & Laby", "FOUND"),
    ("formic", "formate", 0, 3.75, 0.005, "CRC organic table via LibreTexts E1", "FOUND"),
    ("HF", "fluoride", 0, 3.17, 0.005, "UW–Madison Pressbook; Harris App. G", "FOUND"),
    ("HF-CRC", "fluoride", 0, 3.20, 0.035, "CRC 86th ed. p. 8-40 (other handbook)", "FOUND"),
    ("boric", "borate", 0, 9.238, 0.005, "Fromm table", "FOUND"),
    ("NH4+", "ammonium", 0, 9.245, 0.0005, "Harris App. G (NIST SRD 46)", "FOUND"),
    ("NH4+-CRC", "ammonium", 0, 9.25, 0.01, "CRC p. 8-40", "FOUND"),
    ("H2SO3-1", "sulfite", 0, 1.85, 0.005, "CRC via OpenStax", "FOUND"),
    ("HSO3-", "sulfite", 1, 7.2, 0.05, "CRC via OpenStax", "FOUND"),
    ("Tris", "tris", 0, 8.072, 0.0005, "Goldberg et al. 2002, from memory", "MEMORY"),
    ("lactic", "lactate", 0, 3.86, 0.02, "from memory", "MEMORY"),
    ("phthalic-1", "phthalate", 0, 2.95, 0.02, "from memory", "MEMORY"),
    ("phthalic-2", "phthalate", 1, 5.41, 0.02, "from memory", "MEMORY"),
    ("sulfamic", "sulfamate", 0, 1.0, 0.1, "from memory", "MEMORY"),
    ("HNO3", "nitric", 0, -1.4, 0.05, "Kealey & Haines, Instant Notes, Table 3.3", "FOUND"),
    ("HCl", "hydrochloric", 0, -6.1, 0.05, "UW–Madison Chem 109 Pressbook", "FOUND"),
    ("HClO4", "perchloric", 0, -1.6, 0.05, "CRC p. 8-40 (20 °C)", "FOUND"),
]


@pytest.mark.parametrize(
    ("system", "step", "expected", "tol", "source", "status"),
    [r[1:] for r in PKA_RECORDS],
    ids=[r[0] for r in PKA_RECORDS],
)
def test_pka(system, step, expected, tol, source, status):
    assert default_catalog().systems[system].pka25[step] == pytest.approx(expected, abs=tol), (
        source,
        status,
    )


# (id, system key, step index, ΔH° kJ/mol, ΔCp° J/K/mol or None, tolerance, source, status)
ENTHALPY_RECORDS = [
    ("acetic", "acetate", 0, -0.41, -142, 0.01, "Goldberg et al. 2002", "MEMORY"),
    ("NH4+", "ammonium", 0, 51.95, 8, 0.01, "Goldberg et al. 2002", "MEMORY"),
    ("CO2-1", "carbonate", 0, 9.15, -371, 0.01, "Goldberg et al. 2002", "MEMORY"),
    ("HCO3-", "carbonate", 1, 14.70, -249, 0.01, "Goldberg et al. 2002", "MEMORY"),
    ("H3PO4-1", "phosphate", 0, -8.0, -141, 0.01, "Goldberg et al. 2002", "MEMORY"),
    ("H3PO4-2", "phosphate", 1, 3.6, -230, 0.01, "Goldberg et al. 2002", "MEMORY"),
    ("H3PO4-3", "phosphate", 2, 16.0, -242, 0.01, "Goldberg et al. 2002", "MEMORY"),
    ("citric-1", "citrate", 0, 4.07, -131, 0.01, "Goldberg et al. 2002", "MEMORY"),
    ("citric-2", "citrate", 1, 2.23, -178, 0.01, "Goldberg et al. 2002", "MEMORY"),
    ("citric-3", "citrate", 2, -3.38, -254, 0.01, "Goldberg et al. 2002", "MEMORY"),
    ("boric", "borate", 0, 13.8, -240, 0.01, "Goldberg et al. 2002", "MEMORY"),
    ("Tris", "tris", 0, 47.45, -59, 0.01, "Goldberg et al. 2002", "MEMORY"),
    (
        "Tris-ORNL",
        "tris",
        0,
        47.53,
        None,
        0.13,
        "ORNL, OSTI 6977699 (association, sign flipped)",
        "FOUND",
    ),
    ("HSO4-", "sulfate", 1, -22.4, None, 0.05, "CODATA ΔfH° difference", "DERIVED"),
    ("HF", "fluoride", 0, -12.6, None, 0.05, "NBS 1982 ΔfH° difference", "DERIVED"),
]


@pytest.mark.parametrize(
    ("system", "step", "dh", "dcp", "tol", "source", "status"),
    [r[1:] for r in ENTHALPY_RECORDS],
    ids=[r[0] for r in ENTHALPY_RECORDS],
)
def test_ionization_enthalpy(system, step, dh, dcp, tol, source, status):
    entry = default_catalog().systems[system]
    assert entry.dh_kj[step] == pytest.approx(dh, abs=tol), (source, status)
    if dcp is not None:
        assert entry.dcp_j[step] == pytest.approx(dcp, abs=0.5), (source, status)


def test_strong_steps_match_equivalents_per_mole():
    # Protons neutralized per mole (reference-data §1a notes): all steps of each system.
    cat = default_catalog()
    expected = {
        "sulfate": 2,
        "phosphate": 3,
        "carbonate": 2,
        "citrate": 3,
        "oxalate": 2,
        "fluoride": 1,
        "borate": 1,
        "sulfite": 2,
        "nitric": 1,
        "hydrochloric": 1,
        "acetate": 1,
        "formate": 1,
    }
    for key, n in expected.items():
        assert cat.systems[key].n_steps == n, key


# (id, compound key, mass %, expected density g/mL or None, expected mol/L, tol (mol/L), source)
DENSITY_RECORDS = [
    ("H2SO4-96", "H2SO4", 96, 1.8355, 17.966, 0.002, "Perry's 7th ed. (MEMORY); c DERIVED"),
    ("HCl-37", "HCl", 37, 1.1837, 12.012, 0.002, "CRC 36/38 % rows interpolated (DERIVED)"),
    ("HNO3-70", "HNO3", 70, 1.4134, 15.701, 0.002, "Perry's 20 °C (MEMORY); c DERIVED"),
    ("H3PO4-85", "H3PO4", 85, 1.6850, 14.616, 0.002, "CRC 20 °C (MEMORY); c DERIVED"),
    ("NaOH-50", "NaOH", 50, 1.5253, 19.068, 0.002, "CRC/Perry's 20 °C (MEMORY); c DERIVED"),
    ("NH3-28", "NH3", 28, 0.8980, 14.764, 0.002, "CRC (MEMORY); c DERIVED"),
    ("acetic-100", "CH3COOH", 100, 1.0477, 17.447, 0.002, "CRC via Engineering ToolBox (RECONSTRUCTED)"),
    ("H2SO4-10", "H2SO4", 10, 1.0661, 1.087, 0.001, "CRC via Engineering ToolBox (FOUND)"),
    ("HCl-20", "HCl", 20, 1.0980, 6.023, 0.001, "CRC via Engineering ToolBox (FOUND)"),
    ("NaOH-10", "NaOH", 10, 1.1089, 2.772, 0.001, "CRC via Engineering ToolBox (FOUND)"),
    ("KOH-34", "KOH", 34, 1.3254, 8.03, 0.005, "handbook table quoted (FOUND)"),
    ("NH3-30", "NH3", 30, 0.8920, 15.71, 0.005, "CRC via Engineering ToolBox (FOUND)"),
]


@pytest.mark.parametrize(
    ("key", "w", "rho", "conc", "tol", "source"),
    [r[1:] for r in DENSITY_RECORDS],
    ids=[r[0] for r in DENSITY_RECORDS],
)
def test_density_and_molarity(key, w, rho, conc, tol, source):
    assert density_at(key, w) == pytest.approx(rho, abs=5e-5), source
    assert molarity_at(key, w) == pytest.approx(conc, abs=tol), source


def test_hcl_label_value_is_close_to_table():
    # Buffer-preparation guide label: 37 % HCl, sp. gr. 1.19 (FOUND); the table gives 1.1837.
    assert density_at("HCl", 37) == pytest.approx(1.19, abs=0.01)


def test_neutralization_plan_inputs():
    # reference-data §8 DERIVED: 100 mL of 96 % H2SO4 holds 1.7966 mol; 50 % NaOH is 19.068 M.
    cat = default_catalog()
    mass_g = 100 * density_at("H2SO4", 96)
    mol = mass_g * 0.96 / cat.compounds["H2SO4"].molar_mass_g_mol
    assert mass_g == pytest.approx(183.55, abs=0.005)
    assert mol == pytest.approx(1.7966, abs=0.0002)
    naoh_g = 2 * mol * cat.compounds["NaOH"].molar_mass_g_mol
    assert naoh_g == pytest.approx(143.72, abs=0.02)
    assert 2 * mol / molarity_at("NaOH", 50) * 1000 == pytest.approx(188.4, abs=0.1)
