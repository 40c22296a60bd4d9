"""The storeroom's own rules over carboy's defaults: re-check intervals and acceptance.

carboy ships defaults (``carboy/model/data/upkeep.toml`` for re-check intervals, the
acceptance rule of :mod:`carboy.model.standardization`).  A storeroom may set its own;
they live in ``storeroom_rules`` (one row per rule name, the value as JSON) so that
everyone on a shared database works to the same rules, and every change is journaled
as a ``note`` naming the old and new value.

Rule names:

``recheck_days.<compound key>``        days between standardizations of a molar solution
``standardization.max_rsd_percent``    largest accepted RSD of the replicates, %
``standardization.min_replicates``     fewest replicates for an accepted result
``storeroom.name``                     the storeroom's name, printed on labels and records
"""

from __future__ import annotations

import json
import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from datetime import datetime
from types import MappingProxyType

from carboy.errors import InvalidInput
from carboy.model import upkeep
from carboy.model.label_documents import STOREROOM_NAME_MOST
from carboy.model.text import read_label
from carboy.store import journal
from carboy.store.compounds import catalog_for
from carboy.store.db import Store, current_user, stamp
from carboy.store.readers import parse_whole

RECHECK_PREFIX = "recheck_days."
MAX_RSD = "standardization.max_rsd_percent"
MIN_REPLICATES = "standardization.min_replicates"
STOREROOM_NAME = "storeroom.name"
MAX_RSD_RANGE = (0.01, 5.0)
"""Accepted range for a storeroom's RSD limit, % (0.2 % is the default; 5 % is no check)."""
MIN_REPLICATES_RANGE = (2, 20)


@dataclass(frozen=True)
class Rules:
    """The rules in force: defaults overlaid with the storeroom's own."""

    recheck_days: Mapping[str, int]
    recheck_origin: Mapping[str, str]
    """``default`` or ``storeroom`` for each compound key in :attr:`recheck_days`."""
    max_rsd_percent: float | None = None
    """The storeroom's RSD limit, or None for the model's default."""
    min_replicates: int | None = None
    storeroom_name: str = ""
    """The storeroom's name as set with :func:`set_storeroom_name` (empty when unset)."""
    changed: Mapping[str, tuple[str, str]] = field(default_factory=dict)
    """Rule name -> (set_at, set_by) for the storeroom's own rules."""

    def recheck_for(self, compound_key: str) -> int | None:
        return self.recheck_days.get(compound_key)

    def acceptance(self):
        """The :class:`~carboy.model.standardization.AcceptanceRule` in force."""
        from dataclasses import replace

        from carboy.model.standardization import AcceptanceRule

        base = AcceptanceRule()
        changes = {}
        if self.max_rsd_percent is not None:
            changes["max_rsd_percent"] = self.max_rsd_percent
        if self.min_replicates is not None:
            changes["min_replicates"] = self.min_replicates
        return replace(base, **changes)

    def to_dict(self) -> dict:
        rule = self.acceptance()
        return {
            "recheck_days": [
                {"compound": key, "days": days, "origin": self.recheck_origin[key]}
                for key, days in sorted(self.recheck_days.items())],
            "max_rsd_percent": rule.max_rsd_percent,
            "min_replicates": rule.min_replicates,
            "acceptance_origin": "storeroom" if (self.max_rsd_percent is not None
                                                 or self.min_replicates is not None)
            else "default",
            "storeroom_name": self.storeroom_name,
        }


def load(store: Store) -> Rules:
    """The rules in force on this database (one small read)."""
    rows = store.rows("SELECT name, value_json, set_at, set_by FROM storeroom_rules")
    days = {key: iv.days for key, iv in upkeep.recheck_defaults().items()}
    origin = dict.fromkeys(days, "default")
    max_rsd = min_rep = None
    name_set = ""
    changed = {}
    for row in rows:
        name, value = row["name"], json.loads(row["value_json"])
        changed[name] = (row["set_at"], row["set_by"])
        if name.startswith(RECHECK_PREFIX):
            key = name[len(RECHECK_PREFIX):]
            if value is None:
                days.pop(key, None)
                origin.pop(key, None)
            else:
                days[key] = int(value)
                origin[key] = "storeroom"
        elif name == MAX_RSD:
            max_rsd = float(value)
        elif name == MIN_REPLICATES:
            min_rep = int(value)
        elif name == STOREROOM_NAME and isinstance(value, str):
            name_set = " ".join(value.split())
    return Rules(MappingProxyType(days), MappingProxyType(origin), max_rsd, min_rep,
                 name_set, MappingProxyType(changed))


def _put(s: Store, name: str, value, *, who: str | None, when: datetime | None) -> None:
    s.execute("INSERT INTO storeroom_rules (name, value_json, set_at, set_by) VALUES (?, ?, ?, ?) "
              "ON CONFLICT (name) DO UPDATE SET value_json = excluded.value_json, "
              "set_at = excluded.set_at, set_by = excluded.set_by",
              [name, json.dumps(value), stamp(when),
               who or current_user()])


def _days(value: object, what: str) -> int | None:
    if value is None or (isinstance(value, str) and value.strip().lower() in ("default", "")):
        return None
    if isinstance(value, str) and value.strip().lower() in ("never", "none", "off"):
        return 0
    return parse_whole(value, what, field="recheck_days", low=1, high=upkeep.MAX_DAYS,
                       unit="days",
                       expected="expected a whole number of days, 'never' or 'default'")


