"""The consistency rules every catalog entry obeys, packaged or user-defined.

A system's pKa values rise strictly, its species labels carry the charges of its ladder,
its constants are finite and each has a source and a status (the one vocabulary of
:mod:`carboy.model.provenance`; a constant with status NONE is 0).  An ion's key carries
its charge.  A compound's formula is readable by molmass (the molar mass is always
computed from it; a packaged formula's as shipped computed, see
:mod:`carboy.model.molar_masses`), its composition names systems and ions, its hazard
tags and form come from the vocabularies, and its density table rises within 0–100 % w/w.  Each check raises
:class:`~carboy.errors.CatalogError` naming the entry and what is wrong.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from functools import lru_cache
from itertools import pairwise

from carboy.errors import CatalogError
from carboy.model.entities import Compound, DensityTable, Ion, System
from carboy.model.molar_masses import shipped_masses
from carboy.model.provenance import STATUSES, check_provenance

__all__ = [
    "FORMS",
    "StepProvenance",
    "check_compound",
    "check_density_table",
    "check_ion",
    "check_numbers",
    "check_step_provenance",
    "check_system",
    "is_int",
    "is_number",
    "label_charge",
    "molar_mass_of",
]

FORMS = frozenset({"solid", "liquid", "gas", "solution"})
"""How a compound is usually supplied."""

_CHARGE_SUFFIX = re.compile(r"([+-])(\d*)$")


@dataclass(frozen=True, eq=False, repr=False)
class StepProvenance:
    """Where each constant of one dissociation step comes from."""

    pka_source: str
    pka_status: str
    dh_source: str
    dh_status: str
    dcp_source: str
    dcp_status: str


def is_int(value: object) -> bool:
    """True for an int that is not a bool."""
    return isinstance(value, int) and not isinstance(value, bool)


def is_number(value: object) -> bool:
    """True for an int or float that is not a bool."""
    return isinstance(value, (int, float)) and not isinstance(value, bool)


def molar_mass_of(formula: str, *, entry: str | None = None) -> float:
    """Molar mass in g/mol of a formula molmass can read.

    Raises
    ------
    CatalogError
        If molmass cannot parse ``formula``; the error names the formula and the entry.
    """
    if not isinstance(formula, str) or not formula.strip():
        raise CatalogError(entry or repr(formula), f"formula {formula!r} is empty")
    try:
        mass = _formula_mass(formula)
    except Exception as exc:  # molmass raises FormulaError and, on odd input, others
        raise CatalogError(
            entry or formula, f"molmass cannot read the formula {formula!r}: {exc}"
        ) from None
    if not math.isfinite(mass) or mass <= 0:
        raise CatalogError(entry or formula, f"formula {formula!r} has no positive mass")
    return mass


@lru_cache(maxsize=1024)
def _formula_mass(formula: str) -> float:
    """molmass's mass of ``formula``, once per formula (loading the catalog asks for
    most formulas twice: reading the compound, then checking it); a packaged formula's
    as shipped (:mod:`carboy.model.molar_masses`: molmass is then not even loaded)."""
    shipped = shipped_masses().get(formula)
    if shipped is not None:
        return float(shipped)
    import molmass

    return float(molmass.Formula(formula).mass)


def label_charge(label: str) -> int:
    """Charge written at the end of a species or ion label (``HPO4-2`` -> -2)."""
    match = _CHARGE_SUFFIX.search(label)
    if match is None:
        return 0
    magnitude = int(match.group(2)) if match.group(2) else 1
    return magnitude if match.group(1) == "+" else -magnitude


def check_numbers(entry: str, what: str, values: Sequence[object]) -> tuple[float, ...]:
    """The values as floats; CatalogError naming ``what`` if one is not a finite number."""
    out = []
    for value in values:
        if not is_number(value) or not math.isfinite(float(value)):
            raise CatalogError(entry, f"{what} {list(values)!r} holds a non-finite value {value!r}")
        out.append(float(value))
    return tuple(out)


# ----------------------------------------------------------------------------- systems, ions


def _check_ladder(system: System) -> int:
    """Check the pKa ladder and its per-step constants; return the number of steps."""
    key = system.key
    pka = check_numbers(key, "pKa values", system.pka25)
    n = len(pka)
    if n < 1:
        raise CatalogError(key, "a system needs at least one dissociation step")
    for earlier, later in pairwise(pka):
        if not later > earlier:
            raise CatalogError(
                key, f"pKa values {list(pka)!r} are not strictly ascending ({earlier} -> {later})"
            )
    if len(system.dh_kj) != n:
        raise CatalogError(key, f"{len(system.dh_kj)} enthalpies given for {n} steps")
    if len(system.dcp_j) != n:
        raise CatalogError(key, f"{len(system.dcp_j)} heat-capacity changes given for {n} steps")
    check_numbers(key, "ionization enthalpies (kJ/mol)", system.dh_kj)
    check_numbers(key, "heat-capacity changes (J/K/mol)", system.dcp_j)
    return n


def _check_species(system: System, n: int) -> None:
    key, species = system.key, system.species
    if len(species) != n + 1:
        raise CatalogError(
            key, f"{len(species)} species given for {n} steps (need {n + 1}: {list(species)!r})"
        )
    if len(set(species)) != len(species) or not all(
        isinstance(s, str) and s.strip() for s in species
    ):
        raise CatalogError(key, f"species labels {list(species)!r} must be distinct and non-empty")
    for j, label in enumerate(species):
        if label_charge(label) != system.charge_of(j):
            raise CatalogError(
                key,
                f"species {label!r} is written with charge {label_charge(label):+d} but step "
                f"{j} of a ladder starting at {system.top_charge:+d} has {system.charge_of(j):+d}",
            )


def check_system(system: System) -> None:
    """Raise CatalogError if ``system`` is internally inconsistent."""
    key = system.key
    if not isinstance(key, str) or not key.strip() or key != key.strip():
        raise CatalogError(repr(key), "system key must be a non-empty string without padding")
    if not isinstance(system.name, str) or not system.name.strip():
        raise CatalogError(key, "system has no name")
    n = _check_ladder(system)
    if not is_int(system.top_charge):
        raise CatalogError(key, f"top_charge {system.top_charge!r} is not an integer")
    if not is_int(system.strong_steps) or not 0 <= system.strong_steps <= n:
        raise CatalogError(key, f"strong_steps {system.strong_steps!r} is not in 0..{n}")
    _check_species(system, n)


def check_step_provenance(system: System, steps: Sequence[StepProvenance]) -> None:
    """Check the source and status of every constant of ``system`` (USER allowed).

    A constant whose status is NONE (no published value) must be 0.
    """
    key = system.key
    if len(steps) != system.n_steps:
        raise CatalogError(key, "provenance does not match the number of steps")
    for j, step in enumerate(steps):
        for what in ("pka", "dh", "dcp"):
            check_provenance(
                key,
                f"step {j + 1} {what}",
                getattr(step, f"{what}_status"),
                getattr(step, f"{what}_source"),
                allowed=STATUSES,
            )
        if step.dh_status == "NONE" and system.dh_kj[j] != 0:
            raise CatalogError(key, f"step {j + 1} ΔH has status NONE but is not 0")
        if step.dcp_status == "NONE" and system.dcp_j[j] != 0:
            raise CatalogError(key, f"step {j + 1} ΔCp has status NONE but is not 0")


def check_ion(ion: Ion) -> None:
    """Raise CatalogError if the ion's key does not carry its non-zero charge."""
    if not isinstance(ion.key, str) or not ion.key.strip():
        raise CatalogError(repr(ion.key), "ion key must be a non-empty string")
    if not is_int(ion.charge) or ion.charge == 0:
        raise CatalogError(ion.key, f"ion charge {ion.charge!r} must be a non-zero integer")
    if label_charge(ion.key) != ion.charge:
        raise CatalogError(ion.key, f"key is written with a charge other than {ion.charge:+d}")


