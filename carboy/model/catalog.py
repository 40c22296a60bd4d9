"""The catalog: every acid–base system, spectator ion and compound carboy knows.

The built-in entries are packaged TOML under ``carboy/model/data`` (``systems.toml``,
``compounds.toml``, ``densities.toml``), where every constant carries its source and a
status (FOUND, FOUND*, FOUND-SRC, MEMORY, DERIVED, NONE; see the head of
``systems.toml``).  User-defined entries come from the store and join through
:meth:`Catalog.with_user`, which validates them exactly as the built-in ones are
validated.  A :class:`Catalog` never changes after construction.

Lookup rules (:meth:`Catalog.compound`)
---------------------------------------
* Formulas and keys match exactly and case-sensitively: ``NaOH`` is sodium hydroxide,
  ``naoh`` is not a formula.
* Names and aliases are forgiving: case, runs of spaces, hyphens against spaces and a
  trailing ``" acid"`` are ignored, so ``"Acetic Acid"``, ``"acetic"`` and
  ``"glacial acetic acid"`` all find CH3COOH.
* Anything else raises :class:`~carboy.errors.UnknownCompound` with up to three close
  matches.

Molar masses are always computed from the formula with molmass.
"""

from __future__ import annotations

import bisect
import difflib
import functools
import math
import re
import tomllib
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, replace
from importlib import resources
from itertools import pairwise
from types import MappingProxyType
from typing import Any

import molmass

from carboy.errors import CatalogError, InvalidInput, UnknownCompound
from carboy.model.entities import Compound, DensityTable, Ion, System
from carboy.model.text import read_label

__all__ = [
    "FORMS",
    "STATUSES",
    "Catalog",
    "Component",
    "DensityRow",
    "StepProvenance",
    "default_catalog",
    "density_at",
    "load_builtin",
    "make_user_compound",
    "molar_mass_of",
    "molarity_at",
    "normalize_name",
]

STATUSES = frozenset({"FOUND", "FOUND*", "FOUND-SRC", "MEMORY", "DERIVED", "NONE", "USER"})
"""Status of a constant: how sure the catalog is that the number is the published one."""

FORMS = frozenset({"solid", "liquid", "gas", "solution"})
"""How a compound is usually supplied."""

MAX_SUGGESTIONS = 3
MAX_NAME = 100
"""Longest compound name or formula looked up (checked before any search)."""
SUGGESTION_CUTOFF = 0.6
"""difflib similarity ratio below which a name is not offered as a suggestion."""

_DATA_PACKAGE = "carboy.model.data"
_CHARGE_SUFFIX = re.compile(r"([+-])(\d*)$")

Component = System | Ion


@dataclass(frozen=True)
class StepProvenance:
    """Where each constant of one dissociation step comes from."""

    pka_source: str
    pka_status: str
    dh_source: str
    dh_status: str
    dcp_source: str
    dcp_status: str


@dataclass(frozen=True)
class DensityRow:
    """One row of a density table, with its own provenance."""

    mass_percent: float
    density_g_ml: float
    status: str
    source: str


# ----------------------------------------------------------------------------- helpers


def normalize_name(text: str) -> str:
    """Fold a compound name for forgiving lookup.

    Case-folds, treats hyphens and underscores as spaces, collapses whitespace and drops
    one trailing ``" acid"`` (``"Acetic  Acid"`` -> ``"acetic"``).
    """
    folded = text.casefold().replace("-", " ").replace("_", " ")
    folded = " ".join(folded.split())
    if folded.endswith(" acid"):
        folded = folded[: -len(" acid")]
    return folded


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
        mass = float(molmass.Formula(formula).mass)
    except Exception as exc:  # molmass raises FormulaError and, on odd input, others
        raise CatalogError(
            entry or formula, f"molmass cannot read the formula {formula!r}: {exc}"
        ) from None
    if not math.isfinite(mass) or mass <= 0:
        raise CatalogError(entry or formula, f"formula {formula!r} has no positive mass")
    return mass


def _label_charge(label: str) -> int:
    """Charge written at the end of a species or ion label (``HPO4-2`` -> -2)."""
    match = _CHARGE_SUFFIX.search(label)
    if match is None:
        return 0
    magnitude = int(match.group(2)) if match.group(2) else 1
    return magnitude if match.group(1) == "+" else -magnitude


