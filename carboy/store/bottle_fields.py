"""One stock bottle as a record: :class:`Bottle`, and its text fields checked into columns.

The text fields (:data:`FIELDS`) are what a form, a command line or a CSV row gives;
:func:`validate` turns them into database columns, :func:`to_fields` turns a stored
bottle back into them.  Nothing here touches the database.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import asdict, dataclass, fields
from typing import Any

from carboy.errors import InvalidInput
from carboy.model.text import read_label
from carboy.model.upkeep import MAX_DAYS
from carboy.store.readers import (
    check_length,
    fielded,
    format_amount,
    format_strength,
    parse_amount,
    parse_date,
    parse_strength,
    parse_whole,
)
from carboy.store.statuses import BottleStatus


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
    status: BottleStatus
    notes: str
    added_at: str
    added_by: str
    strength_status: str
    recheck_days: int | None = None
    """The re-standardization interval in force: the bottle's own, else its compound's rule."""

    def as_dict(self) -> dict:
        return asdict(self)

    @classmethod
    def from_stored(cls, values: tuple) -> Bottle:
        """A bottle from values in field order that the database already holds checked
        (the strength check builds a hundred thousand of these: this skips the frozen
        dataclass's per-field ``__setattr__``, a third of the time)."""
        bottle = object.__new__(cls)
        bottle.__dict__.update(zip(_FIELD_NAMES, values, strict=True))
        return bottle

    @property
    def strength_text(self) -> str:
        """The strength to use now: the measured one where known, else the label's."""
        value = self.current_strength if self.current_strength is not None else self.label_strength
        return format_strength(value, self.strength_unit)


_FIELD_NAMES = tuple(f.name for f in fields(Bottle))

FIELDS = ("compound", "label_strength", "current_strength", "measured_on", "measured_how",
          "restandardize_days", "amount_left", "container_size", "location", "lot",
          "received_on", "opened_on", "expires_on", "status", "notes")
"""The text fields of one bottle: the CSV column layout and the keys of :func:`validate`.
An :class:`InvalidInput` from :func:`validate` carries the key as its ``field``."""


def _strengths(text: Callable[[str], str]) -> dict:
    label, unit = parse_strength(text("label_strength"), "label strength",
                                 field="label_strength")
    current = None
    if text("current_strength"):
        current, cur_unit = parse_strength(text("current_strength"), "current strength",
                                           field="current_strength")
        if cur_unit != unit:
            raise InvalidInput("current strength", text("current_strength"),
                               f"must be in the label's unit ({unit})", field="current_strength")
    return {"strength_unit": unit, "label_strength": label, "current_strength": current}


def _amounts(text: Callable[[str], str]) -> dict:
    with fielded("container_size"):
        if not text("container_size"):
            raise InvalidInput("container size", "", "is required, e.g. '2.5 L' or '500 g'")
        size, size_unit = parse_amount(text("container_size"), "container size",
                                       field="container_size")
        if size <= 0:
            raise InvalidInput("container size", text("container_size"),
                               "must be greater than zero")
    left = size
    with fielded("amount_left"):
        if text("amount_left"):
            left, left_unit = parse_amount(text("amount_left"), "amount left", field="amount_left")
            if left_unit != size_unit:
                raise InvalidInput("amount left", text("amount_left"),
                                   f"must be in the same kind of unit as the container size "
                                   f"({size_unit})")
            if left > size * (1 + 1e-9):
                raise InvalidInput("amount left", text("amount_left"),
                                   f"exceeds the container size {format_amount(size, size_unit)}")
    return {"amount_unit": size_unit, "amount_left": left, "container_size": size}


def _recheck_days(text: str) -> int | None:
    if not text:
        return None
    return parse_whole(text, "restandardize days", field="restandardize_days", low=1,
                       high=MAX_DAYS, unit="days")


def _dates(text: Callable[[str], str], current: float | None) -> dict:
    received = parse_date(text("received_on"), "received date", field="received_on")
    opened = parse_date(text("opened_on"), "opened date", field="opened_on")
    expires = parse_date(text("expires_on"), "expiry date", field="expires_on")
    measured = parse_date(text("measured_on"), "measured date", field="measured_on")
    if received and opened and opened < received:
        raise InvalidInput("opened date", opened, f"is before the received date {received}",
                           field="opened_on")
    if measured and current is None:
        raise InvalidInput("measured date", measured, "given without a current strength",
                           field="measured_on")
    return {"measured_at": measured, "received_on": received, "opened_on": opened,
            "expires_on": expires}


def validate(fields: Mapping[str, Any], catalog) -> dict:
    """Check one bottle given as text fields (see :data:`FIELDS`); returns database columns.

    ``compound``, ``label_strength`` and ``container_size`` are required;
    ``amount_left`` defaults to the container size (a full bottle).
    """
    unknown = sorted(set(fields) - set(FIELDS))
    if unknown:
        raise InvalidInput("field", unknown[0], "unknown; expected " + ", ".join(FIELDS),
                           field=unknown[0])

    def text(name: str) -> str:
        value = fields.get(name)
        return "" if value is None else str(value).strip()

    name = text("compound")
    if not name:
        raise InvalidInput("compound", name, "is required", field="compound")
    compound = catalog.compound(name)
    strengths = _strengths(text)
    amounts = _amounts(text)
    days = _recheck_days(text("restandardize_days"))
    status = BottleStatus.parse(text("status") or BottleStatus.IN_USE)
    dates = _dates(text, strengths["current_strength"])
    for key in ("notes", "measured_how"):
        check_length(key.replace("_", " "), text(key), field=key)
    place = read_label(text("location"), "location", field="location", most=2000)
    lot = read_label(text("lot"), "lot", field="lot", most=2000)
    return {
        "compound_key": compound.key, "compound_name": compound.name,
        **strengths, "measured_at": dates["measured_at"], "measured_how": text("measured_how"),
        "restandardize_days": days, **amounts, "location": place,
        "lot": lot, "received_on": dates["received_on"],
        "opened_on": dates["opened_on"], "expires_on": dates["expires_on"],
        "status": status.value, "notes": text("notes"),
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
        "expires_on": bottle.expires_on or "", "status": str(bottle.status),
        "notes": bottle.notes,
    }
