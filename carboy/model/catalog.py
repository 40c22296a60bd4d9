"""The catalog: every acid–base system, spectator ion and compound carboy knows.

This module is the catalog's public face; the work is done in

* :mod:`carboy.model.catalog_core`: the :class:`Catalog` class (an immutable, validated
  set of entries) and its lookup rules;
* :mod:`carboy.model.catalog_rules`: the consistency rules of every entry;
* :mod:`carboy.model.catalog_files`: the packaged data, ``data/systems.toml``,
  ``data/compounds.toml`` and ``data/densities.toml``, read into a catalog;
* :mod:`carboy.model.user_compounds`: user-defined compounds, validated like the packaged
  ones, that join through :meth:`Catalog.with_user`.

Every packaged constant carries its source and a status from the one vocabulary of
:mod:`carboy.model.provenance` (FOUND, RECONSTRUCTED, MEMORY, DERIVED, PRACTICE,
ASSUMPTION, NONE; USER for user entries).  A :class:`Catalog` never changes after
construction.

Lookup (:meth:`Catalog.compound`) matches formulas and keys exactly and names and aliases
forgivingly (case, spacing, hyphens, a trailing " acid"); the rules are set out in
:mod:`carboy.model.catalog_core`.

Molar masses are always computed from the formula with molmass.  :func:`density_at` and
:func:`molarity_at` read a compound's density table (linear in % w/w, no extrapolation).
"""

from __future__ import annotations

import bisect
import math

from carboy.errors import InvalidInput
from carboy.model.catalog_core import (
    MAX_SUGGESTIONS,
    SUGGESTION_CUTOFF,
    Catalog,
    Component,
    DensityRow,
    normalize_name,
)
from carboy.model.catalog_files import default_catalog, load_builtin
from carboy.model.catalog_rules import FORMS, StepProvenance, is_number, molar_mass_of
from carboy.model.datafiles import read_data_file
from carboy.model.entities import Compound
from carboy.model.provenance import STATUSES

__all__ = [
    "FORMS",
    "MAX_SUGGESTIONS",
    "STATUSES",
    "SUGGESTION_CUTOFF",
    "Catalog",
    "Component",
    "DensityRow",
    "StepProvenance",
    "default_catalog",
    "density_at",
    "load_builtin",
    "make_user_compound",  # noqa: F822 - loaded when first asked for (__getattr__)
    "molar_mass_of",
    "molarity_at",
    "normalize_name",
    "read_data_file",
]


def __getattr__(name: str):
    """``make_user_compound``, loaded when first asked for: a calculation that takes no
    user compound does not load :mod:`carboy.model.user_compounds`."""
    if name == "make_user_compound":
        from carboy.model.user_compounds import make_user_compound

        return make_user_compound
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


def _as_compound(compound: Compound | str, catalog: Catalog | None) -> Compound:
    if isinstance(compound, Compound):
        return compound
    return (catalog or default_catalog()).compound(compound)


def density_at(
    compound: Compound | str, mass_percent: float, *, catalog: Catalog | None = None
) -> float:
    """Density in g/mL of an aqueous solution of ``compound`` at ``mass_percent`` % w/w.

    Linear interpolation in the compound's density table (20 °C for the built-in
    tables; see ``compound.density.temperature_c``).

    Raises
    ------
    InvalidInput
        If the compound has no density table, or ``mass_percent`` is not finite or lies
        outside the table's range (no extrapolation).
    """
    found = _as_compound(compound, catalog)
    table = found.density
    if table is None:
        raise InvalidInput("compound", found.key, "has no density table in the catalog")
    if not is_number(mass_percent) or not math.isfinite(mass_percent):
        raise InvalidInput("mass percent", mass_percent, "must be a finite number")
    low, high = table.mass_percent[0], table.mass_percent[-1]
    if not low <= mass_percent <= high:
        raise InvalidInput(
            "mass percent",
            mass_percent,
            f"outside the density table of {found.key} ({low:g}-{high:g} % w/w at "
            f"{table.temperature_c:g} °C)",
        )
    i = bisect.bisect_left(table.mass_percent, mass_percent)
    if table.mass_percent[i] == mass_percent:
        return table.density_g_ml[i]
    w0, w1 = table.mass_percent[i - 1], table.mass_percent[i]
    r0, r1 = table.density_g_ml[i - 1], table.density_g_ml[i]
    return r0 + (r1 - r0) * (mass_percent - w0) / (w1 - w0)


def molarity_at(
    compound: Compound | str, mass_percent: float, *, catalog: Catalog | None = None
) -> float:
    """Molar concentration in mol/L of ``compound`` at ``mass_percent`` % w/w.

    ``c = (w / 100) * density_g_ml * 1000 / molar_mass``, with the density from
    :func:`density_at` (same errors).
    """
    found = _as_compound(compound, catalog)
    rho = density_at(found, mass_percent)
    return mass_percent / 100.0 * rho * 1000.0 / found.molar_mass_g_mol
