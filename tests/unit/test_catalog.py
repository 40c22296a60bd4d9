"""Unit tests of the catalog: packaged data integrity, lookup, user entries, densities."""

from __future__ import annotations

from dataclasses import replace
from itertools import pairwise

import molmass
import pytest

from carboy.errors import CatalogError, InvalidInput, UnknownCompound
from carboy.model.catalog import (
    STATUSES,
    Catalog,
    default_catalog,
    density_at,
    make_user_compound,
    molarity_at,
    normalize_name,
)
from carboy.model.entities import Compound, Ion, System
from carboy.model.provenance import REQUIRED_WORDING


@pytest.fixture(scope="module")
def cat() -> Catalog:
    return default_catalog()


# ----------------------------------------------------------------------------- molar masses

# (compound key, expected g/mol, tolerance, source of the expected value)
MOLAR_MASSES = [
    ("KHC8H4O4", 204.2212, 0.001, "BAM certificate U2-0113 (FOUND)"),
    ("KHC8H4O4", 204.22, 0.005, "IUPAC standard atomic weights, abridged (MEMORY/DERIVED)"),
    ("Na2CO3", 105.988, 0.001, "pharmacopoeial HCl procedure, 1 mL 1 M HCl = 0.05299 g (FOUND)"),
    ("Na2CO3", 105.99, 0.005, "IUPAC standard atomic weights, abridged (MEMORY/DERIVED)"),
    ("Tris", 121.14, 0.005, "ACS Reagent Chemicals, Tris monograph (FOUND)"),
    ("H3NSO3", 97.09, 0.005, "Butler, Smith & Audrieth 1938; lab write-up (FOUND)"),
    ("H2SO4", 98.079, 0.002, "reference-data §4a header (DERIVED, IUPAC atomic weights)"),
    ("HCl", 36.461, 0.002, "reference-data §4b header (DERIVED, IUPAC atomic weights)"),
    ("HNO3", 63.013, 0.002, "reference-data §4c header (DERIVED, IUPAC atomic weights)"),
    ("H3PO4", 97.995, 0.002, "reference-data §4d header (DERIVED, IUPAC atomic weights)"),
    ("CH3COOH", 60.052, 0.002, "reference-data §4e header (DERIVED, IUPAC atomic weights)"),
    ("NaOH", 39.997, 0.002, "reference-data §4f (DERIVED, IUPAC atomic weights)"),
    ("KOH", 56.106, 0.002, "reference-data §4f (DERIVED, IUPAC atomic weights)"),
    ("NH3", 17.031, 0.002, "reference-data §4f (DERIVED, IUPAC atomic weights)"),
]


@pytest.mark.parametrize(("key", "expected", "tol", "source"), MOLAR_MASSES)
def test_molar_mass_against_reference(cat, key, expected, tol, source):
    assert cat.compounds[key].molar_mass_g_mol == pytest.approx(expected, abs=tol), source


def test_every_molar_mass_is_computed_from_its_formula(cat):
    for compound in cat.compounds.values():
        assert compound.molar_mass_g_mol == molmass.Formula(compound.formula).mass, compound.key


WATER = molmass.Formula("H2O").mass


@pytest.mark.parametrize(
    ("hydrate", "anhydrous", "n_water"),
    [
        ("H2C2O4.2H2O", "H2C2O4", 2),
        ("C6H8O7.H2O", "C6H8O7", 1),
        ("CH3COONa.3H2O", "CH3COONa", 3),
        ("Na3C6H5O7.2H2O", "Na3C6H5O7", 2),
        ("Tris-HCl", "Tris", 0),
    ],
)
def test_hydrates_and_salts_add_up(cat, hydrate, anhydrous, n_water):
    extra = n_water * WATER
    if hydrate == "Tris-HCl":
        extra = molmass.Formula("HCl").mass
    assert cat.compounds[hydrate].molar_mass_g_mol == pytest.approx(
        cat.compounds[anhydrous].molar_mass_g_mol + extra, abs=1e-9
    )


def test_acetic_abbreviations_are_names_not_formulas(cat):
    # "AcOH" would parse as actinium; the formula must be explicit.
    acetic = cat.compound("AcOH")
    assert acetic.formula == "CH3COOH"
    assert molmass.Formula(acetic.formula).formula == "C2H4O2"


# ----------------------------------------------------------------------------- required entries

