"""Primary standards and titrants of ``data/standards.toml``, validated, with lookup.

The file holds the primary standards (KHP, Na2CO3, Tris, sulfamic acid: what they
standardize, protons per formula unit, the assay assumed when none is entered, end point
and drying notes), the titrants (NaOH, KOH, HCl, HNO3, H2SO4) and the defaults of the
acceptance rule and of the plausibility checks.  Every number is a table
``{ value, status, source }`` and every note ``{ text, status, source }`` in the one status
vocabulary of :mod:`carboy.model.provenance`.  A standard or titrant is a compound of the
catalog, and a standard's formula must give the catalog compound's molar mass.

Lookup is forgiving: exact spellings first (``"KHC8H4O4"``, ``"KHP"``), then case,
spacing, hyphens and a trailing ``" acid"`` are ignored (``"khp"``, ``"sulfamic"``).
"""

from __future__ import annotations

import functools
import math
from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Any

from carboy.errors import CatalogError, InvalidInput
from carboy.model.catalog_core import normalize_name
from carboy.model.catalog_files import default_catalog
from carboy.model.catalog_rules import molar_mass_of
from carboy.model.datafiles import Table, read_data_file
from carboy.model.provenance import Provenance

__all__ = [
    "KINDS",
    "RULE_DEFAULTS",
    "STANDARDS_FILE",
    "Note",
    "PrimaryStandard",
    "StandardsData",
    "Titrant",
    "parse_standards",
    "primary_standard",
    "primary_standards",
    "resolve_pair",
    "standards_data",
    "titrant",
    "titrants",
]

STANDARDS_FILE = "standards.toml"
KINDS = ("acid", "base")

RULE_DEFAULTS: Mapping[str, float] = MappingProxyType({
    "max_rsd_percent": 0.2,
    "min_replicates": 3,
    "alpha": 0.05,
    "nominal_tolerance_percent": 10.0,
    "warn_rsd_percent": 0.5,
})
"""Defaults of the acceptance rule; ``standards.toml [acceptance]`` must hold the same."""


# ----------------------------------------------------------------------------- records


@dataclass(frozen=True)
class Note:
    """A handling, end-point or caution note with its source."""

    text: str
    status: str
    source: str

    def __str__(self) -> str:
        return self.text

    def cited(self) -> str:
        """The text followed by its source in parentheses."""
        return f"{self.text} ({self.source})"

    def to_dict(self) -> dict[str, str]:
        return {"text": self.text, "status": self.status, "source": self.source}


@dataclass(frozen=True)
class PrimaryStandard:
    """A primary standard for acid–base standardization.

    ``reacts_with`` is the kind of titrant it standardizes: ``"base"`` for an acid
    standard (KHP, sulfamic acid), ``"acid"`` for a basic one (Na2CO3, Tris).
    ``equivalents`` counts protons given or taken per formula unit at the end point.
    ``assay_percent`` is the purity assumed when none is entered.  ``drying`` holds the
    drying and handling notes; ``source``/``status`` document its use as a standard;
    ``provenance`` gives the source of each number.
    """

    key: str
    name: str
    formula: str
    compound_key: str
    molar_mass_g_mol: float
    reacts_with: str
    equivalents: int
    assay_percent: float
    drying: tuple[Note, ...]
    end_point: Note
    source: str
    status: str
    short: str = ""
    aliases: tuple[str, ...] = ()
    formulas: tuple[str, ...] = ()
    min_sample_g: float | None = None
    provenance: Mapping[str, Provenance] = field(
        default_factory=lambda: MappingProxyType({}), compare=False, hash=False
    )

    @property
    def label(self) -> str:
        """The name on the bench (``KHP``), falling back to the key."""
        return self.short or self.key

    @property
    def nature(self) -> str:
        """What the standard itself is: ``"acid"`` (titrates a base) or ``"base"``."""
        return "acid" if self.reacts_with == "base" else "base"

    def to_dict(self) -> dict[str, Any]:
        return {
            "key": self.key,
            "short": self.short,
            "name": self.name,
            "formula": self.formula,
            "compound_key": self.compound_key,
            "molar_mass_g_mol": self.molar_mass_g_mol,
            "reacts_with": self.reacts_with,
            "equivalents": self.equivalents,
            "assay_percent": self.assay_percent,
            "min_sample_g": self.min_sample_g,
            "drying": [n.to_dict() for n in self.drying],
            "end_point": self.end_point.to_dict(),
            "source": self.source,
            "status": self.status,
        }


