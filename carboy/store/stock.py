"""Stock bottles: what is on the shelves, how strong it is, and whether that is still known.

A bottle has a compound (catalog or user-defined), a label strength (molarity ``M``
or mass percentage ``%w/w``), optionally a current strength with when and how it was
last measured, an amount left with its unit (``L`` for solutions and liquids, ``g``
for solids), a container size, location, lot, received / opened / expiry dates, a
status (``in-use``, ``empty``, ``disposed``) and notes.

Strength status (plain text, see :func:`strength_status`), first match wins:

``expired``    the expiry date has passed;
``off-label``  the last measured strength differs from the label strength by more
               than :data:`OFF_LABEL_TOLERANCE` (2 %, relative);
``overdue``    the bottle has a re-standardization interval and its last
               measurement is older than that (or it was never measured).  The
               interval is the bottle's own, else (for a molar solution) the
               storeroom's rule for its compound (:mod:`carboy.store.rules`,
               defaults in ``carboy/model/data/upkeep.toml``);
``current``    otherwise.

The stock list is paged with keysets on the bottle id (``page(after_id=...)``) and
searched through an FTS5 index (compound key and name, location, lot), every word of
the search taken as a quoted prefix, so any text a user types is safe.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping
from dataclasses import asdict, dataclass
from datetime import date, datetime
from typing import Any

from carboy.errors import InvalidInput
from carboy.model import quantities
from carboy.store import journal, rules
from carboy.store.db import Store, current_user, iso_utc, utc_now
from carboy.store.errors import NotFound
from carboy.store.migrations import BOTTLE_STATUSES

OFF_LABEL_TOLERANCE = 0.02
"""Relative difference between current and label strength beyond which a bottle is off-label."""
MAX_MOLARITY = 30.0
"""Above this a molarity is refused as absurd (pure water is 55 M; conc. H2SO4 is about 18 M)."""
MAX_VOLUME_L = 1000.0
"""Largest bottle or drum accepted, litres."""
MAX_MASS_G = 100_000.0
"""Largest amount of a solid accepted, grams."""
PAGE_SIZE = 50

STRENGTH_STATUSES = ("current", "overdue", "expired", "off-label")


@dataclass(frozen=True)
class Bottle:
    """One stock bottle as stored, with its strength status as of ``today``."""

    id: int
    compound_key: str
    compound_name: str
    strength_unit: str
    label_strength: float
    current_strength: float | None
    measured_at: str | None
    measured_how: str
    restandardize_days: int | None
    amount_unit: str
    amount_left: float
    container_size: float
    location: str
    lot: str
    received_on: str | None
    opened_on: str | None
    expires_on: str | None
    status: str
    notes: str
    added_at: str
    added_by: str
    strength_status: str
    recheck_days: int | None = None
    """The re-standardization interval in force: the bottle's own, else its compound's rule."""

    def as_dict(self) -> dict:
        return asdict(self)

    @property
    def strength_text(self) -> str:
        """The strength to use now: the measured one where known, else the label's."""
        value = self.current_strength if self.current_strength is not None else self.label_strength
        return format_strength(value, self.strength_unit)


@dataclass(frozen=True)
class Page:
    """A page of the stock list; pass ``next_after`` back as ``after_id`` for the next one."""

    bottles: list[Bottle]
    next_after: int | None
    prev_before: int | None


# -- formatting and parsing -------------------------------------------------------

def format_number(value: float) -> str:
    """Shortest text that reads back as the same float (``1.0`` -> ``1``)."""
    text = repr(float(value))
    return text[:-2] if text.endswith(".0") else text


def format_strength(value: float, unit: str) -> str:
    return f"{format_number(value)} {unit}"


def format_amount(value: float, unit: str) -> str:
    return f"{format_number(value)} {unit}"