REQUIRED_COMPOUNDS = """HCl HBr HI HNO3 HClO4 H2SO4 H3PO4 CO2 HF H3BO3 CH3COOH HCOOH C6H8O7 H2C2O4
CH3CH(OH)COOH H3NSO3 H2SO3 NaOH KOH LiOH Ca(OH)2 Mg(OH)2 NH3 Na2CO3 NaHCO3 K2CO3 KHCO3 NH4Cl NaCl
KCl NaNO3 Na2SO4 NaHSO4 K2SO4 NaH2PO4 Na2HPO4 Na3PO4 KH2PO4 K2HPO4 CH3COONa KHC8H4O4 Tris Tris-HCl
Na3C6H5O7 NaF CaCl2 MgSO4 CaCO3""".split()

REQUIRED_SYSTEMS = """hydrochloric hydrobromic hydroiodic nitric perchloric sulfate phosphate
carbonate fluoride borate sulfite sulfamate ammonium acetate formate citrate oxalate lactate
phthalate tris""".split()


def test_required_compounds_present(cat):
    assert set(REQUIRED_COMPOUNDS) <= set(cat.compounds)


def test_required_systems_and_ions_present(cat):
    assert set(REQUIRED_SYSTEMS) <= set(cat.systems)
    ions = {"Na+", "K+", "Ca+2", "Mg+2", "Li+", "Cl-", "Br-", "I-", "NO3-", "ClO4-"}
    assert ions <= set(cat.ions)


def test_forms(cat):
    assert cat.compounds["NH3"].form == "solution"
    assert cat.compounds["NaOH"].form == "solid"
    assert cat.compounds["H2SO4"].form == "liquid"
    assert all(c.form in {"solid", "liquid", "gas", "solution"} for c in cat.compounds.values())


# ----------------------------------------------------------------------------- systems


def test_pka_strictly_ascending_and_lengths_agree(cat):
    for system in cat.systems.values():
        assert all(b > a for a, b in pairwise(system.pka25)), system.key
        assert len(system.species) == system.n_steps + 1
        assert len(system.dh_kj) == len(system.dcp_j) == system.n_steps
        assert 0 <= system.strong_steps <= system.n_steps


def test_every_constant_has_a_source_and_status(cat):
    for key, system in cat.systems.items():
        assert system.source.strip(), key
        steps = cat.provenance(key)
        assert len(steps) == system.n_steps
        for step in steps:
            for what in ("pka", "dh", "dcp"):
                source = getattr(step, f"{what}_source")
                status = getattr(step, f"{what}_status")
                assert source.strip(), (key, what)
                assert status in STATUSES - {"USER"}, (key, what)
                for word in REQUIRED_WORDING.get(status, ()):
                    assert word in source.casefold(), (key, what, status)


def test_values_without_a_published_enthalpy_are_zero_and_say_so(cat):
    seen = 0
    for key, system in cat.systems.items():
        for j, step in enumerate(cat.provenance(key)):
            if step.dh_status == "NONE":
                seen += 1
                assert system.dh_kj[j] == 0.0
                assert "no published value used" in step.dh_source
            if step.dcp_status == "NONE":
                seen += 1
                assert system.dcp_j[j] == 0.0
                assert "no published value used" in step.dcp_source
    assert seen > 0, "no NONE constant found: the test checks nothing"


def test_strong_acids(cat):
    for key, anion, name in [
        ("hydrochloric", "Cl-", "hydrochloric acid"),
        ("hydrobromic", "Br-", "hydrobromic acid"),
        ("hydroiodic", "I-", "hydroiodic acid"),
        ("nitric", "NO3-", "nitric acid"),
        ("perchloric", "ClO4-", "perchloric acid"),
    ]:
        system = cat.systems[key]
        assert system.strong_steps == system.n_steps == 1
        assert system.species[-1] == anion
        assert cat.strong_acid_by_anion[anion] == name
    assert len(cat.strong_acid_by_anion) == 5
    assert dict(cat.compounds["HCl"].composition) == {"Cl-": 1}
    assert dict(cat.compounds["HClO4"].composition) == {"ClO4-": 1}


def test_sulfuric_first_step_strong_sulfamic_weak(cat):
    assert cat.systems["sulfate"].strong_steps == 1
    assert cat.systems["sulfate"].n_steps == 2
    assert cat.systems["sulfamate"].strong_steps == 0


def test_top_charges(cat):
    assert cat.systems["ammonium"].top_charge == 1
    assert cat.systems["tris"].top_charge == 1
    assert cat.systems["phosphate"].species == ("H3PO4", "H2PO4-", "HPO4-2", "PO4-3")
    assert cat.systems["phosphate"].bottom_charge == -3


