"""Metal cations in the charge balance: hydrolysis, and hydroxide or salt precipitation.

Every function here is a pure, vectorized function of ``x = log10[H+]`` (the
concentration, as in ``speciation.py``) that a charge-balance solver can call at each
trial point.  For each metal with a total concentration it gives the dissolved species
(mononuclear hydroxo complexes), whether the hydroxide or oxide is present (decided by
saturation, never assumed), the amount precipitated, the positive and negative charge
the dissolved species carry, and the hydroxide the metal has bound (what it costs in a
dose).  Calcium salts of fluoride, phosphate and sulfate are handled the same way, with
the ligand's fractions at ``x`` supplied by the caller.

Monotonicity.  At a fixed ionic strength the metal terms keep the solver's
``POS(x) = NEG(x)`` monotone: a hydrolysis ladder is an acid-base ladder (the positive
charge rises and the negative falls with x); with the solid present the free ion is
``*Ks {H+}^z`` and every species is a power of [H+] whose sign follows its charge; the
two pieces meet continuously where the solution just saturates.  A salt that precipitates
takes ``a`` cations of charge z and ``b`` ligands whose mean charge is at most their
fully deprotonated charge, so it removes at least as much positive as negative charge,
and less of it precipitates as x rises: ``POS - NEG`` still rises with x.

Activity: ``ad`` is A·D(I) of the Davies equation (log10 gamma_z = -ad z²; 0 = ideal),
as in ``speciation.py``.  The constants are for 25 °C (``data/metals.toml``, each with its
source); there is no temperature correction.

References
----------
C. F. Baes and R. E. Mesmer, The Hydrolysis of Cations, Wiley, New York (1976).
K. J. Powell et al., Pure Appl. Chem. 79, 895 (2007); 81, 2425 (2009); 85, 2249 (2013).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from functools import lru_cache
from types import MappingProxyType

import numpy as np
from scipy.optimize import minimize_scalar

from carboy.errors import InvalidInput
from carboy.model.catalog import default_catalog, molar_mass_of
from carboy.model.datafiles import Table
from carboy.model.thermo import planning_constants
from carboy.model.water import pkw

LN10 = math.log(10.0)
PKW25 = pkw(25.0)
"""pKw at 25 °C (IAPWS R11-07), the default and the conversion of OH- solubility products."""
LIGAND_BISECTIONS = 80
"""Bisection steps in log10 of the free cation when salts precipitate (2**-80 of 60 decades)."""
LIGAND_SPAN = 60.0
"""Decades below the unsaturated free-cation level where the salt search starts."""
DERIVATIVE_STEP = 1e-6
"""Step in x of the central difference used where salts precipitate."""
STATUSES = frozenset({"FOUND", "MEMORY", "DERIVED"})


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
class LigandAtX:
    """An acid-base system at the trial points, from the solver: its total (mol/L), the
    fraction of each protonation state (N, M) and their charges (most protonated first)."""

    total_molar: np.ndarray
    alpha: np.ndarray
    charges: tuple[int, ...]


@dataclass(frozen=True)
class MetalData:
    metals: Mapping[str, Metal]
    ligand_solids: tuple[LigandSolid, ...]
    inert_cations: frozenset[str]


@dataclass(frozen=True)
class MetalState:
    """The metal terms at N trial points (arrays of shape (N,), mol/L).

    ``pos`` and ``neg`` are the charge the dissolved metal species carry (add them to
    the solver's POS and NEG), ``dpos`` and ``dneg`` the x-derivatives, at fixed ionic
    strength, of ``pos + ligand_pos`` and ``neg + ligand_neg``; ``iz2`` the species' sum
    of c z² (ionic strength); ``oh_bound`` the hydroxide bound in hydroxo complexes,
    hydroxides and basic salts (mol OH- per L): what the metals cost in a dose.
    ``ligand_pos``, ``ligand_neg`` and ``ligand_iz2`` (all <= 0) correct the ligand
    systems' charge and c z² for the share held in salts; ``ligand_removed`` is that share
    per system.
    """

    pos: np.ndarray
    neg: np.ndarray
    dpos: np.ndarray
    dneg: np.ndarray
    iz2: np.ndarray
    oh_bound: np.ndarray
    ligand_pos: np.ndarray
    ligand_neg: np.ndarray
    ligand_iz2: np.ndarray
    ligand_removed: Mapping[str, np.ndarray]
    dissolved: Mapping[str, np.ndarray]
    species: Mapping[str, Mapping[str, np.ndarray]]
    precipitated: Mapping[str, np.ndarray]
    """Solid name -> mol of formula units per L (0 where undersaturated)."""
    saturation_index: Mapping[str, np.ndarray]
    """Solid name -> log10(IAP/Ks): 0 where the solid is present, < 0 where not."""


@dataclass(frozen=True)
class Sludge:
    """One precipitated solid at one point: mol per L and dry mass per L."""

    solid: str
    formula: str
    mol_per_l: float
    dry_g_per_l: float


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
    solid = Hydroxide(srec.text("name"), formula, log_ks,
                      molar_mass_of(formula, entry=key), source)
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
    return MetalData(MappingProxyType(metals), solids, frozenset(top.texts("inert_cations")))


def metal(key: str, data: MetalData | None = None) -> Metal:
    """The metal record for an ion key such as ``"Zn+2"``; unknown keys are an error."""
    metals = (data or metal_data()).metals
    if key not in metals:
        raise InvalidInput("metal", key, "no hydrolysis or solubility data; known: "
                           + ", ".join(sorted(metals)))
    return metals[key]


def unmodelled_cations(charges: Mapping[str, int]) -> tuple[str, ...]:
    """Cations (ion key -> charge) that are neither modelled here nor inert (Na+, K+ ...):
    the plan must say their hydrolysis and precipitation are not counted."""
    data = metal_data()
    return tuple(sorted(k for k, z in charges.items()
                        if z > 0 and k not in data.metals and k not in data.inert_cations))


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


# ----------------------------------------------------------------------------- one metal


def _log_ratios(m: Metal, log_h_act: np.ndarray, ad: np.ndarray) -> np.ndarray:
    """log10(c_n / c_free) of each species, shape (N, S)."""
    n = np.array([s.n for s in m.species], dtype=float)
    q = np.array([s.charge for s in m.species], dtype=float)
    lb = np.array([s.log_beta for s in m.species])
    return (lb - np.multiply.outer(log_h_act, n)
            + np.multiply.outer(ad, q**2 - m.charge**2))


def _log_sum(r: np.ndarray) -> np.ndarray:
    top = r.max(axis=1)
    return top + np.log10(np.exp((r - top[:, None]) * LN10).sum(axis=1))


def _log_free_saturated(m: Metal, log_h_act, ad) -> np.ndarray:
    """log10 of the free ion's concentration over the hydroxide."""
    return m.solid.log_ks + m.charge * log_h_act + ad * m.charge**2


def _species_terms(m: Metal, conc: np.ndarray, slope: np.ndarray):
    """Charges, c z², bound OH- and x-derivatives from species concentrations (N, S) and
    d log10 c / dx of each species (N, S)."""
    q = np.array([s.charge for s in m.species], dtype=float)
    n = np.array([s.n for s in m.species], dtype=float)
    dc = LN10 * conc * slope
    pos_w, neg_w = np.maximum(q, 0), np.maximum(-q, 0)
    return (conc @ pos_w, conc @ neg_w, dc @ pos_w, dc @ neg_w, conc @ (q * q), conc @ n)


# ----------------------------------------------------------------------------- the state


def _as_points(x, ad, log_kw):
    x = np.atleast_1d(np.asarray(x, dtype=float))
    ad = np.broadcast_to(np.asarray(ad, dtype=float), x.shape).astype(float)
    log_kw = np.broadcast_to(np.asarray(log_kw, dtype=float), x.shape).astype(float)
    if not np.all(np.isfinite(x)):
        raise InvalidInput("log10[H+]", x.tolist(), "must be finite")
    return x, ad, log_kw


def _totals(totals: Mapping[str, object], shape, data: MetalData) -> dict[str, np.ndarray]:
    unknown = [k for k in totals if k not in data.metals]
    if unknown:
        raise InvalidInput("metal", ", ".join(sorted(unknown)),
                           "no hydrolysis or solubility data; known: "
                           + ", ".join(sorted(data.metals)))
    out = {}
    for key, c in totals.items():
        arr = np.broadcast_to(np.asarray(c, dtype=float), shape).astype(float)
        if np.any(~np.isfinite(arr)) or np.any(arr < 0):
            raise InvalidInput(f"total of {key}", c, "must be a finite concentration >= 0")
        out[key] = arr
    return out


def metal_state(totals: Mapping[str, object], x, *, ad=0.0, log_kw=-PKW25,
                ligands: Mapping[str, LigandAtX] | None = None,
                precipitate: bool = True, data: MetalData | None = None,
                derivatives: bool = True) -> MetalState:
    """The metal terms of the charge balance at ``x = log10[H+]`` (mol/L).

    Parameters
    ----------
    totals : metal ion key (``"Zn+2"``) -> total concentration, mol/L (scalar or (N,)).
        A key with no data raises :class:`InvalidInput` naming it.
    x : log10 of the H+ concentration at each point, shape (N,).
    ad : A·D(I) of the Davies equation at each point (0: ideal solution).
    log_kw : log10 Kw (thermodynamic, activities) at each point (default 25 °C).
    ligands : acid-base systems that may precipitate with a cation (``"fluoride"``,
        ``"phosphate"``, ``"sulfate"``) at these points; omitted systems take no part.
    precipitate : False gives the supersaturated solution (no solid allowed).
    data : other constants than the packaged ones (tests, a user's own data).
    derivatives : False skips ``dpos``/``dneg`` where salts precipitate (NaN there).  Where
        they do, the derivatives are a central difference at the ligands' fractions as
        given (their own x-dependence is the solver's): good for a Newton step inside a
        bracket, not an exact Jacobian.

    Returns
    -------
    MetalState, whose ``pos - neg`` (plus the ligand corrections) rises with x.
    """
    data = data or metal_data()
    x, ad, log_kw = _as_points(x, ad, log_kw)
    tot = _totals(totals, x.shape, data)
    ligands = dict(ligands or {})
    acc = _Accumulator(x.shape)
    for key, c in tot.items():
        salts = [s for s in data.ligand_solids
                 if s.cation == key and s.ligand_system in ligands]
        if salts and precipitate:
            _with_salts(acc, data.metals[key], c, x, ad, log_kw, salts, ligands, derivatives)
        else:
            _hydroxide_only(acc, data.metals[key], c, x, ad, precipitate)
    return acc.state()


class _Accumulator:
    """Sums the metals' terms into one :class:`MetalState`."""

    def __init__(self, shape):
        self.sums = {k: np.zeros(shape) for k in
                     ("pos", "neg", "dpos", "dneg", "iz2", "oh_bound", "ligand_pos",
                      "ligand_neg", "ligand_iz2")}
        self.removed, self.dissolved, self.species = {}, {}, {}
        self.precipitated, self.si = {}, {}

    def add(self, **terms):
        for k, v in terms.items():
            self.sums[k] = self.sums[k] + v

    def state(self) -> MetalState:
        ro = MappingProxyType
        return MetalState(**self.sums, ligand_removed=ro(self.removed),
                          dissolved=ro(self.dissolved), species=ro(self.species),
                          precipitated=ro(self.precipitated), saturation_index=ro(self.si))


def _hydroxide_only(acc: _Accumulator, m: Metal, c, x, ad, precipitate: bool) -> None:
    log_h_act = x - ad
    r = _log_ratios(m, log_h_act, ad)
    log_s = _log_sum(r)
    with np.errstate(divide="ignore"):
        log_free_unsat = np.log10(c) - log_s
    log_free_sat = _log_free_saturated(m, log_h_act, ad)
    present = (log_free_unsat > log_free_sat) & (c > 0) & precipitate
    log_free = np.where(present, log_free_sat, log_free_unsat)
    conc = np.where(c[:, None] > 0, 10.0 ** (log_free[:, None] + r), 0.0)
    n = np.array([s.n for s in m.species], dtype=float)
    nbar = conc @ n / np.maximum(conc.sum(axis=1), np.finfo(float).tiny)
    slope = np.where(present[:, None], m.charge, nbar[:, None]) - n
    pos, neg, dpos, dneg, iz2, n_oh = _species_terms(m, conc, slope)
    dissolved = conc.sum(axis=1)
    solid = np.where(present, c - dissolved, 0.0)
    acc.add(pos=pos, neg=neg, dpos=dpos, dneg=dneg, iz2=iz2, oh_bound=n_oh + m.charge * solid)
    _record(acc, m, conc, dissolved, solid, log_free - log_free_sat)


def _record(acc, m: Metal, conc, dissolved, solid, si) -> None:
    acc.dissolved[m.key] = dissolved
    acc.species[m.key] = MappingProxyType({s.label: conc[:, i] for i, s in enumerate(m.species)})
    acc.precipitated[m.solid.name] = solid
    acc.si[m.solid.name] = si


# ----------------------------------------------------------------------------- salts


def _ligand_log_activity_factor(s: LigandSolid, lig: LigandAtX, ad) -> np.ndarray:
    """log10 of (activity of the named ligand state) / (dissolved ligand total)."""
    z = lig.charges[s.ligand_index]
    with np.errstate(divide="ignore"):
        return np.log10(lig.alpha[:, s.ligand_index]) - ad * z * z


def _salt_amounts(log_free, m: Metal, salts, ligands, log_oh_act, ad):
    """Mol/L of each salt when the free cation is 10**log_free (each salt alone takes its
    ligand down to saturation; one salt in the dose per ligand system)."""
    out = []
    for s in salts:
        lig = ligands[s.ligand_system]
        log_act_m = log_free - ad * m.charge**2
        log_lig_sat = ((s.log_ksp - s.cation_count * log_act_m - s.oh_count * log_oh_act)
                       / s.ligand_count - _ligand_log_activity_factor(s, lig, ad))
        with np.errstate(over="ignore"):
            free_lig = np.minimum(10.0 ** np.minimum(log_lig_sat, 300.0), lig.total_molar)
        out.append(np.maximum(lig.total_molar - free_lig, 0.0) / s.ligand_count)
    return out


def _solve_free_cation(m: Metal, c, log_s, salts, ligands, log_oh_act, ad):
    """log10 of the free cation where dissolved + salts = total (bisection, vectorized)."""
    with np.errstate(divide="ignore"):
        hi = np.log10(c) - log_s
    lo = hi - LIGAND_SPAN

    def excess(lf):
        held = sum(s.cation_count * p for s, p in
                   zip(salts, _salt_amounts(lf, m, salts, ligands, log_oh_act, ad), strict=True))
        return 10.0 ** (lf + log_s) + held - c

    for _ in range(LIGAND_BISECTIONS):
        mid = 0.5 * (lo + hi)
        over = excess(mid) > 0
        hi = np.where(over, mid, hi)
        lo = np.where(over, lo, mid)
    return 0.5 * (lo + hi)


def _with_salts(acc, m: Metal, c, x, ad, log_kw, salts, ligands, derivatives=True) -> None:
    c_solve = np.where(c > 0, c, 1e-300)

    def evaluate(xx):
        log_h_act = xx - ad
        log_oh_act = log_kw - xx + ad  # log10 a(OH-) = log10 Kw - log10 a(H+)
        r = _log_ratios(m, log_h_act, ad)
        log_s = _log_sum(r)
        dosed = [s for s in salts if s.in_dose]
        log_free = _solve_free_cation(m, c_solve, log_s, dosed, ligands, log_oh_act, ad)
        log_free_sat = _log_free_saturated(m, log_h_act, ad)
        capped = (log_free >= log_free_sat) & (c > 0)  # the hydroxide is present
        log_free = np.where(c > 0, np.minimum(log_free, log_free_sat), -np.inf)
        conc = 10.0 ** (log_free[:, None] + r)
        amounts = _salt_amounts(log_free, m, dosed, ligands, log_oh_act, ad)
        held = sum((s.cation_count * p for s, p in zip(dosed, amounts, strict=True)),
                   np.zeros_like(c))
        hydroxide = np.where(capped, np.maximum(c - conc.sum(axis=1) - held, 0.0), 0.0)
        return r, conc, log_free, log_free_sat, amounts, hydroxide, log_oh_act

    r, conc, log_free, log_free_sat, amounts, hydroxide, log_oh_act = evaluate(x)
    dosed = [s for s in salts if s.in_dose]
    slope = np.zeros_like(conc)  # derivatives by central difference below
    pos, neg, _, _, iz2, n_oh = _species_terms(m, conc, slope)
    lig_pos, lig_neg, removed, lig_iz2 = _ligand_corrections(dosed, amounts, ligands)
    oh_salts = sum((s.oh_count * p for s, p in zip(dosed, amounts, strict=True)), 0.0)
    if derivatives:
        hi_state = _charges_of(evaluate(x + DERIVATIVE_STEP), m, dosed, ligands)
        lo_state = _charges_of(evaluate(x - DERIVATIVE_STEP), m, dosed, ligands)
        dpos, dneg = ((hi - lo) / (2 * DERIVATIVE_STEP)
                      for hi, lo in zip(hi_state, lo_state, strict=True))
    else:
        dpos = dneg = np.full(x.shape, np.nan)
    acc.add(pos=pos, neg=neg, dpos=dpos, dneg=dneg, iz2=iz2, ligand_pos=lig_pos,
            ligand_neg=lig_neg, ligand_iz2=lig_iz2, oh_bound=n_oh + m.charge * hydroxide + oh_salts)
    for system, arr in removed.items():
        acc.removed[system] = acc.removed.get(system, 0.0) + arr
    _record(acc, m, conc, conc.sum(axis=1), hydroxide, log_free - log_free_sat)
    for s, p in zip(dosed, amounts, strict=True):
        acc.precipitated[s.name] = p
    for s in salts:
        acc.si[s.name] = _salt_si(s, m, log_free, conc, ligands, removed, log_oh_act, ad)


def _ligand_corrections(dosed, amounts, ligands):
    removed: dict[str, np.ndarray] = {}
    lig_pos = lig_neg = lig_iz2 = 0.0
    for s, p in zip(dosed, amounts, strict=True):
        lig = ligands[s.ligand_system]
        q = np.array(lig.charges, dtype=float)
        taken = s.ligand_count * p
        removed[s.ligand_system] = removed.get(s.ligand_system, 0.0) + taken
        lig_pos = lig_pos - taken * (lig.alpha @ np.maximum(q, 0))
        lig_neg = lig_neg - taken * (lig.alpha @ np.maximum(-q, 0))
        lig_iz2 = lig_iz2 - taken * (lig.alpha @ (q * q))
    return lig_pos, lig_neg, removed, lig_iz2


def _charges_of(evaluated, m: Metal, dosed, ligands):
    """POS and NEG contributions (metal species plus ligand corrections) of one evaluation."""
    _, conc, _, _, amounts, _, _ = evaluated
    q = np.array([s.charge for s in m.species], dtype=float)
    lig_pos, lig_neg, _, _ = _ligand_corrections(dosed, amounts, ligands)
    return conc @ np.maximum(q, 0) + lig_pos, conc @ np.maximum(-q, 0) + lig_neg


def _salt_si(s: LigandSolid, m: Metal, log_free, conc, ligands, removed, log_oh_act, ad):
    lig = ligands[s.ligand_system]
    dissolved = np.maximum(lig.total_molar - removed.get(s.ligand_system, 0.0), 0.0)
    with np.errstate(divide="ignore"):
        log_lig = np.log10(dissolved) + _ligand_log_activity_factor(s, lig, ad)
    log_iap = (s.cation_count * (log_free - ad * m.charge**2) + s.ligand_count * log_lig
               + s.oh_count * log_oh_act)
    return log_iap - s.log_ksp


# ----------------------------------------------------------------------------- reports


def solubility(key: str, pH, *, ad=0.0, data: MetalData | None = None) -> np.ndarray:
    """Total dissolved metal (mol/L) in equilibrium with its hydroxide at each pH
    (pH = -log10 a(H+)); the solubility curve of the solid."""
    m = metal(key, data)
    ph = np.atleast_1d(np.asarray(pH, dtype=float))
    ad = np.broadcast_to(np.asarray(ad, dtype=float), ph.shape)
    log_h_act = -ph
    r = _log_ratios(m, log_h_act, ad)
    return 10.0 ** (_log_free_saturated(m, log_h_act, ad) + _log_sum(r))


def minimum_solubility(key: str, *, ad: float = 0.0, data: MetalData | None = None
                       ) -> tuple[float, float]:
    """(pH, mol/L) of the least soluble point of the metal's hydroxide.

    log10 of the solubility is a log-sum-exp of lines in pH, hence convex: the bounded
    scalar minimum is the only one.
    """
    res = minimize_scalar(lambda p: float(np.log10(solubility(key, p, ad=ad, data=data))[0]),
                          bounds=(0.0, 14.0), method="bounded",
                          options={"xatol": 1e-6})
    return float(res.x), float(solubility(key, res.x, ad=ad, data=data)[0])


def sludge(state: MetalState, point: int = 0, data: MetalData | None = None
           ) -> tuple[Sludge, ...]:
    """The solids present at one point, with their dry mass (mol/L times molar mass)."""
    data = data or metal_data()
    formulas = {m.solid.name: (m.solid.formula, m.solid.molar_mass_g_mol)
                for m in data.metals.values()}
    formulas.update({s.name: (s.formula, s.molar_mass_g_mol) for s in data.ligand_solids})
    out = []
    for name, arr in state.precipitated.items():
        mol = float(np.asarray(arr)[point])
        if mol > 0:
            formula, mass = formulas[name]
            out.append(Sludge(name, formula, mol, mol * mass))
    return tuple(out)
