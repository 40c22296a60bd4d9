"""Recipes: how to make a solution of given molarity from a concentrate or a solid.

A :class:`Source` is what is drawn from: a solution (a concentrate by its %w/w or
molarity) or a solid (with its purity; a hydrate counts its crystal water in the molar
mass).  :func:`plan_recipe` turns a source, a target molarity and a final volume into a
:class:`Recipe`: the amount to measure, the water to start with, the heat, ordered steps,
cautions and notes with the sources of every number.  :func:`plan_series` chains recipes
into a serial dilution.

How the numbers are computed
----------------------------
* Amount ``n = c_target · V``.  From a solution: ``V_stock = n / c_stock`` and its mass
  ``V_stock · ρ_stock``; a %w/w label gives ``c_stock`` from the catalog density table.
  From a solid: ``mass = n · M(weighed form) / (purity / 100)``.
* Water to start with: two thirds (:data:`WATER_FIRST_FRACTION`) of the water the
  solution needs, ``(m_final − m_stock) / ρ_water(T)``, with ``m_final = V · ρ_final``
  from the density of the product (``solutions.strength_of``).  Where a density is
  unknown, two thirds of ``V − V_stock`` (or of ``V`` for a solid) instead.  The rest
  goes in when making up to the mark.
* Heat released (positive) from ``w1`` to ``w2``: ``n · (ΔH(w2→∞) − ΔH(w1→∞))`` with
  ``ΔH(w→∞)`` from ``thermo.dilution_heat_kj`` (NBS integral enthalpies for H2SO4, the
  CRC acid tables for HCl, HNO3, HF, HClO4, HBr, HI, HCOOH, CH3COOH); for a solid
  ``−n · ΔsolH∞`` from ``thermo.heat_of_solution_kj`` (to infinite dilution: an upper
  estimate for concentrated products of NaOH and KOH).  ``None`` where no published data
  are held.
* Temperature rise (adiabatic): ``heat / (m_final · c_p,water(T))``; the rise while
  mixing, before making up to volume, uses the heat to the strength in the beaker and
  the mass there (concentrate or solid plus the water put in first).  The cautions look
  at the larger of the two.

Thresholds (common practice, carboy's choice, stated in the cautions): heat warning from a
10 K rise, danger from 25 K or a final 60 °C (``planning.toml [thresholds]``, shared with
the neutralization planner); weigh rather than pour H2SO4 from 90 % and H3PO4 from 75 %;
fume hood for HCl from 25 %, HNO3 from 50 %, NH3 from 10 %, acetic acid from 80 % and any
other concentrate that gives off a toxic gas; a source is a concentrate from 10 % w/w or
5 mol/L.
"""

from __future__ import annotations

import math
import re
from collections.abc import Sequence
from dataclasses import dataclass, field, replace

from carboy.errors import InvalidInput, UnknownCompound
from carboy.model import quantities, thermo, water
from carboy.model.catalog import Catalog, default_catalog, molar_mass_of
from carboy.model.cautions import SEVERITIES, Caution
from carboy.model.entities import Compound
from carboy.model.solutions import Strength, _number, strength_of

__all__ = [
    "BASES",
    "MAX_FINAL_VOLUME_L",
    "WATER_FIRST_FRACTION",
    "Recipe",
    "Source",
    "heat_released_kj",
    "parse_source",
    "plan_recipe",
    "plan_series",
    "solid_source",
    "solution_source",
]

MAX_FINAL_VOLUME_L = 50.0
"""Largest final volume carboy plans (L): beyond a bench preparation."""

WATER_FIRST_FRACTION = 2.0 / 3.0
"""Share of the needed water put in the vessel before the concentrate or solid."""

BASES = ("label", "measured", "catalog", "prepared")
"""Where a source's strength comes from: the bottle's label, a measurement
(standardization), the catalog, or an earlier step of a serial dilution."""

CONCENTRATE_PERCENT = 10.0
CONCENTRATE_MOLAR = 5.0
"""A solution source at or above either is treated as a concentrate (acid-into-water,
dilute-first practice; Prudent Practices (NRC 2011) §8.D.1: below about 10 %)."""

