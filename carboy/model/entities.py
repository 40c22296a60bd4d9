"""The chemical vocabulary of carboy: acid–base systems, spectator ions, compounds.

These are plain frozen records.  The catalog (``catalog.py``) builds them from the
packaged TOML data and from user-defined compounds; the solver reads them.

Conventions
-----------
* A *system* is a ladder of acid dissociation steps.  ``species[0]`` is the fully
  protonated form with charge ``top_charge``; ``species[j]`` has lost ``j`` protons and
  has charge ``top_charge - j``.  ``pka25[j]`` is the thermodynamic pKa (I -> 0,
  25 °C) of the step ``species[j] -> species[j+1] + H+``.
* ``strong_steps`` leading steps are treated as complete (HCl, HNO3, the first step
  of H2SO4): the solver never forms those species.  Their pKa is kept for reference.
* A *compound* is what is on a label.  Its ``composition`` maps system or ion keys to
  the number of them in one formula unit; the charge balance settles protonation, so
  NaH2PO4 is simply ``{"Na+": 1, "phosphate": 1}`` and NaOH is ``{"Na+": 1}``.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType


@dataclass(frozen=True, eq=False, repr=False)
class System:
    """An acid–base system: a ladder of dissociation steps."""

    key: str
    name: str
    species: tuple[str, ...]
    top_charge: int
    pka25: tuple[float, ...]
    dh_kj: tuple[float, ...]
    """Standard enthalpy of ionization of each step at 25 °C, kJ/mol."""
    dcp_j: tuple[float, ...]
    """Heat-capacity change of each step, J/(K mol); 0 where none is published."""
    strong_steps: int = 0
    source: str = ""
    notes: str = ""

    @property
    def n_steps(self) -> int:
        return len(self.pka25)

    @property
    def bottom_charge(self) -> int:
        """Charge of the fully deprotonated form."""
        return self.top_charge - self.n_steps

    def charge_of(self, j: int) -> int:
        return self.top_charge - j


@dataclass(frozen=True, eq=False, repr=False)
class Ion:
    """A spectator ion: takes part in the charge balance and ionic strength only."""

    key: str
    name: str
    charge: int
    source: str = ""


@dataclass(frozen=True, eq=False)
class DensityTable:
    """Density of aqueous solutions of one compound against mass fraction."""

    mass_percent: tuple[float, ...]
    density_g_ml: tuple[float, ...]
    temperature_c: float
    source: str


@dataclass(frozen=True)
class Compound:
    """A substance as it appears on a label."""

    key: str
    """How the catalog names it: the usual label formula, e.g. ``NaH2PO4``."""
    formula: str
    """A formula molmass can read, e.g. ``KC8H5O4`` for KHP."""
    name: str
    aliases: tuple[str, ...]
    composition: Mapping[str, int]
    molar_mass_g_mol: float
    hazards: frozenset[str] = field(default_factory=frozenset)
    form: str = "solid"
    """``solid``, ``liquid`` or ``gas`` as usually supplied (``solution`` for NH3(aq))."""
    density: DensityTable | None = None
    source: str = ""
    user_defined: bool = False

    def __post_init__(self) -> None:
        object.__setattr__(self, "composition", MappingProxyType(dict(self.composition)))