def parse_strength(text: str, what: str = "strength") -> tuple[float, str]:
    """``'1 M'``, ``'0.1M'``, ``'100 mM'`` -> molar; ``'37 %'``, ``'37 %w/w'`` -> mass percent."""
    if not isinstance(text, str) or not text.strip():
        raise InvalidInput(what, text, "give a molarity (e.g. '1 M') or a mass percentage "
                           "(e.g. '37 %w/w')")
    if "%" in text or "wt" in text:
        value = quantities.percent(text, what=what)
        unit = "%w/w"
    else:
        value = quantities.concentration_molar(text, what=what)
        unit = "M"
        if value > MAX_MOLARITY:
            raise InvalidInput(what, text, f"no solution is stronger than {MAX_MOLARITY:g} M")
    if value <= 0:
        raise InvalidInput(what, text, "must be greater than zero")
    return value, unit


def parse_amount(text: str, what: str = "amount") -> tuple[float, str]:
    """``'2.5 L'`` / ``'500 mL'`` -> (L, 'L'); ``'500 g'`` / ``'1 kg'`` -> (g, 'g')."""
    try:
        value, unit, limit = quantities.volume_l(text, what=what), "L", MAX_VOLUME_L
    except InvalidInput as err:
        if "is a mass" in err.reason:
            value, unit, limit = quantities.mass_g(text, what=what), "g", MAX_MASS_G
        elif "unit" in err.reason and "give a unit" not in err.reason:
            raise InvalidInput(what, text, "expected a volume (e.g. '2.5 L') or a mass "
                               "(e.g. '500 g')") from None
        else:
            raise
    if value > limit:
        raise InvalidInput(what, text, f"larger than any container carboy accepts "
                           f"({format_amount(limit, unit)})")
    return value, unit


_DATE = re.compile(r"^\d{4}-\d{2}-\d{2}$")


def parse_date(text: str | date | None, what: str) -> str | None:
    """An ISO date ``YYYY-MM-DD`` (or a date), else ``None`` for empty."""
    if text is None:
        return None
    if isinstance(text, datetime):
        return text.date().isoformat()
    if isinstance(text, date):
        return text.isoformat()
    text = str(text).strip()
    if not text:
        return None
    if not _DATE.match(text):
        raise InvalidInput(what, text, "expected a date as YYYY-MM-DD")
    try:
        return date.fromisoformat(text).isoformat()
    except ValueError:
        raise InvalidInput(what, text, "is not a real date") from None


def _date_of(text: str | None) -> date | None:
    if not text:
        return None
    try:
        return date.fromisoformat(text[:10])
    except ValueError:
        return None


def strength_status(*, label_strength: float, current_strength: float | None,
                    measured_at: str | None, restandardize_days: int | None,
                    expires_on: str | None, today: date) -> str:
    """``expired``, ``off-label``, ``overdue`` or ``current`` (see the module docstring)."""
    expiry = _date_of(expires_on)
    if expiry is not None and expiry < today:
        return "expired"
    if current_strength is not None and label_strength > 0:
        if abs(current_strength - label_strength) / label_strength > OFF_LABEL_TOLERANCE:
            return "off-label"
    if restandardize_days:
        measured = _date_of(measured_at)
        if measured is None or (today - measured).days > restandardize_days:
            return "overdue"
    return "current"


# -- validation of one bottle ---------------------------------------------------------

FIELDS = ("compound", "label_strength", "current_strength", "measured_on", "measured_how",
          "restandardize_days", "amount_left", "container_size", "location", "lot",
          "received_on", "opened_on", "expires_on", "status", "notes")
"""The text fields of one bottle: the CSV column layout and the keys of :func:`validate`."""