def set_recheck(store: Store, compound: str, days: int | str | None, *,
                who: str | None = None, when: datetime | None = None) -> int:
    """Set the re-check interval of one compound; ``'never'`` turns it off, ``None`` or
    ``'default'`` returns to carboy's default.  Journaled; returns the entry id."""
    key = catalog_for(store).compound(compound).key
    wanted = _days(days, f"re-check interval of {key}")
    before = load(store).recheck_for(key)
    name = RECHECK_PREFIX + key

    def work(s: Store) -> int:
        if wanted is None:
            s.execute("DELETE FROM storeroom_rules WHERE name = ?", [name])
            after = upkeep.recheck_defaults().get(key)
            after_days = after.days if after else None
        else:
            _put(s, name, None if wanted == 0 else wanted, who=who, when=when)
            after_days = None if wanted == 0 else wanted
        text = (f"every {after_days} days" if after_days else "never")
        was = f"every {before} days" if before else "never"
        return journal.append_in(
            s, "note", who=who, when=when,
            summary=f"rule: re-check {key} {text} (was {was})",
            snapshot={"rule": name, "before": before, "after": after_days,
                      "back_to_default": wanted is None})

    return store.write(work)


def parse_acceptance(*, max_rsd_percent: float | str | None = None,
                     min_replicates: int | str | None = None) -> dict:
    """Check an acceptance rule given as text or numbers; returns ``max_rsd_percent`` and
    ``min_replicates`` (None where not given).  Nothing is stored."""
    rsd = n = None
    if max_rsd_percent is not None:
        try:
            rsd = float(str(max_rsd_percent).strip().rstrip("%").strip().replace(",", "."))
        except ValueError:
            raise InvalidInput("largest RSD", max_rsd_percent, "expected a percentage such "
                               "as 0.2", field="max_rsd_percent") from None
        low, high = MAX_RSD_RANGE
        if not math.isfinite(rsd) or not low <= rsd <= high:
            raise InvalidInput("largest RSD", max_rsd_percent, f"expected {low:g} to {high:g} %",
                               field="max_rsd_percent")
    if min_replicates is not None:
        low, high = MIN_REPLICATES_RANGE
        n = parse_whole(min_replicates, "fewest replicates", field="min_replicates", low=low,
                        high=high)
    return {"max_rsd_percent": rsd, "min_replicates": n}


def set_acceptance(store: Store, *, max_rsd_percent: float | str | None = None,
                   min_replicates: int | str | None = None, who: str | None = None,
                   when: datetime | None = None) -> int:
    """Set the storeroom's standardization acceptance rule.  Journaled; returns the entry id."""
    parsed = parse_acceptance(max_rsd_percent=max_rsd_percent, min_replicates=min_replicates)
    changes: dict[str, object] = {}
    if parsed["max_rsd_percent"] is not None:
        changes[MAX_RSD] = parsed["max_rsd_percent"]
    if parsed["min_replicates"] is not None:
        changes[MIN_REPLICATES] = parsed["min_replicates"]
    if not changes:
        raise InvalidInput("rule", "", "nothing to set: give a largest RSD or fewest replicates")
    before = load(store).acceptance()

    def work(s: Store) -> int:
        for name, value in changes.items():
            _put(s, name, value, who=who, when=when)
        parts = []
        if MAX_RSD in changes:
            parts.append(f"largest RSD {changes[MAX_RSD]:g} % (was {before.max_rsd_percent:g} %)")
        if MIN_REPLICATES in changes:
            parts.append(f"fewest replicates {changes[MIN_REPLICATES]} "
                         f"(was {before.min_replicates})")
        return journal.append_in(s, "note", who=who, when=when,
                                 summary="rule: standardization " + "; ".join(parts),
                                 snapshot={"rules": changes})

    return store.write(work)


def reset_acceptance(store: Store, *, who: str | None = None,
                     when: datetime | None = None) -> int:
    """Return to carboy's default acceptance rule.  Journaled; returns the entry id."""
    def work(s: Store) -> int:
        s.execute("DELETE FROM storeroom_rules WHERE name IN (?, ?)", [MAX_RSD, MIN_REPLICATES])
        return journal.append_in(s, "note", who=who, when=when,
                                 summary="rule: standardization acceptance back to the default",
                                 snapshot={"rules": "default"})

    return store.write(work)


def set_storeroom_name(store: Store, name: str, *, who: str | None = None,
                       when: datetime | None = None) -> int:
    """Name the storeroom (printed on bottle labels, disposal records and reports); an
    empty name removes it.  Read like every label (NFKC, no control or invisible
    characters, at most :data:`~carboy.model.label_documents.STOREROOM_NAME_MOST` characters).  Journaled; returns the
    entry id."""
    text = read_label(name, "storeroom name", field="storeroom_name", most=STOREROOM_NAME_MOST)
    before = load(store).storeroom_name

    def work(s: Store) -> int:
        if text:
            _put(s, STOREROOM_NAME, text, who=who, when=when)
            summary = f"rule: storeroom name {text!r} (was {before!r})" if before else \
                f"rule: storeroom name {text!r}"
        else:
            s.execute("DELETE FROM storeroom_rules WHERE name = ?", [STOREROOM_NAME])
            summary = f"rule: storeroom name removed (was {before!r})"
        return journal.append_in(s, "note", who=who, when=when, summary=summary,
                                 snapshot={"rule": STOREROOM_NAME, "before": before,
                                           "after": text})

    return store.write(work)
