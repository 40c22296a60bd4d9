"""Heat capacity of a solution: Laliberté's model over the solutes it holds.

The model (M. Laliberté, J. Chem. Eng. Data 54, 1725 (2009)) gives the specific heat of
a solution of any number of solutes from parameters fitted to each solute alone::

    cp = w_w cp_w + Σ w_i cp_i
    cp_i = a1 exp(α) + a5 (1 - w_w)^a6,   α = a2 t + a3 exp(0.01 t) + a4 (1 - w_w)

(``cp`` in J/(g K), ``t`` in °C, ``w`` mass fractions, ``w_w`` that of water).  The
parameters and their ranges are in ``data/planning.toml [[heat_capacity]]``, each with its
source.  Water's own ``cp_w`` is :func:`carboy.model.water.specific_heat_j_gk`.

A solved batch is a set of species, not of salts: :func:`salts_of` pairs every cation with
every anion in proportion to their equivalents (the usual way of writing a mixed solution
as salts), and a neutral species (CO2, NH3, CH3COOH, H3PO4) stands for itself.  A pair or a
neutral species with no parameters counts as water, and a solute outside its fit's
temperatures or mass fraction is evaluated at the nearest edge; both are said in
:attr:`HeatCapacity.notes`.
"""

from __future__ import annotations

import functools
import math
import re
from collections.abc import Mapping
from dataclasses import dataclass

from carboy.errors import CarboyError
from carboy.model import water
from carboy.model.catalog import molar_mass_of
from carboy.model.thermo import planning_constants

__all__ = ["HeatCapacity", "batch_heat_capacity", "salts_of", "solute_cp", "solute_for_formula",
           "solute_mass_g", "solutes", "solution_cp"]

SOURCE = "Laliberté, J. Chem. Eng. Data 54, 1725 (2009)"
_CHARGE = re.compile(r"[+-]\d*$")
_WATER_LIKE = ("H+", "OH-")
TRACE = 1e-3
"""A solute below this fraction of the batch's mass is counted but not named."""


@dataclass(frozen=True, eq=False, repr=False)
class _Solute:
    """One ``[[heat_capacity]]`` record."""

    name: str
    a: tuple[float, ...]
    t_range: tuple[float, float]
    max_fraction: float
    molar_mass: float
    source: str


@dataclass(frozen=True, eq=False, repr=False)
class HeatCapacity:
    """The specific heat of a batch and how it was found.

    ``cp_j_gk`` in J/(g K); ``solutes``: those counted with their own parameters,
    ``as_water``: those with none (counted as water), ``clamped``: those evaluated at the
    edge of their fit.
    """

    cp_j_gk: float
    solutes: tuple[str, ...] = ()
    as_water: tuple[str, ...] = ()
    clamped: tuple[str, ...] = ()

    @property
    def from_table(self) -> bool:
        """True when at least one solute's parameters were used (not water alone)."""
        return bool(self.solutes)

    def note(self) -> str:
        """What the figure rests on, in one sentence part."""
        if not self.solutes:
            base = f"heat capacity of water, {self.cp_j_gk:.3f} J/(g K)"
        else:
            base = (f"heat capacity {self.cp_j_gk:.3f} J/(g K) of the batch's solution of "
                    f"{', '.join(self.solutes)} ({SOURCE})")
        if self.as_water:
            base += f"; {', '.join(self.as_water)} counted as water (no parameters)"
        if self.clamped:
            base += f"; {', '.join(self.clamped)} beyond its fit, taken at its edge"
        return base

    def to_dict(self) -> dict:
        return {"cp_j_gk": self.cp_j_gk, "solutes": list(self.solutes),
                "as_water": list(self.as_water), "clamped": list(self.clamped),
                "note": self.note()}