VISCOUS_PERCENT = {"H2SO4": 90.0, "H3PO4": 75.0}
"""Concentrates weighed rather than measured by volume (common practice)."""

FUMING_PERCENT = {"HCl": 25.0, "HNO3": 50.0, "NH3": 10.0, "CH3COOH": 80.0}
"""Strengths from which a concentrate is opened and measured in a fume hood (common
practice); other concentrates tagged ``toxic_gas`` use :data:`CONCENTRATE_PERCENT`."""

FLASK_MAX_RISE_K = 5.0
"""Largest expected rise for diluting straight into the volumetric flask; above it the
mixing is done in a beaker and the cooled solution transferred (volumetric glass is
calibrated at 20 °C and must not be heated; common practice)."""

HYGROSCOPIC_BASES = frozenset({"NaOH", "KOH", "LiOH"})
"""Solids that take up water and CO2 from air: the product needs standardizing."""

_TYPICAL_STRENGTH = {"H2SO4": "96%", "HCl": "37%", "HNO3": "70%", "H3PO4": "85%",
                     "CH3COOH": "100%", "NH3": "28%", "NaOH": "50%", "KOH": "45%"}
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


def _fmt(x: float, sig: int = 4) -> str:
    return f"{x:.{sig}g}"


def _sig(x: float, sig: int) -> str:
    """``x`` to ``sig`` significant figures, trailing zeros kept (40.00, 18.0, 501)."""
    if x == 0 or not math.isfinite(x):
        return f"{x:g}"
    decimals = max(0, sig - 1 - int(math.floor(math.log10(abs(x)))))
    return f"{x:.{decimals}f}"


def _mass_text(g: float) -> str:
    return f"{_sig(g, 4)} g"


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
        rho = _positive(density_g_ml, f"density of {found.key}")
        if not 0.5 <= rho <= 3.0:
            raise InvalidInput(f"density of {found.key}", density_g_ml,
                               "an aqueous solution lies between 0.5 and 3 g/mL")
        if mass_percent is not None:
            w = _percent(mass_percent, found.key)
            c = w * rho * 10.0 / m
        else:
            c = _positive(conc_molar, f"concentration of {found.key}")
            w = c * m / (10.0 * rho)
            if w > 100.0:
                raise InvalidInput(f"concentration of {found.key}", conc_molar,
                                   f"impossible at a density of {rho:g} g/mL (over 100 % w/w)")
        strength = Strength(c, w, rho, None if w >= 100 else 1000 * w / (m * (100 - w)),
                            False, f"density {rho:g} g/mL as given (label)")
    elif mass_percent is not None:
        w = _percent(mass_percent, found.key)
        strength = strength_of(found, mass_percent=w, catalog=cat)
    else:
        c = _positive(conc_molar, f"concentration of {found.key}")
        strength = strength_of(found, conc_molar=c, catalog=cat)
    if mass_percent is not None:
        label = f"{found.key} {_fmt(strength.mass_percent)} % w/w"
    else:
        label = f"{found.key} {_fmt(strength.conc_molar)} M"
    how = {"label": "strength from the label", "measured": "strength as measured",
           "catalog": "strength from the catalog", "prepared": "made in an earlier step"}[basis]
    desc = [f"{label}: {how}; {_fmt(strength.conc_molar)} M"]
    if strength.mass_percent is not None and mass_percent is None:
        desc.append(f"{_fmt(strength.mass_percent)} % w/w")
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
        example = _TYPICAL_STRENGTH.get(found.key, "1M")
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


def _positive(value: object, what: str) -> float:
    x = _number(value, what)
    if not x > 0.0:
        raise InvalidInput(what, value, "must be above 0")
    return x


def _percent(value: object, key: str) -> float:
    w = _positive(value, f"mass percent of {key}")
    if w > 100.0:
        raise InvalidInput(f"mass percent of {key}", value, "cannot exceed 100 % w/w")
    return w


# ----------------------------------------------------------------------------- heat