def _is_int(value: object) -> bool:
    return isinstance(value, int) and not isinstance(value, bool)


def _is_number(value: object) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


def _check_numbers(entry: str, what: str, values: Sequence[object]) -> tuple[float, ...]:
    out = []
    for value in values:
        if not _is_number(value) or not math.isfinite(float(value)):
            raise CatalogError(entry, f"{what} {list(values)!r} holds a non-finite value {value!r}")
        out.append(float(value))
    return tuple(out)


def _check_status(entry: str, what: str, status: object, source: object) -> None:
    if status not in STATUSES:
        raise CatalogError(entry, f"{what} status {status!r} is not one of {sorted(STATUSES)}")
    if not isinstance(source, str) or not source.strip():
        raise CatalogError(entry, f"{what} has no source")
    if status in ("MEMORY", "FOUND-SRC") and "from memory" not in source:
        raise CatalogError(entry, f"{what} is {status} but its source does not say 'from memory'")


def _check_system(system: System) -> None:
    """Raise CatalogError if ``system`` is internally inconsistent."""
    key = system.key
    if not isinstance(key, str) or not key.strip() or key != key.strip():
        raise CatalogError(repr(key), "system key must be a non-empty string without padding")
    if not isinstance(system.name, str) or not system.name.strip():
        raise CatalogError(key, "system has no name")
    pka = _check_numbers(key, "pKa values", system.pka25)
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
    _check_numbers(key, "ionization enthalpies (kJ/mol)", system.dh_kj)
    _check_numbers(key, "heat-capacity changes (J/K/mol)", system.dcp_j)
    if not _is_int(system.top_charge):
        raise CatalogError(key, f"top_charge {system.top_charge!r} is not an integer")
    if not _is_int(system.strong_steps) or not 0 <= system.strong_steps <= n:
        raise CatalogError(key, f"strong_steps {system.strong_steps!r} is not in 0..{n}")
    species = system.species
    if len(species) != n + 1:
        raise CatalogError(
            key, f"{len(species)} species given for {n} steps (need {n + 1}: {list(species)!r})"
        )
    if len(set(species)) != len(species) or not all(
        isinstance(s, str) and s.strip() for s in species
    ):
        raise CatalogError(key, f"species labels {list(species)!r} must be distinct and non-empty")
    for j, label in enumerate(species):
        if _label_charge(label) != system.charge_of(j):
            raise CatalogError(
                key,
                f"species {label!r} is written with charge {_label_charge(label):+d} but step "
                f"{j} of a ladder starting at {system.top_charge:+d} has {system.charge_of(j):+d}",
            )


def _check_ion(ion: Ion) -> None:
    if not isinstance(ion.key, str) or not ion.key.strip():
        raise CatalogError(repr(ion.key), "ion key must be a non-empty string")
    if not _is_int(ion.charge) or ion.charge == 0:
        raise CatalogError(ion.key, f"ion charge {ion.charge!r} must be a non-zero integer")
    if _label_charge(ion.key) != ion.charge:
        raise CatalogError(ion.key, f"key is written with a charge other than {ion.charge:+d}")


def _check_density(entry: str, table: DensityTable) -> None:
    w = _check_numbers(entry, "density-table mass percents", table.mass_percent)
    rho = _check_numbers(entry, "density-table densities", table.density_g_ml)
    if len(w) != len(rho) or len(w) < 2:
        raise CatalogError(entry, "density table needs at least two rows of (mass %, density)")
    if any(b <= a for a, b in pairwise(w)) or w[0] < 0 or w[-1] > 100:
        raise CatalogError(entry, f"density-table mass percents {list(w)!r} must rise within 0-100")
    if any(r <= 0 for r in rho):
        raise CatalogError(entry, "density-table densities must be positive")
    if not _is_number(table.temperature_c) or not math.isfinite(table.temperature_c):
        raise CatalogError(
            entry, f"density-table temperature {table.temperature_c!r} is not finite"
        )
    if not table.source.strip():
        raise CatalogError(entry, "density table has no source")


