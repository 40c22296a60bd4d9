"""Strength of a solution: %w/w, molarity, molality and density, one from another.

The density of a solution comes from the compound's density table in the catalog
(``densities.toml``, 20 °C for the built-in tables), interpolated linearly in mass
percent by :func:`carboy.model.catalog.density_at`.  With ``w`` in % w/w, ``ρ`` in g/mL
and ``M`` in g/mol:

* molarity  ``c = w · ρ(w) · 10 / M``  (mol/L);
* molality  ``b = 1000 · w / (M · (100 − w))``  (mol per kg of water, no density needed).

Inverting ``c(w)`` is exact: on each segment of a table ``ρ`` is linear in ``w``, so
``c(w)`` is a quadratic there and the root is solved in closed form.  ``c(w)`` rises
strictly over every built-in table (checked by the tests), so the segment is found by
bisection on the molarities of the rows.

Outside a table
---------------
* Above the last row (or, for a table that does not start at 0 %, below the first row
  and beyond the dilute limit): :class:`~carboy.errors.InvalidInput` naming the value and
  the table's range.  No extrapolation.
* Dilute solutions of compounds without a table (or below a table's first row): the
  density is taken as that of water at 20 °C (0.99820 g/mL, Kell 1975 as in
  ``water.density_g_cm3``) as long as the mass fraction so estimated is at most
  :data:`DILUTE_LIMIT_PERCENT` (5 % w/w, where aqueous solutions are within about 5 % of
  the density of water).  :class:`Strength` says so (``in_table=False`` and a note).
  Hence a 0.1 M target works for every compound of the catalog.
* A molarity without a table and beyond the dilute limit is kept, with the mass
  fraction, density and molality unknown (``None``); a mass percentage in that case
  cannot be turned into a molarity and is refused.
"""

from __future__ import annotations

import bisect
import math
from dataclasses import dataclass

from carboy.errors import InvalidInput
from carboy.model import water
from carboy.model.catalog import Catalog, default_catalog, density_at
from carboy.model.entities import Compound

__all__ = [
    "DILUTE_LIMIT_PERCENT",
    "TABLE_TEMPERATURE_C",
    "Strength",
    "density_of",
    "molal_from_percent",
    "molar_from_percent",
    "percent_from_molal",
    "percent_from_molar",
    "strength_of",
    "table_molar_range",
]

DILUTE_LIMIT_PERCENT = 5.0
"""Largest mass fraction (% w/w) for which the density of water stands in for a missing
density table (carboy's choice: dilute aqueous solutions are within about 5 % of water)."""

TABLE_TEMPERATURE_C = 20.0
"""Temperature of the built-in density tables and of the water-density fallback."""


@dataclass(frozen=True, eq=False, repr=False)
class Strength:
    """One solution strength in every unit carboy knows.

    ``mass_percent`` is % w/w of the compound as named; ``molal`` is mol per kg of water.
    ``in_table`` is True when the density came from the compound's density table, False
    for the water-density fallback or an unknown density; ``note`` says which.
    """

    conc_molar: float
    mass_percent: float | None
    density_g_ml: float | None
    molal: float | None
    in_table: bool
    note: str

    def to_dict(self) -> dict:
        return {
            "conc_molar": self.conc_molar,
            "mass_percent": self.mass_percent,
            "density_g_ml": self.density_g_ml,
            "molal": self.molal,
            "in_table": self.in_table,
            "note": self.note,
        }


# ----------------------------------------------------------------------------- helpers


def _compound(compound: Compound | str, catalog: Catalog | None) -> Compound:
    if isinstance(compound, Compound):
        return compound
    return (catalog or default_catalog()).compound(compound)


