"""GHS label bands and texts against published classifications, source beside each value.

Each boundary record checks a concentration just below and at (or just above) a published
limit: the expected hazard codes, and where the code alone cannot tell (Skin Corr. 1A
against 1B, Ox. Liq. 2 against 3) the category named in the basis.  Status:
FOUND (seen in the source named), MEMORY (from memory), DERIVED (arithmetic on cited
values with a cited rule), PRACTICE (H290, a supplier self-classification: common practice).

Sources (full addresses in carboy/model/data/ghs.toml [sources]):
  GisChem = the German accident insurers' hazardous-substance system, gischem.de
  FUB     = Freie Universität Berlin safety wiki quoting the C&L inventory
  battery = lead-battery SDS quoting the sulfuric acid SCLs
  DGUV    = DGUV Information 213-032, section 15.3
  expydoc = German teaching material on classification against dilution
"""

from __future__ import annotations

import pytest

from carboy.model.labels import ghs_data, hazard_statements

GISCHEM = "https://gischem.de/suche/dokument-komplett.htm?client_session_Dokument="
GISCHEM_DOC = "https://gischem.de/suche/dokument.htm?client_session_Dokument="

# (id, key, % w/w, expected codes, category expected in the basis or None, source, status)
BOUNDARY_RECORDS = [
    # sulfuric acid: Skin Corr. 1A >= 15 %; Skin Irrit. 2 / Eye Irrit. 2 5-15 %
    ("H2SO4-4.99", "H2SO4", 4.99, {"H290"}, None, "battery SDS (H290: common practice)", "FOUND"),
    ("H2SO4-5", "H2SO4", 5.0, {"H290", "H315", "H319"}, "Eye Irrit. 2", "battery SDS", "FOUND"),
    ("H2SO4-14.99", "H2SO4", 14.99, {"H290", "H315", "H319"}, None, "battery SDS", "FOUND"),
    ("H2SO4-15", "H2SO4", 15.0, {"H290", "H314"}, "Skin Corr. 1A", "battery SDS", "FOUND"),
    ("H2SO4-H290-0.49", "H2SO4", 0.49, set(), None, "lower bound from memory", "PRACTICE"),
    ("H2SO4-H290-0.5", "H2SO4", 0.5, {"H290"}, None, "lower bound from memory", "PRACTICE"),
    # hydrochloric acid: Skin Corr. 1B >= 25 %; irritant 10-25 %; STOT SE 3 >= 10 %
    ("HCl-9.99", "HCl", 9.99, {"H290"}, None, GISCHEM + "4531; FUB", "FOUND"),
    ("HCl-10", "HCl", 10.0, {"H290", "H315", "H319", "H335"}, "STOT SE 3", GISCHEM + "4531", "FOUND"),
    ("HCl-24.99", "HCl", 24.99, {"H290", "H315", "H319", "H335"}, None, GISCHEM + "4531", "FOUND"),
    ("HCl-25", "HCl", 25.0, {"H290", "H314", "H335"}, "Skin Corr. 1B", GISCHEM + "4531", "FOUND"),
    ("HCl-H290-0.35", "HCl", 0.35, set(), None, "expydoc: none up to 0.1 mol/L", "PRACTICE"),
    ("HCl-H290-0.36", "HCl", 0.36, {"H290"}, None, "expydoc: H290 from 0.1 mol/L", "PRACTICE"),
    # nitric acid: GisChem overview of dilutions; FUB for the SCLs
    ("HNO3-0.99", "HNO3", 0.99, set(), None, "GisChem overview", "FOUND"),
    ("HNO3-1", "HNO3", 1.0, {"H315", "H319"}, "Eye Irrit. 2", "GisChem: 1-<3 % H315 H319", "FOUND"),
    ("HNO3-2.99", "HNO3", 2.99, {"H315", "H319"}, None, "GisChem: 1-<3 % H315 H319", "FOUND"),
    ("HNO3-3", "HNO3", 3.0, {"H315", "H318"}, "Eye Dam. 1", "GisChem: 3-<5 % H315 H318", "FOUND"),
    ("HNO3-4.99", "HNO3", 4.99, {"H315", "H318"}, None, "GisChem: 3-<5 % H315 H318", "FOUND"),
    ("HNO3-5", "HNO3", 5.0, {"H290", "H332", "H314"}, "Skin Corr. 1B", "FUB; GisChem 5-20 %", "FOUND"),
    ("HNO3-19.99", "HNO3", 19.99, {"H290", "H332", "H314"}, "Skin Corr. 1B", "FUB; GisChem", "FOUND"),
    ("HNO3-20", "HNO3", 20.0, {"H290", "H332", "H314", "EUH071"}, "Skin Corr. 1A", "FUB; GisChem 20-<26 %", "FOUND"),
    ("HNO3-25.99", "HNO3", 25.99, {"H290", "H332", "H314", "EUH071"}, None, "GisChem 20-<26 %", "FOUND"),
    ("HNO3-26", "HNO3", 26.0, {"H290", "H331", "H314", "EUH071"}, None, "GisChem 26-65 %", "FOUND"),
    ("HNO3-64.99", "HNO3", 64.99, {"H290", "H331", "H314", "EUH071"}, None, "GisChem 26-65 %", "FOUND"),
    ("HNO3-65", "HNO3", 65.0, {"H272", "H290", "H331", "H314", "EUH071"}, "Ox. Liq. 3", "FUB; GisChem 65-<70 %", "FOUND"),
    ("HNO3-69.99", "HNO3", 69.99, {"H272", "H290", "H331", "H314", "EUH071"}, None, "GisChem 65-<70 %", "FOUND"),
    ("HNO3-70", "HNO3", 70.0, {"H272", "H290", "H330", "H314", "EUH071"}, "Acute Tox. 1", "GisChem: above 70 % H330 (70 % itself included, conservative)", "FOUND"),
    ("HNO3-98.99", "HNO3", 98.99, {"H272", "H290", "H330", "H314", "EUH071"}, "Ox. Liq. 3", "FUB", "FOUND"),
    ("HNO3-99", "HNO3", 99.0, {"H272", "H290", "H330", "H314", "EUH071"}, "Ox. Liq. 2", "FUB: Ox. Liq. 2 C >= 99 %", "FOUND"),
    # sodium hydroxide: Skin Corr. 1A >= 5 %; 1B 2-5 %; irritant 0.5-2 %
    ("NaOH-0.49", "NaOH", 0.49, set(), None, GISCHEM + "577", "FOUND"),
    ("NaOH-0.5", "NaOH", 0.5, {"H290", "H315", "H319"}, "Skin Irrit. 2", GISCHEM + "4413", "FOUND"),
    ("NaOH-1.99", "NaOH", 1.99, {"H290", "H315", "H319"}, None, GISCHEM + "4413", "FOUND"),
    ("NaOH-2", "NaOH", 2.0, {"H290", "H314"}, "Skin Corr. 1B", GISCHEM + "577", "FOUND"),
    ("NaOH-4.99", "NaOH", 4.99, {"H290", "H314"}, "Skin Corr. 1B", GISCHEM + "577", "FOUND"),
    ("NaOH-5", "NaOH", 5.0, {"H290", "H314"}, "Skin Corr. 1A", GISCHEM + "4421", "FOUND"),
    # potassium hydroxide: SCLs as NaOH (from memory); H302 derived, matches supplier SDSs
    ("KOH-1.99", "KOH", 1.99, {"H290", "H315", "H319"}, "Skin Irrit. 2", "Annex VI SCL from memory", "MEMORY"),
    ("KOH-2", "KOH", 2.0, {"H290", "H314"}, "Skin Corr. 1B", "Annex VI SCL from memory", "MEMORY"),
    ("KOH-5", "KOH", 5.0, {"H290", "H314"}, "Skin Corr. 1A", "Annex VI SCL from memory", "MEMORY"),
    ("KOH-10", "KOH", 10.0, {"H290", "H314"}, None, "supplier SDS Kalilauge 10 %: no H302", "FOUND"),
    ("KOH-24.99", "KOH", 24.99, {"H290", "H314"}, None, "ATE 500 mg/kg / 2000 mg/kg -> 25 %", "DERIVED"),
    ("KOH-25", "KOH", 25.0, {"H290", "H302", "H314"}, "Acute Tox. 4", "supplier SDS Kalilauge >= 25 %: H302", "FOUND"),
    # ammonia solution: Skin Corr. 1B (generic 5 %), STOT SE 3 >= 5 %, H400 from 10 %
    ("NH3-2", "NH3", 2.0, {"H315", "H319"}, None, "CLP Tables 3.2.3/3.3.3 generic", "DERIVED"),
    ("NH3-4.99", "NH3", 4.99, {"H315", "H318"}, "Eye Dam. 1", "CLP Tables 3.2.3/3.3.3 generic", "DERIVED"),
    ("NH3-5", "NH3", 5.0, {"H290", "H314", "H335"}, "Skin Corr. 1B", GISCHEM_DOC + "4435", "FOUND"),
    ("NH3-9.99", "NH3", 9.99, {"H290", "H314", "H335"}, None, "GisChem 5-<10 %", "FOUND"),
    ("NH3-10", "NH3", 10.0, {"H290", "H314", "H335", "H400"}, "Aquatic Acute 1", "GisChem ab 10 %", "FOUND"),
    # hydrofluoric acid: SCLs 7 % / 1 % / 0.1 %; GisChem and DGUV for acute toxicity
    ("HF-0.09", "HF", 0.09, set(), None, GISCHEM + "694", "FOUND"),
    ("HF-0.1", "HF", 0.1, {"H319"}, "Eye Irrit. 2", GISCHEM + "694", "FOUND"),
    ("HF-0.19", "HF", 0.19, {"H319"}, None, GISCHEM + "694", "FOUND"),
    ("HF-0.2", "HF", 0.2, {"H302", "H312", "H319"}, "Acute Tox. 4", GISCHEM + "4537", "FOUND"),
    ("HF-0.49", "HF", 0.49, {"H302", "H312", "H319"}, None, GISCHEM + "4537", "FOUND"),
    ("HF-0.5", "HF", 0.5, {"H301", "H310", "H331", "H319"}, None, "next band up (conservative)", "DERIVED"),
    ("HF-1", "HF", 1.0, {"H301", "H310", "H331", "H314", "EUH071"}, "Skin Corr. 1B", "GisChem SCL; DGUV up to 5 %", "FOUND"),
    ("HF-6.99", "HF", 6.99, {"H301", "H310", "H331", "H314", "EUH071"}, "Skin Corr. 1B", "DGUV band carried to 7 %", "DERIVED"),
    ("HF-7", "HF", 7.0, {"H300", "H310", "H330", "H314", "EUH071"}, "Skin Corr. 1A", GISCHEM + "696", "FOUND"),
    # phosphoric acid: SCLs 25 % / 10 % (from memory; former Annex I limits seen)
    ("H3PO4-0.99", "H3PO4", 0.99, set(), None, "expydoc (H290 from 1 %)", "PRACTICE"),
    ("H3PO4-9.99", "H3PO4", 9.99, {"H290"}, None, "Annex VI SCL from memory", "MEMORY"),
    ("H3PO4-10", "H3PO4", 10.0, {"H290", "H315", "H319"}, "Skin Irrit. 2", "SCL from memory; DSD Xi 10-25 %", "MEMORY"),
    ("H3PO4-24.99", "H3PO4", 24.99, {"H290", "H315", "H319"}, None, "SCL from memory", "MEMORY"),
    ("H3PO4-25", "H3PO4", 25.0, {"H290", "H314"}, "Skin Corr. 1B", "DGUV: above 25 % H290 H314", "FOUND"),
    # acetic acid: SCLs 90 % / 25 % / 10 %
    ("AcOH-9.99", "CH3COOH", 9.99, set(), None, "SCL from memory", "MEMORY"),
    ("AcOH-10", "CH3COOH", 10.0, {"H315", "H319"}, "Skin Irrit. 2", "SCL from memory", "MEMORY"),
    ("AcOH-25", "CH3COOH", 25.0, {"H314"}, "Skin Corr. 1B", "GisChem sheet 25-<90 %", "FOUND"),
    ("AcOH-89.99", "CH3COOH", 89.99, {"H314"}, "Skin Corr. 1B", "GisChem: flash point > 61 °C below 90 %", "FOUND"),
    ("AcOH-90", "CH3COOH", 90.0, {"H226", "H314"}, "Skin Corr. 1A", "SCL and H226 from memory", "MEMORY"),
    # formic acid: SCLs from memory; acute toxicity derived from LD50 730 mg/kg, LC50 7.4 mg/L
    ("HCOOH-1.99", "HCOOH", 1.99, set(), None, "SCL from memory", "MEMORY"),
    ("HCOOH-2", "HCOOH", 2.0, {"H315", "H319"}, "Skin Irrit. 2", "SCL from memory", "MEMORY"),
    ("HCOOH-10", "HCOOH", 10.0, {"H290", "H314"}, "Skin Corr. 1B", GISCHEM_DOC + "6345", "FOUND"),
    ("HCOOH-36.4", "HCOOH", 36.4, {"H290", "H314"}, None, "GisChem 10-<36 %: no acute toxicity", "FOUND"),
    ("HCOOH-36.5", "HCOOH", 36.5, {"H290", "H302", "H314"}, "Acute Tox. 4 (oral)", "730 / 0.365 = 2000 mg/kg", "DERIVED"),
    ("HCOOH-37", "HCOOH", 37.0, {"H290", "H302", "H332", "H314"}, "Acute Tox. 4 (inhalation)", "7.4 / 0.37 = 20 mg/L", "DERIVED"),
    ("HCOOH-73.99", "HCOOH", 73.99, {"H290", "H302", "H332", "H314"}, None, "7.4 / 0.74 = 10 mg/L", "DERIVED"),
    ("HCOOH-74", "HCOOH", 74.0, {"H290", "H302", "H331", "H314", "EUH071"}, "Acute Tox. 3", "7.4 / 0.74 = 10 mg/L", "DERIVED"),
    ("HCOOH-100", "HCOOH", 100.0, {"H226", "H290", "H302", "H331", "H314", "EUH071"}, "Skin Corr. 1A", "https://ssl.gischem.de/suche/dokument-komplett.htm?client_session_Dokument=237", "FOUND"),
    # perchloric acid: everything from memory
    ("HClO4-0.99", "HClO4", 0.99, set(), None, "SCL from memory", "MEMORY"),
    ("HClO4-1", "HClO4", 1.0, {"H272", "H290", "H315", "H319"}, "Ox. Liq. 2", "SCL from memory", "MEMORY"),
    ("HClO4-10", "HClO4", 10.0, {"H272", "H290", "H314"}, "Skin Corr. 1B", "SCL from memory", "MEMORY"),
    ("HClO4-49.99", "HClO4", 49.99, {"H272", "H290", "H314"}, "Skin Corr. 1B", "SCL from memory", "MEMORY"),
    ("HClO4-50", "HClO4", 50.0, {"H271", "H290", "H314"}, "Ox. Liq. 1", "SCL C > 50 % from memory", "MEMORY"),
    # copper(II) sulfate pentahydrate: Annex VI ATE 481 mg/kg, Eye Dam. 1, M = 10 / 1
    ("CuSO4aq-0.24", "CuSO4.5H2O", 0.24, set(), None, "100 x 0.25 % = 25 % (Table 4.1.2)", "DERIVED"),
    ("CuSO4aq-0.25", "CuSO4.5H2O", 0.25, {"H412"}, "Aquatic Chronic 3", "Table 4.1.2 with M = 1", "DERIVED"),
    ("CuSO4aq-1", "CuSO4.5H2O", 1.0, {"H319", "H412"}, "Eye Irrit. 2", "Table 3.3.3 1-3 %", "DERIVED"),
    ("CuSO4aq-2.49", "CuSO4.5H2O", 2.49, {"H319", "H412"}, None, "M = 10: 10 x 2.5 % = 25 %", "DERIVED"),
    ("CuSO4aq-2.5", "CuSO4.5H2O", 2.5, {"H319", "H400", "H411"}, "Aquatic Chronic 2", "M = 10 acute, M = 1 chronic", "DERIVED"),
    ("CuSO4aq-3", "CuSO4.5H2O", 3.0, {"H318", "H400", "H411"}, "Eye Dam. 1", "Table 3.3.3 >= 3 %", "DERIVED"),
    ("CuSO4aq-24.04", "CuSO4.5H2O", 24.04, {"H318", "H400", "H411"}, None, "481 / 0.2405 = 2000 mg/kg", "DERIVED"),
    ("CuSO4aq-24.05", "CuSO4.5H2O", 24.05, {"H302", "H318", "H400", "H411"}, "Acute Tox. 4", "481 / 0.2405 = 2000 mg/kg", "DERIVED"),
    ("CuSO4aq-100", "CuSO4.5H2O", 100.0, {"H302", "H318", "H400", "H410"}, "Aquatic Chronic 1", GISCHEM + "7372", "FOUND"),
    # salts and buffers: harmonised or self-classification from memory, generic limits
    ("Na2CO3-9.99", "Na2CO3", 9.99, set(), None, "Eye Irrit. 2 from memory, 10 % generic", "DERIVED"),
    ("Na2CO3-10", "Na2CO3", 10.0, {"H319"}, "Eye Irrit. 2", "Eye Irrit. 2 from memory, 10 % generic", "DERIVED"),
    ("sulfamic-9.99", "H3NSO3", 9.99, set(), None, "classification from memory, 10 % generic", "DERIVED"),
    ("sulfamic-10", "H3NSO3", 10.0, {"H315", "H319"}, "Skin Irrit. 2", "classification from memory", "DERIVED"),
    ("sulfamic-25", "H3NSO3", 25.0, {"H315", "H319", "H412"}, "Aquatic Chronic 3", "Chronic 3 >= 25 %", "DERIVED"),
    ("Tris-19.99", "Tris", 19.99, {"H315", "H319"}, None, "self-classification from memory", "DERIVED"),
    ("Tris-20", "Tris", 20.0, {"H315", "H319", "H335"}, "STOT SE 3", "STOT SE 3 generic 20 % from memory", "DERIVED"),
    ("NaHCO3", "NaHCO3", 8.0, set(), None, "no classification, from memory", "MEMORY"),
    ("KHP", "KHC8H4O4", 5.0, set(), None, "no classification, from memory", "MEMORY"),
]  # fmt: skip