def heat_released_kj(compound_key: str, from_percent: float, to_percent: float
                     ) -> tuple[float, str] | None:
    """Heat released (kJ per mol of solute; positive = released) on diluting from
    ``from_percent`` to ``to_percent`` % w/w, or ``None`` without published data.

    ``n · (ΔH(to→∞) − ΔH(from→∞))`` per mol, with ``thermo.dilution_heat_kj``; e.g. 1 mol
    of 100 % H2SO4 to infinite dilution releases 95.3 kJ (NBS tables).
    """
    start = thermo.dilution_heat_kj(compound_key, from_percent)
    end = thermo.dilution_heat_kj(compound_key, to_percent)
    if start is None or end is None:
        return None
    return end[0] - start[0], start[1]


# ----------------------------------------------------------------------------- recipe


@dataclass(frozen=True)
class Recipe:
    """How to make ``final_volume_ml`` of ``target_molar`` from ``source``.

    ``stock_molar``/``stock_volume_ml`` are ``None`` for a solid; ``stock_mass_g`` is the
    mass of concentrate or solid to weigh (``None`` only for a solution whose density is
    unknown).  ``water_ml`` is the water to put in the vessel first.  ``heat_kj`` is the
    heat released (positive) on dilution or dissolution, ``None`` without published data;
    ``temperature_rise_c`` the adiabatic rise of the finished solution, ``mixing_rise_c``
    the rise in the vessel before making up to volume.
    """

    source: Source
    target_molar: float
    final_volume_ml: float
    amount_mol: float
    stock_molar: float | None
    stock_volume_ml: float | None
    stock_mass_g: float | None
    water_ml: float
    heat_kj: float | None
    temperature_rise_c: float | None
    mixing_rise_c: float | None
    final_mass_percent: float | None
    final_density_g_ml: float | None
    dilution_factor: float | None
    temperature_c: float
    steps: tuple[str, ...]
    cautions: tuple[Caution, ...]
    notes: tuple[str, ...]

    def to_dict(self) -> dict:
        """JSON-ready: plain numbers (or None), lists of strings and caution dicts."""
        return {
            "source": self.source.to_dict(),
            "target_molar": self.target_molar,
            "final_volume_ml": self.final_volume_ml,
            "amount_mol": self.amount_mol,
            "stock_molar": self.stock_molar,
            "stock_volume_ml": self.stock_volume_ml,
            "stock_mass_g": self.stock_mass_g,
            "water_ml": self.water_ml,
            "heat_kj": self.heat_kj,
            "temperature_rise_c": self.temperature_rise_c,
            "mixing_rise_c": self.mixing_rise_c,
            "final_mass_percent": self.final_mass_percent,
            "final_density_g_ml": self.final_density_g_ml,
            "dilution_factor": self.dilution_factor,
            "temperature_c": self.temperature_c,
            "steps": list(self.steps),
            "cautions": [c.to_dict() for c in self.cautions],
            "notes": list(self.notes),
        }


def _thresholds() -> dict:
    return thermo.planning_constants()["thresholds"]


def _volume_text(ml: float) -> str:
    """A volume to measure: three significant figures, in L from 1000 mL."""
    if ml >= 1000.0:
        return f"{_sig(ml / 1000.0, 4)} L"
    return f"{_sig(ml, 3)} mL"


def _about_ml(ml: float) -> str:
    """A rounded volume for water poured by cylinder (two significant figures)."""
    if ml <= 0:
        return "0 mL"
    digits = max(0, 1 - int(math.floor(math.log10(ml))))
    value = round(ml, digits)
    return f"{value / 1000.0:g} L" if value >= 1000 else f"{value:g} mL"


_BEAKERS_ML = (50, 100, 250, 400, 600, 1000, 2000, 3000, 5000)


def _beaker(ml: float) -> str:
    for size in _BEAKERS_ML:
        if size >= 1.5 * ml:
            return f"{size} mL" if size < 1000 else f"{size // 1000} L"
    return f"{math.ceil(1.5 * ml / 1000.0)} L"


