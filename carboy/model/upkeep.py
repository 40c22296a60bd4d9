"""Storeroom defaults for keeping strengths trustworthy: re-check intervals and shelf lives.

The values are packaged in ``data/upkeep.toml``; each is common practice (status
``PRACTICE``), not a published limit, and the database may override any of them.
"""

from __future__ import annotations

import functools
from collections.abc import Mapping
from dataclasses import dataclass
from types import MappingProxyType

from carboy.errors import CatalogError

MAX_DAYS = 3650
"""Longest interval or shelf life accepted anywhere, days (ten years)."""


@dataclass(frozen=True)
class Interval:
    """A number of days with the reason it was chosen."""

    days: int
    status: str
    why: str


def _read(section: str) -> Mapping[str, Interval]:
    from carboy.model.catalog import read_data_file

    raw = read_data_file("upkeep.toml").get(section, {})
    out: dict[str, Interval] = {}
    for key, rec in raw.items():
        days = rec.get("days")
        if not isinstance(days, int) or isinstance(days, bool) or not 0 < days <= MAX_DAYS:
            raise CatalogError(f"upkeep.toml [{section}] {key}",
                               f"days must be 1 to {MAX_DAYS}, not {days!r}")
        if not str(rec.get("why", "")).strip() or not rec.get("status"):
            raise CatalogError(f"upkeep.toml [{section}] {key}", "needs a status and a reason")
        out[key] = Interval(days, str(rec["status"]), str(rec["why"]))
    return MappingProxyType(out)


@functools.lru_cache(maxsize=1)
def recheck_defaults() -> Mapping[str, Interval]:
    """Default re-check interval per compound key (molar solutions only)."""
    return _read("recheck_days")


@functools.lru_cache(maxsize=1)
def shelf_life_defaults() -> Mapping[str, Interval]:
    """Shelf life of a solution prepared in the storeroom, per compound key and ``default``."""
    table = _read("shelf_life_days")
    if "default" not in table:
        raise CatalogError("upkeep.toml [shelf_life_days]", "needs a 'default' entry")
    return table


def shelf_life_days(compound_key: str) -> int:
    table = shelf_life_defaults()
    return (table.get(compound_key) or table["default"]).days
