"""The metal data of ``data/metals.toml``: hydrolysis ladders, hydroxides and ligand salts.

The records here are what :mod:`carboy.model.metals` computes with and what the solver
(:mod:`carboy.model.solver.metal_terms`) lays out: each metal cation's mononuclear hydroxo
complexes (``log *beta_n`` of M(z+) + n H2O = M(OH)n(z-n) + n H+), the hydroxide or oxide
that precipitates (``log *Ks`` of solid + z H+ = M(z+) + H2O's), the salts of a cation
with the anion of an acid-base system whose solubility product ``planning.toml`` holds,
and the complexes of a cation with one state of a system (CaSO4°, MgSO4° ...: the
``ion_pairs.toml`` records that ``metals.toml`` names under ``complexes``).
Every constant carries its source and status (checked by the one provenance check).
The constants are for 25 °C and I = 0.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from functools import cached_property, lru_cache
from types import MappingProxyType

import numpy as np

from carboy.errors import InvalidInput
from carboy.model.catalog import default_catalog, molar_mass_of
from carboy.model.datafiles import Table
from carboy.model.metal_index import modelled_keys, unmodelled_cations  # noqa: F401 (re-exported)
from carboy.model.thermo import planning_constants
from carboy.model.water import PKW25  # noqa: F401 (re-exported)

STATUSES = frozenset({"FOUND", "MEMORY", "DERIVED"})

__all__ = ["PKW25", "STATUSES", "Complex", "Hydroxide", "HydroxoSpecies", "LigandSolid", "Metal",
           "MetalData", "charge_bounds", "metal", "metal_data", "modelled_keys",
           "unmodelled_cations"]


@dataclass(frozen=True)
class HydroxoSpecies:
    """M(OH)n: ``log_beta`` of M(z+) + n H2O = M(OH)n(z-n) + n H+ (0 for the free ion)."""

    label: str
    n: int
    charge: int
    log_beta: float
    source: str = ""


@dataclass(frozen=True)
class Hydroxide:
    """The hydroxide or oxide: ``log_ks`` of solid + z H+ = M(z+) + H2O's."""

    name: str
    formula: str
    log_ks: float
    molar_mass_g_mol: float
    source: str = ""
    dh_acid_kj: float | None = None
    """ΔH of solid + z H+ = M(z+) + H2O's, kJ per mol of solid (None: no value held)."""
    dh_source: str = ""


