"""The packaged data files as a whole: one status vocabulary, compound keys that exist,
where each compound appears, rules across files, and loaders that name file/entry/field."""

from __future__ import annotations

import copy

import pytest

from carboy.errors import CatalogError
from carboy.model import compatibility, datafiles, disposal_profile, metals, upkeep
from carboy.model.catalog_files import load_builtin
from carboy.model.datafiles import DATA_FILES, compound_keys_by_file, read_data_file
from carboy.model.ghs import ghs_data, parse_ghs
from carboy.model.handling import handling, parse_handling
from carboy.model.ion_pairs import parse_ion_pairs
from carboy.model.pitzer_data import parse_pitzer_data
from carboy.model.planning_data import validate_planning
from carboy.model.preparation import parse_source
from carboy.model.provenance import (
    PACKAGED_STATUSES,
    REQUIRED_WORDING,
    STATUSES,
    check_provenance,
)
from carboy.model.standards_data import parse_standards, titrants

# ----------------------------------------------------------------------------- where compounds are

# Every catalog compound and the data files holding an entry for it (file names without
# ".toml").  Adding a compound, or giving one a density table, GHS bands, a standard's
# role, heats, upkeep or handling data, changes this listing on purpose: update it in the
# same change (DEVELOPERS.md, "Adding a compound").
EXPECTED_APPEARANCES = {
    "HCl":            ("compounds", "densities", "ghs", "standards", "planning", "upkeep", "handling"),
    "HBr":            ("compounds", "planning"),
    "HI":             ("compounds", "planning"),
    "HNO3":           ("compounds", "densities", "ghs", "standards", "planning", "upkeep", "handling",
                       "disposal_rules"),
    "HClO4":          ("compounds", "ghs", "planning", "upkeep", "disposal_rules"),
    "H2SO4":          ("compounds", "densities", "ghs", "standards", "planning", "upkeep", "handling",
                       "compatibility"),
    "H3PO4":          ("compounds", "densities", "ghs", "planning", "upkeep", "handling"),
    "CO2":            ("compounds",),
    "HF":             ("compounds", "ghs", "planning", "disposal_rules"),
    "H3BO3":          ("compounds",),
    "H2SO3":          ("compounds",),
    "H3NSO3":         ("compounds", "ghs", "standards", "upkeep"),
    "CH3COOH":        ("compounds", "densities", "ghs", "planning", "upkeep", "handling"),
    "HCOOH":          ("compounds", "ghs", "planning"),
    "C6H8O7":         ("compounds",),
    "C6H8O7.H2O":     ("compounds",),
    "H2C2O4":         ("compounds",),
    "H2C2O4.2H2O":    ("compounds",),
    "CH3CH(OH)COOH":  ("compounds",),
    "NaOH":           ("compounds", "densities", "ghs", "standards", "planning", "upkeep", "handling"),
    "KOH":            ("compounds", "densities", "ghs", "standards", "planning", "upkeep", "handling"),
    "LiOH":           ("compounds", "planning", "upkeep", "handling"),
    "Ca(OH)2":        ("compounds", "planning", "upkeep"),
    "Mg(OH)2":        ("compounds", "planning"),
    "NH3":            ("compounds", "densities", "ghs", "planning", "upkeep", "handling"),
    "Na2CO3":         ("compounds", "ghs", "standards", "planning"),
    "NaHCO3":         ("compounds", "ghs", "planning"),
    "K2CO3":          ("compounds", "planning"),
    "KHCO3":          ("compounds",),
    "CaCO3":          ("compounds",),
    "NH4Cl":          ("compounds", "planning"),
    "NaCl":           ("compounds", "planning"),
    "KCl":            ("compounds",),
    "CaCl2":          ("compounds",),
    "NaNO3":          ("compounds", "planning"),
    "Na2SO4":         ("compounds",),
    "NaHSO4":         ("compounds",),
    "K2SO4":          ("compounds",),
    "MgSO4":          ("compounds",),
    "NaH2PO4":        ("compounds",),
    "Na2HPO4":        ("compounds",),
    "Na3PO4":         ("compounds",),
    "KH2PO4":         ("compounds",),
    "K2HPO4":         ("compounds",),
    "CH3COONa":       ("compounds", "planning"),
    "CH3COONa.3H2O":  ("compounds", "planning"),
    "Na3C6H5O7":      ("compounds",),
    "Na3C6H5O7.2H2O": ("compounds",),
    "NaF":            ("compounds", "planning"),
    "CrO3":           ("compounds",),
    "K2Cr2O7":        ("compounds",),
    "CuSO4":          ("compounds", "ghs"),
    "CuSO4.5H2O":     ("compounds", "ghs"),
    "ZnCl2":          ("compounds",),
    "NiCl2":          ("compounds",),
    "Pb(NO3)2":       ("compounds",),
    "AgNO3":          ("compounds", "planning"),
    "NaCN":           ("compounds", "planning"),
    "KCN":            ("compounds",),
    "Na2S":           ("compounds",),
    "Na2S.9H2O":      ("compounds",),
    "KHC8H4O4":       ("compounds", "ghs", "standards"),
    "Tris":           ("compounds", "ghs", "standards"),
    "Tris-HCl":       ("compounds",),
    "NaOCl":          ("compounds",),
    "Ca(OCl)2":       ("compounds",),
    "NaN3":           ("compounds",),
    "(NH4)2SO4":      ("compounds",),
    "NH4NO3":         ("compounds",),
    "AlCl3":          ("compounds",),
    "Al2(SO4)3":      ("compounds",),
    "FeCl3":          ("compounds",),
    "CdCl2":          ("compounds",),
    "Cr(NO3)3.9H2O":  ("compounds",),
    "MnSO4":          ("compounds",),
}  # fmt: skip


