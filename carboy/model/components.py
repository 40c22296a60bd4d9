"""Read ``NAME=AMOUNT`` components as typed on the command line or in a form."""

from __future__ import annotations

import math
from dataclasses import dataclass

from carboy.errors import InvalidInput
from carboy.model import quantities
from carboy.model.entities import Compound

MAX_CONC_MOLAR = 30.0
"""No aqueous solution is stronger (glacial acetic acid is 17.4 M, 100 % H2SO4 18.7 M)."""


@dataclass(frozen=True, eq=False, repr=False)
class Component:
    """A parsed ``NAME=CONC`` (or ``NAME=MASS`` for a solid): exactly one amount is set."""

    compound: Compound
    conc_molar: float | None
    mass_g: float | None
    text: str


def read_component(text: str, catalog=None, *, allow_mass: bool = True) -> Component:
    """``'HCl=1M'``, ``'H2SO4=0.5 M'``, ``'H2SO4=10 %w/w'`` or (a solid) ``'NaF=2 g'``.

    NAME is a catalog formula or name (formulas are case-sensitive, names are not);
    a concentration is M, mM, µM or mol/L (a bare number is molar) or %w/w (converted
    with the catalog's density table).  Raises :class:`InvalidInput` or
    :class:`UnknownCompound` naming the bad part.
    """
    if catalog is None:
        from carboy.model.catalog import default_catalog

        catalog = default_catalog()
    example = "e.g. HCl=0.1M" + (" (or NAME=MASS for a solid, e.g. NaF=2 g)" if allow_mass else "")
    if not isinstance(text, str) or "=" not in text:
        raise InvalidInput("component", text, f"expected NAME=CONC, {example}")
    name, _, amount = text.rpartition("=")
    name, amount = name.strip(), amount.strip()
    if not name:
        raise InvalidInput("component", text, "the compound name is missing before '='")
    if not amount:
        raise InvalidInput("component", text, "the concentration is missing after '='")
    compound = catalog.compound(name)
    what = f"concentration of {compound.key}"
    if "%" in amount:
        from carboy.model.catalog import molarity_at

        pct = quantities.percent(amount, what=what)
        return Component(compound, _check_conc(molarity_at(compound, pct, catalog=catalog),
                                               what, amount), None, text.strip())
    if allow_mass and quantities.unit_kind(amount) == "mass":
        mass = quantities.mass_g(amount, what=f"mass of {compound.key}")
        if mass <= 0:
            raise InvalidInput(f"mass of {compound.key}", amount, "must be greater than zero")
        return Component(compound, None, mass, text.strip())
    conc = quantities.concentration_molar(amount, what=what)
    return Component(compound, _check_conc(conc, what, amount), None, text.strip())


def _check_conc(conc: float, what: str, text: str) -> float:
    if not math.isfinite(conc) or conc < 0:
        raise InvalidInput(what, text, "must be a finite, non-negative concentration")
    if conc > MAX_CONC_MOLAR:
        raise InvalidInput(what, text, f"no solution is stronger than {MAX_CONC_MOLAR:g} M")
    return conc


def parse_component(text: str, catalog=None) -> tuple[Compound, float]:
    """``'H2SO4=0.05M'`` -> (the H2SO4 compound, 0.05 mol/L); ``'H2SO4=96%'`` works too."""
    comp = read_component(text, catalog, allow_mass=False)
    return comp.compound, comp.conc_molar
