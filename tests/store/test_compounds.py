"""User-defined compounds: validated like the catalog, merged into lookups."""

from __future__ import annotations

import pytest

from carboy.errors import CatalogError
from carboy.store import compounds, waste
from carboy.store.errors import AlreadyExists


def _mes(store, **kw):
    args = dict(key="MES", name="MES buffer acid", formula="C6H13NO4S", pka=[6.27],
                top_charge=0, source="supplier-independent handbook value, entered by hand",
                who="t")
    args.update(kw)
    return compounds.add(store, **args)


def test_add_and_use(store):
    c = _mes(store)
    assert c.user_defined and c.composition == {"MES": 1}
    assert compounds.catalog_for(store).compound("MES buffer acid").key == "MES"
    waste.new_container(store, "B1")
    waste.add(store, "B1", "MES=0.1M", "1 L", who="t")
    assert waste.moles(store, "B1")[0] == {"MES": pytest.approx(0.1)}
    (row,) = compounds.user_compounds(store)
    assert row.definition["pka"] == [6.27] and row.source.startswith("supplier")


def test_salt_of_user_system(store):
    _mes(store)
    salt = compounds.add(store, "NaMES", "sodium MES", "NaC6H12NO4S", source="derived",
                         counter_ions={"Na+": 1, "MES": 1}, who="t")
    assert dict(salt.composition) == {"Na+": 1, "MES": 1}


@pytest.mark.parametrize("kw", [
    {"pka": [7.0, 6.0]},                 # not ascending
    {"formula": "Xq2"},                  # unreadable formula
    {"source": " "},                     # no source
    {"counter_ions": {"Zz+": 1}},        # unknown ion
])
def test_invalid_definitions_store_nothing(store, kw):
    with pytest.raises(CatalogError):
        _mes(store, **kw)
    assert compounds.user_compounds(store) == []


def test_key_clash(store):
    with pytest.raises(AlreadyExists):
        _mes(store, key="HCl")
    _mes(store)
    with pytest.raises(AlreadyExists):
        _mes(store)