def test_component_access(cat):
    assert isinstance(cat.component("phosphate"), System)
    assert isinstance(cat.component("Na+"), Ion)
    assert cat.is_system("carbonate") and not cat.is_system("Na+")
    assert cat.is_ion("Ca+2") and not cat.is_ion("carbonate")
    assert cat.ion_charge("Ca+2") == 2
    with pytest.raises(CatalogError, match="nope"):
        cat.component("nope")


# ----------------------------------------------------------------------------- compositions

# Elements other than H and O in one unit of each system's fully protonated form; with the
# ions' own elements this must reproduce every compound's formula (catches composition typos).
SYSTEM_ELEMENTS = {
    "sulfate": {"S": 1},
    "phosphate": {"P": 1},
    "carbonate": {"C": 1},
    "fluoride": {"F": 1},
    "borate": {"B": 1},
    "sulfite": {"S": 1},
    "sulfamate": {"N": 1, "S": 1},
    "ammonium": {"N": 1},
    "acetate": {"C": 2},
    "formate": {"C": 1},
    "citrate": {"C": 6},
    "oxalate": {"C": 2},
    "lactate": {"C": 3},
    "phthalate": {"C": 8},
    "tris": {"C": 4, "N": 1},
    "chromate": {"Cr": 1},
    "cyanide": {"C": 1, "N": 1},
    "sulfide": {"S": 1},
    "hypochlorite": {"Cl": 1},
    "azide": {"N": 3},
}

# Hydroxide ions per formula unit of the metal hydroxides and free protons of the strong
# acids: neither is a component (the charge balance supplies them), so they are listed here.
HYDROXIDES = {"NaOH": 1, "KOH": 1, "LiOH": 1, "Ca(OH)2": 2, "Mg(OH)2": 2}
STRONG_PROTONS = {"HCl": 1, "HBr": 1, "HI": 1, "HNO3": 1, "HClO4": 1}


def _heavy_elements(formula: str) -> dict[str, int]:
    comp = molmass.Formula(formula).composition()
    return {el: item.count for el, item in comp.items() if el not in ("H", "O", "e-")}


def test_composition_keys_resolve(cat):
    for compound in cat.compounds.values():
        assert compound.composition, compound.key
        for part, count in compound.composition.items():
            found = cat.component(part)
            assert isinstance(found, (System, Ion)) and found.key == part, (compound.key, part)
            assert cat.is_system(part) != cat.is_ion(part), (compound.key, part)
            assert isinstance(count, int) and count >= 1, (compound.key, part)


def test_a_composition_naming_no_component_is_refused(cat):
    bad = replace(cat.compounds["NaCl"], key="NaQ", formula="NaCl2", aliases=(),
                  name="not a salt", composition={"Na+": 1, "chlorine": 1})
    with pytest.raises(CatalogError, match="'chlorine'"):
        cat.with_user(compounds=[bad])


def test_composition_reproduces_formula_elements(cat):
    for compound in cat.compounds.values():
        expected: dict[str, int] = {}
        for part, count in compound.composition.items():
            if cat.is_ion(part):
                elements = _heavy_elements(part.rstrip("+-0123456789"))
            else:
                elements = SYSTEM_ELEMENTS[part]
            for el, n in elements.items():
                expected[el] = expected.get(el, 0) + n * count
        assert _heavy_elements(compound.formula) == expected, compound.key


def test_some_protonation_state_makes_each_compound_neutral(cat):
    for compound in cat.compounds.values():
        low = high = STRONG_PROTONS.get(compound.key, 0) - HYDROXIDES.get(compound.key, 0)
        for part, count in compound.composition.items():
            found = cat.component(part)
            if isinstance(found, Ion):
                low += count * found.charge
                high += count * found.charge
            else:
                low += count * found.bottom_charge
                high += count * found.top_charge
        assert low <= 0 <= high, compound.key


def test_no_compound_uses_an_all_strong_system(cat):
    for compound in cat.compounds.values():
        for part in compound.composition:
            if cat.is_system(part):
                system = cat.systems[part]
                assert system.strong_steps < system.n_steps, compound.key


# ----------------------------------------------------------------------------- hazards


