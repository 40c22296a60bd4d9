"""The packaged catalog: ``systems.toml``, ``compounds.toml`` and ``densities.toml`` read into
a :class:`~carboy.model.catalog_core.Catalog`.

Each file is read through :class:`~carboy.model.datafiles.Table`, so a missing or malformed
field is a :class:`~carboy.errors.CatalogError` naming the file, the entry and the field;
every status and source goes through the one provenance check.  The catalog's own rules
(ascending pKa, charges, compositions ...) are then applied by the ``Catalog``
constructor, and an entry that breaks one is reported with the file it came from.
"""

from __future__ import annotations

import functools
from collections.abc import Mapping

from carboy.errors import CatalogError
from carboy.model.catalog_core import Catalog, DensityRow
from carboy.model.catalog_rules import StepProvenance, is_number, molar_mass_of
from carboy.model.datafiles import Table
from carboy.model.entities import Compound, DensityTable, Ion, System
from carboy.model.provenance import Provenance, check_provenance

__all__ = ["default_catalog", "load_builtin"]

SYSTEMS_FILE = "systems.toml"
COMPOUNDS_FILE = "compounds.toml"
DENSITIES_FILE = "densities.toml"


def _parse_ions(doc: Table) -> list[Ion]:
    ions = []
    for rec in doc.tables("ions"):
        prov = rec.provenance("charge")
        ions.append(
            Ion(key=rec.text("key"), name=rec.text("name"), charge=rec.integer("charge"),
                source=prov.source)
        )
    return ions


def _parse_step(step: Table) -> tuple[float, float, float, StepProvenance]:
    """pKa, ΔH (kJ/mol), ΔCp (J/K/mol) of one step, and where each comes from."""
    fields: dict[str, str] = {}
    for what in ("pka", "dh", "dcp"):
        prov = step.provenance(what, status=f"{what}_status", source=f"{what}_source")
        fields[f"{what}_source"], fields[f"{what}_status"] = prov.source, prov.status
    return (step.number("pka"), step.number("dh_kj"), step.number("dcp_j"),
            StepProvenance(**fields))


def _parse_systems(
    doc: Table,
) -> tuple[list[System], dict[str, tuple[StepProvenance, ...]], dict[str, str]]:
    """Systems, the provenance of each of their steps, and system key -> anion."""
    systems: list[System] = []
    provenance: dict[str, tuple[StepProvenance, ...]] = {}
    anions: dict[str, str] = {}
    for rec in doc.tables("systems"):
        key = rec.text("key")
        steps = [
            _parse_step(step)
            for step in rec.tables("steps", name=lambda i, _data, key=key: f"{key} step {i + 1}")
        ]
        if not steps:
            raise rec.fail("steps", "must hold at least one [[systems.steps]] table")
        systems.append(
            System(
                key=key,
                name=rec.text("name"),
                species=rec.texts("species"),
                top_charge=rec.integer("top_charge"),
                pka25=tuple(s[0] for s in steps),
                dh_kj=tuple(s[1] for s in steps),
                dcp_j=tuple(s[2] for s in steps),
                strong_steps=rec.integer("strong_steps", 0),
                source=rec.text("choice"),
                notes=rec.text("notes", ""),
            )
        )
        provenance[key] = tuple(s[3] for s in steps)
        if rec.has("anion"):
            anions[key] = rec.text("anion")
    return systems, provenance, anions


def _density_row(rec: Table, row: object) -> DensityRow:
    if not isinstance(row, list) or len(row) != 4:
        raise rec.fail("rows", f"row {row!r} is not [mass %, g/mL, status, source]")
    w, rho, status, source = row
    if not is_number(w) or not is_number(rho):
        raise rec.fail("rows", f"row {row!r} must start with two numbers (mass %, g/mL)")
    prov = check_provenance(rec.where, f"density row {w} %", status, source)
    return DensityRow(float(w), float(rho), prov.status, prov.source)


