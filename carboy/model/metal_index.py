"""Which modelled metals a solution holds, answered without the metal machinery.

The metal records (:mod:`carboy.model.metal_data`) and what computes with them
(:mod:`carboy.model.metals`, :mod:`carboy.model.metal_doses`,
:mod:`carboy.model.solver.metal_terms` ...) are some twenty dataclasses and a checked
read of ``metals.toml``: a quarter of a command's cold start.  Most solutions hold no
modelled metal, so the solver and the planner ask here first, from the keys of
``metals.toml`` read without building or checking the records, and import the metal
modules only when one is present (then :func:`~carboy.model.metal_data.metal_data`
reads and checks the whole file).  (The planner's titration models ask through
:func:`carboy.model.gas.metal_doses_of`.)
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from functools import lru_cache

from carboy.model.datafiles import Table

__all__ = ["inert_cations", "modelled_among", "modelled_keys", "unmodelled_cations"]

METALS_FILE = "metals.toml"


@lru_cache(maxsize=1)
def modelled_keys() -> frozenset[str]:
    """The keys of the metals ``metals.toml`` models (``Zn+2`` ...)."""
    return frozenset(t.text("key") for t in Table.of_file(METALS_FILE).tables("metals"))


@lru_cache(maxsize=1)
def inert_cations() -> frozenset[str]:
    """The cations ``metals.toml`` names inert (Na+, K+ ...): no hydrolysis, no solid."""
    return frozenset(Table.of_file(METALS_FILE).texts("inert_cations"))


def modelled_among(keys: Iterable[str]) -> tuple[str, ...]:
    """The modelled metals among ``keys``, in their order."""
    known = modelled_keys()
    return tuple(k for k in keys if k in known)


def unmodelled_cations(charges: Mapping[str, int]) -> tuple[str, ...]:
    """Cations (ion key -> charge) that are neither modelled here nor inert (Na+, K+ ...):
    the plan must say their hydrolysis and precipitation are not counted."""
    known, inert = modelled_keys(), inert_cations()
    return tuple(sorted(k for k, z in charges.items()
                        if z > 0 and k not in known and k not in inert))
