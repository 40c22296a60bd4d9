"""The parsed mirrors of the data files (``data/parsed/*.json``) are current and exact."""

from __future__ import annotations

import json
import tomllib
from importlib import resources

import pytest

from carboy.model import data_mirror
from carboy.model.datafiles import DATA_FILES, DATA_PACKAGE, read_data_file


def _text(name: str) -> str:
    return (resources.files(DATA_PACKAGE) / name).read_text(encoding="utf-8")


@pytest.mark.parametrize("name", DATA_FILES)
def test_every_data_file_has_a_current_mirror_equal_to_the_toml(name):
    text = _text(name)
    got = data_mirror.mirrored(DATA_PACKAGE, name, text)
    assert got is not None, (f"data/parsed/{data_mirror.mirror_name(name)} is missing or "
                             "stale: run python -m carboy.model.data_mirror")
    assert got == tomllib.loads(text)
    assert read_data_file(name) == got


def test_a_mirror_of_another_text_is_not_used():
    text = _text("upkeep.toml")
    assert data_mirror.mirrored(DATA_PACKAGE, "upkeep.toml", text + "\n# edited\n") is None


def test_a_missing_mirror_is_not_used():
    assert data_mirror.mirrored(DATA_PACKAGE, "no-such-file.toml", "") is None


def test_an_edited_data_file_is_parsed_not_read_from_its_stale_mirror(monkeypatch):
    text = _text("upkeep.toml")
    edited = text.replace("[", "# a comment line\n[", 1)
    monkeypatch.setattr(data_mirror, "digest", lambda t: "not the mirror's digest")
    assert data_mirror.mirrored(DATA_PACKAGE, "upkeep.toml", edited) is None
    assert read_data_file("upkeep.toml") == tomllib.loads(text)


def test_data_json_cannot_carry_exactly_gets_no_mirror():
    from datetime import date

    assert data_mirror.mirror_of("x", {"when": date(2026, 1, 1)}) is None
    assert data_mirror.mirror_of("x", {"v": float("nan")}) is None
    out = data_mirror.mirror_of("a = 1.0", {"a": 1.0})
    assert json.loads(out) == {"toml_digest": data_mirror.digest("a = 1.0"), "data": {"a": 1.0}}


def test_the_shipped_molar_masses_are_molmass_masses_of_the_packaged_formulas():
    from carboy.model import molar_masses

    text = (resources.files(DATA_PACKAGE) / data_mirror.MIRROR_FOLDER
            / molar_masses.MASSES_FILE).read_text(encoding="utf-8")
    assert json.loads(text) == json.loads(molar_masses.table_text()), (
        "data/parsed/molar_masses.json is stale: run python -m carboy.model.molar_masses")
    assert {"H2SO4", "NaOH", "H", "HSO4", "Zn(OH)2"} <= set(json.loads(text)["masses"])


def test_a_formula_not_shipped_is_weighed_by_molmass(monkeypatch):
    import molmass

    from carboy.errors import CatalogError
    from carboy.model import catalog_rules, molar_masses

    monkeypatch.setattr(catalog_rules, "shipped_masses", lambda: {"H2SO4": 1.0})
    catalog_rules._formula_mass.cache_clear()
    try:
        assert catalog_rules.molar_mass_of("H2SO4") == 1.0  # as shipped, not recomputed
        assert catalog_rules.molar_mass_of("C6H12O6") == float(molmass.Formula("C6H12O6").mass)
        with pytest.raises(CatalogError):
            catalog_rules.molar_mass_of("Xq2")
    finally:
        catalog_rules._formula_mass.cache_clear()
    assert molar_masses.shipped_masses()["H2SO4"] == float(molmass.Formula("H2SO4").mass)