@pytest.mark.parametrize(
    ("key", "percent", "codes", "category", "source", "status"),
    [r[1:] for r in BOUNDARY_RECORDS],
    ids=[r[0] for r in BOUNDARY_RECORDS],
)
def test_band_boundaries(key, percent, codes, category, source, status):
    _, _, statements, basis = hazard_statements(key, percent)
    assert {s.code for s in statements} == codes, (source, status, basis)
    if category is not None:
        assert category in basis, (source, status, basis)


# Whole label elements as published for one concentration (codes, signal word, pictograms).
# Each checks the pictogram precedence of CLP Article 26(1) against a published label.
LABEL_RECORDS = [
    # GisChem NaOH 0.5-<2 %: GHS05, Achtung (Warning), H290 H315 H319 -- GHS07 dropped (c)
    ("NaOH-1", "NaOH", 1.0, "Warning", ("GHS05",), GISCHEM + "4413", "FOUND"),
    # GisChem HNO3 5-<20 % Betriebsanweisung: GHS05 GHS07
    ("HNO3-10", "HNO3", 10.0, "Danger", ("GHS05", "GHS07"), "https://ssl.gischem.de/suche/dokument.htm?client_session_Dokument=4190", "FOUND"),
    # GisChem HNO3 65-<70 %: GHS03 GHS05 GHS06 -- GHS07 absent with GHS06 (b)
    ("HNO3-67", "HNO3", 67.0, "Danger", ("GHS03", "GHS05", "GHS06"), "https://gischem.de/suche/dokument.htm?client_session_Dokument=4285", "FOUND"),
    # GisChem ammonia 5-<10 %: GHS05 GHS07 (GHS07 kept for H335)
    ("NH3-7", "NH3", 7.0, "Danger", ("GHS05", "GHS07"), "https://gischem.de/suche/dokument.htm?client_session_Dokument=4435", "FOUND"),
    # GisChem ammonia ab 10 %: GHS05 GHS07 GHS09
    ("NH3-25", "NH3", 25.0, "Danger", ("GHS05", "GHS07", "GHS09"), "https://ssl.gischem.de/suche/dokument.htm?client_session_Dokument=6375", "FOUND"),
    # GisChem hydrofluoric acid: GHS06 GHS05
    ("HF-40", "HF", 40.0, "Danger", ("GHS05", "GHS06"), GISCHEM + "694", "FOUND"),
    # GisChem formic acid: GHS02 GHS05 GHS06 (H302 needs no GHS07 beside GHS06)
    ("HCOOH-100", "HCOOH", 100.0, "Danger", ("GHS02", "GHS05", "GHS06"), "https://ssl.gischem.de/suche/dokument-komplett.htm?client_session_Dokument=237", "FOUND"),
    # GisChem formic acid 10-<36 %: GHS05 only
    ("HCOOH-20", "HCOOH", 20.0, "Danger", ("GHS05",), "https://gischem.de/suche/dokument.htm?client_session_Dokument=6345", "FOUND"),
    # GisChem copper(II) sulfate pentahydrate: GHS09 GHS05 GHS07, Gefahr (Danger)
    ("CuSO4aq-100", "CuSO4.5H2O", 100.0, "Danger", ("GHS05", "GHS07", "GHS09"), GISCHEM + "7372", "FOUND"),
    # GisChem sulfuric acid: GHS05, Gefahr
    ("H2SO4-96", "H2SO4", 96.0, "Danger", ("GHS05",), "https://gischem.de/suche/dokument.htm?client_session_Dokument=4280", "FOUND"),
]  # fmt: skip


