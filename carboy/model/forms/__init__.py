"""Forms as plain objects: the text people type in, parsed values or field-named errors out.

Both front ends read user input here, so the same text means the same thing on the
command line and in the app.  A form module (``neutralize``, ``standardize``,
``prepare``, ``waste_addition``) takes the fields as typed and returns a
:class:`Reading`: the parsed request when every field could be read, and in any case
an error or an echo ("understood: …") per field.  The app shows each beside its field;
the command line raises the first error (:meth:`Reading.raise_first`).

Nothing here touches the database: where a field names a stored thing (a bottle
``#23``, a waste container) the form returns a reference, and ``carboy.store``
resolves it.
"""

from __future__ import annotations

import dataclasses
import re
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Generic, TypeVar

from carboy.errors import CarboyError, InvalidInput, MissingInput
from carboy.model.quantities import plain_number

T = TypeVar("T")

MAX_ID = 2**62
"""Largest record id carboy reads (SQLite rowids are 64-bit signed)."""

BOTTLE_REF = re.compile(r"^#?\s*([0-9]+)$", re.ASCII)
"""``23``, ``#23`` or ``# 23``: a stock bottle by its id."""


@dataclass(eq=False, repr=False)
class Reading(Generic[T]):
    """What a form understood: ``value`` when nothing is wrong, else per-field errors.

    ``errors`` and ``echoes`` map a field name to one line; a field in ``missing`` is
    still empty, so its error text is a hint ("needed: …"), not a fault.  ``general``
    holds a problem that belongs to no single field (under the key ``""``).
    """

    value: T | None = None
    errors: dict[str, str] = field(default_factory=dict)
    echoes: dict[str, str] = field(default_factory=dict)
    missing: set[str] = field(default_factory=set)
    problems: list[tuple[str, CarboyError]] = field(default_factory=list)
    """(field, error as raised), in the order found."""

    @property
    def ok(self) -> bool:
        return self.value is not None and not self.errors

    def raise_first(self) -> T:
        """The value, or the first problem raised again (for the command line)."""
        if self.ok:
            return self.value  # type: ignore[return-value]
        if self.problems:
            raise self.problems[0][1]
        name, text = next(iter(self.errors.items()))
        raise InvalidInput(name or "input", "", text, field=name)


class FormReader:
    """Collects the values, echoes and errors of one form as its fields are read."""

    def __init__(self) -> None:
        self.reading: Reading = Reading()

    # -- recording ----------------------------------------------------------------------
    def fail(self, name: str, problem: CarboyError | str) -> None:
        """Record a problem with field ``name`` (the first problem of a field wins)."""
        if isinstance(problem, str):
            problem = InvalidInput(name or "input", "", problem, field=name)
        elif isinstance(problem, InvalidInput) and problem.field != name:
            problem = dataclasses.replace(problem, field=name)
        if name not in self.reading.errors:
            self.reading.errors[name] = str(problem)
            self.reading.problems.append((name, problem))

    def need(self, name: str, text: str, hint: str) -> bool:
        """True when ``text`` has content; else mark ``name`` missing with ``hint``."""
        if (text or "").strip():
            return True
        self.reading.missing.add(name)
        self.fail(name, MissingInput(name, text, hint, field=name))
        self.reading.errors[name] = hint
        return False

    def echo(self, name: str, text: str) -> None:
        self.reading.echoes[name] = text

    def read(self, name: str, parse: Callable[..., T], *args, **kwargs) -> T | None:
        """``parse(*args, **kwargs)``, or None with the error recorded against ``name``
        (or against the field the error names itself)."""
        try:
            return parse(*args, **kwargs)
        except CarboyError as err:
            # an error that names its own field (e.g. the purity of a source) goes there
            self.fail(getattr(err, "field", "") or name, err)
            return None

    def failed(self, *names: str) -> bool:
        """True if any of ``names`` (default: any field) has an error."""
        if not names:
            return bool(self.reading.errors)
        return any(n in self.reading.errors for n in names)

    def done(self, value: T | None) -> Reading[T]:
        """The reading, with ``value`` only if no field failed."""
        self.reading.value = None if self.reading.errors else value
        return self.reading