def test_every_compound_key_in_every_data_file_names_a_catalog_compound(catalog):
    unknown = {
        name: sorted(keys - set(catalog.compounds))
        for name, keys in compound_keys_by_file().items()
    }
    assert {name: keys for name, keys in unknown.items() if keys} == {}


def test_where_each_compound_appears(catalog):
    by_file = compound_keys_by_file()
    actual = {
        key: tuple(name.removesuffix(".toml") for name, keys in by_file.items() if key in keys)
        for key in catalog.compounds
    }
    assert actual == EXPECTED_APPEARANCES


def test_the_keyed_files_are_every_data_file_holding_compounds():
    # systems.toml, metals.toml, pitzer.toml and ion_pairs.toml hold systems and ions only
    holding_ions = {"systems.toml", "metals.toml", "pitzer.toml", "ion_pairs.toml"}
    assert set(compound_keys_by_file()) == set(DATA_FILES) - holding_ions


# ----------------------------------------------------------------------------- rules across files


def test_a_compound_with_a_density_table_has_ghs_bands_for_its_dilutions(catalog):
    with_table = {key for key, c in catalog.compounds.items() if c.density is not None}
    assert with_table, "no density tables found"
    assert with_table - set(ghs_data().compounds) == set()


def test_every_titrant_has_a_recheck_interval():
    assert set(titrants()) - set(upkeep.recheck_defaults()) == set()


@pytest.mark.parametrize("section", ["fume_hood_from_percent", "weigh_from_percent"])
def test_bench_thresholds_lie_inside_the_density_table(catalog, section):
    facts = getattr(handling(), section)
    assert facts
    for key, fact in facts.items():
        table = catalog.compounds[key].density
        assert table is not None, key
        assert table.mass_percent[0] <= fact.value <= table.mass_percent[-1], key


def test_every_supplied_strength_parses_as_a_solution_source():
    facts = handling().supplied_strength
    assert facts
    for key, fact in facts.items():
        source = parse_source(f"{key}={fact.value}")
        assert (source.kind, source.key) == ("solution", key)


def test_hygroscopic_entries_are_solids(catalog):
    assert handling().hygroscopic_solids
    for key in handling().hygroscopic_solids:
        assert catalog.compounds[key].form == "solid", key


# ----------------------------------------------------------------------------- one vocabulary