@functools.lru_cache(maxsize=1)
def _tables() -> tuple[Mapping[tuple[str, str], _Solute], Mapping[str, _Solute]]:
    """(salts by (cation, anion) label, neutral species by label) of planning.toml."""
    pairs: dict[tuple[str, str], _Solute] = {}
    neutral: dict[str, _Solute] = {}
    for rec in planning_constants().get("heat_capacity", ()):
        lo, hi = rec["temperature_c"]
        solute = _Solute(rec["solute"], tuple(float(x) for x in rec["a"]),
                         (float(lo), float(hi)), float(rec["max_mass_fraction"]),
                         molar_mass_of(rec["solute"], entry=rec["solute"]),
                         f"{rec['source']} [{rec['status']}]")
        if "neutral" in rec:
            neutral[rec["neutral"]] = solute
        else:
            pairs[(rec["cation"], rec["anion"])] = solute
    return pairs, neutral


def solutes() -> Mapping[str, _Solute]:
    """Every solute of ``[[heat_capacity]]`` by name (``NaCl``, ``HCH3CO2``...)."""
    pairs, neutral = _tables()
    return {s.name: s for s in (*pairs.values(), *neutral.values())}


def solute_cp(solute: _Solute, temperature_c: float, solute_fraction: float
              ) -> tuple[float, bool]:
    """``cp_i`` (J/(g K)) of ``solute`` in a solution whose solutes make up
    ``solute_fraction`` of its mass, and whether the fit's edge was used."""
    lo, hi = solute.t_range
    t = min(max(temperature_c, lo), hi)
    x = min(max(solute_fraction, 0.0), solute.max_fraction)
    clamped = t != temperature_c or x != solute_fraction
    a1, a2, a3, a4, a5, a6 = solute.a
    alpha = a2 * t + a3 * math.exp(0.01 * t) + a4 * x
    tail = a5 * x ** a6 if x > 0 else 0.0
    return a1 * math.exp(alpha) + tail, clamped


def _mix(masses: Mapping[str, float], unknown_mass: float, total_mass: float,
         temperature_c: float) -> HeatCapacity:
    """The heat capacity of ``total_mass`` g holding ``masses`` g of each known solute (by
    name) and ``unknown_mass`` g of solutes counted as water."""
    cp_w = water.specific_heat_j_gk(temperature_c)
    if total_mass <= 0:
        return HeatCapacity(cp_w)
    solids = sum(masses.values()) + unknown_mass
    x = min(solids / total_mass, 0.999)
    table = solutes()
    cp = (1.0 - x) * cp_w + unknown_mass / total_mass * cp_w
    named, clamped = [], []
    for name, mass in masses.items():
        cp_i, edge = solute_cp(table[name], temperature_c, x)
        cp += mass / total_mass * cp_i
        if mass > TRACE * total_mass:
            named.append(name)
            if edge:
                clamped.append(name)
    return HeatCapacity(float(cp), tuple(sorted(named)), (), tuple(sorted(clamped)))


def solution_cp(mass_fractions: Mapping[str, float], temperature_c: float) -> HeatCapacity:
    """The heat capacity of a solution given by the mass fraction of each solute, named as
    in ``[[heat_capacity]]`` (``NaOH``, ``H2SO4``...); other names count as water."""
    table = solutes()
    known = {k: 100.0 * w for k, w in mass_fractions.items() if k in table and w > 0}
    unknown = sum(100.0 * w for k, w in mass_fractions.items() if k not in table and w > 0)
    found = _mix(known, unknown, 100.0, temperature_c)
    others = tuple(sorted(k for k, w in mass_fractions.items() if k not in table and w > 0))
    return HeatCapacity(found.cp_j_gk, found.solutes, others, found.clamped)


def _label_mass(label: str) -> float | None:
    try:
        return molar_mass_of(_CHARGE.sub("", label))
    except CarboyError:
        return None