def _number(value: object, what: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise InvalidInput(what, value, "must be a number")
    x = float(value)
    if not math.isfinite(x):
        raise InvalidInput(what, value, "must be a finite number")
    return x


def _check_percent(value: object, key: str) -> float:
    w = _number(value, f"mass percent of {key}")
    if not 0.0 <= w <= 100.0:
        raise InvalidInput(f"mass percent of {key}", value, "must lie between 0 and 100 % w/w")
    return w


def _check_molar(value: object, key: str) -> float:
    c = _number(value, f"concentration of {key}")
    if c < 0.0:
        raise InvalidInput(f"concentration of {key}", value, "must not be negative")
    return c


def _water_density() -> float:
    return water.density_g_cm3(TABLE_TEMPERATURE_C)


def _row_molarities(found: Compound) -> tuple[float, ...]:
    table = found.density
    m = found.molar_mass_g_mol
    return tuple(w * r * 10.0 / m for w, r in zip(table.mass_percent, table.density_g_ml))


def table_molar_range(compound: Compound | str, *, catalog: Catalog | None = None
                      ) -> tuple[float, float] | None:
    """Molarities (mol/L) at the first and last row of the compound's density table."""
    found = _compound(compound, catalog)
    if found.density is None:
        return None
    rows = _row_molarities(found)
    return rows[0], rows[-1]


def _range_text(found: Compound) -> str:
    table = found.density
    c_lo, c_hi = table_molar_range(found)
    return (f"the {found.key} density table covers {table.mass_percent[0]:g}-"
            f"{table.mass_percent[-1]:g} % w/w, {c_lo:.4g}-{c_hi:.4g} M, at "
            f"{table.temperature_c:g} °C")


def _table_note(found: Compound, w: float, catalog: Catalog | None) -> str:
    table = found.density
    rows = (catalog or default_catalog()).density_rows(found.key) if not found.user_defined \
        else ()
    where = ""
    if rows and len(rows) == len(table.mass_percent):
        i = bisect.bisect_left(table.mass_percent, w)
        if i < len(rows) and rows[i].mass_percent == w:
            where = f" (row {w:g} % [{rows[i].status}])"
        else:
            lo, hi = rows[i - 1], rows[i]
            where = (f" (between the {lo.mass_percent:g} % [{lo.status}] and "
                     f"{hi.mass_percent:g} % [{hi.status}] rows)")
    return (f"density from the {found.key} density table at {table.temperature_c:g} °C"
            f"{where}")


def _water_note(found: Compound) -> str:
    why = ("has no density table" if found.density is None
           else "lies below its density table")
    return (f"{found.key} {why}: density taken as that of water at {TABLE_TEMPERATURE_C:g} °C "
            f"({_water_density():.5f} g/mL), good for dilute solutions "
            f"(up to {DILUTE_LIMIT_PERCENT:g} % w/w)")


# ----------------------------------------------------------------------------- conversions


def molar_from_percent(compound: Compound | str, mass_percent: float, *,
                       catalog: Catalog | None = None) -> float:
    """Molarity (mol/L) of a solution of ``mass_percent`` % w/w, from the density table.

    Raises InvalidInput without a table or outside it (see :func:`strength_of` for the
    dilute fallback).
    """
    found = _compound(compound, catalog)
    w = _check_percent(mass_percent, found.key)
    if found.density is None:
        raise InvalidInput("compound", found.key, "has no density table in the catalog")
    lo, hi = found.density.mass_percent[0], found.density.mass_percent[-1]
    if not lo <= w <= hi:
        raise InvalidInput(f"mass percent of {found.key}", mass_percent,
                           f"outside the density table: {_range_text(found)}")
    return w * density_at(found, w) * 10.0 / found.molar_mass_g_mol


def percent_from_molar(compound: Compound | str, conc_molar: float, *,
                       catalog: Catalog | None = None) -> float:
    """Mass percent (% w/w) of a solution of molarity ``conc_molar``: exact inverse of
    :func:`molar_from_percent` (closed-form root on the table segment)."""
    found = _compound(compound, catalog)
    c = _check_molar(conc_molar, found.key)
    table = found.density
    if table is None:
        raise InvalidInput("compound", found.key, "has no density table in the catalog")
    cs = _row_molarities(found)
    if not cs[0] <= c <= cs[-1]:
        raise InvalidInput(f"concentration of {found.key}", conc_molar,
                           f"outside the density table: {_range_text(found)}")
    i = bisect.bisect_left(cs, c)
    ws, rs = table.mass_percent, table.density_g_ml
    if cs[i] == c:
        return ws[i]
    w0, w1, r0, r1 = ws[i - 1], ws[i], rs[i - 1], rs[i]
    s = (r1 - r0) / (w1 - w0)          # rho = b + s*w on this segment
    b = r0 - s * w0
    q = c * found.molar_mass_g_mol / 10.0   # s*w^2 + b*w - q = 0
    if s == 0.0:
        w = q / b
    else:
        disc = b * b + 4.0 * s * q
        w = 2.0 * q / (b + math.sqrt(disc)) if b > 0 else (-b + math.sqrt(disc)) / (2.0 * s)
    return min(max(w, w0), w1)


def molal_from_percent(compound: Compound | str, mass_percent: float, *,
                       catalog: Catalog | None = None) -> float:
    """Molality (mol per kg of water) of a solution of ``mass_percent`` % w/w."""
    found = _compound(compound, catalog)
    w = _check_percent(mass_percent, found.key)
    if w >= 100.0:
        raise InvalidInput(f"mass percent of {found.key}", mass_percent,
                           "a pure substance holds no water, so it has no molality")
    return 1000.0 * w / (found.molar_mass_g_mol * (100.0 - w))


def percent_from_molal(compound: Compound | str, molal: float, *,
                       catalog: Catalog | None = None) -> float:
    """Mass percent (% w/w) of a solution of molality ``molal`` (mol/kg of water)."""
    found = _compound(compound, catalog)
    b = _number(molal, f"molality of {found.key}")
    if b < 0.0:
        raise InvalidInput(f"molality of {found.key}", molal, "must not be negative")
    solute_g = b * found.molar_mass_g_mol
    return 100.0 * solute_g / (1000.0 + solute_g)


def strength_of(compound: Compound | str, *, conc_molar: float | None = None,
                mass_percent: float | None = None,
                catalog: Catalog | None = None) -> Strength:
    """The solution at ``conc_molar`` (mol/L) or ``mass_percent`` (% w/w), in every unit.

    Exactly one of the two is given.  See the module docstring for the rules outside a
    density table.
    """
    found = _compound(compound, catalog)
    if (conc_molar is None) == (mass_percent is None):
        raise InvalidInput("strength", {"conc_molar": conc_molar, "mass_percent": mass_percent},
                           "give exactly one of conc_molar or mass_percent")
    table = found.density
    m = found.molar_mass_g_mol
    rho_w = _water_density()
    if mass_percent is not None:
        w = _check_percent(mass_percent, found.key)
        if table is not None and table.mass_percent[0] <= w <= table.mass_percent[-1]:
            rho = density_at(found, w)
            return Strength(w * rho * 10.0 / m, w, rho, _molal_or_none(w, m), True,
                            _table_note(found, w, catalog))
        below = table is None or w < table.mass_percent[0]
        if below and w <= DILUTE_LIMIT_PERCENT:
            return Strength(w * rho_w * 10.0 / m, w, rho_w, _molal_or_none(w, m), False,
                            _water_note(found))
        if table is None:
            raise InvalidInput(
                f"mass percent of {found.key}", mass_percent,
                f"{found.key} has no density table in the catalog, so {w:g} % w/w cannot be "
                f"turned into a molarity; give the molarity (e.g. {found.key}=1M) or the "
                f"density from the label (e.g. {found.key}={w:g}% d=1.2)")
        raise InvalidInput(f"mass percent of {found.key}", mass_percent,
                           f"outside the density table: {_range_text(found)}")
    c = _check_molar(conc_molar, found.key)
    if table is not None:
        c_lo, c_hi = table_molar_range(found)
        if c_lo <= c <= c_hi:
            w = percent_from_molar(found, c)
            rho = density_at(found, w)
            return Strength(c, w, rho, _molal_or_none(w, m), True,
                            _table_note(found, w, catalog))
        if c > c_hi:
            raise InvalidInput(f"concentration of {found.key}", conc_molar,
                               f"above the density table: {_range_text(found)}")
    w_est = c * m / (10.0 * rho_w)
    if w_est <= DILUTE_LIMIT_PERCENT:
        return Strength(c, w_est, rho_w, _molal_or_none(w_est, m), False, _water_note(found))
    if table is not None:
        raise InvalidInput(f"concentration of {found.key}", conc_molar,
                           f"below the density table and not dilute: {_range_text(found)}")
    return Strength(c, None, None, None, False,
                    f"{found.key} has no density table: at {c:.4g} M its density and mass "
                    "fraction are unknown")


def _molal_or_none(w: float, m: float) -> float | None:
    return None if w >= 100.0 else 1000.0 * w / (m * (100.0 - w))


def density_of(compound: Compound | str, *, mass_percent: float | None = None,
               conc_molar: float | None = None, catalog: Catalog | None = None) -> float:
    """Density (g/mL, 20 °C) of the solution at one given strength.

    The same rules as :func:`strength_of` (water density for dilute solutions without a
    table); raises InvalidInput when the density is unknown.
    """
    found = _compound(compound, catalog)
    s = strength_of(found, conc_molar=conc_molar, mass_percent=mass_percent, catalog=catalog)
    if s.density_g_ml is None:
        raise InvalidInput(f"concentration of {found.key}", conc_molar, s.note)
    return s.density_g_ml