def validate(fields: Mapping[str, Any], catalog) -> dict:
    """Check one bottle given as text fields (see :data:`FIELDS`); returns database columns.

    ``compound``, ``label_strength`` and ``container_size`` are required;
    ``amount_left`` defaults to the container size (a full bottle).
    """
    unknown = sorted(set(fields) - set(FIELDS))
    if unknown:
        raise InvalidInput("field", unknown[0], "unknown; expected " + ", ".join(FIELDS))

    def text(name: str) -> str:
        value = fields.get(name)
        return "" if value is None else str(value).strip()

    name = text("compound")
    if not name:
        raise InvalidInput("compound", name, "is required")
    compound = catalog.compound(name)
    label, unit = parse_strength(text("label_strength"), "label strength")
    current = None
    if text("current_strength"):
        current, cur_unit = parse_strength(text("current_strength"), "current strength")
        if cur_unit != unit:
            raise InvalidInput("current strength", text("current_strength"),
                               f"must be in the label's unit ({unit})")
    if not text("container_size"):
        raise InvalidInput("container size", "", "is required, e.g. '2.5 L' or '500 g'")
    size, size_unit = parse_amount(text("container_size"), "container size")
    if size <= 0:
        raise InvalidInput("container size", text("container_size"), "must be greater than zero")
    if text("amount_left"):
        left, left_unit = parse_amount(text("amount_left"), "amount left")
        if left_unit != size_unit:
            raise InvalidInput("amount left", text("amount_left"),
                               f"must be in the same kind of unit as the container size "
                               f"({size_unit})")
        if left > size * (1 + 1e-9):
            raise InvalidInput("amount left", text("amount_left"),
                               f"exceeds the container size {format_amount(size, size_unit)}")
    else:
        left = size
    days = None
    if text("restandardize_days"):
        try:
            days = int(text("restandardize_days"))
        except ValueError:
            raise InvalidInput("restandardize days", text("restandardize_days"),
                               "expected a whole number of days") from None
        if not 0 < days <= 3650:
            raise InvalidInput("restandardize days", days, "expected 1 to 3650 days")
    status = text("status") or "in-use"
    if status not in BOTTLE_STATUSES:
        raise InvalidInput("status", status, "expected one of " + ", ".join(BOTTLE_STATUSES))
    received = parse_date(text("received_on"), "received date")
    opened = parse_date(text("opened_on"), "opened date")
    expires = parse_date(text("expires_on"), "expiry date")
    measured = parse_date(text("measured_on"), "measured date")
    if received and opened and opened < received:
        raise InvalidInput("opened date", opened, f"is before the received date {received}")
    if measured and current is None:
        raise InvalidInput("measured date", measured, "given without a current strength")
    for what, value in (("location", text("location")), ("lot", text("lot")),
                        ("notes", text("notes")), ("measured how", text("measured_how"))):
        if len(value) > 2000:
            raise InvalidInput(what, value[:40] + "...", "is too long (2000 characters at most)")
    return {
        "compound_key": compound.key, "compound_name": compound.name,
        "strength_unit": unit, "label_strength": label, "current_strength": current,
        "measured_at": measured, "measured_how": text("measured_how"),
        "restandardize_days": days, "amount_unit": size_unit, "amount_left": left,
        "container_size": size, "location": text("location"), "lot": text("lot"),
        "received_on": received, "opened_on": opened, "expires_on": expires,
        "status": status, "notes": text("notes"),
    }


def to_fields(bottle: Bottle) -> dict[str, str]:
    """A bottle as the text fields of :data:`FIELDS` (what export writes, import reads)."""
    return {
        "compound": bottle.compound_key,
        "label_strength": format_strength(bottle.label_strength, bottle.strength_unit),
        "current_strength": ("" if bottle.current_strength is None
                             else format_strength(bottle.current_strength, bottle.strength_unit)),
        "measured_on": (bottle.measured_at or "")[:10],
        "measured_how": bottle.measured_how,
        "restandardize_days": "" if bottle.restandardize_days is None
        else str(bottle.restandardize_days),
        "amount_left": format_amount(bottle.amount_left, bottle.amount_unit),
        "container_size": format_amount(bottle.container_size, bottle.amount_unit),
        "location": bottle.location, "lot": bottle.lot,
        "received_on": bottle.received_on or "", "opened_on": bottle.opened_on or "",
        "expires_on": bottle.expires_on or "", "status": bottle.status, "notes": bottle.notes,
    }


