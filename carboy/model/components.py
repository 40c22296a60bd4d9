"""Read ``NAME=CONC`` components as typed on the command line or in a form."""

from __future__ import annotations

from carboy.errors import InvalidInput
from carboy.model import quantities
from carboy.model.entities import Compound


def parse_component(text: str, catalog=None) -> tuple[Compound, float]:
    """``'H2SO4=0.05M'`` -> (the H2SO4 compound, 0.05 mol/L).

    NAME is a catalog formula or name (formulas are case-sensitive, names are not);
    CONC is a number with M, mM, µM or mol/L (a bare number is molar).  Raises
    :class:`InvalidInput` or :class:`UnknownCompound` naming the bad part.
    """
    if catalog is None:
        from carboy.model.catalog import default_catalog

        catalog = default_catalog()
    if not isinstance(text, str) or "=" not in text:
        raise InvalidInput("component", text, "expected NAME=CONC, e.g. HCl=0.1M")
    name, _, conc = text.rpartition("=")
    name, conc = name.strip(), conc.strip()
    if not name:
        raise InvalidInput("component", text, "the name before '=' is empty")
    if not conc:
        raise InvalidInput("component", text, "the concentration after '=' is empty")
    compound = catalog.compound(name)
    value = quantities.concentration_molar(conc, what=f"concentration of {name}")
    return compound, value
