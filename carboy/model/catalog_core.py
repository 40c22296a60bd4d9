"""The :class:`Catalog`: an immutable, validated set of systems, ions and compounds, with lookup.

A catalog is built from plain records (:mod:`carboy.model.entities`): the packaged data
(:mod:`carboy.model.catalog_files`) or those plus a user's entries (:meth:`Catalog.with_user`).
The constructor checks every entry by the rules of :mod:`carboy.model.catalog_rules`.

Lookup rules (:meth:`Catalog.compound`)
---------------------------------------
* Formulas and keys match exactly and case-sensitively: ``NaOH`` is sodium hydroxide,
  ``naoh`` is not a formula.
* Names and aliases are forgiving: case, runs of spaces, hyphens against spaces and a
  trailing ``" acid"`` are ignored, so ``"Acetic Acid"``, ``"acetic"`` and
  ``"glacial acetic acid"`` all find CH3COOH.
* Anything else raises :class:`~carboy.errors.UnknownCompound` with up to three close
  matches.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, replace
from types import MappingProxyType
from typing import Any

from carboy.errors import CatalogError, InvalidInput, UnknownCompound
from carboy.model.catalog_rules import (
    StepProvenance,
    check_compound,
    check_ion,
    check_step_provenance,
    check_system,
    molar_mass_of,
)
from carboy.model.entities import Compound, Ion, System
from carboy.model.text import read_label

__all__ = [
    "MAX_SUGGESTIONS",
    "SUGGESTION_CUTOFF",
    "Catalog",
    "Component",
    "DensityRow",
    "normalize_name",
]

MAX_SUGGESTIONS = 3
MAX_NAME = 100
"""Longest compound name or formula looked up (checked before any search)."""
SUGGESTION_CUTOFF = 0.6
"""difflib similarity ratio below which a name is not offered as a suggestion."""

Component = System | Ion


@dataclass(frozen=True, eq=False, repr=False)
class DensityRow:
    """One row of a density table, with its own provenance."""

    mass_percent: float
    density_g_ml: float
    status: str
    source: str


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
        self._systems = MappingProxyType(self._index_components(systems, check_system))
        self._ions = MappingProxyType(self._index_components(ions, check_ion))
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
            check_compound(
                compound, systems=self._systems, ions=self._ions, hazard_tags=self._hazard_tags
            )
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
            check_step_provenance(system, steps)
            out[key] = steps
        return out

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
        import difflib  # only for a name the catalog does not know

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