# ----------------------------------------------------------------------------- catalog


class Catalog:
    """An immutable set of systems, spectator ions and compounds, with lookup.

    Build one with :func:`default_catalog` (the packaged data) and extend it with
    :meth:`with_user`.  The constructor validates every entry and raises
    :class:`~carboy.errors.CatalogError` naming the first inconsistent one.
    """

    __slots__ = (
        "_systems",
        "_ions",
        "_compounds",
        "_hazard_tags",
        "_provenance",
        "_density_rows",
        "_alt_formulas",
        "_strong_acids",
        "_exact",
        "_by_name",
    )

    def __init__(
        self,
        *,
        systems: Iterable[System],
        ions: Iterable[Ion],
        compounds: Iterable[Compound],
        hazard_tags: Mapping[str, str],
        provenance: Mapping[str, Sequence[StepProvenance]] | None = None,
        density_rows: Mapping[str, Sequence[DensityRow]] | None = None,
        alt_formulas: Mapping[str, Sequence[str]] | None = None,
        strong_acid_anions: Mapping[str, str] | None = None,
    ) -> None:
        self._hazard_tags = MappingProxyType(dict(hazard_tags))
        self._systems = MappingProxyType(self._index_components(systems, _check_system))
        self._ions = MappingProxyType(self._index_components(ions, _check_ion))
        clash = set(self._systems) & set(self._ions)
        if clash:
            raise CatalogError(sorted(clash)[0], "key names both a system and an ion")
        self._strong_acids = MappingProxyType(self._check_strong_acids(strong_acid_anions or {}))
        self._provenance = MappingProxyType(self._fill_provenance(provenance or {}))
        self._density_rows = MappingProxyType(
            {k: tuple(v) for k, v in (density_rows or {}).items()}
        )
        self._alt_formulas = MappingProxyType(
            {k: tuple(v) for k, v in (alt_formulas or {}).items()}
        )
        compounds_by_key: dict[str, Compound] = {}
        for compound in compounds:
            self._check_compound(compound)
            if compound.key in compounds_by_key:
                raise CatalogError(compound.key, "compound key is defined twice")
            compounds_by_key[compound.key] = compound
        self._compounds = MappingProxyType(compounds_by_key)
        self._exact, self._by_name = self._build_indexes()

    # ---- construction helpers

    @staticmethod
    def _index_components(entries: Iterable[Any], check: Any) -> dict[str, Any]:
        out: dict[str, Any] = {}
        for entry in entries:
            check(entry)
            if entry.key in out:
                raise CatalogError(entry.key, "key is defined twice")
            out[entry.key] = entry
        return out

    def _check_strong_acids(self, anions: Mapping[str, str]) -> dict[str, str]:
        """Map each all-strong system to its anion: ``{anion key: acid name}``."""
        by_anion: dict[str, str] = {}
        for key, system in self._systems.items():
            if system.strong_steps != system.n_steps:
                if key in anions:
                    raise CatalogError(key, "only a system whose steps are all strong has an anion")
                continue
            anion = anions.get(key)
            if anion is None:
                raise CatalogError(key, "all steps are strong, so the system must name its anion")
            ion = self._ions.get(anion)
            if ion is None or ion.charge != system.bottom_charge or system.species[-1] != anion:
                raise CatalogError(
                    key, f"anion {anion!r} must be a spectator ion equal to the last species"
                )
            by_anion[anion] = system.name
        return by_anion

    def _fill_provenance(
        self, provenance: Mapping[str, Sequence[StepProvenance]]
    ) -> dict[str, tuple[StepProvenance, ...]]:
        out: dict[str, tuple[StepProvenance, ...]] = {}
        for key, system in self._systems.items():
            steps = provenance.get(key)
            if steps is None:
                # A user system: one source for all of it, as the user gave it.
                source = system.source
                if not source.strip():
                    raise CatalogError(key, "system has no source")
                steps = [StepProvenance(source, "USER", source, "USER", source, "USER")] * (
                    system.n_steps
                )
            steps = tuple(steps)
            if len(steps) != system.n_steps:
                raise CatalogError(key, "provenance does not match the number of steps")
            for j, step in enumerate(steps):
                for what in ("pka", "dh", "dcp"):
                    _check_status(
                        key,
                        f"step {j + 1} {what}",
                        getattr(step, f"{what}_status"),
                        getattr(step, f"{what}_source"),
                    )
                if step.dh_status == "NONE" and system.dh_kj[j] != 0:
                    raise CatalogError(key, f"step {j + 1} ΔH has status NONE but is not 0")
                if step.dcp_status == "NONE" and system.dcp_j[j] != 0:
                    raise CatalogError(key, f"step {j + 1} ΔCp has status NONE but is not 0")
            out[key] = steps
        return out

    def _check_compound(self, compound: Compound) -> None:
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
        if not compound.composition:
            raise CatalogError(key, "composition is empty")
        for part, count in compound.composition.items():
            if not _is_int(count) or count <= 0:
                raise CatalogError(key, f"composition count {count!r} of {part!r} is not positive")
            if part in self._ions:
                continue
            system = self._systems.get(part)
            if system is None:
                raise CatalogError(key, f"composition names {part!r}, not a system or ion")
            if system.strong_steps == system.n_steps:
                anion = system.species[-1]
                raise CatalogError(
                    key, f"composition names {part!r}, whose steps are all strong: use {anion!r}"
                )
        unknown = set(compound.hazards) - set(self._hazard_tags)
        if unknown:
            raise CatalogError(key, f"hazard tags {sorted(unknown)!r} are not in the vocabulary")
        if compound.form not in FORMS:
            raise CatalogError(key, f"form {compound.form!r} is not one of {sorted(FORMS)}")
        if compound.density is not None:
            _check_density(key, compound.density)

    def _build_indexes(self) -> tuple[dict[str, str], dict[str, str]]:
        exact: dict[str, str] = {}
        by_name: dict[str, str] = {}
        for key, compound in self._compounds.items():
            spellings = {key, compound.formula, *self._alt_formulas.get(key, ())}
            for spelling in spellings:
                other = exact.setdefault(spelling, key)
                if other != key:
                    raise CatalogError(key, f"formula {spelling!r} also belongs to {other!r}")
            for name in (compound.name, *compound.aliases):
                folded = normalize_name(name)
                if not folded:
                    raise CatalogError(key, f"name or alias {name!r} is empty")
                other = by_name.setdefault(folded, key)
                if other != key:
                    raise CatalogError(key, f"name {name!r} also belongs to {other!r}")
        return exact, by_name

    # ---- read-only views

    @property
    def systems(self) -> Mapping[str, System]:
        """Acid–base systems by key (``"phosphate"``, ``"hydrochloric"``…)."""
        return self._systems

    @property
    def ions(self) -> Mapping[str, Ion]:
        """Spectator ions by key (``"Na+"``, ``"Cl-"``…)."""
        return self._ions

    @property
    def compounds(self) -> Mapping[str, Compound]:
        """Compounds by key (the usual label formula)."""
        return self._compounds

    @property
    def hazard_tags(self) -> Mapping[str, str]:
        """The hazard-tag vocabulary: tag -> what it means."""
        return self._hazard_tags

    @property
    def strong_acid_by_anion(self) -> Mapping[str, str]:
        """Anion key -> name of the strong acid it comes from (``"Cl-"`` -> hydrochloric acid)."""
        return self._strong_acids

    def provenance(self, system_key: str) -> tuple[StepProvenance, ...]:
        """Source and status of every constant of one system, step by step."""
        self._system_or_raise(system_key)
        return self._provenance[system_key]

    def density_rows(self, compound_key: str) -> tuple[DensityRow, ...]:
        """Rows of a compound's density table with their provenance (empty if none)."""
        return self._density_rows.get(compound_key, ())

    def formulas_of(self, compound_key: str) -> tuple[str, ...]:
        """Every exact spelling lookup accepts for a compound: key, formula, alternatives."""
        compound = self._compounds[compound_key]
        spellings = [compound.key, compound.formula, *self._alt_formulas.get(compound_key, ())]
        return tuple(dict.fromkeys(spellings))

    # ---- components (what the solver needs)

    def component(self, key: str) -> System | Ion:
        """The system or spectator ion a composition key names.

        Raises
        ------
        CatalogError
            If ``key`` names neither.
        """
        found = self._systems.get(key) or self._ions.get(key)
        if found is None:
            raise CatalogError(key, "not a system or spectator ion in the catalog")
        return found

    def is_system(self, key: str) -> bool:
        """True if ``key`` names an acid–base system."""
        return key in self._systems

    def is_ion(self, key: str) -> bool:
        """True if ``key`` names a spectator ion."""
        return key in self._ions

    def ion_charge(self, key: str) -> int:
        """Charge of a spectator ion."""
        ion = self._ions.get(key)
        if ion is None:
            raise CatalogError(key, "not a spectator ion in the catalog")
        return ion.charge

    def _system_or_raise(self, key: str) -> System:
        system = self._systems.get(key)
        if system is None:
            raise CatalogError(key, "not a system in the catalog")
        return system

    # ---- compound lookup

    def compound(self, name: str) -> Compound:
        """Find a compound by key, formula (exact) or name/alias (forgiving).

        Raises
        ------
        UnknownCompound
            If nothing matches; ``suggestions`` holds up to three close names.
        """
        text = read_label(name, "compound name", field="compound", most=MAX_NAME)
        key = self._exact.get(text) or self._by_name.get(normalize_name(text))
        if key is None:
            raise UnknownCompound(name, self.suggest(name))
        return self._compounds[key]

    def __contains__(self, name: object) -> bool:
        try:
            text = read_label(name, "compound name", most=MAX_NAME)
        except InvalidInput:
            return False
        return text in self._exact or normalize_name(text) in self._by_name

    def suggest(self, text: str, limit: int = MAX_SUGGESTIONS) -> tuple[str, ...]:
        """Up to ``limit`` close matches to ``text``: a name, or a key for formula-like text."""
        folded = normalize_name(text)
        candidates: dict[str, tuple[str, str]] = {}
        for spelling, key in self._exact.items():
            candidates.setdefault(spelling.casefold(), (key, self._compounds[key].key))
        for folded_name, key in self._by_name.items():
            candidates.setdefault(folded_name, (key, self._compounds[key].name))
        matches = []
        if text.strip().casefold() in candidates:
            matches.append(text.strip().casefold())
        matches += difflib.get_close_matches(
            folded, list(candidates), n=4 * limit, cutoff=SUGGESTION_CUTOFF
        )
        out: dict[str, str] = {}
        for match in matches:
            key, label = candidates[match]
            out.setdefault(key, label)
            if len(out) == limit:
                break
        return tuple(out.values())

    def search(self, text: str) -> list[Compound]:
        """Compounds for a search box, best first.

        Ranking: an exact lookup hit; then keys, formulas or names that start with the
        text; then those that contain it; then close spellings.  Empty text gives every
        compound by name.
        """
        folded = normalize_name(text)
        if not folded:
            return sorted(self._compounds.values(), key=lambda c: c.name.casefold())
        raw = " ".join(text.casefold().split())
        ranks: dict[str, int] = {}
        if text in self:
            ranks[self.compound(text).key] = 0
        for key, compound in self._compounds.items():
            haystack = [s.casefold() for s in self.formulas_of(key)] + [
                normalize_name(n) for n in (compound.name, *compound.aliases)
            ]
            if any(h.startswith(folded) or h.startswith(raw) for h in haystack):
                ranks.setdefault(key, 1)
            elif any(folded in h or raw in h for h in haystack):
                ranks.setdefault(key, 2)
        for label in self.suggest(text, limit=10):
            key = self.compound(label).key
            ranks.setdefault(key, 3)
        return sorted(
            (self._compounds[k] for k in ranks),
            key=lambda c: (ranks[c.key], c.name.casefold()),
        )

    # ---- user entries

    def with_user(
        self,
        systems: Iterable[System] = (),
        compounds: Iterable[Compound] = (),
    ) -> Catalog:
        """A new catalog holding these entries as well, validated like the built-in ones.

        Each compound's molar mass is recomputed from its formula and it is marked
        ``user_defined``.  A key that is already in the catalog raises CatalogError.
        """
        new_systems = list(systems)
        for system in new_systems:
            if system.key in self._systems or system.key in self._ions:
                raise CatalogError(system.key, "a system or ion with this key already exists")
        new_compounds = []
        for compound in compounds:
            if compound.key in self._compounds:
                raise CatalogError(compound.key, "a compound with this key already exists")
            mass = molar_mass_of(compound.formula, entry=compound.key)
            new_compounds.append(replace(compound, molar_mass_g_mol=mass, user_defined=True))
        provenance = dict(self._provenance)
        return Catalog(
            systems=[*self._systems.values(), *new_systems],
            ions=self._ions.values(),
            compounds=[*self._compounds.values(), *new_compounds],
            hazard_tags=self._hazard_tags,
            provenance=provenance,
            density_rows=self._density_rows,
            alt_formulas=self._alt_formulas,
            strong_acid_anions={
                key: system.species[-1]
                for key, system in self._systems.items()
                if system.strong_steps == system.n_steps
            },
        )

    def __repr__(self) -> str:
        return (
            f"Catalog({len(self._systems)} systems, {len(self._ions)} ions, "
            f"{len(self._compounds)} compounds)"
        )


