"""Preparations: draw from a stock bottle, add the bottle made, journal both, in one transaction.

A serial dilution is several steps recorded together (:func:`prepare_series`): every
step is checked before anything is written, and either every write lands or none does.
Both front ends read and plan a preparation through :func:`evaluate` (the preparation
form, with its source bottle read here) and write it with :func:`record_made`.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from datetime import date, datetime
from typing import Any

from carboy.errors import CarboyError, InvalidInput
from carboy.model import numbers, preparation
from carboy.model.forms import Reading, bottle_ref
from carboy.model.forms import prepare as form
from carboy.model.forms.prepare import Made, PrepareFields, amount_used
from carboy.store import journal
from carboy.store.bottle_fields import Bottle, validate
from carboy.store.bottles import get, insert_in
from carboy.store.compounds import catalog_for
from carboy.store.db import Store
from carboy.store.readers import fielded, format_amount, format_strength, parse_amount
from carboy.store.statuses import BottleStatus

PREVIOUS = "previous"
"""As a step's ``source_bottle``: the bottle the step before made."""


@dataclass(frozen=True)
class Prepared:
    """What :func:`prepare` wrote: the journal entry and the new bottle, if one was made."""

    entry_id: int
    new_bottle_id: int | None
    source_left: float | None
    """Amount left in the source bottle afterwards (its own unit), if one was drawn from."""


@dataclass(frozen=True)
class PreparationStep:
    """One preparation to record: what is drawn from which bottle, and what is made.

    ``source_bottle`` is a bottle id, ``None`` (nothing drawn from the inventory, e.g. a
    catalog concentrate) or :data:`PREVIOUS` (the bottle the step before made, for a
    serial dilution).  ``new_bottle`` holds text fields as for :func:`validate`.
    """

    source_bottle: int | str | None = None
    used: str | float | None = None
    new_bottle: Mapping[str, Any] | None = None
    snapshot: Mapping | None = None
    summary: str = ""


@dataclass(frozen=True)
class _Checked:
    """One step after its checks: where it draws from, how much, and the new bottle's columns."""

    step: PreparationStep
    source: Bottle | None
    amount: float | None
    columns: dict | None


def _amount_in(unit: str, used: str | float | None, where: str) -> float:
    with fielded("used"):
        if used is None:
            raise InvalidInput("amount used" + where, "", "say how much was taken")
        if isinstance(used, str):
            amount, got = parse_amount(used, "amount used", field="used")
            if got != unit:
                raise InvalidInput("amount used" + where, used, f"must be in {unit}")
        else:
            amount = float(used)
        if not math.isfinite(amount) or amount <= 0:
            raise InvalidInput("amount used" + where, used, "must be a positive number")
    return amount


def _check_step(store: Store, k: int, steps: Sequence[PreparationStep],
                checked: Sequence[_Checked], catalog) -> _Checked:
    """Check step ``k`` (from 1) without writing; ``checked`` holds the steps before it."""
    step = steps[k - 1]
    where = f" (step {k})" if len(steps) > 1 else ""
    if step.source_bottle is None and step.new_bottle is None:
        raise InvalidInput("preparation" + where, "", "nothing to record: give a source "
                           "bottle to draw from or a new bottle to add")
    bottle = amount = None
    if step.source_bottle == PREVIOUS:
        if k == 1 or steps[k - 2].new_bottle is None:
            raise InvalidInput("source bottle" + where, PREVIOUS,
                               "the step before makes no bottle to draw from",
                               field="source_bottle")
        amount = _amount_in(checked[-1].columns["amount_unit"], step.used, where)
    elif step.source_bottle is not None:
        bottle = get(store, step.source_bottle)
        if not bottle.status.is_usable:
            raise InvalidInput("bottle", bottle.id, f"is {bottle.status.words}, not in use",
                               field="source_bottle")
        if step.used is None:
            raise InvalidInput("amount used" + where, "", f"say how much was taken from "
                               f"bottle {bottle.id}", field="used")
        amount = _amount_in(bottle.amount_unit, step.used, f" (bottle {bottle.id})")
    columns = validate(step.new_bottle, catalog) if step.new_bottle is not None else None
    return _Checked(step, bottle, amount, columns)


