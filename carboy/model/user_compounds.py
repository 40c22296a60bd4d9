"""User-defined compounds: a system and a compound built from plain fields and validated.

The store keeps a user's compounds as plain fields; :func:`make_user_compound` turns them
into catalog records that pass the same rules as the packaged entries
(:mod:`carboy.model.catalog_rules`), with the user's source and the status USER.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

from carboy.errors import CatalogError
from carboy.model.catalog_core import Catalog
from carboy.model.catalog_files import default_catalog
from carboy.model.catalog_rules import check_system, is_int, molar_mass_of
from carboy.model.entities import Compound, Ion, System

__all__ = ["default_species", "make_user_compound"]


def default_species(key: str, n_steps: int, top_charge: int) -> tuple[str, ...]:
    """Species labels ``H2X``, ``HX-``, ``X-2`` style for a ladder of ``n_steps``."""
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


def _checked_key(key: object, source: object, base: Catalog) -> str:
    if not isinstance(source, str) or not source.strip():
        raise CatalogError(str(key), "a user entry needs a source for its constants")
    if not isinstance(key, str) or not key.strip():
        raise CatalogError(repr(key), "key must be a non-empty string")
    key = key.strip()
    if key in base.compounds:
        raise CatalogError(key, "a compound with this key already exists")
    return key


def _user_system(
    key: str, name: str, pka: tuple[float, ...], top_charge: int, *, source: str,
    dh_kj: Sequence[float] | None, dcp_j: Sequence[float] | None,
    species: Sequence[str] | None, strong_steps: int, base: Catalog,
) -> System:
    if key in base.systems or key in base.ions:
        raise CatalogError(key, "a system or ion with this key already exists")
    n = len(pka)
    system = System(
        key=key,
        name=name,
        species=tuple(species) if species is not None else default_species(key, n, top_charge),
        top_charge=top_charge,
        pka25=pka,
        dh_kj=tuple(dh_kj) if dh_kj is not None else (0.0,) * n,
        dcp_j=tuple(dcp_j) if dcp_j is not None else (0.0,) * n,
        strong_steps=strong_steps,
        source=source,
    )
    check_system(system)
    return system


def _check_neutral(key: str, trial: Catalog, composition: Mapping[str, int],
                   hydroxide: int) -> None:
    """Some protonation state must make one formula unit neutral."""
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
            f"composition {dict(composition)!r} cannot be neutral (charge between {low:+d} and "
            f"{high:+d}); check counter_ions and top_charge",
        )


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

    Parameters
    ----------
    key, name, formula
        Compound key (label formula or short name, e.g. ``"MES"``; also the new system's
        key when ``pka`` is given), display name (``aliases`` are more names for lookup),
        and a formula molmass reads (explicit elements; the molar mass is computed).
    pka, top_charge
        pKa ladder at 25 °C, I = 0, strictly ascending (empty for a salt of systems and
        ions already in the catalog: then no system is made), and the charge of the fully
        protonated form (0 for a neutral acid, +1 for an amine).
    source
        Where the constants come from (required; stored with the system and compound).
    dh_kj, dcp_j
        Per-step ionization enthalpy (kJ/mol) and heat-capacity change (J/K/mol);
        default all 0 (temperature dependence neglected).
    counter_ions, hydroxide
        Other components per formula unit (``{"Na+": 1}`` for a sodium salt; keys are
        ions or systems of the catalog) and hydroxide ions per formula unit (a base).
    species
        Species labels, most protonated first; default ``H2X``, ``HX-``, ``X-2`` style.
    catalog
        The catalog the entry must fit (default: the packaged catalog).

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
    key = _checked_key(key, source, base)
    composition: dict[str, int] = dict(counter_ions or {})
    system: System | None = None
    if tuple(pka):
        system = _user_system(key, name, tuple(pka), top_charge, source=source, dh_kj=dh_kj,
                              dcp_j=dcp_j, species=species, strong_steps=strong_steps, base=base)
        if key in composition:
            raise CatalogError(key, "counter_ions must not repeat the new system")
        composition[key] = 1
    if not is_int(hydroxide) or hydroxide < 0:
        raise CatalogError(key, f"hydroxide count {hydroxide!r} is not a non-negative integer")
    compound = Compound(
        key=key, formula=formula, name=name, aliases=tuple(aliases), composition=composition,
        molar_mass_g_mol=molar_mass_of(formula, entry=key), hazards=frozenset(hazards),
        form=form, source=source, user_defined=True,
    )
    trial = base.with_user(systems=[system] if system else [], compounds=[compound])
    _check_neutral(key, trial, composition, hydroxide)
    return system, trial.compounds[key]