def plan_recipe(source: Source, target_molar: float, final_volume_l: float, *,
                temperature_c: float = 20.0) -> Recipe:
    """The recipe for ``final_volume_l`` litres of ``target_molar`` mol/L from ``source``.

    Refuses (InvalidInput naming the value) a target not below a solution source, a
    non-positive or non-finite target or volume, and a volume above
    :data:`MAX_FINAL_VOLUME_L`.
    """
    if not isinstance(source, Source):
        raise InvalidInput("source", source, "expected a Source (see parse_source)")
    target = _positive(target_molar, "target concentration")
    vol_l = _positive(final_volume_l, "final volume")
    if vol_l > MAX_FINAL_VOLUME_L:
        raise InvalidInput("final volume", final_volume_l,
                           f"carboy plans at most {MAX_FINAL_VOLUME_L:g} L")
    t_c = water.check_temperature(_number(temperature_c, "temperature"))
    compound = source.compound
    solute = source.anhydrous or compound
    cat = default_catalog()
    n = target * vol_l
    vol_ml = vol_l * 1000.0
    rho_w = water.density_g_cm3(t_c)
    cp = water.specific_heat_j_gk(t_c)
    notes: list[str] = [f"amount: {_fmt(n)} mol of {solute.key} in {_volume_text(vol_ml)}",
                        *source.notes]

    if source.kind == "solution":
        if source.conc_molar is None or not target < source.conc_molar:
            raise InvalidInput("target concentration", target_molar,
                               f"must be below the strength of the source, {source.label} "
                               f"({_fmt(source.conc_molar or 0.0)} M)")
        stock_molar = source.conc_molar
        stock_ml = n / stock_molar * 1000.0
        stock_mass = stock_ml * source.density_g_ml if source.density_g_ml else None
        dilution = stock_molar / target
    else:
        stock_molar = stock_ml = dilution = None
        stock_mass = n * source.molar_mass_g_mol / (source.purity_percent / 100.0)

    final = strength_of(solute, conc_molar=target, catalog=cat)
    notes.append(f"product {_fmt(target)} M {solute.key}: " + (
        f"{_fmt(final.mass_percent)} % w/w, ρ {final.density_g_ml:.4f} g/mL ({final.note})"
        if final.density_g_ml is not None else final.note))
    final_mass = vol_ml * final.density_g_ml if final.density_g_ml is not None else None

    # ---- water to start with
    if final_mass is not None and stock_mass is not None:
        water_total = max(final_mass - stock_mass, 0.0) / rho_w
        how = (f"(final mass {final_mass:.4g} g − {'concentrate' if stock_ml else 'solid'} "
               f"{stock_mass:.4g} g) / ρ(water) {rho_w:.5f} g/mL = {water_total:.4g} mL")
    else:
        water_total = vol_ml - (stock_ml or 0.0)
        how = (f"final volume − concentrate volume = {water_total:.4g} mL (density unknown, "
               "approximate)" if stock_ml else
               f"the final volume {water_total:.4g} mL (density unknown, approximate)")
    water_first = WATER_FIRST_FRACTION * water_total
    notes.append(f"water to start with: two thirds of the water the solution needs, {how}; "
                 "the rest goes in when making up to the mark")

    # ---- heat
    heat = heat_to_mix = None
    mix_mass = (stock_mass or 0.0) + water_first * rho_w
    heat_mass = final_mass if final_mass is not None else vol_ml * rho_w
    if source.kind == "solution":
        if source.mass_percent is not None and final.mass_percent is not None:
            per_mol = heat_released_kj(compound.key, source.mass_percent, final.mass_percent)
            if per_mol is not None:
                heat = n * per_mol[0]
                notes.append(f"heat of dilution from {_fmt(source.mass_percent)} to "
                             f"{_fmt(final.mass_percent)} % w/w: {per_mol[0]:.3g} kJ/mol "
                             f"released (25 °C data): {per_mol[1]}")
                if stock_mass is not None and mix_mass > 0:
                    w_mix = 100.0 * n * compound.molar_mass_g_mol / mix_mass
                    w_mix = min(max(w_mix, final.mass_percent), source.mass_percent)
                    mixed = heat_released_kj(compound.key, source.mass_percent, w_mix)
                    if mixed is not None:
                        heat_to_mix = n * mixed[0]
                _h2so4_gap_note(compound.key, source.mass_percent, final.mass_percent, notes)
    else:
        sol = thermo.heat_of_solution_kj(compound.key)
        if sol is not None:
            heat = heat_to_mix = -n * sol[0]
            notes.append(f"heat of solution of {compound.key} to infinite dilution: "
                         f"{sol[0]:+.4g} kJ/mol (negative: released): {sol[1]}"
                         + ("; for a concentrated product the real heat is somewhat smaller "
                            "(an upper estimate)" if sol[0] < 0 else ""))
    rise = None if heat is None else heat * 1000.0 / (heat_mass * cp)
    mix_rise = None
    if heat_to_mix is not None and mix_mass > 0:
        mix_rise = heat_to_mix * 1000.0 / (mix_mass * cp)
    if heat is None:
        what = "dilution" if source.kind == "solution" else "solution"
        notes.append(f"heat of {what} not estimated: carboy holds no published data for "
                     f"{source.label}")
    else:
        notes.append(
            f"temperature rise (adiabatic) = heat / (mass × c_p of water, {cp:.4f} J/(g K) at "
            f"{t_c:g} °C): {rise:+.3g} K in the finished {heat_mass:.4g} g"
            + (f", {mix_rise:+.3g} K in the {mix_mass:.4g} g mixed before making up to volume"
               if mix_rise is not None else "")
            + "; a concentrated product has a lower heat capacity than water (e.g. 100 % "
            "H2SO4 about 1.39 J/(g K)) and heats more than this")
    if final_mass is None:
        notes.append("the product density is unknown: its mass is taken as that of the same "
                     "volume of water")
    if abs(t_c - 20.0) > 5.0:
        notes.append(f"density tables are for 20 °C; at {t_c:g} °C volumes differ slightly, "
                     "and volumetric glassware is calibrated at 20 °C")

    worst = max((r for r in (rise, mix_rise) if r is not None), default=None)
    cautions = _cautions(source, target, worst, t_c, heat is None, final)
    steps = _steps(source, solute, target, vol_ml, stock_ml, stock_mass, water_first,
                   water_total, worst, t_c, cautions)
    return Recipe(
        source=source, target_molar=target, final_volume_ml=vol_ml, amount_mol=n,
        stock_molar=stock_molar, stock_volume_ml=stock_ml, stock_mass_g=stock_mass,
        water_ml=water_first, heat_kj=heat, temperature_rise_c=rise, mixing_rise_c=mix_rise,
        final_mass_percent=final.mass_percent, final_density_g_ml=final.density_g_ml,
        dilution_factor=dilution, temperature_c=t_c, steps=tuple(steps),
        cautions=cautions, notes=tuple(notes))