# -- readers shared by several forms --------------------------------------------------------

def read_number(text: str, what: str, *, field_name: str = "", unit: str = "",
                example: str = "7") -> float:
    """A plain number, with a decimal point or comma (``'6,5'``); ``unit`` may follow it."""
    raw = (text or "").strip()
    if unit and raw.endswith(unit):
        raw = raw[: -len(unit)].strip()
    if not raw:
        raise InvalidInput(what, text, f"is empty: give a number, e.g. {example}",
                           field=field_name)
    if raw.count(",") + raw.count(".") > 1 or len(raw) > 40:
        raise InvalidInput(what, text, f"expected a number, e.g. {example}", field=field_name)
    value = plain_number(raw)
    if value is None:   # with a decimal point, its comma form too ("6.5 or 6,5")
        also = f" or {example.replace('.', ',')}" if "." in example else ""
        raise InvalidInput(what, text, f"expected a number (digits 0-9), e.g. {example}{also}",
                           field=field_name)
    return value


def read_ph(text: str, what: str = "pH", *, field_name: str = "") -> float:
    """A pH between 0 and 14 (``'7'``, ``'6,5'``)."""
    value = read_number(text, what, field_name=field_name, example="6.5")
    if not 0.0 <= value <= 14.0:
        raise InvalidInput(what, text, "expected a pH between 0 and 14", field=field_name)
    return value


def split_window(text: str) -> tuple[str, str] | None:
    """A window typed as one text, ``LO:HI`` (``6:9``), or as carboy writes it, with a
    dash between the edges (``6-9``, ``6–9``): its two edges as typed, else None."""
    text = str(text).strip()
    for sep in (":", "–"):
        low, found, high = text.partition(sep)
        if found:
            return (low, high) if sep not in high else None
    at = text.find("-", 1)   # not a leading minus sign: the edges' own signs are read later
    return (text[:at], text[at + 1:]) if at > 0 else None


def read_window(low: str, high: str, *, field_name: str = "window") -> tuple[float, float]:
    """An acceptance window from its two edges; the low edge below the high one."""
    lo = read_ph(low, "window low pH", field_name=field_name)
    hi = read_ph(high, "window high pH", field_name=field_name)
    if not lo < hi:
        raise InvalidInput("window", f"{low}–{high}", "the low edge must be below the high "
                           "edge", field=field_name)
    return lo, hi


def bottle_ref(text: str) -> int | None:
    """The stock-bottle id ``text`` names (``'#23'``, ``'23'``), else None.

    Raises :class:`InvalidInput` for an id no database can hold.
    """
    if len(text or "") > 40:
        return None
    match = BOTTLE_REF.match((text or "").strip())
    if not match:
        return None
    digits = match.group(1)
    if len(digits) > 19 or int(digits) > MAX_ID or int(digits) < 1:
        raise InvalidInput("bottle id", text, "is not an id carboy can hold")
    return int(digits)


NOT_MEASURED = ("", "-", "none", "not measured", "n/a", "na")
"""What people type for a reading that was not taken."""


def read_measured_ph(text: str, what: str = "measured pH", *, field_name: str = "") -> float | None:
    """``''`` or ``'not measured'`` -> None; ``'7,2'`` -> 7.2; outside 0–14 raises."""
    if (text or "").strip().lower() in NOT_MEASURED:
        return None
    return read_ph(text, what, field_name=field_name)


_DATE = re.compile(r"^\d{4}-\d{2}-\d{2}$")


def read_date(text: str, what: str = "date", *, field_name: str = "") -> str:
    """An ISO date ``YYYY-MM-DD`` that exists, returned in the same form."""
    from datetime import date

    raw = (text or "").strip()
    if not _DATE.match(raw):
        raise InvalidInput(what, text, "expected a date as YYYY-MM-DD", field=field_name)
    try:
        return date.fromisoformat(raw).isoformat()
    except ValueError:
        raise InvalidInput(what, text, "is not a real date", field=field_name) from None