@dataclass(frozen=True)
class Titrant:
    """A titrant solution to be standardized: ``kind`` ``"acid"`` or ``"base"``.

    ``equivalents`` is H+ (acid) or OH- (base) per formula unit at the end point.
    """

    key: str
    name: str
    kind: str
    equivalents: int
    aliases: tuple[str, ...] = ()
    notes: tuple[Note, ...] = ()
    provenance: Mapping[str, Provenance] = field(
        default_factory=lambda: MappingProxyType({}), compare=False, hash=False
    )

    def to_dict(self) -> dict[str, Any]:
        return {
            "key": self.key,
            "name": self.name,
            "kind": self.kind,
            "equivalents": self.equivalents,
            "notes": [n.to_dict() for n in self.notes],
        }


@dataclass(frozen=True)
class StandardsData:
    """The validated contents of ``standards.toml`` and its lookup indexes."""

    standards: Mapping[str, PrimaryStandard]
    titrants: Mapping[str, Titrant]
    acceptance: Mapping[str, Provenance]
    acceptance_values: Mapping[str, float]
    checks: Mapping[str, Any]
    standard_index: Mapping[str, str]
    standard_folded: Mapping[str, str]
    titrant_index: Mapping[str, str]
    titrant_folded: Mapping[str, str]


# ----------------------------------------------------------------------------- parsing


def _note(rec: Table) -> Note:
    prov = rec.provenance()
    return Note(text=rec.text("text"), status=prov.status, source=prov.source)


def _count(rec: Table) -> tuple[int, Provenance]:
    prov = rec.provenance()
    return rec.integer("value", low=1), prov


def _positive(rec: Table) -> tuple[float, Provenance]:
    prov = rec.provenance()
    return rec.number("value", positive=True), prov


def _parse_standard(rec: Table, max_purity: float) -> PrimaryStandard:
    key = rec.text("key")
    compound = default_catalog().compounds.get(key)
    if compound is None:
        raise rec.fail("key", f"{key!r} is not a compound of compounds.toml")
    formula = rec.text("formula")
    mass = molar_mass_of(formula, entry=rec.where)
    if not math.isclose(mass, compound.molar_mass_g_mol, rel_tol=1e-12):
        raise rec.fail("formula", f"{formula!r} does not match the catalog's {compound.formula!r}")
    reacts_with = rec.raw("reacts_with")
    if reacts_with not in KINDS:
        raise rec.fail("reacts_with", f"{reacts_with!r} must be 'acid' or 'base'")
    equivalents, eq_prov = _count(rec.table("equivalents"))
    assay, assay_prov = _positive(rec.table("assay_percent"))
    if assay > max_purity:
        raise rec.fail("assay_percent", f"{assay!r} exceeds {max_purity:g}")
    provenance = {"equivalents": eq_prov, "assay_percent": assay_prov}
    min_sample = None
    if rec.has("min_sample_g"):
        min_sample, provenance["min_sample_g"] = _positive(rec.table("min_sample_g"))
    handling = tuple(_note(note) for note in rec.tables(
        "handling", name=lambda i, _d: f"{key} handling note {i + 1}"))
    if not handling:
        raise rec.fail("handling", "a standard needs at least one drying or handling note")
    own = rec.provenance("standard")
    return PrimaryStandard(
        key=key, name=rec.text("name", compound.name), formula=formula,
        compound_key=compound.key, molar_mass_g_mol=mass, reacts_with=reacts_with,
        equivalents=equivalents, assay_percent=assay, drying=handling,
        end_point=_note(rec.table("end_point")), source=own.source, status=own.status,
        short=rec.text("short", ""), aliases=rec.texts("aliases", ()),
        formulas=rec.texts("formulas", ()), min_sample_g=min_sample,
        provenance=MappingProxyType(provenance),
    )


