"""Common names added to the catalog carry their source (compounds.toml ``alias_sources``)
and find their compound, by lookup and as typed in the stock search."""

from __future__ import annotations

import tomllib
from importlib import resources

import pytest

from carboy.model.catalog import default_catalog
from carboy.model.catalog_files import COMPOUNDS_FILE
from carboy.model.datafiles import DATA_PACKAGE
from carboy.model.provenance import check_provenance
from carboy.model.text import read_label


def _data():
    text = (resources.files(DATA_PACKAGE) / COMPOUNDS_FILE).read_text(encoding="utf-8")
    return tomllib.loads(text)


SOURCED = [(c["key"], alias, source) for c in _data()["compounds"]
           for alias, source in c.get("alias_sources", {}).items()]

# the common names the storeroom asked for, with the compound each must find
ASKED = [("sulphuric acid", "H2SO4"), ("oil of vitriol", "H2SO4"), ("caustic soda", "NaOH"),
         ("soda ash", "Na2CO3"), ("muriatic acid", "HCl")]


def test_some_names_were_added_with_sources():
    assert len(SOURCED) >= 5


@pytest.mark.parametrize(("key", "alias", "source"), SOURCED)
def test_each_added_name_is_an_alias_with_a_named_source(key, alias, source):
    entry = next(c for c in _data()["compounds"] if c["key"] == key)
    assert alias in entry["aliases"]
    # not seen in a copy here: the status vocabulary's MEMORY, whose source says so
    assert check_provenance(key, f"alias {alias!r}", "MEMORY", source).source == source
    assert any(work in source for work in ("Merck Index", "Hawley's"))
    assert read_label(alias, "alias") == alias


@pytest.mark.parametrize(("name", "key"), [(a, k) for k, a, _s in SOURCED] + ASKED)
def test_each_common_name_finds_its_compound(name, key):
    assert default_catalog().compound(name).key == key