def _status_source_pairs(value, path=""):
    """(where, status, source) for every status in a parsed file, density rows included."""
    if isinstance(value, dict):
        for key, item in value.items():
            if key == "status":
                yield path, item, value.get("source")
            elif key.endswith("_status"):
                yield f"{path}.{key}", item, value.get(key.removesuffix("_status") + "_source")
            elif key == "rows" and isinstance(item, list):
                for row in item:
                    yield f"{path}.rows {row[0]}", row[2], row[3]
            else:
                yield from _status_source_pairs(item, f"{path}.{key}")
    elif isinstance(value, list):
        for i, item in enumerate(value):
            yield from _status_source_pairs(item, f"{path}[{i}]")


def _expand(source, sources):
    head = str(source).split(";")[0].strip()
    return sources[head] + str(source) if head in sources else source


@pytest.mark.parametrize("name", DATA_FILES)
def test_every_status_in_the_file_is_in_the_one_vocabulary_with_its_wording(name):
    data = read_data_file(name)
    sources = data.get("sources", {}) if name == "ghs.toml" else {}
    found = list(_status_source_pairs(data))
    assert found, f"{name} carries no statuses"
    bad_status = [(where, status) for where, status, _ in found if status not in PACKAGED_STATUSES]
    assert bad_status == []
    unworded = [
        (where, status)
        for where, status, source in found
        if not any(w in _expand(source, sources).casefold() for w in REQUIRED_WORDING.get(status, ("",)))
    ]
    assert unworded == []


def test_the_vocabulary_is_the_one_every_module_checks_against():
    from carboy.model import catalog, standardization

    assert catalog.STATUSES == STATUSES
    assert standardization.STATUSES == PACKAGED_STATUSES == STATUSES - {"USER"}


@pytest.mark.parametrize(
    ("status", "source", "ok"),
    [
        ("MEMORY", "CRC, from memory", True),
        ("MEMORY", "CRC Handbook", False),
        ("PRACTICE", "Common practice: stable when closed", True),
        ("PRACTICE", "stable when closed", False),
        ("RECONSTRUCTED", "CRC concentrative, column reconstructed", True),
        ("RECONSTRUCTED", "CRC concentrative", False),
        ("ASSUMPTION", "assumed 100 % when none is entered", True),
        ("ASSUMPTION", "taken as 100 %", False),
        ("NONE", "no published value used", True),
        ("NONE", "neglected", False),
        ("FOUND", "CRC Handbook 86th ed.", True),
        ("DERIVED", "ΔfH difference", True),
        ("USER", "my notebook", False),  # USER is for user entries, never packaged data
        ("FOUND*", "CRC", False),  # the old spellings are gone
        ("COMMON-PRACTICE", "common practice", False),
    ],
)
def test_check_provenance(status, source, ok):
    if ok:
        assert check_provenance("file: entry", "field", status, source).status == status
    else:
        with pytest.raises(CatalogError) as err:
            check_provenance("file: entry", "field", status, source)
        assert err.value.entry == "file: entry" and "field" in err.value.reason


def test_user_status_is_allowed_where_asked_for():
    assert check_provenance("MES", "step 1 pka", "USER", "my notebook", allowed=STATUSES).source


# ----------------------------------------------------------------------------- loaders name the place


def _load(name, raw):
    """Run the loader of data file ``name`` on ``raw`` (catalog and upkeep read the file)."""
    if name in ("systems.toml", "compounds.toml", "densities.toml"):
        return load_builtin()
    if name == "upkeep.toml":
        return upkeep._read("recheck_days"), upkeep._read("shelf_life_days", frozenset({"default"}))
    if name == "compatibility.toml":
        return compatibility._settings.__wrapped__()
    if name == "metals.toml":
        return metals.metal_data.__wrapped__()
    if name == "disposal_rules.toml":
        return disposal_profile._shipped.__wrapped__()
    return {
        "ghs.toml": parse_ghs,
        "standards.toml": parse_standards,
        "planning.toml": validate_planning,
        "handling.toml": parse_handling,
        "pitzer.toml": parse_pitzer_data,
        "ion_pairs.toml": parse_ion_pairs,
    }[name](raw)