def _parse_titrant(rec: Table) -> Titrant:
    key = rec.text("key")
    if key not in default_catalog().compounds:
        raise rec.fail("key", f"{key!r} is not a compound of compounds.toml")
    kind = rec.raw("kind")
    if kind not in KINDS:
        raise rec.fail("kind", f"{kind!r} must be 'acid' or 'base'")
    equivalents, prov = _count(rec.table("equivalents"))
    notes = tuple(_note(n) for n in rec.tables("notes", name=lambda i, _d: f"{key} note {i + 1}"))
    return Titrant(
        key=key, name=rec.text("name", key), kind=kind, equivalents=equivalents,
        aliases=rec.texts("aliases", ()), notes=notes,
        provenance=MappingProxyType({"equivalents": prov}),
    )


def _parse_checks(doc: Table) -> dict[str, Any]:
    checks_doc = doc.table("checks", "[checks]")
    checks: dict[str, Any] = {}
    for name in ("min_net_volume_ml", "min_purity_percent", "max_purity_percent"):
        checks[name] = _positive(checks_doc.table(name, f"[checks.{name}]"))[0]
    band = checks_doc.table("plausible_molar", "[checks.plausible_molar]")
    band.provenance()
    low_high = band.numbers("value", ascending=True, positive=True)
    if len(low_high) != 2:
        raise band.fail("value", f"{list(low_high)!r} must be [low, high]")
    checks["plausible_molar"] = low_high
    return checks


def _parse_acceptance(doc: Table) -> tuple[dict[str, Provenance], dict[str, float]]:
    acc_doc = doc.table("acceptance", "[acceptance]")
    acceptance: dict[str, Provenance] = {}
    values: dict[str, float] = {}
    for name, default in RULE_DEFAULTS.items():
        rec = acc_doc.table(name, f"[acceptance.{name}]")
        values[name], acceptance[name] = _positive(rec)
        if values[name] != default:
            raise rec.fail("value", f"{values[name]!r} differs from AcceptanceRule's {default!r}")
    return acceptance, values


def _index(entries: Mapping[str, Any], names_of: Callable[[Any], Iterable[str]]
           ) -> tuple[dict[str, str], dict[str, str]]:
    exact: dict[str, str] = {}
    folded: dict[str, str] = {}
    for key, entry in entries.items():
        for name in names_of(entry):
            for table, label in ((exact, name), (folded, normalize_name(name))):
                other = table.get(label)
                if other is not None and other != key:
                    raise CatalogError(f"{STANDARDS_FILE}: {key}",
                                       f"name {name!r} also names {other!r}")
                table[label] = key
    return exact, folded


def _unique(records: Iterable[Any], what: str) -> dict[str, Any]:
    out: dict[str, Any] = {}
    for record in records:
        if record.key in out:
            raise CatalogError(f"{STANDARDS_FILE}: {record.key}", f"{what} is defined twice")
        out[record.key] = record
    return out


def parse_standards(raw: Mapping[str, Any]) -> StandardsData:
    """Validate the contents of ``standards.toml`` (as read by tomllib).

    Raises
    ------
    CatalogError
        Naming ``standards.toml``, the entry and the field of the first inconsistency.
    """
    doc = Table(STANDARDS_FILE, "(top level)", raw)
    checks = _parse_checks(doc)
    standards = _unique((_parse_standard(rec, checks["max_purity_percent"])
                         for rec in doc.tables("standards")), "standard")
    titrant_map = _unique((_parse_titrant(rec) for rec in doc.tables("titrants")), "titrant")
    for kind in KINDS:
        if not any(s.reacts_with == kind for s in standards.values()):
            raise CatalogError(STANDARDS_FILE, f"no standard for a titrant of kind {kind!r}")
    acceptance, values = _parse_acceptance(doc)
    s_exact, s_folded = _index(
        standards, lambda s: (s.key, s.short, s.name, s.formula, *s.aliases, *s.formulas)
    )
    t_exact, t_folded = _index(titrant_map, lambda t: (t.key, t.name, *t.aliases))
    return StandardsData(
        standards=MappingProxyType(standards),
        titrants=MappingProxyType(titrant_map),
        acceptance=MappingProxyType(acceptance),
        acceptance_values=MappingProxyType(values),
        checks=MappingProxyType(checks),
        standard_index=MappingProxyType(s_exact),
        standard_folded=MappingProxyType(s_folded),
        titrant_index=MappingProxyType(t_exact),
        titrant_folded=MappingProxyType(t_folded),
    )


