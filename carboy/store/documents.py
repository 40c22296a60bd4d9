"""Documents to print, built from what the database holds (read only: nothing is written).

* :func:`bottle_label`: a stock bottle's label (:mod:`carboy.model.label_documents`):
  name and formula, strength as labelled and as measured, where it came from (the
  preparation journal entry that made it, else its receipt and lot), expiry and
  re-check date, the GHS hazard text for its concentration band, the storeroom's name
  and a QR code of its id.
* :func:`due_list`: the strength check (:func:`carboy.store.stock.check`) as a table
  with totals, for the bench.

A waste container's disposal record is built in :mod:`carboy.store.disposal_record`.

The storeroom's name comes from the caller, else from the storeroom rule
:data:`STOREROOM_NAME_RULE` when the database holds one.
"""

from __future__ import annotations

from collections import Counter
from collections.abc import Iterable
from datetime import date

from carboy.errors import InvalidInput
from carboy.model import labels, solutions
from carboy.model.documents import Column, Document, formula_text, table_document
from carboy.model.label_documents import BottleFacts
from carboy.model.label_documents import bottle_label as label_document
from carboy.store import journal, rules, stock
from carboy.store.compounds import catalog_for
from carboy.store.db import Store

__all__ = ["STOREROOM_NAME_RULE", "bottle_label", "bottle_labels", "due_list", "due_list_of",
           "storeroom_name"]

STOREROOM_NAME_RULE = rules.STOREROOM_NAME
"""The ``storeroom_rules`` row that names the storeroom on paper (set with
:func:`carboy.store.rules.set_storeroom_name`)."""


def storeroom_name(store: Store, given: str | None = None) -> str:
    """``given`` if not empty, else the storeroom's own name from its rules, else ``""``."""
    if given and given.strip():
        return " ".join(given.split())
    return rules.load(store).storeroom_name


def _preparation_of(store: Store, bottle_id: int) -> journal.Entry | None:
    """The preparation journal entry that made ``bottle_id``, if carboy recorded one."""
    found = store.scalar(
        "SELECT max(id) FROM journal_entries WHERE kind = 'preparation' "
        "AND json_extract(snapshot_json, '$.new_bottle') = ?", [bottle_id])
    return journal.get(store, found) if found is not None else None


def _mass_percent(bottle: stock.Bottle, compound, catalog, recorded: dict) -> float | None:
    """The bottle's strength in % w/w, which chooses its GHS band; None when unknown."""
    if isinstance(recorded.get("mass_percent"), (int, float)):
        return float(recorded["mass_percent"])
    if bottle.strength_unit == "%w/w":
        return min(bottle.label_strength, labels.TOP_PERCENT)
    try:
        return solutions.strength_of(compound, conc_molar=bottle.label_strength,
                                     catalog=catalog).mass_percent
    except InvalidInput:
        return None


def _display_name(name: str) -> str:
    name = " ".join(name.split())
    return name[:1].upper() + name[1:]


def _facts(store: Store, bottle: stock.Bottle, compound, catalog, storeroom: str,
           today: date) -> BottleFacts:
    entry = _preparation_of(store, bottle.id)
    snap = entry.snapshot if entry is not None else {}
    recorded = snap.get("label") if isinstance(snap.get("label"), dict) else {}
    source_id = snap.get("source_bottle") if isinstance(snap.get("source_bottle"), int) else None
    lot = bottle.lot or None
    if source_id is not None and lot is None:
        source_lot = store.scalar("SELECT lot FROM stock_bottles WHERE id = ?", [source_id])
        lot = source_lot or None
    made_here = entry is not None
    dated = bottle.received_on or (entry.recorded_at[:10] if entry else bottle.added_at[:10])
    by = (recorded.get("prepared_by") or entry.recorded_by) if entry else None
    measured = (stock.format_strength(bottle.current_strength, bottle.strength_unit)
                if bottle.current_strength is not None else None)
    return BottleFacts(
        bottle_id=bottle.id, name=_display_name(compound.name), formula=compound.key,
        labelled=stock.format_strength(bottle.label_strength, bottle.strength_unit),
        mass_percent=_mass_percent(bottle, compound, catalog, recorded), measured=measured,
        measured_on=(bottle.measured_at or "")[:10] or None, made_here=made_here, dated=dated,
        by=by, source_bottle=source_id, lot=lot, expires_on=bottle.expires_on,
        recheck_on=stock.check_row(bottle, today).due_on, storeroom=storeroom)