# ----------------------------------------------------------------------------- loading


def read_data_file(name: str) -> dict[str, Any]:
    """A packaged ``carboy/model/data`` TOML file, parsed; bad TOML is a CatalogError."""
    data = resources.files(_DATA_PACKAGE) / name
    try:
        return tomllib.loads(data.read_text(encoding="utf-8"))
    except tomllib.TOMLDecodeError as exc:
        raise CatalogError(name, f"not valid TOML: {exc}") from None


def _require(entry: str, record: Mapping[str, Any], field: str) -> Any:
    if field not in record:
        raise CatalogError(entry, f"field {field!r} is missing")
    return record[field]


def _parse_systems(
    data: Mapping[str, Any],
) -> tuple[list[System], list[Ion], dict[str, tuple[StepProvenance, ...]], dict[str, str]]:
    ions = [
        Ion(
            key=_require("ion", rec, "key"),
            name=_require(rec["key"], rec, "name"),
            charge=_require(rec["key"], rec, "charge"),
            source=rec.get("source", ""),
        )
        for rec in data.get("ions", [])
    ]
    systems: list[System] = []
    provenance: dict[str, tuple[StepProvenance, ...]] = {}
    anions: dict[str, str] = {}
    for rec in data.get("systems", []):
        key = _require("system", rec, "key")
        steps = _require(key, rec, "steps")
        systems.append(
            System(
                key=key,
                name=_require(key, rec, "name"),
                species=tuple(_require(key, rec, "species")),
                top_charge=_require(key, rec, "top_charge"),
                pka25=tuple(_require(key, s, "pka") for s in steps),
                dh_kj=tuple(float(_require(key, s, "dh_kj")) for s in steps),
                dcp_j=tuple(float(_require(key, s, "dcp_j")) for s in steps),
                strong_steps=rec.get("strong_steps", 0),
                source=_require(key, rec, "choice"),
                notes=rec.get("notes", ""),
            )
        )
        provenance[key] = tuple(
            StepProvenance(
                **{
                    f"{what}_{part}": _require(key, s, f"{what}_{part}")
                    for what in ("pka", "dh", "dcp")
                    for part in ("source", "status")
                }
            )
            for s in steps
        )
        if "anion" in rec:
            anions[key] = rec["anion"]
    return systems, ions, provenance, anions


