"""User-defined compounds: what the built-in catalog lacks, validated exactly like it.

A definition is stored as the keyword arguments of
:func:`carboy.model.catalog.make_user_compound` (key, name, formula, pKa ladder,
top charge, counter ions, source …) so it is rebuilt and re-validated on every
load; :func:`catalog_for` merges them, in the order they were added, into the
built-in catalog.  That merged catalog is what every store function uses to
resolve a compound name.
"""

from __future__ import annotations

import json
import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from datetime import datetime
from typing import Any

from carboy.errors import InvalidInput
from carboy.model.catalog import Catalog, default_catalog, make_user_compound
from carboy.model.entities import Compound
from carboy.store.db import Store, current_user, stamp
from carboy.store.errors import AlreadyExists

_DEFINITION_FIELDS = ("key", "name", "formula", "pka", "top_charge", "source", "dh_kj", "dcp_j",
                      "counter_ions", "hydroxide", "species", "strong_steps", "aliases",
                      "hazards", "form")


@dataclass(frozen=True)
class UserCompound:
    """One stored user definition."""

    key: str
    definition: dict
    source: str
    added_at: str
    added_by: str


def _definition(key: str, name: str, formula: str, pka: Sequence[float], top_charge: int,
                source: str, **extra: Any) -> dict:
    unknown = sorted(set(extra) - set(_DEFINITION_FIELDS))
    if unknown:
        raise InvalidInput("user compound field", unknown[0], "unknown; expected one of "
                           + ", ".join(_DEFINITION_FIELDS), field=unknown[0])
    pka_values = []
    for value in pka:
        try:
            number = float(value)
        except (TypeError, ValueError):
            raise InvalidInput("pKa", value, "must be a number", field="pka") from None
        if not math.isfinite(number):
            raise InvalidInput("pKa", value, "must be finite", field="pka")
        pka_values.append(number)
    out = {"key": key, "name": name, "formula": formula, "pka": pka_values,
           "top_charge": int(top_charge), "source": source}
    for name_, value in extra.items():
        if value is None:
            continue
        if isinstance(value, Mapping):
            value = dict(value)
        elif isinstance(value, (tuple, set, frozenset)):
            value = list(value)
        out[name_] = value
    return out


def _build(definition: Mapping[str, Any], catalog: Catalog):
    kwargs = dict(definition)
    return make_user_compound(
        kwargs.pop("key"), kwargs.pop("name"), kwargs.pop("formula"),
        kwargs.pop("pka", ()), kwargs.pop("top_charge", 0), catalog=catalog, **kwargs)


def _marker(store: Store) -> tuple:
    row = store.one("SELECT count(*) AS n, max(rowid) AS last FROM user_compounds")
    return (row["n"], row["last"])


def catalog_for(store: Store) -> Catalog:
    """The built-in catalog plus this database's user-defined compounds (cached per store)."""
    marker = _marker(store)
    cached = getattr(store, "_carboy_catalog", None)
    if cached is not None and cached[0] == marker:
        return cached[1]
    catalog = default_catalog()
    for row in store.rows("SELECT key, definition_json FROM user_compounds ORDER BY rowid"):
        system, compound = _build(json.loads(row["definition_json"]), catalog)
        catalog = catalog.with_user(systems=[system] if system else [], compounds=[compound])
    store._carboy_catalog = (marker, catalog)
    return catalog


def add(store: Store, key: str, name: str, formula: str, pka: Sequence[float] = (),
        top_charge: int = 0, *, source: str, who: str | None = None,
        when: datetime | None = None, **extra: Any) -> Compound:
    """Validate a user-defined compound like the catalog does, then store it.

    Keyword arguments beyond the named ones are those of ``make_user_compound``
    (``counter_ions``, ``dh_kj``, ``aliases``, ``hazards``, ``form`` …).

    Raises
    ------
    CatalogError : the definition is inconsistent (named field and reason).
    AlreadyExists : a compound with this key is in the catalog or the database.
    """
    definition = _definition(key, name, formula, pka, top_charge, source, **extra)
    catalog = catalog_for(store)
    if isinstance(key, str) and key.strip() in catalog.compounds:
        raise AlreadyExists("compound", key.strip())
    _system, compound = _build(definition, catalog)
    definition["key"] = compound.key
    payload = json.dumps(definition, sort_keys=True, allow_nan=False)

    def work(s: Store) -> None:
        if s.scalar("SELECT 1 FROM user_compounds WHERE key = ?", [compound.key]):
            raise AlreadyExists("compound", compound.key)
        _build(definition, catalog_for(s))  # another user may have added a clashing system
        s.execute("INSERT INTO user_compounds (key, definition_json, source, added_at, added_by) "
                  "VALUES (?, ?, ?, ?, ?)",
                  [compound.key, payload, source.strip(), stamp(when),
                   who or current_user()])

    store.write(work)
    return catalog_for(store).compound(compound.key)


def user_compounds(store: Store) -> list[UserCompound]:
    return [UserCompound(key=r["key"], definition=json.loads(r["definition_json"]),
                         source=r["source"], added_at=r["added_at"], added_by=r["added_by"])
            for r in store.rows("SELECT key, definition_json, source, added_at, added_by "
                                "FROM user_compounds ORDER BY rowid")]