def _h2so4_gap_note(key: str, w1: float, w2: float, notes: list[str]) -> None:
    # NBS rows n = 1 and n = 10 H2O per H2SO4 are 84.5 and 35.3 % w/w (reference-data §6a)
    if key == "H2SO4" and w2 < 84.5 and w2 > 35.3:
        notes.append("the product lies between the NBS rows n = 1 and n = 10 H2O per H2SO4 "
                     "(84-35 % w/w), where linear interpolation understates the heat: expect "
                     "more than estimated")


def plan_series(source: Source, targets_molar: Sequence[float],
                volumes_l: Sequence[float] | float) -> tuple[Recipe, ...]:
    """A serial dilution: step k is made from the product of step k−1 (step 0 from
    ``source``).  ``volumes_l`` is one final volume per step, or one for all.

    Refuses a target not below its source, and a step whose product is too small to
    supply the aliquot the next step takes.
    """
    targets = list(targets_molar) if not isinstance(targets_molar, (int, float)) \
        else [targets_molar]
    if not targets:
        raise InvalidInput("targets", targets_molar, "give at least one target concentration")
    if isinstance(volumes_l, (int, float)) and not isinstance(volumes_l, bool):
        volumes = [volumes_l] * len(targets)
    else:
        volumes = list(volumes_l)
    if len(volumes) != len(targets):
        raise InvalidInput("volumes", volumes_l,
                           f"give one volume per target ({len(targets)}) or a single volume")
    recipes: list[Recipe] = []
    current = source
    for k, (target, volume) in enumerate(zip(targets, volumes), start=1):
        try:
            recipe = plan_recipe(current, target, volume)
        except InvalidInput as exc:
            raise InvalidInput(f"step {k}: {exc.what}", exc.value, exc.reason) from None
        if recipes:
            made = recipes[-1].final_volume_ml
            if recipe.stock_volume_ml > made:
                raise InvalidInput(
                    f"step {k}: final volume", volume,
                    f"needs {recipe.stock_volume_ml:.4g} mL of the step {k - 1} product, but "
                    f"step {k - 1} makes only {made:.4g} mL")
            recipe = replace(recipe, notes=(*recipe.notes, (
                f"serial dilution, step {k}: draws {recipe.stock_volume_ml:.4g} mL of the "
                f"{made:.4g} mL made in step {k - 1}; {made - recipe.stock_volume_ml:.4g} mL of "
                "it remain; errors of earlier steps carry over")))
        recipes.append(recipe)
        current = replace(solution_source(recipe.source.anhydrous or recipe.source.compound,
                                          conc_molar=recipe.target_molar, basis="prepared"),
                          label=f"{(recipe.source.anhydrous or recipe.source.compound).key} "
                                f"{_fmt(recipe.target_molar)} M (step {k})")
    return tuple(recipes)