def test_hazard_vocabulary(cat):
    required = {"corrosive", "oxidizer", "acutely_toxic", "hf_type", "heavy_metal", "carbonate_gas"}
    assert required <= set(cat.hazard_tags)
    for compound in cat.compounds.values():
        assert compound.hazards <= set(cat.hazard_tags), compound.key


def test_safety_critical_tags(cat):
    hf = cat.compounds["HF"].hazards
    assert {"acutely_toxic", "hf_type", "no_drain", "corrosive"} <= hf
    assert {"hf_type", "acutely_toxic", "no_drain"} <= cat.compounds["NaF"].hazards
    assert {"oxidizer", "no_drain", "corrosive"} <= cat.compounds["HClO4"].hazards
    assert {"oxidizer", "corrosive"} <= cat.compounds["HNO3"].hazards
    for key in ["HCl", "HBr", "HI", "H2SO4", "H3PO4", "CH3COOH", "HCOOH", "NaOH", "KOH", "NH3"]:
        assert "corrosive" in cat.compounds[key].hazards, key
    for key in ["Na2CO3", "NaHCO3", "K2CO3", "KHCO3", "CaCO3"]:
        assert "carbonate_gas" in cat.compounds[key].hazards, key
    for key in ["NaCl", "KCl", "Na2SO4"]:
        assert not cat.compounds[key].hazards, key


# ----------------------------------------------------------------------------- lookup


@pytest.mark.parametrize(
    ("text", "key"),
    [
        ("NaOH", "NaOH"),
        ("H2SO4", "H2SO4"),
        ("sodium hydroxide", "NaOH"),
        ("Sodium  Hydroxide", "NaOH"),
        ("acetic", "CH3COOH"),
        ("Acetic Acid", "CH3COOH"),
        ("glacial acetic acid", "CH3COOH"),
        ("AcOH", "CH3COOH"),
        ("HOAc", "CH3COOH"),
        ("  acetic acid ", "CH3COOH"),
        ("HC2H3O2", "CH3COOH"),
        ("KHP", "KHC8H4O4"),
        ("potassium hydrogen phthalate", "KHC8H4O4"),
        ("potassium-hydrogen-phthalate", "KHC8H4O4"),
        ("Tris", "Tris"),
        ("THAM", "Tris"),
        ("tris(hydroxymethyl)aminomethane", "Tris"),
        ("Tris-HCl", "Tris-HCl"),
        ("tris hcl", "Tris-HCl"),
        ("sulfuric", "H2SO4"),
        ("sulphuric acid", "H2SO4"),
        ("H2NSO3H", "H3NSO3"),
        ("dissolved carbon dioxide", "CO2"),
        ("aqueous ammonia", "NH3"),
        ("sodium acetate", "CH3COONa"),
        ("sodium citrate", "Na3C6H5O7"),
    ],
)
def test_lookup(cat, text, key):
    assert cat.compound(text).key == key
    assert text in cat


@pytest.mark.parametrize("text", ["naoh", "NAOH", "h2so4", "HCL", "kcl"])
def test_formulas_are_case_sensitive(cat, text):
    with pytest.raises(UnknownCompound) as info:
        cat.compound(text)
    assert info.value.name == text
    assert text not in cat


def test_case_sensitive_formula_error_suggests_the_formula(cat):
    with pytest.raises(UnknownCompound) as info:
        cat.compound("naoh")
    assert info.value.suggestions[0] == "NaOH"


def test_unknown_name_suggests_close_matches(cat):
    with pytest.raises(UnknownCompound) as info:
        cat.compound("acetik")
    assert "acetic acid" in info.value.suggestions
    assert len(info.value.suggestions) <= 3
    assert "acetic acid" in str(info.value)


def test_unknown_name_far_from_everything(cat):
    with pytest.raises(UnknownCompound) as info:
        cat.compound("qqqqzzzz")
    assert info.value.suggestions == ()
    assert isinstance(info.value, KeyError)


def test_lookup_rejects_non_strings(cat):
    with pytest.raises(InvalidInput):
        cat.compound(42)  # type: ignore[arg-type]


def test_normalize_name():
    assert normalize_name("  Glacial   Acetic-Acid ") == "glacial acetic"
    assert normalize_name("acid") == "acid"
    assert normalize_name("o-Phosphoric acid") == "o phosphoric"


def test_search(cat):
    assert cat.search("KHP")[0].key == "KHC8H4O4"
    phosphates = {c.key for c in cat.search("phosphate")}
    assert {"NaH2PO4", "Na2HPO4", "Na3PO4", "KH2PO4", "K2HPO4"} <= phosphates
    assert cat.search("sulfuric")[0].key == "H2SO4"
    assert cat.search("acetik")[0].key == "CH3COOH"
    assert len(cat.search("")) == len(cat.compounds)
    assert cat.search("qqqqzzzz") == []


