"""The storeroom's disposal rule profile in the database.

carboy ships placeholders (:func:`carboy.model.disposal_profile.shipped`); the rules a
storeroom sets itself live in ``disposal_rules`` (migration 0006), one row per rule,
its value as JSON.  :func:`load` lays them over the placeholders.  Every change is one
transaction: a journal ``note`` (event ``disposal-rules``, each rule's value before and
after) and then the rows, which a database trigger lets change only right after that
entry.  :func:`set_rules` sets rules from text as typed; :func:`reset` returns rules to
carboy's placeholders.
"""

from __future__ import annotations

import json
from collections.abc import Iterable, Mapping
from datetime import datetime
from typing import Any

from carboy.errors import InvalidInput
from carboy.model import disposal_profile as dp
from carboy.model.disposal_profile import DisposalProfile
from carboy.store import journal
from carboy.store.compounds import catalog_for
from carboy.store.db import Store, current_user, stamp

EVENT = "disposal-rules"


def _stored(value: Any) -> Any:
    """A rule's value as JSON data (never-treat items as ``{item, why}``)."""
    if isinstance(value, tuple):
        return [item.to_dict() for item in value]
    return value


def load(store: Store) -> DisposalProfile:
    """The profile in force: carboy's placeholders with the storeroom's own rules over them."""
    rows = store.rows("SELECT name, value_json FROM disposal_rules")
    values = {r["name"]: dp.read_rule(r["name"], json.loads(r["value_json"])) for r in rows}
    return dp.with_rules(dp.shipped(), values) if values else dp.shipped()


def read_changes(values: Mapping[str, Any], catalog=None) -> dict[str, Any]:
    """Rule name -> value as typed, read and checked (nothing stored)."""
    if not values:
        raise InvalidInput("disposal rules", "", "nothing to set: name a rule and its value")
    return {dp.rule(name).name: dp.read_rule(name, raw, catalog) for name, raw in values.items()}


def _summary(before: DisposalProfile, after: DisposalProfile, names: Iterable[str]) -> str:
    parts = [f"{dp.rule(n).words} {dp.describe(n, after.value(n))} "
             f"(was {dp.describe(n, before.value(n))})" for n in names]
    return "rule: disposal: " + "; ".join(parts)


def _journal(s: Store, before: DisposalProfile, after: DisposalProfile, names: list[str],
             *, back_to_placeholder: bool, who: str | None, when: datetime | None) -> int:
    changes = {n: {"before": _stored(before.value(n)), "after": _stored(after.value(n))}
               for n in names}
    return journal.append_in(s, "note", who=who, when=when,
                             summary=_summary(before, after, names),
                             snapshot={"event": EVENT, "changes": changes,
                                       "back_to_placeholder": back_to_placeholder})


def set_rules(store: Store, values: Mapping[str, Any], *, who: str | None = None,
              when: datetime | None = None) -> int:
    """Set rules (name -> value as typed: ``{"batch_max_l": "500 mL"}``) in one journaled
    transaction; returns the journal entry id.  The whole profile must stay consistent
    (the window's low edge below its high one, nearly full not above the fill limit)."""
    catalog = catalog_for(store)
    changes = read_changes(values, catalog)

    def work(s: Store) -> int:
        before = load(s)
        after = dp.with_rules(before, changes)
        entry = _journal(s, before, after, list(changes), back_to_placeholder=False,
                         who=who, when=when)
        for name, value in changes.items():
            s.execute("INSERT INTO disposal_rules (name, value_json, set_at, set_by, entry_id) "
                      "VALUES (?, ?, ?, ?, ?) ON CONFLICT (name) DO UPDATE SET "
                      "value_json = excluded.value_json, set_at = excluded.set_at, "
                      "set_by = excluded.set_by, entry_id = excluded.entry_id",
                      [name, json.dumps(_stored(value), sort_keys=True), stamp(when), who or current_user(),
                       entry])
        return entry

    return store.write(work)


def reset(store: Store, names: Iterable[str] | None = None, *, who: str | None = None,
          when: datetime | None = None) -> int | None:
    """Return rules (default: every rule) to carboy's placeholders, journaled; returns the
    entry id, or None when none of them was the storeroom's own."""
    wanted = [dp.rule(n).name for n in names] if names is not None else list(dp.RULE_NAMES)

    def work(s: Store) -> int | None:
        own = {r["name"] for r in s.rows("SELECT name FROM disposal_rules")}
        gone = [n for n in wanted if n in own]
        if not gone:
            return None
        before = load(s)
        keep = {n: before.value(n) for n in own - set(gone)}
        after = dp.with_rules(dp.shipped(), keep) if keep else dp.shipped()
        entry = _journal(s, before, after, gone, back_to_placeholder=True, who=who, when=when)
        s.execute(f"DELETE FROM disposal_rules WHERE name IN ({', '.join('?' for _ in gone)})",
                  gone)
        return entry

    return store.write(work)


def sources() -> Mapping[str, tuple[str, str]]:
    """Rule name (and ``never_treat ITEM``) -> (status, source) of carboy's placeholder."""
    return dp.shipped_sources()