# ----------------------------------------------------------------------------- cautions


def _fuming(source: Source) -> bool:
    if source.kind != "solution":
        return False
    key = source.key
    if key in FUMING_PERCENT:
        if source.mass_percent is not None:
            return source.mass_percent >= FUMING_PERCENT[key]
        return source.is_concentrate
    return "toxic_gas" in source.compound.hazards and source.is_concentrate


def _viscous(source: Source) -> bool:
    limit = VISCOUS_PERCENT.get(source.key)
    return (source.kind == "solution" and limit is not None and source.mass_percent is not None
            and source.mass_percent >= limit)


def _is_perchloric(compound: Compound) -> bool:
    return compound.key == "HClO4" or bool(compound.hazards & {"perchloric",
                                                              "explosive_residue"})


def _cautions(source: Source, target: float, rise: float | None, t_c: float,
              heat_unknown: bool, final: Strength) -> tuple[Caution, ...]:
    c = source.compound
    hz = c.hazards
    th = _thresholds()
    warn_k, danger_k = float(th["rise_warn_k"]), float(th["rise_danger_k"])
    final_danger_c = float(th["final_danger_c"])
    name = c.name
    concentrate = source.is_concentrate
    corrosive = "corrosive" in hz
    out: list[Caution] = []
    if "hf_type" in hz:
        out.append(Caution("hf-danger", "danger", (
            f"{name}: fluoride gives HF, which penetrates skin and burns without early pain. "
            "Only people trained for HF work; HF-rated gloves, face shield and apron; calcium "
            "gluconate gel at hand before you start; plastic ware (PE, PP, PTFE/PFA) "
            "throughout, never glass.")))
    if _is_perchloric(c):
        out.append(Caution("perchloric-danger", "danger", (
            "Perchloric acid: a strong oxidizer whose dried residues and contact with "
            "organics, wood, paper or reducers can explode. Keep it from organics, wipe up "
            "every drop, never let it dry on surfaces; heat or evaporate it only in a "
            "perchloric-acid fume hood with wash-down.")))
    if hz & {"cyanide", "sulfide"}:
        gas = " or ".join(g for tag, g in (("cyanide", "HCN"), ("sulfide", "H2S")) if tag in hz)
        out.append(Caution("never-acidify", "danger", (
            f"{name}: never let it meet acid ({gas} gas). Work in a fume hood, keep the "
            "solution alkaline and store it away from acids.")))
    if rise is not None and (rise >= danger_k or t_c + rise >= final_danger_c):
        boil = " - it can boil and spatter" if t_c + rise >= 90.0 else ""
        out.append(Caution("heat-danger", "danger", (
            f"Estimated temperature rise about {rise:.0f} K (to about {t_c + rise:.0f} °C)"
            f"{boil}. Stand the vessel in an ice/water bath, add in small portions with "
            "stirring and let it cool between portions; for a large batch make it in "
            f"stages. (Danger from a {danger_k:g} K rise or {final_danger_c:g} °C: common "
            "practice, carboy's choice.)")))
    elif rise is not None and rise >= warn_k:
        out.append(Caution("heat-warning", "warning", (
            f"Estimated temperature rise about {rise:.0f} K: cool the vessel in an ice/water "
            f"bath and add in portions. (Warning from a {warn_k:g} K rise: common practice.)")))
    if heat_unknown and ((concentrate and corrosive) or "dilution_heat" in hz):
        verb = "Diluting" if source.kind == "solution" else "Dissolving"
        out.append(Caution("heat-unknown", "warning", (
            f"{verb} {source.label} can release much heat, but carboy holds no published data "
            "to estimate how much: add it in portions, watch the temperature and cool as "
            "needed.")))
    if concentrate and (corrosive or "dilution_heat" in hz):
        out.append(Caution("add-to-water", "warning", (
            f"Add the {name} slowly to the water, with stirring - never water to the "
            "concentrate: water poured onto a concentrate boils locally and spatters acid or "
            "alkali.")))
    elif source.kind == "solid" and "dilution_heat" in hz:
        out.append(Caution("add-to-water", "warning", (
            f"Add the {c.key} to the water in portions, with stirring - never water onto the "
            "solid: it heats strongly where it dissolves.")))
    if _fuming(source):
        out.append(Caution("fume-hood", "warning", (
            f"{source.label} gives off corrosive or toxic vapour: open, measure and dilute it "
            "in a fume hood. (Hood from HCl 25 %, HNO3 50 %, NH3 10 %, acetic acid 80 % "
            "and other concentrates that fume: common practice.)")))
    if "oxidizer" in hz and source.kind == "solution" and concentrate \
            and not _is_perchloric(c):
        out.append(Caution("oxidizing-acid", "warning", (
            f"{name} is an oxidizer: keep organics, solvents and reducers away; never mix its "
            "waste with organic waste.")))
    if "flammable" in hz and source.kind == "solution" and concentrate:
        out.append(Caution("flammable", "warning", (
            f"{source.label} is flammable: no flames, hot plates or sparks nearby while it is "
            "open.")))
    if source.kind == "solid" and hz & {"acutely_toxic", "chromic", "reprotoxic"}:
        out.append(Caution("toxic-solid", "warning", (
            f"{name} is toxic: weigh it in a fume hood or ventilated balance enclosure, avoid "
            "raising dust, wear gloves and wash hands after.")))
    ppe_sev = "warning" if corrosive or concentrate or hz & {"acutely_toxic", "hf_type"} \
        else "notice"
    out.append(Caution("ppe", ppe_sev, (
        "Splash goggles, chemical-resistant gloves and a lab coat"
        + ("; a face shield while pouring the concentrate" if concentrate else "")
        + "; eyewash and safety shower within reach.")))
    if _viscous(source):
        out.append(Caution("weigh-viscous", "notice", (
            f"{source.label} is viscous and drains slowly from pipettes and cylinders: weigh "
            "it rather than measure it by volume (the recipe gives both). (Weigh from H2SO4 "
            "90 % and H3PO4 75 %: common practice.)")))
    if source.kind == "solid" and c.key in HYGROSCOPIC_BASES:
        out.append(Caution("standardize-base", "warning", (
            f"{c.key} takes up water and CO2 from air, so the strength of the product is "
            "approximate: standardize it against a primary standard (e.g. potassium hydrogen "
            "phthalate) before use as a volumetric solution.")))
    elif source.kind == "solution" and source.basis in ("label", "catalog", "prepared"):
        out.append(Caution("label-strength", "notice", (
            f"The strength of {source.label} is nominal"
            + (" (from an earlier step)" if source.basis == "prepared" else " (from the label)")
            + ": for a volumetric solution, standardize the product before use.")))
    if hz & {"heavy_metal", "no_drain"}:
        out.append(Caution("collect-residues", "notice", (
            f"{name}: do not pour leftovers or rinses down the drain; collect them for "
            "hazardous-waste disposal and follow your local disposal rules and safety "
            "office.")))
    if source.kind == "solid" and final.mass_percent is None:
        out.append(Caution("no-solubility-data", "notice", (
            f"carboy holds no solubility or density data for {c.key} at {_fmt(target)} M: "
            "check that it dissolves at this strength.")))
    out.append(Caution("label-bottle", "notice", (
        "Label the new bottle: name and concentration, date, your initials and the hazard "
        "pictograms of the contents.")))
    rank = {s: i for i, s in enumerate(SEVERITIES)}
    return tuple(sorted(out, key=lambda x: rank[x.severity]))