def _parse_densities(
    data: Mapping[str, Any],
) -> tuple[dict[str, DensityTable], dict[str, tuple[DensityRow, ...]]]:
    tables: dict[str, DensityTable] = {}
    rows_by_key: dict[str, tuple[DensityRow, ...]] = {}
    for key, rec in data.get("tables", {}).items():
        rows = []
        for row in _require(key, rec, "rows"):
            if len(row) != 4:
                raise CatalogError(
                    key, f"density row {row!r} is not [mass %, g/mL, status, source]"
                )
            w, rho, status, source = row
            _check_status(key, f"density row {w} %", status, source)
            rows.append(DensityRow(float(w), float(rho), status, source))
        rows_by_key[key] = tuple(rows)
        tables[key] = DensityTable(
            mass_percent=tuple(r.mass_percent for r in rows),
            density_g_ml=tuple(r.density_g_ml for r in rows),
            temperature_c=float(_require(key, rec, "temperature_c")),
            source=_require(key, rec, "source"),
        )
    return tables, rows_by_key


_BUILTIN_COMPOUND_SOURCE = (
    "carboy built-in catalog; molar mass computed with molmass; hazard tags from the GHS "
    "classification as commonly given, from memory"
)


def _parse_compounds(
    data: Mapping[str, Any], tables: Mapping[str, DensityTable]
) -> tuple[list[Compound], dict[str, tuple[str, ...]], dict[str, str]]:
    """Compounds, their alternative formula spellings, and compound key -> density table."""
    compounds: list[Compound] = []
    alt: dict[str, tuple[str, ...]] = {}
    density_keys: dict[str, str] = {}
    for rec in data.get("compounds", []):
        key = _require("compound", rec, "key")
        formula = _require(key, rec, "formula")
        density_key = rec.get("density")
        density = None
        if density_key is not None:
            if density_key not in tables:
                raise CatalogError(key, f"density table {density_key!r} is not in densities.toml")
            density = tables[density_key]
            density_keys[key] = density_key
        compounds.append(
            Compound(
                key=key,
                formula=formula,
                name=_require(key, rec, "name"),
                aliases=tuple(rec.get("aliases", ())),
                composition=dict(_require(key, rec, "composition")),
                molar_mass_g_mol=molar_mass_of(formula, entry=key),
                hazards=frozenset(rec.get("hazards", ())),
                form=rec.get("form", "solid"),
                density=density,
                source=rec.get("source", _BUILTIN_COMPOUND_SOURCE),
            )
        )
        alt[key] = tuple(rec.get("formulas", ()))
    unused = set(tables) - set(density_keys.values())
    if unused:
        raise CatalogError(sorted(unused)[0], "density table is not used by any compound")
    return compounds, alt, density_keys