@functools.lru_cache(maxsize=1)
def standards_data() -> StandardsData:
    """The packaged ``standards.toml``, read and validated once per process."""
    return parse_standards(read_data_file(STANDARDS_FILE))


# ----------------------------------------------------------------------------- lookup


def primary_standards() -> Mapping[str, PrimaryStandard]:
    """Every packaged primary standard, by key (the catalog compound key)."""
    return standards_data().standards


def titrants() -> Mapping[str, Titrant]:
    """Every titrant carboy standardizes, by key (its formula)."""
    return standards_data().titrants


def _find(name: object, entries: Mapping[str, Any], exact: Mapping[str, str],
          folded: Mapping[str, str]) -> Any:
    """An entry by its exact spelling first, then by its forgiving (folded) one."""
    if not isinstance(name, str) or not name.strip():
        return None
    text = name.strip()
    key = exact.get(text) or folded.get(normalize_name(text))
    return entries[key] if key is not None else None


def primary_standard(name: str) -> PrimaryStandard:
    """Find a primary standard by key, short name, name, alias or formula.

    Exact spellings match first (``"KHC8H4O4"``, ``"KHP"``); then case, spacing,
    hyphens and a trailing ``" acid"`` are forgiven (``"khp"``, ``"Sodium carbonate"``,
    ``"sulfamic"``, ``"THAM"``).

    Raises
    ------
    InvalidInput
        For an unknown name, listing the known standards.
    """
    data = standards_data()
    if isinstance(name, PrimaryStandard):
        return name
    found = _find(name, data.standards, data.standard_index, data.standard_folded)
    if found is not None:
        return found
    known = ", ".join(s.label if s.label == s.name else f"{s.label} ({s.name})"
                      for s in data.standards.values())
    raise InvalidInput("primary standard", name, f"is not known; known standards: {known}")


def titrant(name: str) -> Titrant:
    """Find a titrant by formula, name or alias (``"NaOH"``, ``"naoh"``, ``"sodium hydroxide"``).

    Raises
    ------
    InvalidInput
        For an unknown name, listing the known titrants.
    """
    data = standards_data()
    if isinstance(name, Titrant):
        return name
    found = _find(name, data.titrants, data.titrant_index, data.titrant_folded)
    if found is not None:
        return found
    known = ", ".join(f"{t.key} ({t.name})" for t in data.titrants.values())
    raise InvalidInput("titrant", name, f"is not known; known titrants: {known}")


def resolve_pair(
    titrant_in: str | Titrant, standard_in: str | PrimaryStandard
) -> tuple[Titrant, PrimaryStandard]:
    """The titrant and standard named, refusing a standard that cannot titrate the titrant."""
    tit = titrant_in if isinstance(titrant_in, Titrant) else titrant(titrant_in)
    std = standard_in if isinstance(standard_in, PrimaryStandard) else primary_standard(standard_in)
    if std.reacts_with != tit.kind:
        suited = " or ".join(
            s.label for s in primary_standards().values() if s.reacts_with == tit.kind
        )
        fits = ", ".join(t.key for t in titrants().values() if t.kind == std.reacts_with)
        article = "an" if std.nature == "acid" else "a"
        raise InvalidInput(
            "primary standard",
            std.label,
            f"is {article} {std.nature} standard: it standardizes {std.reacts_with}s "
            f"({fits}), not the {tit.kind} {tit.key}; for {tit.key} use {suited}",
        )
    return tit, std