# -- writes ---------------------------------------------------------------------------

_COLUMNS = ("compound_key", "compound_name", "strength_unit", "label_strength",
            "current_strength", "measured_at", "measured_how", "restandardize_days",
            "amount_unit", "amount_left", "container_size", "location", "lot", "received_on",
            "opened_on", "expires_on", "status", "notes", "added_at", "added_by")
_INSERT = (f"INSERT INTO stock_bottles ({', '.join(_COLUMNS)}) "
           f"VALUES ({', '.join('?' for _ in _COLUMNS)})")


def insert_in(store: Store, columns: Mapping[str, Any], *, who: str | None = None,
              when: datetime | None = None) -> int:
    """Insert validated columns (from :func:`validate`); caller is inside ``Store.write``."""
    row = dict(columns)
    row.setdefault("added_at", iso_utc(when) if when else utc_now())
    row.setdefault("added_by", who or current_user())
    cur = store.execute(_INSERT, [row.get(c) for c in _COLUMNS])
    return int(cur.lastrowid)


def add(store: Store, fields: Mapping[str, Any], *, who: str | None = None,
        when: datetime | None = None) -> int:
    """Validate and add one bottle, with a ``receipt`` journal entry; returns the bottle id."""
    from carboy.store.compounds import catalog_for

    columns = validate(fields, catalog_for(store))

    def work(s: Store) -> int:
        bottle_id = insert_in(s, columns, who=who, when=when)
        journal.append_in(s, "receipt", summary=f"bottle {bottle_id} added: "
                          f"{columns['compound_key']} "
                          f"{format_strength(columns['label_strength'], columns['strength_unit'])}",
                          snapshot={"bottle": columns}, bottle_id=bottle_id, who=who, when=when)
        return bottle_id

    return store.write(work)


def record_standardization(store: Store, bottle_id: int, strength: str | float, *,
                           method: str, snapshot: Mapping | None = None,
                           who: str | None = None, when: datetime | None = None) -> int:
    """Set a bottle's measured strength and journal it, in one transaction; returns the entry id.

    ``strength`` is text (``'0.0987 M'``) or a number in the bottle's own unit.
    """
    bottle = get(store, bottle_id)
    if isinstance(strength, str):
        value, unit = parse_strength(strength, "measured strength")
        if unit != bottle.strength_unit:
            raise InvalidInput("measured strength", strength,
                               f"must be in the label's unit ({bottle.strength_unit})")
    else:
        value = float(strength)
        if not math.isfinite(value) or value <= 0:
            raise InvalidInput("measured strength", strength, "must be a positive number")
    if not method or not method.strip():
        raise InvalidInput("method", method, "say how the strength was measured")
    stamp = iso_utc(when) if when else utc_now()

    def work(s: Store) -> int:
        s.execute("UPDATE stock_bottles SET current_strength = ?, measured_at = ?, "
                  "measured_how = ? WHERE id = ?", [value, stamp, method.strip(), bottle.id])
        snap = {"label_strength": bottle.label_strength, "previous_strength":
                bottle.current_strength, "measured_strength": value,
                "unit": bottle.strength_unit, "method": method.strip(),
                **(dict(snapshot) if snapshot else {})}
        return journal.append_in(
            s, "standardization", bottle_id=bottle.id, snapshot=snap, who=who, when=when,
            summary=f"bottle {bottle.id} {bottle.compound_key} standardized: "
                    f"{format_strength(value, bottle.strength_unit)}")

    return store.write(work)