def load_builtin() -> Catalog:
    """Read and validate the packaged catalog (uncached; see :func:`default_catalog`)."""
    systems, ions, provenance, anions = _parse_systems(read_data_file("systems.toml"))
    tables, rows = _parse_densities(read_data_file("densities.toml"))
    compound_data = read_data_file("compounds.toml")
    compounds, alt, density_keys = _parse_compounds(compound_data, tables)
    return Catalog(
        systems=systems,
        ions=ions,
        compounds=compounds,
        hazard_tags=_require("compounds.toml", compound_data, "hazard_tags"),
        provenance=provenance,
        density_rows={key: rows[table] for key, table in density_keys.items()},
        alt_formulas=alt,
        strong_acid_anions=anions,
    )


@functools.lru_cache(maxsize=1)
def default_catalog() -> Catalog:
    """The packaged catalog, loaded and validated once per process."""
    return load_builtin()


# ----------------------------------------------------------------------------- densities


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
    if not _is_number(mass_percent) or not math.isfinite(mass_percent):
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


# ----------------------------------------------------------------------------- user entries


def _default_species(key: str, n_steps: int, top_charge: int) -> tuple[str, ...]:
    labels = []
    for j in range(n_steps + 1):
        protons = n_steps - j
        prefix = "" if protons == 0 else ("H" if protons == 1 else f"H{protons}")
        charge = top_charge - j
        suffix = "" if charge == 0 else ("+" if charge > 0 else "-")
        if abs(charge) > 1:
            suffix += str(abs(charge))
        labels.append(f"{prefix}{key}{suffix}")
    return tuple(labels)