def bottle_label(store: Store, bottle_id: int | str, *, storeroom: str | None = None,
                 today: date | None = None) -> Document:
    """The label document of one stock bottle.

    Raises NotFound for an unknown bottle id, InvalidInput for one that is not a number.
    """
    day = today or date.today()
    with store.reading():
        bottle = stock.get(store, bottle_id, today=day)
        catalog = catalog_for(store)
        compound = catalog.compound(bottle.compound_key)
        facts = _facts(store, bottle, compound, catalog, storeroom_name(store, storeroom), day)
    label = labels.make_label(
        compound, conc_text=facts.labelled, mass_percent=facts.mass_percent,
        prepared_on=(facts.dated or day.isoformat())[:10],
        prepared_by=facts.by or bottle.added_by or "unknown", catalog=catalog)
    return label_document(label, facts, printed_on=day.isoformat())


def bottle_labels(store: Store, bottle_ids: Iterable[int | str], *,
                  storeroom: str | None = None, today: date | None = None) -> list[Document]:
    """The labels of several bottles, in the order given; every id is checked first."""
    ids = list(bottle_ids)
    if not ids:
        raise InvalidInput("bottle ids", "", "name at least one bottle")
    return [bottle_label(store, i, storeroom=storeroom, today=today) for i in ids]


# -- the due list -------------------------------------------------------------------------

DUE_COLUMNS = (
    Column("Bottle", "right", 0.65), Column("Compound", weight=0.95),
    Column("Location", weight=1.3), Column("Label", weight=0.8),
    Column("Measured", weight=1.1), Column("Last measured", weight=1.0),
    Column("Due", weight=1.0), Column("Expires", weight=1.0),
    Column("What is due", weight=2.4), Column("Done", weight=0.55),
)


def _due_row(row: stock.CheckRow) -> tuple[str, ...]:
    b = row.bottle
    measured = "-"
    if b.current_strength is not None:
        measured = stock.format_strength(b.current_strength, b.strength_unit)
        if row.deviation_percent is not None:
            measured += f" ({row.deviation_percent:+.1f} %)".replace("-", "−")
    return (str(b.id), formula_text(b.compound_key), b.location or "-",
            stock.format_strength(b.label_strength, b.strength_unit), measured,
            (b.measured_at or "-")[:10], row.due_on or "-", b.expires_on or "-",
            "; ".join(row.reasons) or "nothing: current", "")


def due_list(store: Store, *, everything: bool = False, storeroom: str | None = None,
             today: date | None = None) -> Document:
    """The strength check as a document: what is due, with counts of each flag."""
    day = today or date.today()
    rows = stock.check(store, today=day, everything=everything)
    return due_list_of(rows, everything=everything, storeroom=storeroom_name(store, storeroom),
                       today=day)


def due_list_of(rows: list[stock.CheckRow], *, everything: bool, storeroom: str,
                today: date) -> Document:
    """The due list of strength-check rows already read (:func:`carboy.store.stock.check`)."""
    day, name = today, storeroom
    flagged = sum(1 for r in rows if r.flags)
    counts = Counter(f for r in rows for f in r.flags)
    summary = [("Checked on", day.isoformat()),
               ("Listed", "every bottle in use" if everything
                else "bottles in use that need attention"),
               ("Need attention", f"{flagged} of {len(rows)} listed")]
    summary += [(flag.replace("-", " ").capitalize(), str(counts[flag]))
                for flag in stock.CHECK_FLAGS if counts[flag]]
    totals = ("", f"{len(rows)} listed", "", "", "", "", "", "",
              f"{flagged} need attention", "")
    notes = ("Re-check interval: the bottle's own, else the storeroom's rule for its "
             "compound (carboy rules). Off-label: the measured strength differs from the "
             f"label by more than ±{stock.OFF_LABEL_TOLERANCE * 100:g} %.",)
    return table_document(
        "due-list", "Strength check: bottles due", columns=DUE_COLUMNS,
        rows=[_due_row(r) for r in rows], totals=totals, summary=summary, notes=notes,
        subtitle=name, header=name, printed_on=day.isoformat(),
        empty_text="Every bottle in use is within its re-check interval, on label and "
                   "unexpired.")