@dataclass(frozen=True)
class Prepared:
    """What :func:`prepare` wrote: the journal entry and the new bottle, if one was made."""

    entry_id: int
    new_bottle_id: int | None
    source_left: float | None
    """Amount left in the source bottle afterwards (its own unit), if one was drawn from."""


def _amount_used(bottle: Bottle, used: str | float) -> float:
    return _amount_in(bottle.amount_unit, used, f" (bottle {bottle.id})")


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


PREVIOUS = "previous"


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


def prepare_series(store: Store, steps, *, who: str | None = None,
                   when: datetime | None = None) -> list[Prepared]:
    """Record several preparations (a serial dilution) in one transaction.

    Every step is validated before anything is written; a step whose ``source_bottle``
    is :data:`PREVIOUS` draws from the bottle the step before it made.
    """
    from carboy.store.compounds import catalog_for

    steps = list(steps)
    if not steps:
        raise InvalidInput("preparation", "", "nothing to record")
    catalog = catalog_for(store)
    checked = []
    for k, step in enumerate(steps, 1):
        where = f" (step {k})" if len(steps) > 1 else ""
        if step.source_bottle is None and step.new_bottle is None:
            raise InvalidInput("preparation" + where, "", "nothing to record: give a source "
                               "bottle to draw from or a new bottle to add")
        bottle = amount = None
        if step.source_bottle == PREVIOUS:
            if k == 1 or steps[k - 2].new_bottle is None:
                raise InvalidInput("source bottle" + where, PREVIOUS,
                                   "the step before makes no bottle to draw from")
            columns_before = checked[-1][2]
            amount = _amount_in(columns_before["amount_unit"], step.used, where)
        elif step.source_bottle is not None:
            bottle = get(store, step.source_bottle)
            if bottle.status != "in-use":
                raise InvalidInput("bottle", bottle.id, f"is {bottle.status}, not in use")
            if step.used is None:
                raise InvalidInput("amount used" + where, "", f"say how much was taken from "
                                   f"bottle {bottle.id}")
            amount = _amount_used(bottle, step.used)
        columns = validate(step.new_bottle, catalog) if step.new_bottle is not None else None
        checked.append((bottle, amount, columns))

    def work(s: Store) -> list[Prepared]:
        out: list[Prepared] = []
        for step, (bottle, amount, columns) in zip(steps, checked):
            if step.source_bottle == PREVIOUS:
                source_id = out[-1].new_bottle_id
                source_key = checked[len(out) - 1][2]["compound_key"]
                source_unit = checked[len(out) - 1][2]["amount_unit"]
            elif bottle is not None:
                source_id, source_key, source_unit = bottle.id, bottle.compound_key, \
                    bottle.amount_unit
            else:
                source_id = None
            left_after = None
            snap: dict[str, Any] = {}
            if source_id is not None:
                left = s.scalar("SELECT amount_left FROM stock_bottles WHERE id = ?",
                                [source_id])
                if amount > left * (1 + 1e-9):
                    raise InvalidInput("amount used", step.used,
                                       f"only {format_amount(left, source_unit)} is left in "
                                       f"bottle {source_id}")
                left_after = max(left - amount, 0.0)
                s.execute("UPDATE stock_bottles SET amount_left = ? WHERE id = ?",
                          [left_after, source_id])
                snap.update({"source_bottle": source_id, "used": amount,
                             "unit": source_unit, "left_before": left})
            new_id = insert_in(s, columns, who=who, when=when) if columns is not None else None
            if columns is not None:
                snap.update({"new_bottle": new_id, "bottle": columns})
            snap.update(dict(step.snapshot) if step.snapshot else {})
            parts = []
            if source_id is not None:
                parts.append(f"bottle {source_id} {source_key}: used "
                             f"{format_amount(amount, source_unit)}")
            if columns is not None:
                parts.append(f"made bottle {new_id} {columns['compound_key']} "
                             f"{format_strength(columns['label_strength'], columns['strength_unit'])}")
            entry = journal.append_in(
                s, "preparation", bottle_id=source_id if source_id is not None else new_id,
                snapshot=snap, who=who, when=when, summary=step.summary or "; ".join(parts))
            out.append(Prepared(entry, new_id, left_after))
        return out

    return store.write(work)