# ----------------------------------------------------------------------------- compounds


def check_density_table(entry: str, table: DensityTable) -> None:
    """Raise CatalogError unless the table rises within 0–100 % with positive densities."""
    w = check_numbers(entry, "density-table mass percents", table.mass_percent)
    rho = check_numbers(entry, "density-table densities", table.density_g_ml)
    if len(w) != len(rho) or len(w) < 2:
        raise CatalogError(entry, "density table needs at least two rows of (mass %, density)")
    if any(b <= a for a, b in pairwise(w)) or w[0] < 0 or w[-1] > 100:
        raise CatalogError(entry, f"density-table mass percents {list(w)!r} must rise within 0-100")
    if any(r <= 0 for r in rho):
        raise CatalogError(entry, "density-table densities must be positive")
    if not is_number(table.temperature_c) or not math.isfinite(table.temperature_c):
        raise CatalogError(
            entry, f"density-table temperature {table.temperature_c!r} is not finite"
        )
    if not table.source.strip():
        raise CatalogError(entry, "density table has no source")


def _check_composition(
    compound: Compound, systems: Mapping[str, System], ions: Mapping[str, Ion]
) -> None:
    key = compound.key
    if not compound.composition:
        raise CatalogError(key, "composition is empty")
    for part, count in compound.composition.items():
        if not is_int(count) or count <= 0:
            raise CatalogError(key, f"composition count {count!r} of {part!r} is not positive")
        if part in ions:
            continue
        system = systems.get(part)
        if system is None:
            raise CatalogError(key, f"composition names {part!r}, not a system or ion")
        if system.strong_steps == system.n_steps:
            anion = system.species[-1]
            raise CatalogError(
                key, f"composition names {part!r}, whose steps are all strong: use {anion!r}"
            )


def check_compound(
    compound: Compound,
    *,
    systems: Mapping[str, System],
    ions: Mapping[str, Ion],
    hazard_tags: Mapping[str, str],
) -> None:
    """Raise CatalogError if ``compound`` does not fit the given systems, ions and tags."""
    key = compound.key
    if not isinstance(key, str) or not key.strip() or key != key.strip():
        raise CatalogError(repr(key), "compound key must be a non-empty string without padding")
    if not isinstance(compound.name, str) or not compound.name.strip():
        raise CatalogError(key, "compound has no name")
    mass = molar_mass_of(compound.formula, entry=key)
    if not math.isclose(mass, compound.molar_mass_g_mol, rel_tol=1e-9):
        raise CatalogError(
            key,
            f"molar mass {compound.molar_mass_g_mol!r} is not the mass of "
            f"{compound.formula!r} ({mass:.4f} g/mol)",
        )
    _check_composition(compound, systems, ions)
    unknown = set(compound.hazards) - set(hazard_tags)
    if unknown:
        raise CatalogError(key, f"hazard tags {sorted(unknown)!r} are not in the vocabulary")
    if compound.form not in FORMS:
        raise CatalogError(key, f"form {compound.form!r} is not one of {sorted(FORMS)}")
    if compound.density is not None:
        check_density_table(key, compound.density)
