"""Preparations against the database: reading a source bottle and recording what a
recipe made (the source drawn down, the new bottles added, one journal entry each), in
one transaction.  Both front ends call these."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from carboy.errors import CarboyError, InvalidInput
from carboy.model import preparation
from carboy.model.forms import Reading, bottle_ref
from carboy.model.forms import prepare as form
from carboy.model.forms.prepare import Made, PrepareFields, amount_used
from carboy.store import stock
from carboy.store.db import Store


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
    bottle = stock.get(store, bottle_id, today=today)
    if bottle.status != "in-use":
        raise InvalidInput("source", f"#{bottle.id}", f"bottle {bottle.id} is {bottle.status}: "
                           "only a bottle in use can be drawn from", field="source")
    return bottle, source_from_bottle(bottle, catalog)


def record(store: Store, made: Made, bottle, *, who: str | None = None) -> list:
    """Draw from ``bottle`` (None: a source outside the inventory), add every new bottle
    and journal each step, all or nothing.  Returns the store's record of each step."""
    steps = []
    for k, (recipe, fields, label) in enumerate(zip(made.recipes, made.bottles, made.labels)):
        if k == 0:
            source_id = bottle.id if bottle is not None else None
            used = amount_used(recipe, bottle.amount_unit) if bottle is not None else None
        else:
            source_id, used = stock.PREVIOUS, amount_used(recipe, "L")
        steps.append(stock.PreparationStep(source_id, used, fields, snapshot={
            "recipe": recipe.to_dict(), "label": label.to_dict()}))
    return stock.prepare_series(store, steps, who=who)


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
            left = stock.format_amount(out.bottle.amount_left, out.bottle.amount_unit)
            out.echoes["source"] = (f"→ bottle {bid}: {source.label} · {left} left · "
                                    f"{out.bottle.location or 'no location'}")
        except CarboyError as err:
            out.errors["source"] = str(err)
            out.problems.append(("source", err))
    if out.errors or source is None:
        return out
    try:
        out.value = form.plan(source, reading.value, today=today, prepared_by=prepared_by)
    except CarboyError as err:
        out.errors["target"] = str(err)
        out.problems.append(("target", err))
    return out