def _amount_in(unit: str, used: str | float | None, where: str) -> float:
    if used is None:
        raise InvalidInput("amount used" + where, "", "say how much was taken")
    if isinstance(used, str):
        amount, got = parse_amount(used, "amount used")
        if got != unit:
            raise InvalidInput("amount used" + where, used, f"must be in {unit}")
    else:
        amount = float(used)
    if not math.isfinite(amount) or amount <= 0:
        raise InvalidInput("amount used" + where, used, "must be a positive number")
    return amount


def record_preparation(store: Store, bottle_id: int, used: str | float, *,
                       snapshot: Mapping | None = None, summary: str = "",
                       who: str | None = None, when: datetime | None = None) -> int:
    """Take an amount from a bottle for a preparation and journal it; returns the entry id."""
    return prepare(store, source_bottle=bottle_id, used=used, snapshot=snapshot,
                   summary=summary, who=who, when=when).entry_id


def set_status(store: Store, bottle_id: int, status: str, *, note: str = "",
               who: str | None = None, when: datetime | None = None) -> int | None:
    """Mark a bottle ``in-use``, ``empty`` or ``disposed`` (disposal is journaled)."""
    if status not in BOTTLE_STATUSES:
        raise InvalidInput("status", status, "expected one of " + ", ".join(BOTTLE_STATUSES))
    bottle = get(store, bottle_id)

    def work(s: Store) -> int | None:
        s.execute("UPDATE stock_bottles SET status = ? WHERE id = ?", [status, bottle.id])
        if status == "disposed":
            return journal.append_in(
                s, "disposal", bottle_id=bottle.id, who=who, when=when,
                summary=f"bottle {bottle.id} {bottle.compound_key} disposed",
                snapshot={"previous_status": bottle.status, "note": note})
        return None

    return store.write(work)


# -- reads ----------------------------------------------------------------------------

_BOTTLE_COLUMNS = ("id",) + _COLUMNS


def effective_recheck(row: Mapping[str, Any], in_force: rules.Rules | None) -> int | None:
    """The bottle's own interval, else its compound's rule (molar solutions only)."""
    if row["restandardize_days"]:
        return int(row["restandardize_days"])
    if in_force is None or row["strength_unit"] != "M":
        return None
    return in_force.recheck_for(row["compound_key"])


def _bottle(row: Mapping[str, Any], today: date, in_force: rules.Rules | None = None) -> Bottle:
    days = effective_recheck(row, in_force)
    status = strength_status(label_strength=row["label_strength"],
                             current_strength=row["current_strength"],
                             measured_at=row["measured_at"],
                             restandardize_days=days,
                             expires_on=row["expires_on"], today=today)
    return Bottle(**{c: row[c] for c in _BOTTLE_COLUMNS}, strength_status=status,
                  recheck_days=days)


def _as_id(value: object) -> int:
    try:
        return int(str(value).strip().lstrip("#"))
    except (TypeError, ValueError):
        raise InvalidInput("bottle id", value, "expected a whole number") from None


def get(store: Store, bottle_id: int | str, *, today: date | None = None) -> Bottle:
    bid = _as_id(bottle_id)
    row = store.one(f"SELECT {', '.join(_BOTTLE_COLUMNS)} FROM stock_bottles WHERE id = ?",
                    [bid])
    if row is None:
        raise NotFound("stock bottle", bid)
    return _bottle(row, today or date.today(), rules.load(store))