def salts_of(species_molar: Mapping[str, float], charges: Mapping[str, int]
             ) -> tuple[dict[str, float], dict[str, float]]:
    """The batch as solutes: (mol/L of each solute with parameters, by name; g/L of the
    rest, by ``cation+anion`` or label).

    Every cation is paired with every anion in proportion to their equivalents; H+ with
    OH- is water and is left out.  A neutral complex of a salt's own ions (MgSO4°,
    CaSO4°) counts as that salt.
    """
    pairs, neutral = _tables()
    salt_names = {s.name for s in pairs.values()}
    cations = {k: c * charges[k] for k, c in species_molar.items() if charges.get(k, 0) > 0
               and c > 0}
    anions = {k: -c * charges[k] for k, c in species_molar.items() if charges.get(k, 0) < 0
              and c > 0}
    total = sum(cations.values())
    known: dict[str, float] = {}
    other: dict[str, float] = {}
    for cat, e_c in cations.items():
        for an, e_a in anions.items():
            if (cat, an) == _WATER_LIKE or total <= 0:
                continue
            eq = e_c * e_a / total
            z_c, z_a = charges[cat], -charges[an]
            g = math.gcd(z_c, z_a)
            units = eq / (z_a // g * z_c)            # formula units of (cat)a(an)b
            solute = pairs.get((cat, an))
            if solute is not None:
                known[solute.name] = known.get(solute.name, 0.0) + units
                continue
            m_c, m_a = _label_mass(cat), _label_mass(an)
            if m_c is not None and m_a is not None:
                other[f"{cat}/{an}"] = units * (z_a // g * m_c + z_c // g * m_a)
    for lab, c in species_molar.items():
        if charges.get(lab, 0) != 0 or c <= 0 or lab == "H2O":
            continue
        if lab in neutral:
            known[neutral[lab].name] = known.get(neutral[lab].name, 0.0) + c
        elif lab in salt_names:
            known[lab] = known.get(lab, 0.0) + c
        elif (m := _label_mass(lab)) is not None:
            other[lab] = c * m
    return known, other


def batch_heat_capacity(species_molar: Mapping[str, float], charges: Mapping[str, int],
                        volume_l: float, mass_g: float, temperature_c: float) -> HeatCapacity:
    """The heat capacity of a solved batch of ``volume_l`` L weighing ``mass_g`` g.

    Solutes come from :func:`salts_of`; traces (below 0.1 % of the batch's mass each)
    that have no parameters are counted as water without being named.
    """
    known, other = salts_of(species_molar, charges)
    table = solutes()
    masses = {name: mol_l * volume_l * table[name].molar_mass for name, mol_l in known.items()
              if mol_l > 0}
    unknown = {k: g_l * volume_l for k, g_l in other.items() if g_l > 0}
    found = _mix(masses, sum(unknown.values()), mass_g, temperature_c)
    named = tuple(sorted(k for k, g in unknown.items() if g > TRACE * mass_g))
    return HeatCapacity(found.cp_j_gk, found.solutes, named, found.clamped)


def solute_mass_g(species_molar: Mapping[str, float], charges: Mapping[str, int],
                  volume_l: float) -> float:
    """The mass (g) of everything dissolved in ``volume_l`` L of the batch, as the salts and
    neutral species of :func:`salts_of` (a species whose formula molmass cannot read is
    left out)."""
    known, other = salts_of(species_molar, charges)
    table = solutes()
    return volume_l * (sum(mol * table[name].molar_mass for name, mol in known.items())
                       + sum(other.values()))


@functools.lru_cache(maxsize=128)
def solute_for_formula(formula: str) -> str | None:
    """The ``[[heat_capacity]]`` solute with the same composition as ``formula`` (Hill
    formula compared: ``CH3COOH`` finds ``HCH3CO2``), or None."""
    import molmass  # here only: most commands never compare formulas (about 6 ms to load)

    try:
        hill = molmass.Formula(formula).formula
    except Exception:  # molmass raises FormulaError and, on odd input, others
        return None
    for name in solutes():
        if molmass.Formula(name).formula == hill:
            return name
    return None