# ----------------------------------------------------------------------------- catalog object


def test_default_catalog_is_cached():
    assert default_catalog() is default_catalog()


def test_mappings_are_read_only(cat):
    with pytest.raises(TypeError):
        cat.compounds["X"] = cat.compounds["NaCl"]  # type: ignore[index]
    with pytest.raises(TypeError):
        cat.systems["x"] = cat.systems["phosphate"]  # type: ignore[index]
    with pytest.raises(AttributeError):
        cat.spare = 1  # type: ignore[attr-defined]


# ----------------------------------------------------------------------------- user entries


def _mes(**overrides):
    fields = dict(
        key="MES",
        name="MES buffer acid",
        formula="C6H13NO4S",
        pka=[6.27],
        top_charge=0,
        source="from memory (user entry)",
    )
    fields.update(overrides)
    return fields


def test_make_user_compound_and_with_user(cat):
    system, compound = make_user_compound(**_mes(aliases=["2-(N-morpholino)ethanesulfonic acid"]))
    assert system is not None
    assert system.species == ("HMES", "MES-")
    assert system.dh_kj == (0.0,)
    assert compound.user_defined
    assert compound.molar_mass_g_mol == pytest.approx(195.237, abs=0.002)
    extended = cat.with_user(systems=[system], compounds=[compound])
    assert extended is not cat
    assert "MES" not in cat.compounds
    assert extended.compound("MES").user_defined
    assert extended.compound("2-(N-morpholino)ethanesulfonic acid").key == "MES"
    assert extended.provenance("MES")[0].pka_status == "USER"
    assert extended.compound("NaOH") == cat.compound("NaOH")
    assert extended.strong_acid_by_anion == cat.strong_acid_by_anion


def test_user_salt_of_an_existing_system(cat):
    system, compound = make_user_compound(
        key="Na2B4O7.10H2O",
        name="borax",
        formula="Na2B4O7.10H2O",
        counter_ions={"Na+": 2, "borate": 4},
        source="user entry",
    )
    assert system is None
    assert compound.molar_mass_g_mol == pytest.approx(381.37, abs=0.01)  # IUPAC (MEMORY/DERIVED)


def test_user_amine_with_counter_ion(cat):
    system, compound = make_user_compound(
        key="BisTrisHCl",
        name="Bis-Tris hydrochloride",
        formula="C8H19NO5.HCl",
        pka=[6.46],
        top_charge=1,
        counter_ions={"Cl-": 1},
        source="from memory (user entry)",
    )
    assert system.species == ("HBisTrisHCl+", "BisTrisHCl")
    assert dict(compound.composition) == {"Cl-": 1, "BisTrisHCl": 1}


def test_user_hydroxide_base(cat):
    _, compound = make_user_compound(
        key="NaOH.H2O",
        name="sodium hydroxide monohydrate",
        formula="NaOH.H2O",
        counter_ions={"Na+": 1},
        hydroxide=1,
        hazards=["corrosive"],
        source="user entry",
    )
    assert compound.hazards == {"corrosive"}
    with pytest.raises(CatalogError, match="cannot be neutral"):
        make_user_compound(
            key="NaOH.H2O",
            name="x",
            formula="NaOH.H2O",
            counter_ions={"Na+": 1},
            source="user entry",
        )


