"""Read the quantities people type: ``250 mL``, ``1,5 L``, ``0.1 M``, ``10mM``, ``37 %``.

carboy parses quantities itself, with a small grammar; nothing the user typed is ever
evaluated (no pint expression parsing, no arithmetic, no constants)::

    quantity  := blank* number blank* unit? blank*
    number    := sign? (digits ([.,] digits?)? | [.,] digits) exponent?
    digits    := 1 to 15 ASCII digits 0-9
    exponent  := (e | E) sign? 1 to 3 ASCII digits        e.g. 1e-3 M
    sign      := + | -
    unit      := one of the units in ``UNITS`` (exactly, case as listed)
    blank     := space or tab

* One decimal separator at most: a point or a comma (``1,5 L`` is 1.5 L); there are no
  thousands separators, so ``1.000,5 L`` is refused, and so is ``1,500 mL``: a comma
  before exactly three digits after a whole part of 1 to 999 reads as a thousands
  separator to some and as a decimal comma to others, a factor of 1000 apart (``0,500 L``
  and ``1,5 L`` are read).
* Only ASCII digits: other scripts' digits and look-alikes are refused.
* The exponent is there for dilute solutions (``5e-6 M``); a value that is not finite
  (``1e999``) is refused.
* Text longer than :data:`MAX_TEXT` characters is refused before it is looked at.
* The unit comes from an allow-list with fixed factors (SI prefixes, and the exact
  legal definitions of the US gallon, pound and ounce); ``*``, ``/`` and ``**`` are
  never operators, so ``1 mol/L*10**10**10`` is an unknown unit, not a computation.
* ``N`` (normality) and volume percentages are refused with the reason.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from carboy.errors import InvalidInput, quoted

MAX_TEXT = 64
"""Longest quantity text carboy reads (``'0.000125 mmol/L'`` is 15)."""

_QUANTITY = re.compile(
    r"\A[ \t]*(?P<num>[+-]?(?:[0-9]{1,15}(?:[.,][0-9]{0,15})?|[.,][0-9]{1,15})"
    r"(?:[eE][+-]?[0-9]{1,3})?)[ \t]*(?P<unit>\S(?:.*\S)?)?[ \t]*\Z",
    re.ASCII | re.DOTALL,
)

_NUMERIC_LEAD = re.compile(r"[ \t]*[+-]?[0-9.,]+", re.ASCII)
"""The digits and separators a quantity starts with (to name a thousands separator)."""

_US_GALLON_L = 3.785411784
"""US liquid gallon: 231 cubic inches exactly (NIST Handbook 44, Appendix C)."""
_POUND_G = 453.59237
"""International avoirdupois pound, exact (NIST Handbook 44, Appendix C)."""

# unit as typed -> (kind, factor to the base unit of that kind)
# bases: concentration mol/L, volume L, mass g, temperature degC, percent %
_UNITS: dict[str, tuple[str, float]] = {
    "M": ("concentration", 1.0),
    "mol/L": ("concentration", 1.0),
    "mol/l": ("concentration", 1.0),
    "mol/dm3": ("concentration", 1.0),
    "mM": ("concentration", 1e-3),
    "mmol/L": ("concentration", 1e-3),
    "mmol/l": ("concentration", 1e-3),
    "uM": ("concentration", 1e-6),
    "µM": ("concentration", 1e-6),
    "μM": ("concentration", 1e-6),
    "umol/L": ("concentration", 1e-6),
    "µmol/L": ("concentration", 1e-6),
    "μmol/L": ("concentration", 1e-6),
    "nM": ("concentration", 1e-9),
    "L": ("volume", 1.0),
    "l": ("volume", 1.0),
    "litre": ("volume", 1.0),
    "litres": ("volume", 1.0),
    "liter": ("volume", 1.0),
    "liters": ("volume", 1.0),
    "dm3": ("volume", 1.0),
    "mL": ("volume", 1e-3),
    "ml": ("volume", 1e-3),
    "cm3": ("volume", 1e-3),
    "uL": ("volume", 1e-6),
    "µL": ("volume", 1e-6),
    "μL": ("volume", 1e-6),
    "ul": ("volume", 1e-6),
    "dL": ("volume", 0.1),
    "cL": ("volume", 0.01),
    "m3": ("volume", 1000.0),
    "gal": ("volume", _US_GALLON_L),
    "gallon": ("volume", _US_GALLON_L),
    "gallons": ("volume", _US_GALLON_L),
    "g": ("mass", 1.0),
    "kg": ("mass", 1000.0),
    "mg": ("mass", 1e-3),
    "ug": ("mass", 1e-6),
    "µg": ("mass", 1e-6),
    "μg": ("mass", 1e-6),
    "lb": ("mass", _POUND_G),
    "oz": ("mass", _POUND_G / 16),
    "%": ("percent", 1.0),
    "%w/w": ("percent", 1.0),
    "% w/w": ("percent", 1.0),
    "wt%": ("percent", 1.0),
    "°C": ("temperature", 1.0),
    "C": ("temperature", 1.0),
    "degC": ("temperature", 1.0),
    "K": ("temperature_k", 1.0),
    # known so the message can say what they are; no carboy quantity takes them
    "g/L": ("mass concentration", 1.0),
    "g/l": ("mass concentration", 1.0),
    "mg/L": ("mass concentration", 1e-3),
    "mg/l": ("mass concentration", 1e-3),
    "ppm": ("mass concentration", 1e-3),
}
UNITS = tuple(_UNITS)
"""Every unit carboy reads, as it must be typed."""

_BASE_UNIT = {
    "concentration": "M",
    "volume": "L",
    "mass": "g",
    "percent": "%",
    "temperature": "°C",
}

_REFUSED = {
    "N": "normality is ambiguous for polyprotic acids (and pint reads N as newtons); "
    "give the molarity, e.g. 0.5 M",
    "n": "normality is not accepted; give the molarity, e.g. 0.5 M",
    "%v/v": "volume percent is not supported; give %w/w or a molarity",
    "%w/v": "mass/volume percent is not supported; give %w/w or a molarity",
}


@dataclass(frozen=True, eq=False, repr=False)
class Reading:
    """A quantity as understood: value in the base unit of its kind, and an echo."""

    value: float
    unit: str
    kind: str
    text: str

    def echo(self) -> str:
        """How carboy understood the input, e.g. ``'1,5 L' -> 1.5 L``."""
        return f"{self.value:g} {self.unit}"


_EXAMPLE = {"concentration": "0.1 M", "volume": "250 mL", "mass": "0.5 g", "percent": "37 %",
            "temperature": "25 °C"}


def _split(text: str, what: str, kind: str = "volume") -> tuple[float, str]:
    """The number (as a float) and the unit text of a quantity, by the grammar above."""
    example = _EXAMPLE.get(kind, "250 mL")
    if not isinstance(text, str):
        raise InvalidInput(what, text, f"expected text such as '{example}'")
    if len(text) > MAX_TEXT:
        raise InvalidInput(what, text, f"is too long for a quantity ({MAX_TEXT} characters "
                           "at most)")
    m = _QUANTITY.match(text)
    lead = _NUMERIC_LEAD.match(text)
    if lead and len(re.findall(r"[.,]", lead.group())) > 1:
        raise InvalidInput(what, text, "use either a decimal point or a decimal comma, "
                           "once, and no thousands separators")
    if not m:
        raise InvalidInput(what, text, f"expected a number followed by a unit, e.g. "
                           f"'{example}' (digits 0-9)")
    num = m.group("num")
    mantissa = num.split("e")[0].split("E")[0]
    if _THOUSANDS.match(num):   # '1,500 mL': 1.5 mL, or 1500 mL written the other way?
        unit = m.group("unit") or ""
        sep = " " if unit else ""
        raise InvalidInput(what, text, "is ambiguous: a comma before three digits may separate "
                           f"thousands; write '{num.replace(',', '')}{sep}{unit}' or "
                           f"'{num.replace(',', '.')}{sep}{unit}'")
    value = float(mantissa.replace(",", ".") + num[len(mantissa):])
    if value != value or value in (float("inf"), float("-inf")):
        raise InvalidInput(what, text, "the number is not finite")
    return value, m.group("unit") or ""


_THOUSANDS = re.compile(r"\A[+-]?[1-9][0-9]{0,2},[0-9]{3}\Z", re.ASCII)
"""A number that reads as a decimal comma or as a thousands separator alike (``1,500``);
one whose whole part is 0 (``0,500``) or that has another count of digits after the
comma (``1,5``, ``2,25``) is a decimal comma only."""


PLAIN_NUMBER = re.compile(
    r"\A[+-]?(?:[0-9]{1,15}(?:[.,][0-9]{0,15})?|[.,][0-9]{1,15})(?:[eE][+-]?[0-9]{1,3})?\Z",
    re.ASCII)
"""A number alone, by the grammar above (ASCII digits, one decimal point or comma)."""


def plain_number(text: str) -> float | None:
    """``'6,5'`` -> 6.5; None for anything the number grammar does not read or that is not
    finite (no ``nan``, ``inf``, ``1_000``, other scripts' digits)."""
    if not isinstance(text, str) or len(text) > MAX_TEXT:
        return None
    raw = text.strip(" \t")
    if not PLAIN_NUMBER.match(raw):
        return None
    value = float(raw.replace(",", "."))
    return value if value - value == 0 else None


def parse(text: str, kind: str, *, what: str | None = None, default_unit: str | None = None,
          allow_negative: bool = False) -> Reading:
    """Parse ``text`` as a quantity of ``kind``.

    Parameters
    ----------
    text : the user's text, e.g. ``"250 mL"`` or ``"0,1 M"``.
    kind : ``concentration`` (to mol/L), ``volume`` (L), ``mass`` (g),
        ``percent`` (%w/w), or ``temperature`` (°C; ``K`` is converted).
    what : how to name the value in an error message (default: the kind).
    default_unit : unit assumed when the text is a bare number; ``None`` makes a
        unit compulsory.
    allow_negative : accept negative values (temperatures are always allowed).
    """
    what = what or kind
    value, unit = _split(text, what, kind)
    if not unit:
        if default_unit is None:
            raise InvalidInput(what, text, f"give a unit, e.g. '{value:g} {_BASE_UNIT[kind]}'")
        unit = default_unit
    if unit in _REFUSED:
        raise InvalidInput(what, text, _REFUSED[unit])
    if unit not in _UNITS:
        known = [u for u, (k, _) in _UNITS.items() if k.startswith(kind)]
        raise InvalidInput(what, text, f"unknown unit {quoted(unit, 20)}; for a {kind} use "
                           + ", ".join(known[:6]) + (", …" if len(known) > 6 else ""))
    ukind, factor = _UNITS[unit]
    if kind == "temperature" and ukind == "temperature_k":
        value, ukind = value - 273.15, "temperature"
    if ukind != kind:
        raise InvalidInput(what, text, f"the unit {unit!r} is a {ukind.split('_')[0]}, "
                           f"not a {kind}")
    value *= factor
    if kind == "temperature":
        if value < -273.15:
            raise InvalidInput(what, text, "is below absolute zero")
    elif value < 0 and not allow_negative:
        raise InvalidInput(what, text, "must not be negative")
    if kind == "percent" and value > 100:
        raise InvalidInput(what, text, "a mass percentage cannot exceed 100 %")
    return Reading(value, _BASE_UNIT[kind], kind, text)


def unit_kind(text: str) -> str | None:
    """The kind of quantity the unit typed in ``text`` measures (``'2 g'`` -> ``'mass'``),
    or None for a bare number, an unknown unit or text that is not a quantity."""
    try:
        _, unit = _split(text, "quantity")
    except InvalidInput:
        return None
    kind = _UNITS.get(unit, (None, 0.0))[0]
    return "temperature" if kind == "temperature_k" else kind


def concentration_molar(text: str, what: str = "concentration") -> float:
    """``'10 mM'`` -> 0.01 (mol/L); a bare number is molar."""
    return parse(text, "concentration", what=what, default_unit="M").value


def volume_l(text: str, what: str = "volume") -> float:
    """``'250 mL'`` -> 0.25 (L); a unit is required."""
    return parse(text, "volume", what=what).value


def mass_g(text: str, what: str = "mass") -> float:
    """``'1.2 kg'`` -> 1200.0 (g); a unit is required."""
    return parse(text, "mass", what=what).value


def temperature_c(text: str, what: str = "temperature") -> float:
    """``'35'`` or ``'35 °C'`` -> 35.0; ``'300 K'`` -> 26.85."""
    return parse(text, "temperature", what=what, default_unit="°C").value


def percent(text: str, what: str = "mass percentage") -> float:
    """``'37 %'`` -> 37.0."""
    return parse(text, "percent", what=what, default_unit="%").value
