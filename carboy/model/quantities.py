"""Read the quantities people type: ``250 mL``, ``1,5 L``, ``0.1 M``, ``10mM``, ``37 %``.

Raw user text never goes to pint directly (``1,5 L`` would become 15 L and ``2 N`` is
newtons).  The number and the unit are split here, a decimal comma is accepted
explicitly, the common storeroom units are converted from a table, and only an
unusual unit is handed to pint, whose result is then checked for its dimension.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from functools import lru_cache

from carboy.errors import InvalidInput

_NUMBER = re.compile(
    r"^\s*(?P<num>[+-]?(?:\d[\d.,]*|[.,]\d+)(?:[eE][+-]?\d+)?)\s*(?P<unit>.*?)\s*$"
)

# unit as typed -> (kind, factor to the base unit of that kind)
# bases: concentration mol/L, volume L, mass g, temperature degC, percent %
_UNITS: dict[str, tuple[str, float]] = {
    "M": ("concentration", 1.0),
    "mol/L": ("concentration", 1.0),
    "mol/l": ("concentration", 1.0),
    "mM": ("concentration", 1e-3),
    "mmol/L": ("concentration", 1e-3),
    "mmol/l": ("concentration", 1e-3),
    "uM": ("concentration", 1e-6),
    "µM": ("concentration", 1e-6),
    "μM": ("concentration", 1e-6),
    "umol/L": ("concentration", 1e-6),
    "µmol/L": ("concentration", 1e-6),
    "L": ("volume", 1.0),
    "l": ("volume", 1.0),
    "mL": ("volume", 1e-3),
    "ml": ("volume", 1e-3),
    "uL": ("volume", 1e-6),
    "µL": ("volume", 1e-6),
    "μL": ("volume", 1e-6),
    "ul": ("volume", 1e-6),
    "dL": ("volume", 0.1),
    "cL": ("volume", 0.01),
    "m3": ("volume", 1000.0),
    "g": ("mass", 1.0),
    "kg": ("mass", 1000.0),
    "mg": ("mass", 1e-3),
    "ug": ("mass", 1e-6),
    "µg": ("mass", 1e-6),
    "%": ("percent", 1.0),
    "%w/w": ("percent", 1.0),
    "% w/w": ("percent", 1.0),
    "wt%": ("percent", 1.0),
    "°C": ("temperature", 1.0),
    "C": ("temperature", 1.0),
    "degC": ("temperature", 1.0),
    "K": ("temperature_k", 1.0),
}

_BASE_UNIT = {
    "concentration": "M",
    "volume": "L",
    "mass": "g",
    "percent": "%",
    "temperature": "°C",
}

_PINT_DIMENSION = {
    "concentration": ("[substance] / [length] ** 3", "mol/L"),
    "volume": ("[length] ** 3", "L"),
    "mass": ("[mass]", "g"),
}

_REFUSED = {
    "N": "normality is ambiguous for polyprotic acids (and pint reads N as newtons); "
    "give the molarity, e.g. 0.5 M",
    "n": "normality is not accepted; give the molarity, e.g. 0.5 M",
    "%v/v": "volume percent is not supported; give %w/w or a molarity",
    "%w/v": "mass/volume percent is not supported; give %w/w or a molarity",
}


@dataclass(frozen=True)
class Reading:
    """A quantity as understood: value in the base unit of its kind, and an echo."""

    value: float
    unit: str
    kind: str
    text: str

    def echo(self) -> str:
        """How carboy understood the input, e.g. ``'1,5 L' -> 1.5 L``."""
        return f"{self.value:g} {self.unit}"


@lru_cache(maxsize=1)
def _registry():
    import pint  # deferred: creating a registry costs 0.1-0.5 s

    return pint.UnitRegistry()


_EXAMPLE = {"concentration": "0.1 M", "volume": "250 mL", "mass": "0.5 g", "percent": "37 %",
            "temperature": "25 °C"}


def _split(text: str, what: str, kind: str = "volume") -> tuple[float, str]:
    example = _EXAMPLE.get(kind, "250 mL")
    if not isinstance(text, str):
        raise InvalidInput(what, text, f"expected text such as '{example}'")
    m = _NUMBER.match(text)
    if not m:
        raise InvalidInput(what, text, f"expected a number followed by a unit, e.g. "
                           f"'{example}'")
    num = m.group("num")
    if ("," in num and "." in num) or num.count(",") > 1 or num.count(".") > 1:
        raise InvalidInput(what, text, "use either a decimal point or a decimal comma, "
                           "once, and no thousands separators")
    try:
        value = float(num.replace(",", "."))
    except ValueError:
        raise InvalidInput(what, text, "expected a number followed by a unit") from None
    if not math.isfinite(value):
        raise InvalidInput(what, text, "the number is not finite")
    return value, m.group("unit").strip()


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
    if unit in _UNITS:
        ukind, factor = _UNITS[unit]
        if kind == "temperature" and ukind == "temperature_k":
            value, ukind = value - 273.15, "temperature"
        if ukind != kind:
            raise InvalidInput(what, text, f"the unit {unit!r} is a {ukind.split('_')[0]}, "
                               f"not a {kind}")
        value *= factor
    else:
        value = _via_pint(value, unit, kind, what, text)
    if kind == "temperature":
        if value < -273.15:
            raise InvalidInput(what, text, "is below absolute zero")
    elif value < 0 and not allow_negative:
        raise InvalidInput(what, text, "must not be negative")
    if kind == "percent" and value > 100:
        raise InvalidInput(what, text, "a mass percentage cannot exceed 100 %")
    return Reading(value, _BASE_UNIT[kind], kind, text)


def _via_pint(value: float, unit: str, kind: str, what: str, text: str) -> float:
    if kind not in _PINT_DIMENSION:
        raise InvalidInput(what, text, f"unknown unit {unit!r} for a {kind}")
    import pint

    dimension, target = _PINT_DIMENSION[kind]
    ureg = _registry()
    try:
        q = ureg.Quantity(value, unit)
    except (pint.errors.UndefinedUnitError, pint.errors.DefinitionSyntaxError,
            AttributeError, TypeError, ValueError, AssertionError):
        raise InvalidInput(what, text, f"unknown unit {unit!r}") from None
    if not q.check(dimension):
        raise InvalidInput(what, text, f"the unit {unit!r} is not a {kind}")
    return float(q.to(target).magnitude)


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