def fts_query(search: str | None) -> str | None:
    """A search box's text as a safe FTS5 query: every word a quoted prefix, all required."""
    if not search:
        return None
    words = [w for w in search.split() if any(ch.isalnum() for ch in w)]
    if not words:
        return None
    return " ".join('"' + w.replace('"', '""') + '"*' for w in words)


def page(store: Store, search: str | None = None, *, after_id: int | None = None,
         before_id: int | None = None, limit: int = PAGE_SIZE, status: str | None = None,
         today: date | None = None) -> Page:
    """One page of bottles in id order, optionally matching ``search`` (keyset pagination).

    ``after_id`` gives the page after that id; ``before_id`` the page before it.
    """
    if not 0 < limit <= 1000:
        raise InvalidInput("page size", limit, "expected 1 to 1000")
    if status is not None and status not in BOTTLE_STATUSES:
        raise InvalidInput("status", status, "expected one of " + ", ".join(BOTTLE_STATUSES))
    query = fts_query(search)
    cols = ", ".join("b." + c for c in _BOTTLE_COLUMNS)
    where, params = [], []
    if query:
        source = ("stock_bottles_fts f JOIN stock_bottles b ON b.id = f.rowid")
        where.append("stock_bottles_fts MATCH ?")
        params.append(query)
        key = "f.rowid"
    else:
        source = "stock_bottles b"
        key = "b.id"
    backwards = before_id is not None and after_id is None
    if after_id is not None:
        where.append(f"{key} > ?")
        params.append(int(after_id))
    if backwards:
        where.append(f"{key} < ?")
        params.append(int(before_id))
    if status is not None:
        where.append("b.status = ?")
        params.append(status)
    order = "DESC" if backwards else "ASC"
    sql = (f"SELECT {cols} FROM {source}" + (" WHERE " + " AND ".join(where) if where else "")
           + f" ORDER BY {key} {order} LIMIT {int(limit) + 1}")
    rows = store.rows(sql, params)
    more = len(rows) > limit
    rows = rows[:limit]
    if backwards:
        rows.reverse()
    day = today or date.today()
    in_force = rules.load(store)
    bottles = [_bottle(r, day, in_force) for r in rows]
    if not bottles:
        return Page([], None, None)
    if backwards:
        next_after = bottles[-1].id
        prev_before = bottles[0].id if more else None
    else:
        next_after = bottles[-1].id if more else None
        prev_before = bottles[0].id if after_id is not None else None
    return Page(bottles, next_after, prev_before)


def count(store: Store, search: str | None = None, *, status: str | None = None) -> int:
    """How many bottles match ``search`` (and ``status``)."""
    query = fts_query(search)
    if query and status is None:
        return int(store.scalar(
            "SELECT count(*) FROM stock_bottles_fts WHERE stock_bottles_fts MATCH ?", [query]))
    if query:
        return int(store.scalar(
            "SELECT count(*) FROM stock_bottles_fts f JOIN stock_bottles b ON b.id = f.rowid "
            "WHERE stock_bottles_fts MATCH ? AND b.status = ?", [query, status]))
    if status is not None:
        return int(store.scalar("SELECT count(*) FROM stock_bottles WHERE status = ?", [status]))
    return int(store.scalar("SELECT count(*) FROM stock_bottles"))


def all_bottles(store: Store, *, today: date | None = None, batch: int = 1000):
    """Every bottle in id order, read in short batches (for export)."""
    after = None
    while True:
        got = page(store, after_id=after, limit=batch, today=today)
        yield from got.bottles
        if got.next_after is None:
            return
        after = got.next_after


# -- strength checks ------------------------------------------------------------------

EXPIRES_SOON_DAYS = 30
"""A bottle expiring within this many days is listed as a notice (common practice)."""
CHECK_FLAGS = ("expired", "off-label", "overdue", "never-standardized", "expires-soon")