def _with_file(monkeypatch, name, raw):
    real = datafiles.read_data_file
    monkeypatch.setattr(
        datafiles, "read_data_file", lambda n: copy.deepcopy(raw) if n == name else real(n)
    )


def _set(path, value):
    """A change to a parsed file: set the item at ``path`` (keys and list indices)."""

    def change(data):
        *head, last = path
        for step in head:
            data = data[step]
        if value is _DELETE:
            del data[last]
        else:
            data[last] = value

    return change


_DELETE = object()

BROKEN = [
    # (file, change, words the error must contain: file, entry, field or rule)
    ("systems.toml", _set(("systems", 0, "steps", 0, "pka"), _DELETE),
     ("systems.toml", "hydrochloric step 1", "'pka'")),
    ("systems.toml", _set(("ions", 0, "status"), "GUESS"), ("systems.toml", "Na+", "status")),
    ("systems.toml", _set(("systems", 6, "steps", 1, "pka"), 0.5),
     ("systems.toml", "phosphate", "not strictly ascending")),
    ("compounds.toml", _set(("compounds", 0, "hazards"), ["spicy"]),
     ("compounds.toml", "HCl", "hazard tags")),
    ("compounds.toml", _set(("compounds", 1, "formula"), _DELETE),
     ("compounds.toml", "HBr", "'formula'")),
    ("compounds.toml", _set(("defaults", "status"), "FOUND-SRC"),
     ("compounds.toml", "[defaults]", "FOUND-SRC")),
    ("densities.toml", _set(("tables", "H2SO4", "rows", 0, 2), "FOUND*"),
     ("densities.toml", "H2SO4", "status")),
    ("densities.toml", _set(("tables", "H2SO4", "rows", 4, 3), "CRC concentrative"),
     ("densities.toml", "H2SO4", "reconstructed")),
    ("densities.toml", _set(("tables", "HCl", "temperature_c"), _DELETE),
     ("densities.toml", "HCl", "'temperature_c'")),
    ("ghs.toml", _set(("statements", "H290", "status"), "COMMON-PRACTICE"),
     ("ghs.toml", "H290", "status")),
    ("ghs.toml", _set(("compounds", 0, "key"), "Unobtainium"),
     ("ghs.toml", "Unobtainium", "not a compound")),
    ("ghs.toml", _set(("precedence", "status"), "MEMORY"), ("ghs.toml", "[precedence]", "from memory")),
    ("standards.toml", _set(("standards", 0, "assay_percent", "source"), "taken as 100 %"),
     ("standards.toml", "KHC8H4O4 [assay_percent]", "assum")),
    ("standards.toml", _set(("titrants", 0, "kind"), _DELETE), ("standards.toml", "NaOH", "'kind'")),
    ("standards.toml", _set(("acceptance", "alpha", "value"), 0.01),
     ("standards.toml", "[acceptance.alpha]", "'value'")),
    ("planning.toml", _set(("thresholds", "rise_warn_k"), _DELETE),
     ("planning.toml", "[thresholds]", "'rise_warn_k'")),
    ("planning.toml", _set(("heat_of_solution", "NaQ"), {"dh_kj": 1.0, "status": "FOUND", "source": "x"}),
     ("planning.toml", "NaQ", "not a compound")),
    ("planning.toml", _set(("slurry", "Ca(OH)2"), "unobtainium"),
     ("planning.toml", "[slurry]", "Ca(OH)2")),
    ("planning.toml", _set(("stages", "cumulative_fractions"), [0.8, 0.9]),
     ("planning.toml", "[stages]", "1.0")),
    ("planning.toml", _set(("dilution", "HCl", "released_kj"), [1.0, 2.0]),
     ("planning.toml", "[dilution.HCl]", "2 heats given")),
    ("planning.toml", _set(("stages", "source"), "carboy's choice"),
     ("planning.toml", "[stages]", "common practice")),
    ("upkeep.toml", _set(("recheck_days", "NaOH", "days"), 0), ("upkeep.toml", "NaOH", "'days'")),
    ("upkeep.toml", _set(("recheck_days", "NaOH", "source"), "absorbs CO2"),
     ("upkeep.toml", "NaOH", "common practice")),
    ("upkeep.toml", _set(("shelf_life_days", "Qq"), {"days": 5, "status": "PRACTICE",
                                                   "source": "common practice"}),
     ("upkeep.toml", "Qq", "not a compound")),
    ("handling.toml", _set(("fume_hood_from_percent", "HCl", "percent"), 125.0),
     ("handling.toml", "HCl", "'percent'")),
    ("handling.toml", _set(("hygroscopic_solids", "NaOH", "source"), "takes up water"),
     ("handling.toml", "NaOH", "common practice")),
    ("handling.toml", _set(("weigh_from_percent", "Unobtainium"), {"percent": 50.0}),
     ("handling.toml", "Unobtainium", "not a compound")),
    ("compatibility.toml", _set(("rules", 2, "source"), "Bretherick's Handbook"),
     ("compatibility.toml", "hypochlorite-acid", "from memory")),
    ("compatibility.toml", _set(("rules", 0, "hazard"), _DELETE),
     ("compatibility.toml", "'hazard'", "missing")),
    ("compatibility.toml", _set(("streams", 0, "drain_treatable"), "yes"),
     ("compatibility.toml", "'drain_treatable'", "true or false")),
    ("compatibility.toml", _set(("concentrated_molar",), -1.0),
     ("compatibility.toml", "'concentrated_molar'", "above 0")),
    ("metals.toml", _set(("metals", 0, "species", 0, "status"), "GUESS"),
     ("metals.toml", "Zn+2 species 1", "log_beta", "GUESS")),
    ("metals.toml", _set(("metals", 1, "solid", "formula"), _DELETE),
     ("metals.toml", "solid", "'formula'", "missing")),
    ("metals.toml", _set(("metals", 0, "charge"), "two"),
     ("metals.toml", "Zn+2", "'charge'")),
    ("metals.toml", _set(("metals", 1, "solid", "dh_status"), "MEMORY"),
     ("metals.toml", "Cu+2 solid", "dh_acid_kj", "from memory")),
    ("metals.toml", _set(("metals", 0, "solid", "dh_acid_kj"), 9000.0),
     ("metals.toml", "Zn+2 solid", "'dh_acid_kj'", "from -500 to 500")),
    ("pitzer.toml", _set(("binary", 0, "status"), "COMMON-PRACTICE"),
     ("pitzer.toml", "H+", "status")),
    ("ion_pairs.toml", _set(("pairs", 0, "status"), "PRACTICE"),
     ("ion_pairs.toml", "CaOH+", "'PRACTICE' is not one of")),
    ("disposal_rules.toml", _set(("rules", "batch_max_l", "value"), -1.0),
     ("disposal_rules.toml", "[rules.batch_max_l]", "'value'")),
    ("disposal_rules.toml", _set(("rules", "flush_factor", "status"), "PRACTICE"),
     ("disposal_rules.toml", "[rules.flush_factor]", "common practice")),
    ("disposal_rules.toml", _set(("never_treat", 0, "item"), "stream:lava"),
     ("disposal_rules.toml", "never_treat stream:lava", "'item'")),
]


@pytest.mark.parametrize("name", DATA_FILES)
def test_every_packaged_file_passes_its_loader(catalog, name):
    assert _load(name, read_data_file(name))


@pytest.mark.parametrize(("name", "change", "words"), BROKEN)
def test_a_broken_field_is_an_error_naming_file_entry_and_field(
    catalog, monkeypatch, name, change, words
):
    raw = copy.deepcopy(read_data_file(name))
    change(raw)
    _with_file(monkeypatch, name, raw)
    with pytest.raises(CatalogError) as err:
        _load(name, raw)
    message = str(err.value)
    assert all(word in message for word in words), message


def test_every_data_file_has_a_broken_case():
    assert {name for name, _, _ in BROKEN} == set(DATA_FILES)
