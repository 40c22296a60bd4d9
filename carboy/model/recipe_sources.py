"""What a recipe draws from: a solution (by % w/w or molarity) or a solid (with its purity).

:func:`parse_source` reads a source as typed (``H2SO4=96%``, ``HCl=12.1M``,
``HF=48% d=1,16``, ``NaOH@98%``, ``CuSO4·5H2O``); :func:`solution_source` and
:func:`solid_source` build one from fields.  A % w/w gives the molarity through the
catalog density table (or a density from the label); a hydrate counts its crystal water
in the molar mass, and a hydrate of a catalog solid that the catalog lacks is built from
its base.  A compound supplied as a liquid or solution is refused as a solid, with the
strength it is usually sold at (``data/handling.toml``) as the example.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from carboy.errors import InvalidInput, UnknownCompound
from carboy.model import quantities
from carboy.model.catalog import Catalog, default_catalog, molar_mass_of
from carboy.model.entities import Compound
from carboy.model.handling import handling
from carboy.model.solutions import Strength, _number, strength_of

__all__ = [
    "BASES",
    "CONCENTRATE_MOLAR",
    "CONCENTRATE_PERCENT",
    "Source",
    "fmt",
    "parse_source",
    "percent_of",
    "positive_number",
    "solid_source",
    "solution_source",
]

BASES = ("label", "measured", "catalog", "prepared")
"""Where a source's strength comes from: the bottle's label, a measurement
(standardization), the catalog, or an earlier step of a serial dilution."""

CONCENTRATE_PERCENT = 10.0
CONCENTRATE_MOLAR = 5.0
"""A solution source at or above either is treated as a concentrate (acid-into-water,
dilute-first practice; Prudent Practices (NRC 2011) §8.D.1: below about 10 %)."""

_HYDRATE = re.compile(r"^(?P<base>[^.]+)\.(?P<n>\d*)H2O$")
_DOTS = str.maketrans({"·": ".", "•": ".", "∙": ".", "⋅": "."})
_DENSITY = re.compile(
    r"^(?P<strength>.+?)(?:\s*;\s*|\s+)(?:d|rho|ρ)\s*=\s*(?P<rho>[0-9]+(?:[.,][0-9]+)?)\s*"
    r"(?:g/mL|g/ml|g/cm3|g/cm³|kg/L|kg/l)?\s*$")
_PURITY = re.compile(r"^(?P<name>.+?)@(?P<purity>[^@]+)$")
_HYDRATE_WORDS = {1: "monohydrate", 2: "dihydrate", 3: "trihydrate", 4: "tetrahydrate",
                  5: "pentahydrate", 6: "hexahydrate", 7: "heptahydrate", 8: "octahydrate",
                  9: "nonahydrate", 10: "decahydrate", 12: "dodecahydrate"}


# ----------------------------------------------------------------------------- sources


@dataclass(frozen=True)
class Source:
    """What a recipe draws from: a solution or a solid.

    ``conc_molar``, ``mass_percent`` and ``density_g_ml`` describe a solution (each may be
    ``None`` when unknown: a molarity without a density table); ``purity_percent`` a solid.
    ``molar_mass_g_mol`` is that of the form weighed (hydrate water included).  ``basis``
    is one of :data:`BASES`.  ``anhydrous`` is the compound a hydrate dissolves as, when
    the catalog holds it.  ``notes`` say how the strength was established.
    """

    compound: Compound
    kind: str
    conc_molar: float | None
    mass_percent: float | None
    density_g_ml: float | None
    purity_percent: float
    label: str
    molar_mass_g_mol: float
    basis: str
    anhydrous: Compound | None = None
    notes: tuple[str, ...] = field(default=())

    @property
    def key(self) -> str:
        return self.compound.key

    @property
    def is_concentrate(self) -> bool:
        """A solution at or above 10 % w/w or 5 mol/L."""
        if self.kind != "solution":
            return False
        return ((self.mass_percent is not None and self.mass_percent >= CONCENTRATE_PERCENT)
                or (self.conc_molar is not None and self.conc_molar >= CONCENTRATE_MOLAR))

    def to_dict(self) -> dict:
        return {
            "compound": self.compound.key,
            "name": self.compound.name,
            "kind": self.kind,
            "conc_molar": self.conc_molar,
            "mass_percent": self.mass_percent,
            "density_g_ml": self.density_g_ml,
            "purity_percent": self.purity_percent,
            "label": self.label,
            "molar_mass_g_mol": self.molar_mass_g_mol,
            "basis": self.basis,
            "notes": list(self.notes),
        }


def _catalog(catalog: Catalog | None) -> Catalog:
    return catalog or default_catalog()


def _lookup(name: str, catalog: Catalog) -> tuple[Compound, tuple[str, ...]]:
    """Find a compound; build a hydrate of a catalog solid when only its base is known."""
    if not isinstance(name, str) or not name.strip():
        raise InvalidInput("compound", name, "expected a formula or name, e.g. NaOH")
    text = name.strip().translate(_DOTS)
    if text in catalog:
        return catalog.compound(text), ()
    m = _HYDRATE.match(text)
    if m is None:
        return catalog.compound(text), ()  # raises UnknownCompound with suggestions
    base_text, count = m.group("base"), int(m.group("n") or "1")
    if base_text not in catalog or count < 1:
        raise UnknownCompound(name.strip(), catalog.suggest(base_text))
    base = catalog.compound(base_text)
    if base.form != "solid":
        raise InvalidInput("compound", name, f"{base.key} is not a solid, so it has no hydrate "
                           "in carboy")
    formula = f"{base.formula}.{count}H2O"
    key = f"{base.key}.{count}H2O"
    word = _HYDRATE_WORDS.get(count, f"{count}-hydrate")
    hydrate = Compound(
        key=key, formula=formula, name=f"{base.name} {word}", aliases=(),
        composition=dict(base.composition), molar_mass_g_mol=molar_mass_of(formula, entry=key),
        hazards=base.hazards, form="solid", density=None,
        source=f"built by carboy: {base.key} with {count} H2O of crystallization; molar mass "
               "from the formula with molmass")
    return hydrate, (f"{key} is not in the catalog: built from {base.key} with {count} H2O "
                     "of crystallization (same hazards as the anhydrous salt)",)


def _anhydrous(compound: Compound, catalog: Catalog) -> Compound | None:
    m = _HYDRATE.match(compound.key)
    if m is None or m.group("base") not in catalog:
        return None
    return catalog.compound(m.group("base"))


def _check_basis(basis: str) -> str:
    if basis not in BASES:
        raise InvalidInput("basis", basis, f"must be one of {', '.join(BASES)}")
    return basis


def fmt(x: float, sig: int = 4) -> str:
    """``x`` to ``sig`` significant figures, trailing zeros dropped (``12.01``)."""
    return f"{x:.{sig}g}"


def solution_source(compound: Compound | str, *, conc_molar: float | None = None,
                    mass_percent: float | None = None, density_g_ml: float | None = None,
                    basis: str = "label", catalog: Catalog | None = None) -> Source:
    """A solution to draw from, by molarity or by %w/w (exactly one).

    A %w/w gives the molarity through the catalog density table (or through
    ``density_g_ml`` when the label states it); a molarity gives the %w/w and density from
    the table where it covers it.  ``basis`` says where the strength comes from.
    """
    cat = _catalog(catalog)
    if isinstance(compound, Compound):
        found, notes = compound, ()
    else:
        found, notes = _lookup(compound, cat)
    _check_basis(basis)
    if (conc_molar is None) == (mass_percent is None):
        raise InvalidInput("source strength",
                           {"conc_molar": conc_molar, "mass_percent": mass_percent},
                           "give either the molarity or the mass percentage, not both or none")
    m = found.molar_mass_g_mol
    if density_g_ml is not None:
        rho = positive_number(density_g_ml, f"density of {found.key}")
        if not 0.5 <= rho <= 3.0:
            raise InvalidInput(f"density of {found.key}", density_g_ml,
                               "an aqueous solution lies between 0.5 and 3 g/mL")
        if mass_percent is not None:
            w = percent_of(mass_percent, found.key)
            c = w * rho * 10.0 / m
        else:
            c = positive_number(conc_molar, f"concentration of {found.key}")
            w = c * m / (10.0 * rho)
            if w > 100.0:
                raise InvalidInput(f"concentration of {found.key}", conc_molar,
                                   f"impossible at a density of {rho:g} g/mL (over 100 % w/w)")
        strength = Strength(c, w, rho, None if w >= 100 else 1000 * w / (m * (100 - w)),
                            False, f"density {rho:g} g/mL as given (label)")
    elif mass_percent is not None:
        w = percent_of(mass_percent, found.key)
        strength = strength_of(found, mass_percent=w, catalog=cat)
    else:
        c = positive_number(conc_molar, f"concentration of {found.key}")
        strength = strength_of(found, conc_molar=c, catalog=cat)
    if mass_percent is not None:
        label = f"{found.key} {fmt(strength.mass_percent)} % w/w"
    else:
        label = f"{found.key} {fmt(strength.conc_molar)} M"
    how = {"label": "strength from the label", "measured": "strength as measured",
           "catalog": "strength from the catalog", "prepared": "made in an earlier step"}[basis]
    desc = [f"{label}: {how}; {fmt(strength.conc_molar)} M"]
    if strength.mass_percent is not None and mass_percent is None:
        desc.append(f"{fmt(strength.mass_percent)} % w/w")
    if strength.density_g_ml is not None:
        desc.append(f"ρ {strength.density_g_ml:.4f} g/mL")
    note = ", ".join(desc) + f" ({strength.note})"
    return Source(compound=found, kind="solution", conc_molar=strength.conc_molar,
                  mass_percent=strength.mass_percent, density_g_ml=strength.density_g_ml,
                  purity_percent=100.0, label=label, molar_mass_g_mol=m, basis=basis,
                  anhydrous=_anhydrous(found, cat), notes=(*notes, note))


def solid_source(compound_or_formula: Compound | str, *, purity_percent: float = 100.0,
                 catalog: Catalog | None = None) -> Source:
    """A solid to weigh out; ``purity_percent`` is its assay (mass % of the named form).

    A hydrate written ``CuSO4·5H2O`` or ``CuSO4.5H2O`` is looked up as such; a hydrate of
    a catalog solid that the catalog lacks (``MgSO4·7H2O``) is built from its base.
    Compounds supplied as liquids or solutions are refused (give their strength).
    """
    cat = _catalog(catalog)
    if isinstance(compound_or_formula, Compound):
        found, notes = compound_or_formula, ()
    else:
        found, notes = _lookup(compound_or_formula, cat)
    if found.form != "solid":
        fact = handling().supplied_strength.get(found.key)
        example = fact.value if fact is not None else "1M"
        raise InvalidInput("source", found.key if isinstance(compound_or_formula, Compound)
                           else compound_or_formula,
                           f"{found.key} is supplied as a {found.form}, not a solid: give its "
                           f"strength, e.g. {found.key}={example}")
    purity = _number(purity_percent, f"purity of {found.key}")
    if not 0.0 < purity <= 100.0:
        raise InvalidInput(f"purity of {found.key}", purity_percent,
                           "must be above 0 and at most 100 %")
    label = f"{found.key} (solid)" if purity == 100.0 else \
        f"{found.key} (solid, {purity:g} % purity)"
    note = (f"{found.key}: molar mass {found.molar_mass_g_mol:.3f} g/mol from the formula "
            f"{found.formula} (molmass, IUPAC atomic weights)")
    return Source(compound=found, kind="solid", conc_molar=None, mass_percent=None,
                  density_g_ml=None, purity_percent=purity, label=label,
                  molar_mass_g_mol=found.molar_mass_g_mol, basis="label",
                  anhydrous=_anhydrous(found, cat), notes=(*notes, note))


def parse_source(text: str, *, catalog: Catalog | None = None) -> Source:
    """Read a source as typed.

    ``NAME=W%`` (also ``%w/w``, ``wt%``) a solution by mass percent; ``NAME=C`` a solution
    by molarity (``12.1M``, ``12,1 M``, ``500 mM``; a bare number is molar); either may end
    in `` d=1.16`` (density from the label, g/mL).  ``NAME`` alone is a solid, ``NAME@98%``
    a solid of 98 % purity; hydrates as ``CuSO4·5H2O`` or ``CuSO4.5H2O``.
    """
    cat = _catalog(catalog)
    if not isinstance(text, str) or not text.strip():
        raise InvalidInput("source", text, "expected e.g. H2SO4=96%, HCl=12.1M or CuSO4·5H2O")
    raw = text.strip()
    if "=" not in raw:
        m = _PURITY.match(raw)
        if m:
            purity = quantities.percent(m.group("purity").strip(),
                                        what=f"purity of {m.group('name').strip()}")
            return solid_source(m.group("name").strip(), purity_percent=purity, catalog=cat)
        return solid_source(raw, catalog=cat)
    name, _, strength = raw.partition("=")
    name, strength = name.strip(), strength.strip()
    if not name or not strength:
        raise InvalidInput("source", text, "expected NAME=STRENGTH, e.g. H2SO4=96% or HCl=12.1M")
    density = None
    m = _DENSITY.match(strength)
    if m:
        strength = m.group("strength").strip()
        density = float(m.group("rho").replace(",", "."))
    if "%" in strength or strength.lower().endswith(("w/w", "wt")):
        w = quantities.percent(strength, what=f"mass percentage of {name}")
        if w <= 0:
            raise InvalidInput("source", text, "the mass percentage must be above 0")
        return solution_source(name, mass_percent=w, density_g_ml=density, catalog=cat)
    c = quantities.concentration_molar(strength, what=f"concentration of {name}")
    if not c > 0:
        raise InvalidInput("source", text, "the concentration must be above 0")
    return solution_source(name, conc_molar=c, density_g_ml=density, catalog=cat)


def positive_number(value: object, what: str) -> float:
    """``value`` as a float; InvalidInput naming ``what`` unless it is a number above 0."""
    x = _number(value, what)
    if not x > 0.0:
        raise InvalidInput(what, value, "must be above 0")
    return x


def percent_of(value: object, key: str) -> float:
    """A mass percent of ``key`` above 0 and at most 100."""
    w = positive_number(value, f"mass percent of {key}")
    if w > 100.0:
        raise InvalidInput(f"mass percent of {key}", value, "cannot exceed 100 % w/w")
    return w