def _draw(s: Store, item: _Checked, source_id: int, unit: str) -> tuple[float, dict]:
    """Take the step's amount from bottle ``source_id``; (amount left, snapshot part)."""
    left = s.scalar("SELECT amount_left FROM stock_bottles WHERE id = ?", [source_id])
    if item.amount > left * (1 + 1e-9):
        raise InvalidInput("amount used", item.step.used,
                           f"only {format_amount(left, unit)} is left in bottle {source_id}",
                           field="used")
    left_after = numbers.settled(max(left - item.amount, 0.0))
    s.execute("UPDATE stock_bottles SET amount_left = ? WHERE id = ?", [left_after, source_id])
    return left_after, {"source_bottle": source_id, "used": item.amount, "unit": unit,
                        "left_before": left}


def _record(s: Store, item: _Checked, before: _Checked | None, made_before: int | None, *,
            who: str | None, when: datetime | None) -> Prepared:
    """Write one checked step; ``before`` and ``made_before`` describe the step before."""
    if item.step.source_bottle == PREVIOUS:
        source_id = made_before
        source_key, source_unit = before.columns["compound_key"], before.columns["amount_unit"]
    elif item.source is not None:
        source_id = item.source.id
        source_key, source_unit = item.source.compound_key, item.source.amount_unit
    else:
        source_id = None
    left_after = None
    snap: dict[str, Any] = {}
    parts = []
    if source_id is not None:
        left_after, drawn = _draw(s, item, source_id, source_unit)
        snap.update(drawn)
        parts.append(f"bottle {source_id} {source_key}: used "
                     f"{format_amount(item.amount, source_unit)}")
    new_id = None
    if item.columns is not None:
        new_id = insert_in(s, item.columns, who=who, when=when)
        snap.update({"new_bottle": new_id, "bottle": item.columns})
        made = format_strength(item.columns["label_strength"], item.columns["strength_unit"])
        parts.append(f"made bottle {new_id} {item.columns['compound_key']} {made}")
    snap.update(dict(item.step.snapshot) if item.step.snapshot else {})
    entry = journal.append_in(
        s, "preparation", bottle_id=source_id if source_id is not None else new_id,
        snapshot=snap, who=who, when=when, summary=item.step.summary or "; ".join(parts))
    if new_id is not None and source_id is not None:
        _link_made_bottle(s, new_id, source_id, entry, who=who, when=when)
    return Prepared(entry, new_id, left_after)


def _link_made_bottle(s: Store, new_id: int, source_id: int, entry: int, *,
                      who: str | None, when: datetime | None) -> None:
    """The made bottle's own first history entry: what it was made from (bottle and lot)
    and by which preparation."""
    src = s.one("SELECT compound_key, lot FROM stock_bottles WHERE id = ?", [source_id])
    lot = f", lot {src['lot']}" if src and src["lot"] else ""
    journal.append_in(
        s, "receipt", bottle_id=new_id, who=who, when=when,
        snapshot={"made_from_bottle": source_id, "made_from_lot": src["lot"] if src else "",
                  "preparation_entry": entry},
        summary=f"bottle {new_id} made from bottle {source_id}{lot} (preparation #{entry})")


def prepare_series(store: Store, steps: Iterable[PreparationStep], *, who: str | None = None,
                   when: datetime | None = None) -> list[Prepared]:
    """Record several preparations (a serial dilution) in one transaction.

    Every step is validated before anything is written; a step whose ``source_bottle``
    is :data:`PREVIOUS` draws from the bottle the step before it made.
    """
    steps = list(steps)
    if not steps:
        raise InvalidInput("preparation", "", "nothing to record")
    catalog = catalog_for(store)
    checked: list[_Checked] = []
    for k in range(1, len(steps) + 1):
        checked.append(_check_step(store, k, steps, checked, catalog))

    def work(s: Store) -> list[Prepared]:
        out: list[Prepared] = []
        for n, item in enumerate(checked):
            before = checked[n - 1] if n else None
            made_before = out[-1].new_bottle_id if out else None
            out.append(_record(s, item, before, made_before, who=who, when=when))
        return out

    return store.write(work)


def prepare(store: Store, *, source_bottle: int | str | None = None,
            used: str | float | None = None, new_bottle: Mapping[str, Any] | None = None,
            snapshot: Mapping | None = None, summary: str = "", who: str | None = None,
            when: datetime | None = None) -> Prepared:
    """Record a preparation in one transaction: draw ``used`` from ``source_bottle`` (if
    given), add ``new_bottle`` (text fields as for :func:`validate`, if given) and append a
    ``preparation`` journal entry naming both.  Either every write lands or none does.

    ``used`` is text (``'25 mL'``, ``'102.1 g'``) or a number in the source bottle's unit.
    """
    step = PreparationStep(source_bottle, used, new_bottle, snapshot, summary)
    return prepare_series(store, [step], who=who, when=when)[0]