@dataclass(frozen=True)
class CheckRow:
    """One bottle in the strength check: what is known of its strength and what is due."""

    bottle: Bottle
    deviation_percent: float | None
    """Current against label strength, % (signed); None if never measured."""
    days_since: int | None
    """Days since the last measurement; None if never measured."""
    due_on: str | None
    """When the next standardization is due (ISO date); None if no interval applies."""
    days_to_expiry: int | None
    flags: tuple[str, ...]
    reasons: tuple[str, ...]

    def to_dict(self) -> dict:
        b = self.bottle
        return {
            "bottle_id": b.id, "compound": b.compound_key, "name": b.compound_name,
            "location": b.location, "lot": b.lot, "unit": b.strength_unit,
            "label_strength": b.label_strength, "current_strength": b.current_strength,
            "deviation_percent": self.deviation_percent,
            "measured_on": (b.measured_at or "")[:10] or None, "days_since": self.days_since,
            "recheck_days": b.recheck_days, "due_on": self.due_on,
            "expires_on": b.expires_on, "days_to_expiry": self.days_to_expiry,
            "status": b.strength_status, "flags": list(self.flags),
            "reasons": list(self.reasons),
        }


def check_row(bottle: Bottle, today: date) -> CheckRow:
    """The strength check of one bottle as of ``today``."""
    unit = bottle.strength_unit
    flags: list[str] = []
    reasons: list[str] = []
    expiry = _date_of(bottle.expires_on)
    to_expiry = (expiry - today).days if expiry else None
    if to_expiry is not None and to_expiry < 0:
        flags.append("expired")
        reasons.append(f"expired on {bottle.expires_on} ({-to_expiry} days ago)")
    deviation = None
    if bottle.current_strength is not None:
        deviation = (bottle.current_strength - bottle.label_strength) / bottle.label_strength * 100
        if abs(deviation) > OFF_LABEL_TOLERANCE * 100:
            flags.append("off-label")
            reasons.append(
                f"measured {format_strength(bottle.current_strength, unit)} against the label's "
                f"{format_strength(bottle.label_strength, unit)} ({deviation:+.1f} %, more than "
                f"±{OFF_LABEL_TOLERANCE * 100:g} %): relabel it or use the measured strength")
    measured = _date_of(bottle.measured_at)
    since = (today - measured).days if measured else None
    due = None
    if bottle.recheck_days:
        if measured is None:
            flags.append("never-standardized")
            reasons.append(f"never standardized (re-check every {bottle.recheck_days} days)")
        else:
            due_date = date.fromordinal(measured.toordinal() + bottle.recheck_days)
            due = due_date.isoformat()
            if since > bottle.recheck_days:
                flags.append("overdue")
                reasons.append(f"last standardized {since} days ago, on {measured.isoformat()} "
                               f"(re-check every {bottle.recheck_days} days): overdue since "
                               f"{due}")
    if to_expiry is not None and 0 <= to_expiry <= EXPIRES_SOON_DAYS:
        flags.append("expires-soon")
        reasons.append(f"expires on {bottle.expires_on}, in {to_expiry} days")
    return CheckRow(bottle, deviation, since, due, to_expiry, tuple(flags), tuple(reasons))


def check(store: Store, *, today: date | None = None, everything: bool = False,
          batch: int = 1000) -> list[CheckRow]:
    """The strength check of every bottle in use: by default only those with a flag,
    most serious first (expired, off-label, overdue or never standardized, expiring soon)."""
    day = today or date.today()
    out: list[CheckRow] = []
    after = None
    while True:
        got = page(store, after_id=after, limit=batch, status="in-use", today=day)
        for bottle in got.bottles:
            row = check_row(bottle, day)
            if everything or row.flags:
                out.append(row)
        if got.next_after is None:
            break
        after = got.next_after

    def rank(row: CheckRow) -> tuple[int, int]:
        first = min((CHECK_FLAGS.index(f) for f in row.flags), default=len(CHECK_FLAGS))
        return first, row.bottle.id

    out.sort(key=rank)
    return out
