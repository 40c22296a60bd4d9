"""Reading what people type into the store: strengths, amounts, volumes and dates.

Numbers with units are read by :mod:`carboy.model.quantities` (the one reader of
quantities); this module only adds what a stored record needs on top: which unit a
bottle keeps (molar or %w/w, litres or grams), the largest values a storeroom
accepts, numbers given as numbers, and ISO dates.  Every :class:`InvalidInput` names
the value and carries ``field=``, the record field it belongs to.
"""

from __future__ import annotations

import contextlib
import math
import re
import unicodedata
from collections.abc import Iterator
from datetime import date, datetime

from carboy.errors import InvalidInput
from carboy.model import quantities
from carboy.model.components import MAX_CONC_MOLAR
from carboy.model.forms import MAX_ID
from carboy.model.numbers import settled
from carboy.model.text import REFUSED_CATEGORIES, describe_character

MAX_MOLARITY = MAX_CONC_MOLAR
"""Above this a molarity is refused as absurd (pure water is 55 M; conc. H2SO4 is about 18 M)."""
MAX_VOLUME_L = 1000.0
"""Largest bottle or drum accepted, litres."""
MAX_MASS_G = 100_000.0
"""Largest amount of a solid accepted, grams."""

_DATE = re.compile(r"^[0-9]{4}-[0-9]{2}-[0-9]{2}$", re.ASCII)
_WHOLE = re.compile(r"#?\s*([+-]?[0-9]+)", re.ASCII)
MAX_WHOLE = MAX_ID
"""Largest whole number (id, count, interval) read: every SQLite integer holds it."""


@contextlib.contextmanager
def fielded(field: str) -> Iterator[None]:
    """An :class:`InvalidInput` raised inside names ``field`` (unless it names one already)."""
    try:
        yield
    except InvalidInput as err:
        if not err.field:
            err.field = field
        raise


def format_number(value: float) -> str:
    """Shortest text that reads back as the same float (``1.0`` -> ``1``)."""
    text = repr(float(value))
    return text[:-2] if text.endswith(".0") else text


def format_strength(value: float, unit: str) -> str:
    return f"{format_number(value)} {unit}"


format_amount = format_strength
"""``format_amount(2.5, 'L')`` -> ``'2.5 L'`` (the same layout as a strength)."""


def parse_strength(text: str, what: str = "strength", *,
                   field: str = "strength") -> tuple[float, str]:
    """``'1 M'``, ``'0.1M'``, ``'100 mM'`` -> molar; ``'37 %'``, ``'37 %w/w'`` -> mass percent."""
    with fielded(field):
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


def parse_amount(text: str, what: str = "amount", *, field: str = "amount") -> tuple[float, str]:
    """``'2.5 L'`` / ``'500 mL'`` -> (L, 'L'); ``'500 g'`` / ``'1 kg'`` -> (g, 'g')."""
    with fielded(field):
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
    return settled(value), unit   # 13.9151 mL is 0.0139151 L, not 0.013915100000000001


def parse_litres(value: str | float, *, what: str, field: str, positive: bool,
                 most_l: float, too_much: str) -> float:
    """A volume as text (``'250 mL'``, ``'1,5 L'``) or a number of litres, up to ``most_l``.

    ``positive`` refuses zero; ``too_much`` says why more than ``most_l`` is refused.
    """
    with fielded(field):
        if isinstance(value, str):
            litres = quantities.volume_l(value, what=what)
        else:
            litres = float(value)
            if not math.isfinite(litres) or litres < 0:
                raise InvalidInput(what, value, "must be a finite, non-negative volume")
        if positive and litres <= 0:
            raise InvalidInput(what, value, "must be greater than zero")
        if litres > most_l:
            raise InvalidInput(what, value, f"{too_much} ({most_l:g} L)")
    return settled(litres)


def parse_date(text: str | date | None, what: str, *, field: str = "") -> str | None:
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
        raise InvalidInput(what, text, "expected a date as YYYY-MM-DD", field=field)
    try:
        return date.fromisoformat(text).isoformat()
    except ValueError:
        raise InvalidInput(what, text, "is not a real date", field=field) from None


def date_of(text: str | None) -> date | None:
    """The date at the start of a stored ISO date or time; ``None`` if there is none."""
    if not text:
        return None
    try:
        return date.fromisoformat(text[:10])
    except ValueError:
        return None


def parse_whole(value: object, what: str, *, field: str, low: int | None = None,
                high: int | None = None, unit: str = "", expected: str = "") -> int:
    """A whole number as typed (``'14'``, ``'#7'`` for an id), from ``low`` to ``high``.

    ``unit`` names what is counted in the messages (``days``); ``expected`` replaces the
    first message when other words are also accepted.
    """
    units = f" {unit}" if unit else ""
    text = value if isinstance(value, str) else str(value) if isinstance(value, int) else ""
    found = _WHOLE.fullmatch(text.strip()) if len(text) <= 40 else None
    if not found:
        raise InvalidInput(what, value, expected or f"expected a whole number{units} "
                           "(digits 0-9)", field=field)
    if len(found.group(1).lstrip("+-").lstrip("0")) > 19 or abs(int(found.group(1))) > MAX_WHOLE:
        raise InvalidInput(what, value, "is larger than any id or count carboy holds",
                           field=field)
    number = int(found.group(1))
    if (low is not None and number < low) or (high is not None and number > high):
        top = high if high is not None and high < MAX_WHOLE else None   # no count reaches it
        bounds = (f"{low} to {top}" if low is not None and top is not None
                  else f"{low} or more" if low is not None else f"{top} or less")
        raise InvalidInput(what, value, f"expected {bounds}{units}", field=field)
    return number


FREE_TEXT_REFUSED = REFUSED_CATEGORIES - {"Cc"}
"""Unicode categories free text may not hold: format characters (zero-width, bidi marks,
embeddings, overrides, isolates), line and paragraph separators, private-use, surrogate
and unassigned code points.  Control characters (Cc: a line break, an escape) are text
here: every front end shows them escaped."""


def check_length(what: str, value: str, *, field: str, most: int = 2000) -> str:
    """Free text (notes, reasons) up to ``most`` characters, without the characters that
    are invisible or change the order text is shown in (``FREE_TEXT_REFUSED``, as a label
    refuses them); control characters are kept and shown escaped."""
    if len(value or "") > most:
        raise InvalidInput(what, value[:40] + "...", f"is too long ({most} characters at most)",
                           field=field)
    bad = next((c for c in value or "" if unicodedata.category(c) in FREE_TEXT_REFUSED), None)
    if bad is not None:
        raise InvalidInput(what, value[:40], f"holds an invisible or control character "
                           f"({describe_character(bad)}); type it again without it",
                           field=field)
    return value