@dataclass(frozen=True)
class Metal:
    """A metal cation with its hydrolysis ladder and its hydroxide."""

    key: str
    name: str
    charge: int
    species: tuple[HydroxoSpecies, ...]
    """The free ion first, then each hydroxo complex by n."""
    solid: Hydroxide
    choice: str = ""

    @property
    def max_negative_charge(self) -> int:
        return max(0, -min(s.charge for s in self.species))

    @cached_property
    def arrays(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """(n, charge, log *beta) of every species as float arrays, free ion first."""
        return (np.array([s.n for s in self.species], dtype=float),
                np.array([s.charge for s in self.species], dtype=float),
                np.array([s.log_beta for s in self.species], dtype=float))

    @cached_property
    def weights(self) -> tuple[np.ndarray, np.ndarray]:
        """((S, 4) positive charge, negative charge, z² and n of every species; (S,) its
        d log10(c / c_free) / d(A·D) less n: n + z² - z_free²), for weighted sums."""
        n, q, _ = self.arrays
        return (np.stack([np.maximum(q, 0), np.maximum(-q, 0), q * q, n], axis=1),
                n + q * q - self.charge**2)


@dataclass(frozen=True)
class LigandSolid:
    """A salt of a cation and the anion of an acid-base system: a·M + b·L_j + c·OH-."""

    name: str
    formula: str
    cation: str
    cation_count: int
    ligand_system: str
    ligand_index: int
    """Which protonation state of the system the solubility product names."""
    ligand_count: int
    oh_count: int
    log_ksp: float
    molar_mass_g_mol: float
    in_dose: bool
    why: str
    source: str


@dataclass(frozen=True)
class Complex:
    """A complex M + L_j = ML of a metal cation and one state of an acid-base system."""

    label: str
    cation: str
    charge: int
    ligand_system: str
    ligand_index: int
    """Which protonation state of the system binds (its index, most protonated first)."""
    log_k: float
    """log10 K of M + L_j = ML at 25 °C and I = 0."""
    source: str


@dataclass(frozen=True)
class MetalData:
    metals: Mapping[str, Metal]
    ligand_solids: tuple[LigandSolid, ...]
    inert_cations: frozenset[str]
    complexes: tuple[Complex, ...] = ()


# ----------------------------------------------------------------------------- data


def _checked(t: Table, value_key: str) -> tuple[float, str]:
    """The value and its citation, once status and source pass the one provenance check."""
    prov = t.provenance(value_key, allowed=STATUSES)
    return t.number(value_key), f"{t.text('source').strip()} [{prov.status}]"


def _parse_metal(t: Table) -> Metal:
    key, z = t.text("key"), t.integer("charge", low=1, high=4)
    species = [HydroxoSpecies(key, 0, z, 0.0, "free ion")]
    for s in t.tables("species", name=lambda i, d: f"{key} species {i + 1}"):
        n = s.integer("n", low=1, high=6)
        log_beta, cite = _checked(s, "log_beta")
        species.append(HydroxoSpecies(s.text("label"), n, z - n, log_beta, cite))
    if [s.n for s in species] != list(range(len(species))):
        raise t.fail("species", "hydroxo species must run n = 1, 2, ... without gaps")
    srec = t.table("solid", f"{key} solid")
    if srec.has("log_ks"):
        log_ks, source = _checked(srec, "log_ks")
    else:
        log_ksp, cite = _checked(srec, "log_ksp_oh")
        log_ks = log_ksp + z * PKW25
        source = f"{cite}; log *Ks = log Ksp + {z} pKw(25 °C) [DERIVED]"
    formula = srec.text("formula")
    dh, dh_cite = None, ""
    if srec.has("dh_acid_kj"):
        prov = srec.provenance("dh_acid_kj", status="dh_status", source="dh_source",
                               allowed=STATUSES)
        dh, dh_cite = srec.number("dh_acid_kj", low=-500.0, high=500.0), prov.cited()
    solid = Hydroxide(srec.text("name"), formula, log_ks,
                      molar_mass_of(formula, entry=key), source, dh, dh_cite)
    return Metal(key, t.text("name"), z, tuple(species), solid, t.text("choice", ""))


def _parse_ligand_solid(t: Table, ksp_by_name: Mapping, catalog) -> LigandSolid:
    name = t.text("ksp")
    if name not in ksp_by_name:
        raise t.fail("ksp", f"no [[ksp]] record {name!r} in planning.toml")
    ksp = ksp_by_name[name]
    system_key, cation = t.text("ligand_system"), t.text("cation")
    if system_key not in catalog.systems:
        raise t.fail("ligand_system", f"no acid-base system {system_key!r} in the catalog")
    system = catalog.systems[system_key]
    ions = dict(ksp["ions"])
    cation_count = int(ions.pop(cation, 0))
    oh_count = int(ions.pop("OH-", 0))
    if not cation_count or len(ions) != 1 or next(iter(ions)) not in system.species:
        raise t.fail("ksp", f"ions {sorted(ksp['ions'])} are not {cation}, OH- and one "
                            f"state of {system.key}")
    label, count = next(iter(ions.items()))
    formula = t.text("formula")
    return LigandSolid(name, formula, cation, cation_count, system.key,
                       system.species.index(label), int(count), oh_count,
                       float(ksp["log10_ksp"]), molar_mass_of(formula, entry=name),
                       bool(t.raw("in_dose")), t.text("why"),
                       f"{ksp['source']} [{ksp['status']}]")


def _complexes(top: Table, metals: Mapping[str, Metal], solids, catalog) -> tuple[Complex, ...]:
    """The ``ion_pairs.toml`` records ``metals.toml`` names under ``complexes``: one metal
    and one state of one acid-base system each, all of one system, one per cation, and
    every cation with a salt of that system among them (the solver's search needs it)."""
    from carboy.model.ion_pairs import ion_pair  # the pair records' one reader

    out = []
    for name in top.texts("complexes"):
        try:
            rec = ion_pair(name)
        except InvalidInput:
            raise top.fail("complexes", f"{name!r} is not in ion_pairs.toml") from None
        metal_keys = [k for k in rec.formed_from if k in metals]
        others = [k for k in rec.formed_from if k not in metals]
        system = next((sy for sy in catalog.systems.values()
                       if len(others) == 1 and others[0] in sy.species), None)
        if (len(metal_keys) != 1 or system is None
                or any(n != 1 for n in rec.formed_from.values())):
            raise top.fail("complexes", f"{name!r} is not one modelled metal and one state "
                                        "of an acid-base system")
        out.append(Complex(name, metal_keys[0], rec.charge, system.key,
                           system.species.index(others[0]), rec.log_k(25.0),
                           f"{rec.source} [{rec.status}]"))
    if len({c.ligand_system for c in out}) > 1 or len({c.cation for c in out}) < len(out):
        raise top.fail("complexes", "one ligand system for every complex, one complex per cation")
    systems = {c.ligand_system for c in out}
    cations = {c.cation for c in out}
    if any(s.ligand_system in systems and s.cation not in cations for s in solids):
        raise top.fail("complexes", "a cation with a salt of the complexes' system needs "
                                    "its complex too")
    return tuple(out)


@lru_cache(maxsize=1)
def metal_data() -> MetalData:
    """The packaged ``metals.toml``, validated (cached); errors name file, entry and field."""
    top = Table.of_file("metals.toml")
    metals = {}
    for t in top.tables("metals"):
        metal = _parse_metal(t)
        if metal.key in metals:
            raise t.fail("key", "metal listed twice")
        metals[metal.key] = metal
    ksp_by_name = {r["solid"]: r for r in planning_constants()["ksp"]}
    catalog = default_catalog()
    solids = tuple(_parse_ligand_solid(t, ksp_by_name, catalog)
                   for t in top.tables("ligand_solids", name=lambda i, d: str(d.get("ksp", i))))
    dosed = [(s.cation, s.ligand_system) for s in solids if s.in_dose]
    if len(dosed) != len(set(dosed)):
        raise top.fail("ligand_solids", "one solid in the dose per cation and ligand system")
    if any(s.cation not in metals for s in solids):
        raise top.fail("ligand_solids", "a salt's cation has no metal record")
    return MetalData(MappingProxyType(metals), solids, frozenset(top.texts("inert_cations")),
                     _complexes(top, metals, solids, catalog))


def metal(key: str, data: MetalData | None = None) -> Metal:
    """The metal record for an ion key such as ``"Zn+2"``; unknown keys are an error."""
    metals = (data or metal_data()).metals
    if key not in metals:
        raise InvalidInput("metal", key, "no hydrolysis or solubility data; known: "
                           + ", ".join(sorted(metals)))
    return metals[key]


def charge_bounds(totals: Mapping[str, object], data: MetalData | None = None
                  ) -> tuple[np.ndarray, np.ndarray]:
    """The most positive and most negative charge the metals can carry (mol/L): widen the
    solver's bracket by these so that it still holds the root."""
    p = q = np.zeros(())
    for key, c in totals.items():
        m = metal(key, data)
        c = np.asarray(c, dtype=float)
        p = p + m.charge * c
        q = q + m.max_negative_charge * c
    return p, q


