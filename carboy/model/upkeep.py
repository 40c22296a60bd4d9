"""Storeroom defaults for keeping strengths trustworthy: re-check intervals and shelf lives.

The values are packaged in ``data/upkeep.toml``; each is common practice (status
``PRACTICE``, in the one vocabulary of :mod:`carboy.model.provenance`), not a published
limit, and the database may override any of them.  Keys are catalog compound keys (and
``default`` for the shelf life of anything else); the loader refuses any other key, a
number of days outside 1 to :data:`MAX_DAYS`, and a status or source the provenance check
refuses, naming ``upkeep.toml``, the entry and the field.
"""

from __future__ import annotations

import functools
from collections.abc import Mapping
from dataclasses import dataclass
from types import MappingProxyType

from carboy.model.datafiles import Table

MAX_DAYS = 3650
"""Longest interval or shelf life accepted anywhere, days (ten years)."""

UPKEEP_FILE = "upkeep.toml"


@dataclass(frozen=True)
class Interval:
    """A number of days with its status and source (which says why it was chosen)."""

    days: int
    status: str
    source: str

    @property
    def why(self) -> str:
        """The reason for the interval (its source)."""
        return self.source


def _read(section: str, extra_keys: frozenset[str] = frozenset()) -> Mapping[str, Interval]:
    # Imported here for start-up speed: the store imports this module, and needs the
    # catalog only when it reads the defaults.
    from carboy.model.catalog_files import default_catalog

    doc = Table.of_file(UPKEEP_FILE)
    known = default_catalog().compounds
    out: dict[str, Interval] = {}
    for key, rec in doc.keyed(section, {}, name=lambda k: f"[{section}] {k}"):
        if key not in known and key not in extra_keys:
            raise rec.fail(None, f"{key!r} is not a compound of compounds.toml")
        days = rec.integer("days", low=1, high=MAX_DAYS)
        prov = rec.provenance()
        out[key] = Interval(days, prov.status, prov.source)
    return MappingProxyType(out)


@functools.lru_cache(maxsize=1)
def recheck_defaults() -> Mapping[str, Interval]:
    """Default re-check interval per compound key (molar solutions only)."""
    return _read("recheck_days")


@functools.lru_cache(maxsize=1)
def shelf_life_defaults() -> Mapping[str, Interval]:
    """Shelf life of a solution prepared in the storeroom, per compound key and ``default``."""
    table = _read("shelf_life_days", frozenset({"default"}))
    if "default" not in table:
        raise Table(UPKEEP_FILE, "[shelf_life_days]", {}).fail(None, "needs a 'default' entry")
    return table


def shelf_life_days(compound_key: str) -> int:
    """Days a prepared solution of ``compound_key`` is labelled to keep."""
    table = shelf_life_defaults()
    return (table.get(compound_key) or table["default"]).days
