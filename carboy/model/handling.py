"""Per-compound bench handling from ``data/handling.toml``, validated, with its sources.

What the recipes need to know about a compound beyond the catalog: the strength it is
usually sold at, the strength from which it is handled in a fume hood or weighed rather
than poured, and whether the solid takes up water and CO2 while weighed.  Every entry
names a compound of the catalog and carries a source and status (mostly PRACTICE).
"""

from __future__ import annotations

import functools
from collections.abc import Mapping
from dataclasses import dataclass
from types import MappingProxyType
from typing import Any

from carboy.model.catalog_files import default_catalog
from carboy.model.datafiles import Table, read_data_file
from carboy.model.provenance import Provenance

__all__ = ["HANDLING_FILE", "Handling", "HandlingFact", "handling", "parse_handling"]

HANDLING_FILE = "handling.toml"


@dataclass(frozen=True)
class HandlingFact:
    """One per-compound value (a strength text, a percent, or True) and where it comes from."""

    value: Any
    provenance: Provenance


@dataclass(frozen=True)
class Handling:
    """The validated contents of ``handling.toml``, each section by compound key."""

    supplied_strength: Mapping[str, HandlingFact]
    """Strength text as typed after ``=`` (``"96%"``)."""
    fume_hood_from_percent: Mapping[str, HandlingFact]
    weigh_from_percent: Mapping[str, HandlingFact]
    hygroscopic_solids: Mapping[str, HandlingFact]

    def fume_hood_percent(self, key: str) -> float | None:
        fact = self.fume_hood_from_percent.get(key)
        return None if fact is None else fact.value

    def weigh_percent(self, key: str) -> float | None:
        fact = self.weigh_from_percent.get(key)
        return None if fact is None else fact.value

    def is_hygroscopic(self, key: str) -> bool:
        return key in self.hygroscopic_solids


def _section(doc: Table, name: str, read: Any) -> Mapping[str, HandlingFact]:
    known = default_catalog().compounds
    out: dict[str, HandlingFact] = {}
    for key, rec in doc.keyed(name, name=lambda k: f"[{name}] {k}"):
        if key not in known:
            raise rec.fail(None, f"{key!r} is not a compound of compounds.toml")
        out[key] = HandlingFact(read(rec), rec.provenance())
    return MappingProxyType(out)


def parse_handling(data: Mapping[str, Any]) -> Handling:
    """Validate the contents of ``handling.toml`` (as read by tomllib).

    Raises
    ------
    CatalogError
        Naming ``handling.toml``, the entry and the field: an unknown compound key, a
        strength that is not text, a percent outside 0-100, a bad status or source.
    """
    doc = Table(HANDLING_FILE, "(top level)", data)

    def percent(rec: Table) -> float:
        return rec.number("percent", low=0.0, high=100.0)

    return Handling(
        supplied_strength=_section(doc, "supplied_strength", lambda rec: rec.text("strength")),
        fume_hood_from_percent=_section(doc, "fume_hood_from_percent", percent),
        weigh_from_percent=_section(doc, "weigh_from_percent", percent),
        hygroscopic_solids=_section(doc, "hygroscopic_solids", lambda rec: True),
    )


@functools.lru_cache(maxsize=1)
def handling() -> Handling:
    """The packaged ``handling.toml``, read and validated once per process."""
    return parse_handling(read_data_file(HANDLING_FILE))
