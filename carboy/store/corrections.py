"""Corrections: a new journal entry that points at the one it corrects and applies the
corrected values through the same store rules.  Nothing is ever edited in place.

:func:`correct` takes a journal entry id and the correction form's values
(:mod:`carboy.model.forms.correction`):

* a treatment (``neutralization``, event ``treatment``) takes its readings (final pH,
  pH after venting and after each stage, final volume, temperature) and the amount of
  reagent added: the bottle is drawn down further, or given back the difference, and
  the container's reagent addition is superseded by one of the corrected amount;
* an older neutralization that kept only a measured pH takes a final pH;
* a preparation takes the amount drawn from its source bottle (the difference is drawn
  or given back);
* any entry about a bottle takes the amount left in it (a stocktake).

A value the entry does not hold is refused naming it; an entry that was already
corrected is refused (correct the newer entry); without values the correction records
only the reason.  A waste addition is corrected by :func:`carboy.store.waste.correct_addition`.

:func:`note` appends a free note about a bottle or a container.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime
from typing import Any

from carboy.errors import InvalidInput
from carboy.model import numbers
from carboy.model.components import Component
from carboy.model.forms.correction import CorrectionValues
from carboy.model.reagents import parse_reagent
from carboy.store import journal, treatment_records, waste
from carboy.store.bottles import get as get_bottle
from carboy.store.compounds import catalog_for
from carboy.store.db import Store
from carboy.store.readers import check_length, parse_whole
from carboy.store.waste_rows import container_row, counted_volume

TREATMENT_VALUES = ("final_ph", "vented_ph", "stage_ph", "final_volume_l", "temperature_c",
                    "added")
OPTIONS = {"final_ph": "--ph", "vented_ph": "--vented-ph", "stage_ph": "--stage-ph",
           "final_volume_l": "--final-volume", "temperature_c": "--temperature",
           "added": "--added", "used": "--used", "amount_left": "--amount-left"}
"""The command-line option of each value (used in the messages)."""


@dataclass(frozen=True)
class Corrected:
    """What :func:`correct` wrote: the new entry and what it changed."""

    entry_id: int
    corrects_id: int
    changes: dict
    warnings: tuple[str, ...] = ()

    def to_dict(self) -> dict:
        return {"entry_id": self.entry_id, "corrects_id": self.corrects_id,
                "changes": self.changes, "warnings": list(self.warnings)}


def _root(s: Store, entry: journal.Entry) -> journal.Entry:
    """The entry a chain of corrections began with."""
    while entry.kind == "correction" and entry.corrects_id is not None:
        entry = journal.get(s, entry.corrects_id)
    return entry


def _refuse(name: str, entry: journal.Entry, what: str) -> InvalidInput:
    return InvalidInput(OPTIONS.get(name, name), entry.id, f"entry {entry.id} is {what}: it "
                        f"holds no such value", field=name)


def _bottle_change(s: Store, bottle_id: int, delta: float, unit: str, what: str) -> dict:
    """Draw ``delta`` more from a bottle (negative: give it back); refused when short."""
    row = s.one("SELECT amount_left, amount_unit, container_size FROM stock_bottles "
                "WHERE id = ?", [bottle_id])
    if row["amount_unit"] != unit:
        raise InvalidInput(what, unit, f"bottle {bottle_id} is kept in {row['amount_unit']}",
                           field="added")
    left = float(row["amount_left"])
    if delta > left * (1 + 1e-9):
        raise InvalidInput(what, numbers.amount(delta, unit), f"{numbers.amount(delta, unit)} "
                           f"more is needed but only {numbers.amount(left, unit)} is left in "
                           f"bottle {bottle_id}", field="added")
    after = numbers.settled(min(max(left - delta, 0.0), float(row["container_size"])))
    s.execute("UPDATE stock_bottles SET amount_left = ? WHERE id = ?", [after, bottle_id])
    return {"bottle_id": bottle_id, "left_before": left, "left_after": after, "unit": unit}


def _treatment(s: Store, root: journal.Entry, values: CorrectionValues, catalog,
               who, when) -> tuple[dict, list[str]]:
    recorded = treatment_records.readings_of(s, root)
    now = recorded.readings
    snap: dict[str, Any] = {"readings": {}, "changes": {}}
    for name, value in values.readings.items():
        snap["readings"][name] = list(value) if isinstance(value, tuple) else value
        snap["changes"][name] = {"was": now.get(name), "now": snap["readings"][name]}
    warnings: list[str] = []
    row = container_row(s, root.container_label)
    if values.added is not None:
        part = _reagent_change(s, root, recorded, values, row, catalog, who, when)
        snap["changes"].update(part.pop("changes"))
        snap.update(part)
    if values.final_volume_l is not None:
        counted = counted_volume(s, row["id"])
        if values.final_volume_l > counted:
            water = Component(waste.nothing("water"), 0.0, None,
                              "water (up to the corrected final volume)")
            snap["water_addition_id"] = waste.insert_addition(
                s, row, water, values.final_volume_l - counted,
                note=f"correction of entry {root.id}", supersedes=None, who=who, when=when)
    final = values.final_ph if values.final_ph is not None else recorded.final_ph
    if recorded.window is not None and final is not None:
        lo, hi = recorded.window
        snap["in_window"] = lo <= final <= hi
        if not snap["in_window"]:
            warnings.append(f"final pH {final:g} is outside the window pH {lo:g}–{hi:g}: "
                            f"{row['label']} cannot be marked disposed")
    return snap, warnings


def _reagent_change(s: Store, root, recorded, values: CorrectionValues, row, catalog,
                    who, when) -> dict:
    was = recorded.readings.get("added") or {}
    if was.get("unit") != values.added.unit:
        raise InvalidInput("--added", values.added.text, f"the treatment's amount is in "
                           f"{was.get('unit')}", field="added")
    out: dict[str, Any] = {}
    delta = values.added.value - float(was.get("value", 0.0))
    reagent = root.snapshot.get("reagent") or {}
    if reagent.get("bottle_id") is not None:
        out["bottle"] = _bottle_change(s, int(reagent["bottle_id"]), delta,
                                       values.added.unit, "amount added")
    old_id = int(recorded.readings.get("reagent_addition_id") or reagent["addition_id"])
    found = parse_reagent(reagent["text"], catalog)
    amount = values.added.value
    comp = Component(found.compound, None, amount * found.assay_percent / 100.0,
                     f"{found.text} (treatment, corrected)") if found.is_solid else \
        Component(found.compound, found.conc_molar, None, f"{found.text} (treatment, corrected)")
    new_id = waste.insert_addition(s, row, comp, 0.0 if found.is_solid else amount,
                                   note=f"correction of entry {root.id}", supersedes=old_id,
                                   who=who, when=when)
    added = {"value": amount, "unit": values.added.unit, "text": values.added.text}
    out["readings_extra"] = {"added": added, "reagent_addition_id": new_id}
    out["changes"] = {"added": {"was": was or None, "now": added}}
    return out


def _preparation(s: Store, root: journal.Entry, values: CorrectionValues) -> dict:
    snap = root.snapshot
    used = snap.get("used")
    for fix in _chain(s, root):
        used = fix.snapshot.get("used", used)
    if snap.get("source_bottle") is None or not isinstance(used, (int, float)):
        raise _refuse("used", root, "a preparation that drew from no stock bottle")
    delta = values.used.value - float(used)
    bottle = _bottle_change(s, int(snap["source_bottle"]), delta, values.used.unit,
                            "amount drawn")
    return {"used": values.used.value, "bottle": bottle,
            "changes": {"used": {"was": used, "now": values.used.value}}}


def _chain(s: Store, entry: journal.Entry) -> list[journal.Entry]:
    out, current = [], entry.id
    while later := journal.corrections_of(s, current):
        out.append(later[0])
        current = later[0].id
    return out


def _amount_left(s: Store, entry: journal.Entry, values: CorrectionValues) -> dict:
    if entry.bottle_id is None:
        raise _refuse("amount_left", entry, "not about a stock bottle")
    row = s.one("SELECT amount_left, amount_unit, container_size FROM stock_bottles "
                "WHERE id = ?", [entry.bottle_id])
    left = values.amount_left
    if left.value and left.unit != row["amount_unit"]:
        raise InvalidInput("--amount-left", left.text, f"bottle {entry.bottle_id} is kept in "
                           f"{row['amount_unit']}", field="amount_left")
    if left.value > float(row["container_size"]) * (1 + 1e-9):
        raise InvalidInput("--amount-left", left.text, f"more than bottle {entry.bottle_id} "
                           f"holds ({numbers.amount(row['container_size'], row['amount_unit'])})",
                           field="amount_left")
    s.execute("UPDATE stock_bottles SET amount_left = ? WHERE id = ?",
              [left.value, entry.bottle_id])
    return {"bottle": {"bottle_id": entry.bottle_id, "left_before": row["amount_left"],
                       "left_after": left.value, "unit": row["amount_unit"]},
            "changes": {"amount_left": {"was": row["amount_left"], "now": left.value}}}


def _apply(s: Store, entry: journal.Entry, root: journal.Entry, values: CorrectionValues,
           catalog, who, when) -> tuple[dict, list[str]]:
    given = values.given()
    snap: dict[str, Any] = {"changes": {}}
    warnings: list[str] = []
    treatment = root.kind == "neutralization" and root.snapshot.get("event") == "treatment"
    legacy = root.kind == "neutralization" and not treatment
    for name in given:
        if name in TREATMENT_VALUES and not treatment and not (legacy and name == "final_ph"):
            raise _refuse(name, entry, f"a {root.kind} entry, not a treatment")
        if name == "used" and root.kind != "preparation":
            raise _refuse(name, entry, f"a {root.kind} entry, not a preparation")
    if treatment and any(n in TREATMENT_VALUES for n in given):
        part, warnings = _treatment(s, root, values, catalog, who, when)
        extra = part.pop("readings_extra", {})
        part["readings"] = {**part.get("readings", {}), **extra}
        snap = _merge(snap, part)
    elif legacy and "final_ph" in given:
        was = treatment_records.readings_of(s, root).final_ph
        snap = _merge(snap, {"readings": {"final_ph": values.final_ph},
                             "changes": {"final_ph": {"was": was, "now": values.final_ph}}})
    if "used" in given:
        snap = _merge(snap, _preparation(s, root, values))
    if "amount_left" in given:
        snap = _merge(snap, _amount_left(s, root, values))
    return snap, warnings


def _merge(a: dict, b: dict) -> dict:
    out = {**a, **b}
    out["changes"] = {**a.get("changes", {}), **b.get("changes", {})}
    return out


def correct(store: Store, entry_id: int | str, values: CorrectionValues, *,
            who: str | None = None, when: datetime | None = None) -> Corrected:
    """Record a correction of journal entry ``entry_id`` (see the module docstring).

    Raises
    ------
    NotFound : no such entry.
    InvalidInput : the entry was already corrected, does not hold a value given, or a
        bottle holds less than the correction draws.
    """
    eid = parse_whole(entry_id, "journal entry", field="entry", low=1)
    catalog = catalog_for(store)

    def work(s: Store) -> Corrected:
        entry = journal.get(s, eid)
        later = journal.corrections_of(s, entry.id)
        if later:
            raise InvalidInput("journal entry", entry.id, f"was already corrected by entry "
                               f"{later[0].id}: correct that one instead", field="entry")
        root = _root(s, entry)
        snap, warnings = _apply(s, entry, root, values, catalog, who, when)
        changed = ", ".join(f"{OPTIONS.get(k, k).lstrip('-')} {_shown(v.get('was'))} -> "
                            f"{_shown(v.get('now'))}" for k, v in snap["changes"].items())
        summary = (f"correction of entry {entry.id}: {values.reason}"
                   + (f" ({changed})" if changed else ""))
        new = journal.append_in(
            s, "correction", corrects_id=entry.id, bottle_id=entry.bottle_id,
            container_id=entry.container_id, who=who, when=when, summary=summary,
            snapshot={"event": "correction", "reason": values.reason, "original": root.id,
                      "warnings": warnings, **snap})
        return Corrected(new, entry.id, snap["changes"], tuple(warnings))

    return store.write(work)


def _shown(value: object) -> str:
    if isinstance(value, dict) and "value" in value:
        return numbers.amount(value["value"], value.get("unit", ""))
    if isinstance(value, float):
        return f"{value:g}"
    return "—" if value is None else str(value)


def note(store: Store, text: str, *, bottle: int | str | None = None,
         container: str | None = None, who: str | None = None,
         when: datetime | None = None) -> int:
    """A free note about one stock bottle or one waste container (exactly one); returns the
    journal entry id."""
    words = " ".join((text or "").split())
    if not words:
        raise InvalidInput("note", text, "is empty: say what to note", field="note")
    check_length("note", words, field="note")
    if (bottle is None) == (container is None):
        raise InvalidInput("note", words[:40], "name a bottle or a container (one of them)",
                           field="about")

    def work(s: Store) -> int:
        if bottle is not None:
            found = get_bottle(s, bottle)
            return journal.append_in(s, "note", bottle_id=found.id, who=who, when=when,
                                     summary=f"bottle {found.id}: {words}",
                                     snapshot={"event": "note", "text": words})
        row = container_row(s, container)
        return journal.append_in(s, "note", container_id=row["id"], who=who, when=when,
                                 summary=f"{row['label']}: {words}",
                                 snapshot={"event": "note", "text": words})

    return store.write(work)