@pytest.mark.parametrize(
    ("key", "percent", "signal", "pictograms", "source", "status"),
    [r[1:] for r in LABEL_RECORDS],
    ids=[r[0] for r in LABEL_RECORDS],
)
def test_label_elements_match_published_labels(key, percent, signal, pictograms, source, status):
    got_signal, got_pictograms, _, basis = hazard_statements(key, percent)
    assert (got_signal, got_pictograms) == (signal, pictograms), (source, status, basis)


# Hazard-statement texts: CLP Annex III English text (UN GHS Rev. 9 (2021) Annex 3 has the
# same words; it spells "oxidizer" and omits the full stop).
STATEMENT_RECORDS = [
    ("H314", "Causes severe skin burns and eye damage.", "CLP Annex III via https://oryggi.hi.is/en/educational/laboratory/chemsafety/h-statements", "FOUND"),
    ("H290", "May be corrosive to metals.", "CLP Annex III via oryggi.hi.is (as above)", "FOUND"),
    ("H318", "Causes serious eye damage.", "CLP Annex III via oryggi.hi.is (as above)", "FOUND"),
    ("H315", "Causes skin irritation.", "CLP Annex III via oryggi.hi.is (as above)", "FOUND"),
    ("H319", "Causes serious eye irritation.", "supplier SDS list https://www.chemicalbook.com/msds/baclofen-d4.htm", "FOUND"),
    ("H335", "May cause respiratory irritation.", "CLP Annex I Table 3.8.4 https://reachonline.eu/clp/en/annex-i-3-3.8-3.8.4.html", "FOUND"),
    ("H272", "May intensify fire; oxidiser.", "CLP Annex III via oryggi.hi.is (as above)", "FOUND"),
]  # fmt: skip


@pytest.mark.parametrize(
    ("code", "text", "source", "status"),
    STATEMENT_RECORDS,
    ids=[r[0] for r in STATEMENT_RECORDS],
)
def test_hazard_statement_texts(code, text, source, status):
    assert ghs_data().statements[code].text == text, (source, status)


def test_h272_matches_the_un_ghs_wording_apart_from_spelling():
    # UN GHS Rev. 9 Annex 3 / US SDS wording: "May intensify fire; oxidizer." (VWR nitric
    # acid SDS, https://paperzz.com/doc/7986173/safety-data-sheet, FOUND)
    ghs = "May intensify fire; oxidizer."
    assert ghs_data().statements["H272"].text.replace("oxidiser", "oxidizer") == ghs