def _parse_densities(
    doc: Table,
) -> tuple[dict[str, DensityTable], dict[str, tuple[DensityRow, ...]]]:
    tables: dict[str, DensityTable] = {}
    rows_by_key: dict[str, tuple[DensityRow, ...]] = {}
    for key, rec in doc.keyed("tables"):
        raw_rows = rec.raw("rows")
        if not isinstance(raw_rows, list) or not raw_rows:
            raise rec.fail("rows", "must be a non-empty list of [mass %, g/mL, status, source]")
        rows = tuple(_density_row(rec, row) for row in raw_rows)
        rows_by_key[key] = rows
        tables[key] = DensityTable(
            mass_percent=tuple(r.mass_percent for r in rows),
            density_g_ml=tuple(r.density_g_ml for r in rows),
            temperature_c=rec.number("temperature_c"),
            source=rec.text("source"),
        )
    return tables, rows_by_key


def _parse_compound(
    rec: Table, tables: Mapping[str, DensityTable], default: Provenance
) -> Compound:
    key = rec.text("key")
    formula = rec.text("formula")
    density = None
    if rec.has("density"):
        density_key = rec.text("density")
        if density_key != key:
            raise rec.fail("density", f"{density_key!r}: a density table is keyed by the "
                           f"compound key {key!r}")
        if density_key not in tables:
            raise rec.fail("density", f"{density_key!r} is not a table of {DENSITIES_FILE}")
        density = tables[density_key]
    has_own = rec.has("status") or rec.has("source")
    prov = rec.provenance() if has_own else default
    return Compound(
        key=key,
        formula=formula,
        name=rec.text("name"),
        aliases=rec.texts("aliases", ()),
        composition=dict(rec.table("composition").data),
        molar_mass_g_mol=molar_mass_of(formula, entry=rec.where),
        hazards=frozenset(rec.texts("hazards", ())),
        form=rec.text("form", "solid"),
        density=density,
        source=prov.source,
    )


def _parse_compounds(
    doc: Table, tables: Mapping[str, DensityTable]
) -> tuple[list[Compound], dict[str, tuple[str, ...]]]:
    """Compounds and their alternative formula spellings."""
    default = doc.table("defaults", "[defaults]").provenance()
    compounds: list[Compound] = []
    alt: dict[str, tuple[str, ...]] = {}
    for rec in doc.tables("compounds"):
        compound = _parse_compound(rec, tables, default)
        compounds.append(compound)
        alt[compound.key] = rec.texts("formulas", ())
    unused = set(tables) - {c.key for c in compounds if c.density is not None}
    if unused:
        raise CatalogError(f"{DENSITIES_FILE}: {sorted(unused)[0]}",
                           "density table is not used by any compound")
    return compounds, alt


def _hazard_tags(doc: Table) -> dict[str, str]:
    tags = doc.table("hazard_tags", "[hazard_tags]")
    return {tag: tags.text(tag) for tag in tags.data}


def load_builtin() -> Catalog:
    """Read and validate the packaged catalog (uncached; see :func:`default_catalog`).

    Raises
    ------
    CatalogError
        Naming the file, the entry and the field or rule that is broken.
    """
    systems_doc = Table.of_file(SYSTEMS_FILE)
    systems, provenance, anions = _parse_systems(systems_doc)
    ions = _parse_ions(systems_doc)
    tables, rows = _parse_densities(Table.of_file(DENSITIES_FILE))
    compound_doc = Table.of_file(COMPOUNDS_FILE)
    compounds, alt = _parse_compounds(compound_doc, tables)
    origin = {e.key: SYSTEMS_FILE for e in (*systems, *ions)}
    origin.update({c.key: COMPOUNDS_FILE for c in compounds})
    try:
        return Catalog(
            systems=systems,
            ions=ions,
            compounds=compounds,
            hazard_tags=_hazard_tags(compound_doc),
            provenance=provenance,
            density_rows={c.key: rows[c.key] for c in compounds if c.density is not None},
            alt_formulas=alt,
            strong_acid_anions=anions,
        )
    except CatalogError as exc:
        if exc.entry not in origin:
            raise
        raise CatalogError(f"{origin[exc.entry]}: {exc.entry}", exc.reason) from None


@functools.lru_cache(maxsize=1)
def default_catalog() -> Catalog:
    """The packaged catalog, loaded and validated once per process."""
    return load_builtin()