def record_preparation(store: Store, bottle_id: int, used: str | float, *,
                       snapshot: Mapping | None = None, summary: str = "",
                       who: str | None = None, when: datetime | None = None) -> int:
    """Take an amount from a bottle for a preparation and journal it; returns the entry id."""
    return prepare(store, source_bottle=bottle_id, used=used, snapshot=snapshot,
                   summary=summary, who=who, when=when).entry_id


# -- the preparation form against the database ---------------------------------------

@dataclass
class PrepReading(Reading):
    """The preparation form read and planned: ``value`` is what it makes (:class:`Made`);
    ``bottle`` the source bottle when the source names one."""

    bottle: object | None = None


def source_from_bottle(bottle, catalog) -> preparation.Source:
    """A preparation Source for a stock bottle: its measured strength if any, else its label."""
    compound = catalog.compound(bottle.compound_key)
    value = bottle.current_strength if bottle.current_strength is not None \
        else bottle.label_strength
    basis = "measured" if bottle.current_strength is not None else "label"
    if bottle.amount_unit == "g":
        purity = value if bottle.strength_unit == "%w/w" else 100.0
        return preparation.solid_source(compound, purity_percent=purity, catalog=catalog)
    if bottle.strength_unit == "M":
        return preparation.solution_source(compound, conc_molar=value, basis=basis,
                                           catalog=catalog)
    return preparation.solution_source(compound, mass_percent=value, basis=basis,
                                       catalog=catalog)


def bottle_source(store: Store, bottle_id: int, catalog, *, today: date | None = None):
    """(bottle, source) for a preparation drawn from stock bottle ``bottle_id``, which must
    be in use."""
    bottle = get(store, bottle_id, today=today)
    if not BottleStatus(bottle.status).is_usable:
        raise InvalidInput("source", f"#{bottle.id}", f"bottle {bottle.id} is {bottle.status}: "
                           "only a bottle in use can be drawn from", field="source")
    return bottle, source_from_bottle(bottle, catalog)


def record_made(store: Store, made: Made, bottle, *, who: str | None = None) -> list:
    """Draw from ``bottle`` (None: a source outside the inventory), add every new bottle
    and journal each step, all or nothing.  Returns the store's record of each step."""
    steps = []
    for k, (recipe, fields, label) in enumerate(zip(made.recipes, made.bottles, made.labels)):
        if k == 0:
            source_id = bottle.id if bottle is not None else None
            used = amount_used(recipe, bottle.amount_unit) if bottle is not None else None
        else:
            source_id, used = PREVIOUS, amount_used(recipe, "L")
        steps.append(PreparationStep(source_id, used, fields, snapshot={
            "recipe": recipe.to_dict(), "label": label.to_dict()}))
    return prepare_series(store, steps, who=who)


def evaluate(store: Store | None, fields: PrepareFields, catalog, *, today: date,
             prepared_by: str) -> PrepReading:
    """Read the form, read its source bottle (``store`` is needed only for one) and plan;
    every problem comes back by field, nothing is written."""
    reading = form.read(fields, catalog)
    out = PrepReading(None, reading.errors, reading.echoes, reading.missing, reading.problems)
    source = reading.value.source if reading.ok else None
    try:
        bid = bottle_ref(fields.source)
    except CarboyError:
        bid = None  # already named by the form
    if bid is not None and store is not None:
        try:
            out.bottle, source = bottle_source(store, bid, catalog, today=today)
            left = format_amount(out.bottle.amount_left, out.bottle.amount_unit)
            out.echoes["source"] = (f"→ bottle {bid}: {source.label} · {left} left · "
                                    f"{out.bottle.location or 'no location'}")
        except CarboyError as err:
            out.errors["source"] = str(err)
            out.problems.append(("source", err))
    if out.errors or source is None:
        return out
    try:
        out.value = form.plan(source, reading.value, today=today, prepared_by=prepared_by)
    except CarboyError as err:   # by the field the model names (the target where none)
        field = getattr(err, "field", "") or "target"
        out.errors[field] = str(err)
        out.problems.append((field, err))
    return out
