"""How numbers read for people: one rule for the app, the command line and the journal.

Each kind of quantity has the significant figures that suit what it measures and always
carries its unit: a strength to 4 significant figures (``0.09991 M``), a volume or mass to 3
(``2.49 L``, ``350 mL``, ``640 g``), a pH to 2 decimals (``pH 7.21``).  Counts agree with
their noun (``1 bottle``, ``2 bottles``).  Exact values stay in the data (JSON, CSV,
snapshots); these are for reading.
"""

from __future__ import annotations

import math

STRENGTH_FIGURES = 4
AMOUNT_FIGURES = 3


SETTLED_FIGURES = 12


def settled(value: float) -> float:
    """``value`` to ``SETTLED_FIGURES`` significant figures, as a number: what a sum or a
    root keeps once the last bits of binary rounding are dropped (0.75 - 0.6 is 0.15,
    not 0.15000000000000002; 25.05 mL read from litres stays 25.05).  For stored and
    reported values, not for display."""
    return float(f"{value:.{SETTLED_FIGURES}g}")


def figures(value: float, n: int) -> str:
    """``value`` to ``n`` significant figures, never in exponent form for storeroom sizes."""
    if value is None or not math.isfinite(value):
        return "—"
    if value == 0:
        return "0"
    magnitude = math.floor(math.log10(abs(value)))
    if magnitude >= n:  # 12345 to 3 figures: 12300, not 1.23e+04
        return f"{round(value, -(magnitude - n + 1)):.0f}"
    if magnitude < -4:
        mantissa, _, exponent = f"{value:.{n - 1}e}".partition("e")
        return f"{mantissa.rstrip('0').rstrip('.')}e{int(exponent)}"
    decimals = max(n - 1 - magnitude, 0)
    text = f"{value:.{decimals}f}"
    return text.rstrip("0").rstrip(".") if "." in text else text


def strength(value: float | None, unit: str) -> str:
    """``0.0999127 M`` -> ``0.09991 M``; ``37 %w/w``; ``—`` when unknown."""
    if value is None:
        return "—"
    return f"{figures(value, STRENGTH_FIGURES)} {unit}"


def volume(litres: float | None) -> str:
    """``2.4916`` -> ``2.49 L``; ``0.35`` -> ``350 mL``; below 1 mL in µL."""
    if litres is None:
        return "—"
    if litres == 0:
        return "0 L"
    if abs(litres) < 1e-3:
        return f"{figures(litres * 1e6, AMOUNT_FIGURES)} µL"
    if abs(litres) < 1:
        return f"{figures(litres * 1000, AMOUNT_FIGURES)} mL"
    return f"{figures(litres, AMOUNT_FIGURES)} L"


def mass(grams: float | None) -> str:
    """``640.0`` -> ``640 g``; ``0.51063`` -> ``0.511 g``; ``2500`` -> ``2.5 kg``."""
    if grams is None:
        return "—"
    if abs(grams) >= 1000:
        return f"{figures(grams / 1000, AMOUNT_FIGURES)} kg"
    return f"{figures(grams, AMOUNT_FIGURES)} g"


def amount(value: float | None, unit: str) -> str:
    """An amount kept in ``L`` or ``g`` (a bottle's contents), as :func:`volume` or
    :func:`mass`; any other unit to 3 significant figures."""
    if unit == "L":
        return volume(value)
    if unit == "g":
        return mass(value)
    return "—" if value is None else f"{figures(value, AMOUNT_FIGURES)} {unit}"


def moles(mol: float | None) -> str:
    return "—" if mol is None else f"{figures(mol, AMOUNT_FIGURES)} mol"


def ph(value: float | None) -> str:
    """``7.2134`` -> ``pH 7.21``."""
    return "pH —" if value is None or not math.isfinite(value) else f"pH {value:.2f}"


def count(n: int, noun: str, plural: str | None = None) -> str:
    """``1 bottle``, ``2 bottles``, ``0 bottles``; ``plural`` for irregular nouns."""
    return f"{n} {noun if n == 1 else (plural or noun + 's')}"