def make_user_compound(
    key: str,
    name: str,
    formula: str,
    pka: Sequence[float] = (),
    top_charge: int = 0,
    *,
    source: str,
    dh_kj: Sequence[float] | None = None,
    dcp_j: Sequence[float] | None = None,
    counter_ions: Mapping[str, int] | None = None,
    hydroxide: int = 0,
    species: Sequence[str] | None = None,
    strong_steps: int = 0,
    aliases: Sequence[str] = (),
    hazards: Sequence[str] = (),
    form: str = "solid",
    catalog: Catalog | None = None,
) -> tuple[System | None, Compound]:
    """Build and validate a user-defined system and compound from plain fields.

    Signature::

        make_user_compound(key, name, formula, pka=(), top_charge=0, *, source,
                           dh_kj=None, dcp_j=None, counter_ions=None, hydroxide=0,
                           species=None, strong_steps=0, aliases=(), hazards=(),
                           form="solid", catalog=None) -> (System | None, Compound)

    Parameters
    ----------
    key
        Compound key (its label formula or short name, e.g. ``"MES"``); also the key of
        the new system when ``pka`` is given.
    name
        Display name; ``aliases`` are further names for lookup.
    formula
        A formula molmass reads (explicit elements); the molar mass is computed from it.
    pka
        pKa ladder at 25 °C, I = 0, strictly ascending.  Empty for a salt of systems and
        ions already in the catalog (then no system is made and ``System`` is None).
    top_charge
        Charge of the fully protonated form (0 for a neutral acid, +1 for an amine).
    source
        Where the constants come from (required; stored with the system and compound).
    dh_kj, dcp_j
        Per-step ionization enthalpy (kJ/mol) and heat-capacity change (J/K/mol);
        default all 0 (temperature dependence neglected).
    counter_ions
        Other components per formula unit, e.g. ``{"Na+": 1}`` for a sodium salt; keys
        must be ions or systems of the catalog.
    hydroxide
        Hydroxide ions per formula unit (for a metal hydroxide base).
    species
        Species labels, most protonated first; default ``H2X``, ``HX-``, ``X-2`` style.
    catalog
        The catalog the entry must fit (default: :func:`default_catalog`).

    Returns
    -------
    (System | None, Compound)
        Ready for ``catalog.with_user(systems=[system], compounds=[compound])``.

    Raises
    ------
    CatalogError
        Naming the entry and the inconsistency: species count, pKa order, non-finite
        numbers, unknown component keys, unreadable formula, key collision, or a
        composition no protonation state makes neutral.
    """
    base = catalog or default_catalog()
    if not isinstance(source, str) or not source.strip():
        raise CatalogError(str(key), "a user entry needs a source for its constants")
    if not isinstance(key, str) or not key.strip():
        raise CatalogError(repr(key), "key must be a non-empty string")
    key = key.strip()
    if key in base.compounds:
        raise CatalogError(key, "a compound with this key already exists")
    composition: dict[str, int] = dict(counter_ions or {})
    system: System | None = None
    pka_values = tuple(pka)
    if pka_values:
        if key in base.systems or key in base.ions:
            raise CatalogError(key, "a system or ion with this key already exists")
        n = len(pka_values)
        system = System(
            key=key,
            name=name,
            species=tuple(species) if species is not None else _default_species(key, n, top_charge),
            top_charge=top_charge,
            pka25=pka_values,
            dh_kj=tuple(dh_kj) if dh_kj is not None else (0.0,) * n,
            dcp_j=tuple(dcp_j) if dcp_j is not None else (0.0,) * n,
            strong_steps=strong_steps,
            source=source,
        )
        _check_system(system)
        if key in composition:
            raise CatalogError(key, "counter_ions must not repeat the new system")
        composition[key] = 1
    if not _is_int(hydroxide) or hydroxide < 0:
        raise CatalogError(key, f"hydroxide count {hydroxide!r} is not a non-negative integer")
    mass = molar_mass_of(formula, entry=key)
    compound = Compound(
        key=key,
        formula=formula,
        name=name,
        aliases=tuple(aliases),
        composition=composition,
        molar_mass_g_mol=mass,
        hazards=frozenset(hazards),
        form=form,
        source=source,
        user_defined=True,
    )
    trial = base.with_user(systems=[system] if system else [], compounds=[compound])
    low = high = -hydroxide
    for part, count in composition.items():
        found = trial.component(part)
        if isinstance(found, Ion):
            low += count * found.charge
            high += count * found.charge
        else:
            low += count * found.bottom_charge
            high += count * found.top_charge
    if not low <= 0 <= high:
        raise CatalogError(
            key,
            f"composition {composition!r} cannot be neutral (charge between {low:+d} and "
            f"{high:+d}); check counter_ions and top_charge",
        )
    return system, trial.compounds[key]