# ----------------------------------------------------------------------------- steps


def _steps(source: Source, solute: Compound, target: float, vol_ml: float,
           stock_ml: float | None, stock_mass: float | None, water_first: float,
           water_total: float, rise: float | None, t_c: float,
           cautions: tuple[Caution, ...]) -> list[str]:
    codes = {c.code for c in cautions}
    hf = "hf-danger" in codes
    cool = "heat-danger" in codes or "heat-warning" in codes
    hood = "fume-hood" in codes or "never-acidify" in codes or "toxic-solid" in codes
    vessel_kind = "polypropylene (PP) or PTFE beaker" if hf else "borosilicate beaker"
    flask = "PP or PFA volumetric flask (never glass)" if hf else "volumetric flask"
    concentrate = source.is_concentrate or (source.kind == "solid"
                                            and "dilution_heat" in source.compound.hazards)
    in_flask = source.kind == "solution" and not concentrate and (rise is None or
                                                                   rise < FLASK_MAX_RISE_K)
    vol_txt = _volume_text(vol_ml)
    steps = ["Put on splash goggles, chemical-resistant gloves and a lab coat"
             + (" and work in a fume hood." if hood else ".")]
    if in_flask:
        steps.append(f"Put about {_about_ml(water_first)} of water (two thirds of the "
                     f"{water_total:.4g} mL needed) into a {vol_txt} {flask}.")
    else:
        bath = ", standing in an ice/water bath" if cool else ""
        steps.append(f"Put about {_about_ml(water_first)} of water (two thirds of the "
                     f"{water_total:.4g} mL needed) into a {_beaker(water_first + (stock_ml or 0))}"
                     f" {vessel_kind}{bath}.")
    if source.kind == "solution":
        vol_s = _volume_text(stock_ml)
        if "weigh-viscous" in codes and stock_mass is not None:
            steps.append(f"Weigh {_mass_text(stock_mass)} of {source.label} (about {vol_s}) "
                         "into a dry beaker: it is too viscous to measure accurately by volume.")
        elif stock_mass is not None:
            steps.append(f"Measure {vol_s} of {source.label} ({_mass_text(stock_mass)}).")
        else:
            steps.append(f"Measure {vol_s} of {source.label}.")
        if concentrate:
            steps.append(f"Add the {source.compound.name} to the water slowly, in a thin "
                         "stream or small portions, with constant stirring; never pour water "
                         "into the concentrate.")
        else:
            steps.append("Add it to the water and swirl to mix.")
    else:
        purity = "" if source.purity_percent == 100.0 else \
            f", {source.purity_percent:g} % purity"
        quick = " quickly, in a closed weighing bottle (it takes up water and CO2 from air)" \
            if source.key in HYGROSCOPIC_BASES else ""
        steps.append(f"Weigh {_mass_text(stock_mass)} of {source.key} "
                     f"({source.molar_mass_g_mol:.2f} g/mol{purity}){quick}.")
        if "dilution_heat" in source.compound.hazards:
            steps.append("Add the solid to the water in small portions with stirring until it "
                         "has dissolved; never pour water onto the solid.")
        else:
            steps.append("Add the solid to the water and stir until it has dissolved.")
    if rise is not None and rise >= 1.0:
        steps.append(f"Let the solution cool to room temperature (it warms by about "
                     f"{rise:.0f} K).")
    elif rise is not None and rise <= -1.0:
        steps.append(f"Let the solution come back to room temperature (it cools by about "
                     f"{-rise:.0f} K).")
    elif not in_flask:
        steps.append("Let the solution come to room temperature.")
    if not in_flask:
        steps.append(f"Transfer it into a {vol_txt} {flask}; rinse the beaker three times "
                     "with a little water and add the rinses to the flask.")
    steps.append(f"Make up to the mark with water at about {t_c:g} °C, stopper and invert "
                 "about 15 times to mix.")
    bottle = "a clean plastic bottle" if hf else "a clean, dry bottle"
    tail = "" if "standardize-base" not in codes else ", and 'standardize before use'"
    steps.append(f"Transfer to {bottle} and label it '{solute.key} {_fmt(target)} M' with the "
                 f"date, your initials and the hazard pictograms{tail}.")
    return steps