@pytest.mark.parametrize(
    ("overrides", "match"),
    [
        ({"pka": [7.5, 6.0]}, r"MES.*\[7\.5, 6\.0\].*not strictly ascending"),
        ({"pka": [6.0, 6.0]}, "not strictly ascending"),
        ({"pka": [float("nan")]}, "non-finite"),
        ({"pka": [float("inf")]}, "non-finite"),
        ({"pka": ["6.2"]}, "non-finite"),
        ({"dh_kj": [1.0, 2.0]}, "2 enthalpies given for 1 steps"),
        ({"dh_kj": [float("nan")]}, "non-finite"),
        ({"species": ["HMES", "MES-", "MES-2"]}, "3 species given for 1 steps"),
        ({"species": ["HMES", "MES"]}, "written with charge"),
        ({"top_charge": 0.5}, "not an integer"),
        ({"top_charge": True}, "not an integer"),
        ({"strong_steps": 2}, "strong_steps"),
        ({"formula": "C6H13NO4Xq"}, "C6H13NO4Xq"),
        ({"formula": ""}, "empty"),
        ({"counter_ions": {"Zz+": 1}}, "'Zz\\+'"),
        ({"counter_ions": {"Na+": 0}}, "not positive"),
        ({"counter_ions": {"Na+": 1.5}}, "not positive"),
        ({"counter_ions": {"hydrochloric": 1}}, "all strong: use 'Cl-'"),
        ({"counter_ions": {"Ca+2": 1}}, "cannot be neutral"),
        ({"key": "NaOH"}, "already exists"),
        ({"key": "phosphate"}, "already exists"),
        ({"key": "Na+"}, "already exists"),
        ({"source": ""}, "source"),
        ({"hazards": ["spicy"]}, "spicy"),
        ({"form": "plasma"}, "plasma"),
        ({"aliases": ["sodium hydroxide"]}, "also belongs to 'NaOH'"),
    ],
)
def test_user_validation_errors(overrides, match):
    with pytest.raises(CatalogError, match=match):
        make_user_compound(**_mes(**overrides))


def test_with_user_validates_raw_entries(cat):
    bad_system = System(
        key="mystery",
        name="mystery acid",
        species=("H2M", "HM-", "M-2"),
        top_charge=0,
        pka25=(9.0, 4.0),
        dh_kj=(0.0, 0.0),
        dcp_j=(0.0, 0.0),
        source="user entry",
    )
    with pytest.raises(CatalogError) as info:
        cat.with_user(systems=[bad_system])
    assert info.value.entry == "mystery"
    assert "[9.0, 4.0]" in str(info.value)

    unsourced = replace(bad_system, pka25=(4.0, 9.0), source="")
    with pytest.raises(CatalogError, match="no source"):
        cat.with_user(systems=[unsourced])

    compound = Compound(
        key="Mystery",
        formula="C3H4O4",
        name="mystery",
        aliases=(),
        composition={"nothing": 1},
        molar_mass_g_mol=0.0,
    )
    with pytest.raises(CatalogError, match="'nothing'"):
        cat.with_user(compounds=[compound])

    unparsable = replace(compound, formula="CH3COOQ", composition={"acetate": 1})
    with pytest.raises(CatalogError, match="CH3COOQ"):
        cat.with_user(compounds=[unparsable])

    same_formula = replace(compound, formula="C2H2O4", composition={"oxalate": 1})
    with pytest.raises(CatalogError, match="also belongs to 'H2C2O4'"):
        cat.with_user(compounds=[same_formula])

    fixed = replace(compound, composition={"oxalate": 1}, molar_mass_g_mol=1.0)
    extended = cat.with_user(compounds=[fixed])
    assert extended.compounds["Mystery"].molar_mass_g_mol == pytest.approx(104.061, abs=0.002)


# ----------------------------------------------------------------------------- densities


def test_density_tables_attached(cat):
    for key in ["H2SO4", "HCl", "HNO3", "H3PO4", "CH3COOH", "NaOH", "KOH", "NH3"]:
        table = cat.compounds[key].density
        assert table is not None, key
        assert table.temperature_c == 20.0
        assert table.source.strip()
        rows = cat.density_rows(key)
        assert len(rows) == len(table.mass_percent)
        for row in rows:
            assert row.status in STATUSES - {"USER"} and row.source.strip()
            for word in REQUIRED_WORDING.get(row.status, ()):
                assert word in row.source.casefold(), (key, row)


def test_density_interpolation_at_rows_and_between(cat):
    assert density_at("H2SO4", 96) == 1.8355
    assert density_at(cat.compounds["HCl"], 37) == pytest.approx(1.1837, abs=1e-9)
    assert density_at("NaOH", 0) == pytest.approx(0.9982)
    assert molarity_at("NaOH", 50) == pytest.approx(19.068, abs=0.002)


@pytest.mark.parametrize(("key", "w"), [("HCl", 41), ("HCl", -1), ("NH3", 31), ("NaOH", 50.5)])
def test_density_outside_table_is_an_error(key, w):
    with pytest.raises(InvalidInput, match="outside the density table"):
        density_at(key, w)


def test_density_needs_a_table_and_a_number():
    with pytest.raises(InvalidInput, match="no density table"):
        density_at("NaCl", 5)
    with pytest.raises(InvalidInput, match="finite"):
        density_at("HCl", float("nan"))
