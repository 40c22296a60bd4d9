"""Outer loops: activity coefficients from the whole composition, and ion pairs.

The guaranteed path (``bracketed``) solves the charge balance for coefficients that
depend on the charge and the ionic strength alone (Davies).  Two things need more:

* the **specific-interaction (Pitzer) model**, whose coefficient of each species depends
  on the molality of every other (``carboy.model.pitzer``), and
* **ion pairs** (``data/ion_pairs.toml``; with the Pitzer model only those of its own
  set: MgOH+), which take part of a spectator cation and of a ligand (a state of a
  system, or OH-).  In practice NaSO4- and KSO4-: the file's CaOH+, MgOH+, CaSO4° and
  MgSO4° need calcium or magnesium as spectators, and those are modelled metals (a
  layout with metals takes no pairs; CaSO4° and MgSO4° form on the metal path instead,
  :mod:`carboy.model.metal_complexes`).

Both go the same way: an outer loop holds per point a term of each state (``shift``,
log10, added to the state's weight: ``problem.Amounts.shift``), an effective pKw and a
correction to the spectators' ionic strength; the guaranteed path solves the charge
balance with them held; the composition it gives sets new terms; the loop stops when
the terms agree to ``OUTER_TOL`` between rounds, each point on its own.

With the Pitzer model the inner solve is ideal (A = 0) and every coefficient is in the
terms: a state j (j protons lost from the top state) weighs
``10**(log beta_j - log10 gamma_j - j (log10 gamma_H + log10 s) - j x)`` with
x = log10[H+] in mol/L and s the mol/kg per mol/L of the solution (so that the
equilibria hold between molal activities; a common factor of a system's states
cancels), and ``log10 Kw' = -pKw + log10 a_w - log10 gamma_H - log10 gamma_OH
- 2 log10 s`` for [H+][OH-] in mol/L, a_w from the osmotic coefficient.

A pair P = M + L lumps into its ligand: the charge of M + L equals that of P, so the
charge balance is unchanged if L's row carries L and P together and M stays counted in
full as a spectator; the row's weight is multiplied by ``1 + Σ k_P [M]free`` (k_P the
conditional constant: K_P gamma_M gamma_L / gamma_P) and the ionic strength is
corrected by ``-½ [P] (z_M² + z_L² - z_P²)``.  The free amounts of each cation and
ligand at the lumped totals come from alternating mass balances
(:func:`split_pairs`).  The reported species are the free ions and the pairs.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from typing import TYPE_CHECKING

import numpy as np

from carboy.model import water
from carboy.model.activity import davies_d
from carboy.model.ion_pairs import load_ion_pairs
from carboy.model.solver.charge_balance import species_at
from carboy.model.solver.constants import COUPLED_ITER, LN10
from carboy.model.solver.layout import R_J_MOL_K, T_REF_K, Layout
from carboy.model.solver.pair_table import (
    LAGGED_ROUNDS,
    MAX_OUTER,
    OUTER_TOL,
    SPLIT_ROUNDS,
    Pair,
    Table,
)
from carboy.model.solver.problem import Problem

if TYPE_CHECKING:
    from carboy.model.pitzer import PitzerModel

DAVIES_PAIRS = ("CaOH+", "MgOH+", "NaSO4-", "KSO4-", "CaSO4", "MgSO4")
"""The ion pairs of the Davies path (``data/ion_pairs.toml``)."""
HYDRATED = {"CO2": 1}
"""Top states that take water to lose their first proton: CO2(aq) + H2O = HCO3- + H+
(pitzer.dat writes the carbonate reactions with H2O: CO3-2 + 2 H+ = CO2 + H2O).  With the
Pitzer model every state below such a top state weighs a_w more (log10 a_w times this
count added to its weight's exponent); with Davies or ideal a_w is 1."""
PITZER_PAIRS = ("MgOH+",)
"""The pairs the Pitzer parameter set treats as species (``pitzer.toml [[constants]]``;
PHREEQC's pitzer.dat has no CaOH+ or sulfate pairs: its parameters describe them)."""


def _pair_constant(rec, temperature_c: float) -> float:
    """log10 K of M + L = P at the temperature from an ion_pairs.toml record (a
    hydrolysis written with H2O and -H+ turned into M + OH- = P with pKw)."""
    log_k = rec.log_k(temperature_c)
    if rec.formed_from.get("H+", 0) == -1:
        log_k += water.pkw(temperature_c)
    return log_k


def _pitzer_constant(label: str, temperature_c: float) -> float:
    """log10 K of M + OH- = P from the Pitzer set's hydrolysis constant (van 't Hoff)."""
    from carboy.model.pitzer_data import load_pitzer_data  # the Pitzer path's: when taken

    for c in load_pitzer_data().constants:
        if label in c["reaction"].split("=")[1]:
            t = temperature_c + 273.15
            dh = float(c.get("dh_kj", 0.0)) * 1e3
            log_k = float(c["log_k"]) - dh / (R_J_MOL_K * LN10) * (1.0 / t - 1.0 / T_REF_K)
            return log_k + water.pkw(temperature_c)
    raise KeyError(label)


def _pairs(lay: Layout, model: str, temperature_c: float) -> tuple[Pair, ...]:
    """The pairs whose cation is a spectator ion and whose ligand is a state (or OH-)."""
    names = PITZER_PAIRS if model == "pitzer" else DAVIES_PAIRS
    flat = [lab for labs in lay.sys_labels for lab in labs]
    out = []
    for rec in load_ion_pairs():
        if rec.species not in names:
            continue
        reactants = [s for s, n in rec.formed_from.items() if n > 0 and s != "H2O"]
        cation = next((s for s in reactants if s in lay.ion_labels), None)
        if cation is None:
            continue
        if rec.formed_from.get("H+", 0) == -1:
            ligand, state, zl = "OH-", -1, -1
        else:
            ligand = next((s for s in reactants if s != cation), None)
            if ligand not in flat:
                continue
            state, zl = flat.index(ligand), lay.charge_map[ligand]
        zm, zp = lay.charge_map[cation], rec.charge
        log_k = (_pitzer_constant(rec.species, temperature_c) if model == "pitzer"
                 else _pair_constant(rec, temperature_c))
        out.append(Pair(rec.species, zp, lay.ion_labels.index(cation), state, log_k,
                        float(zm * zm + zl * zl - zp * zp)))
    return tuple(out)


def _table(lay: Layout, model: str, temperature_c: float) -> Table:
    pairs = _pairs(lay, model, temperature_c)
    raw = ("H+", "OH-", *lay.ion_labels, *(lab for labs in lay.sys_labels for lab in labs),
           *(p.label for p in pairs))
    labels = tuple(dict.fromkeys(raw))
    col = np.array([labels.index(lab) for lab in raw], dtype=int)
    j, s = len(lay.ion_labels), lay.flat_j.shape[0]
    charge = dict(lay.charge_map) | {p.label: p.charge for p in pairs}
    water = [float(HYDRATED.get(labs[0], 0)) * (k > 0)
             for labs in lay.sys_labels for k in range(len(labs))]
    return Table(labels, np.array([charge[lab] for lab in labels], dtype=float),
                 col[2:2 + j], col[2 + j:2 + j + s], col[2 + j + s:], pairs,
                 lay.flat_j.astype(float), np.array(water, dtype=float))


_TABLES: dict = {}


def table_of(lay: Layout, model: str, temperature_c: float) -> Table:
    """The species table of ``lay`` under ``model`` ("pitzer" or "davies"), cached
    beside the layout (layouts are cached and never change)."""
    key = (id(lay), model, float(temperature_c))
    hit = _TABLES.get(key)
    if hit is not None and hit[0] is lay:
        return hit[1]
    tab = _table(lay, model, float(temperature_c))
    if len(_TABLES) >= 512:
        _TABLES.clear()
    _TABLES[key] = (lay, tab)
    return tab


def has_pairs(lay: Layout, temperature_c: float) -> bool:
    """True when the Davies path of this layout forms ion pairs."""
    return bool(table_of(lay, "davies", temperature_c).pairs)


# --------------------------------------------------------------------------- the pairs

def split_pairs(tab: Table, k_cond: np.ndarray, metal_tot: np.ndarray, lig_lump: np.ndarray):
    """Free cations and ligands and the pairs, from the lumped ligand amounts.

    ``k_cond`` (P, N) conditional constants (per amount unit of the arrays),
    ``metal_tot`` (P, N) the total of each pair's cation, ``lig_lump`` (P, N) the lumped
    amount of each pair's ligand (free and paired).  Returns (pairs (P, N), factor
    (P, N)): each pair's amount and, per pair, ``lumped / free`` of its ligand.  A pair
    whose cation and ligand take part in no other pair has the closed form
    c = k M L' with M, L' the free amounts (a quadratic); otherwise alternating mass
    balances, to a relative change of 1e-13.
    """
    m_key = [pr.ion for pr in tab.pairs]
    l_key = [pr.state for pr in tab.pairs]
    if len(set(m_key)) == len(m_key) and len(set(l_key)) == len(l_key):
        k, m, lig = k_cond, metal_tot, lig_lump
        b = k * (m + lig) + 1.0
        c = 2.0 * k * m * lig / (b + np.sqrt(np.maximum(b * b - 4.0 * k * k * m * lig, 0.0)))
        with np.errstate(divide="ignore", invalid="ignore"):
            free = np.where(lig > 0, lig - c, 1.0)
            factor = np.where(lig > 0, lig / free, 1.0 + k * (m - c))
        return c, factor
    same_l = [[b for b in range(len(l_key)) if l_key[b] == l_key[a]] for a in range(len(l_key))]
    same_m = [[b for b in range(len(m_key)) if m_key[b] == m_key[a]] for a in range(len(m_key))]
    m_free, l_free = metal_tot.copy(), lig_lump.copy()
    for _ in range(SPLIT_ROUNDS):
        km = k_cond * m_free
        lf = np.array([1.0 + km[row].sum(axis=0) for row in same_l])
        l_free = lig_lump / lf
        kl = k_cond * l_free
        mf = np.array([1.0 + kl[row].sum(axis=0) for row in same_m])
        new = metal_tot / mf
        if np.all(np.abs(new - m_free) <= 1e-13 * np.maximum(metal_tot, 1e-300)):
            m_free = new
            break
        m_free = new
    factor = np.array([1.0 + (k_cond * m_free)[row].sum(axis=0) for row in same_l])
    return k_cond * m_free * (lig_lump / factor), factor


# --------------------------------------------------------------------------- one round

@dataclass(eq=False, repr=False)
class Terms:
    """What the outer loop holds for the inner solve, per point."""

    shift: np.ndarray        # (S, N)
    pkw: np.ndarray          # (N,)
    ispec: np.ndarray        # (N,)


def _inner(pr0: Problem, terms: Terms) -> Problem:
    return replace(pr0, am=replace(pr0.am, shift=terms.shift), pkw=terms.pkw,
                   ispec=terms.ispec)


def lumped_table(pr: Problem, tab: Table, x: np.ndarray, ionic: np.ndarray):
    """(N, U) mol/L of every column at the solved x (pairs still lumped in their
    ligands, pair columns 0), A·D (None with A = 0), and the systems' fractions (S, N)
    and totals (K, N) there."""
    lay, n = pr.lay, x.shape[0]
    ad = pr.a_dh * davies_d(ionic) if pr.a_dh != 0.0 else None
    log_kw = -pr.pkw + (0.0 if ad is None else 2.0 * ad)
    out = np.zeros((n, len(tab.labels)))
    out[:, 0] = np.exp(LN10 * x)
    out[:, 1] = np.exp(LN10 * (log_kw - x))
    ions = pr.totals[:, lay.ion_cols]
    for i, c in enumerate(tab.ion_cols.tolist()):
        out[:, c] += ions[:, i]
    st = species_at(x, ad, log_kw, lay, pr.am)
    for i, c in enumerate(tab.state_cols.tolist()):
        out[:, c] += st["conc"][i]
    return out, ad, (st["alpha"], np.array(st["ceff"], copy=True))


def pair_shares(tab: Table, table: np.ndarray, lg: np.ndarray, per_molar: np.ndarray):
    """Split the lumped ``table`` (N, U) in place into free ions and pairs, with the
    log10 coefficients ``lg`` (N, U) and ``per_molar`` (N,) (the unit of K per mol/L:
    mol/kg per mol/L for molal constants, 1 for molar).  Returns (lift (S+1, N): log10
    of lumped/free for each state and, last, OH-; the ionic-strength correction (N,))."""
    n = table.shape[0]
    s = tab.state_cols.shape[0]
    lift = np.zeros((s + 1, n))
    if not tab.pairs:
        return lift, np.zeros(n)
    cols = [(tab.ion_cols[p.ion], 1 if p.state < 0 else tab.state_cols[p.state], c)
            for p, c in zip(tab.pairs, tab.pair_cols.tolist())]
    k = np.array([p.log_k for p in tab.pairs])[:, None] + np.array(
        [lg[:, m] + lg[:, lc] - lg[:, pc] for m, lc, pc in cols])
    k_cond = np.exp(LN10 * k) * per_molar[None, :]
    metal = np.array([table[:, m] for m, _, _ in cols])
    lig = np.array([table[:, lc] for _, lc, _ in cols])
    amount, factor = split_pairs(tab, k_cond, metal, lig)
    corr = np.zeros(n)
    done_l: set = set()
    for a, (p, (m, lc, pc)) in enumerate(zip(tab.pairs, cols)):
        table[:, pc] += amount[a]
        table[:, m] -= amount[a]
        corr -= 0.5 * p.dz2 * amount[a]
        if lc not in done_l:
            done_l.add(lc)
            table[:, lc] /= factor[a]
            lift[p.state] = np.log10(factor[a])   # state -1 is the OH- row (last)
    return lift, corr


# --------------------------------------------------------------------------- the loops

@dataclass(eq=False, repr=False)
class Outcome:
    """A settled outer loop: the root, the species and the coefficients."""

    x: np.ndarray
    ionic: np.ndarray               # the inner solve's I (mol/L; 0 for Pitzer)
    converged: np.ndarray
    iterations: int
    table: np.ndarray               # (N, U) mol/L, free ions and pairs
    log_gamma: np.ndarray           # (N, U) log10
    ph: np.ndarray
    systems: tuple                  # (alpha (S, N), totals (K, N)): lumped fractions
    extra: dict                     # Pitzer: ionic strength (mol/kg), a_w, osmotic φ


def _davies_lg(tab: Table, ad: np.ndarray | None) -> np.ndarray:
    z2 = tab.charges * tab.charges
    if ad is None:
        return np.zeros((1, len(tab.labels)))
    return -ad[:, None] * z2[None, :]


def solve_with_pairs(pr0: Problem, temperature_c: float, x, ionic, solved=None) -> Outcome:
    """The Davies (or ideal) path with ion pairs: outer loop on the pairs' terms, from
    the start (``x``, ``ionic``).  ``solved`` (N,) bool, where given, says the start is
    the root of ``pr0`` itself (no pairs: the first round's problem) and where it
    settled: the first round takes it as it is (the pairs' terms at the root without
    them, without a solve).  A point settles only when a round moves no term more than
    ``OUTER_TOL``, whatever its start.  A few points (``PYTHON_PAIRS_MAX``) take the
    plain-Python loop (``single_pairs``) where it takes them: numpy's per-call cost
    would dominate, some 0.3 ms a round whatever the number of points."""
    tab = table_of(pr0.lay, "davies", temperature_c)
    few = _pairs_each(pr0, tab, x, ionic, solved) if x.shape[0] <= PYTHON_PAIRS_MAX else None
    if few is not None:
        return few
    from carboy.model.solver.bracketed import coupled_then_nested  # the batch paths' own
    from carboy.model.solver.coupled import solve_coupled

    s, n = pr0.lay.flat_j.shape[0], x.shape[0]
    pkw = float(pr0.pkw)
    terms = Terms(np.zeros((s, n)), np.full(n, pkw), pr0.ispec.copy())
    conv = np.zeros(n, dtype=bool)
    rounds = 0
    for rounds in range(1, MAX_OUTER + 1):  # noqa: B007 (used after the loop)
        inner = _inner(pr0, terms)
        if rounds == 1 and solved is not None:
            ok = np.asarray(solved, dtype=bool)
        elif rounds <= LAGGED_ROUNDS:   # one Newton step from the last round's roots
            xs, i_s, ok, _ = solve_coupled(inner, max_iter=1, x0=x, i0=ionic)
            fine = np.isfinite(xs) & np.isfinite(i_s) & (i_s > 0.0)
            x, ionic, ok = np.where(fine, xs, x), np.where(fine, i_s, ionic), ok & fine
        else:   # from the last round's roots: the coupled iteration, then the guaranteed path
            x, ionic, ok, _ = coupled_then_nested(inner, x, ionic, COUPLED_ITER)
        table, ad, systems = lumped_table(inner, tab, x, ionic)
        lg = np.broadcast_to(_davies_lg(tab, ad), table.shape).copy()
        lift, corr = pair_shares(tab, table, lg, np.ones(n))
        new = Terms(lift[:s], pkw - lift[s], pr0.ispec + corr)
        conv = ok & (_moved(new, terms) <= OUTER_TOL)
        if conv.all():
            break
        terms = new
    return Outcome(x, ionic, conv, rounds, table, lg, -(x + lg[:, 0]), systems, {})


PYTHON_PAIRS_MAX = 16
"""Batches with pairs up to this many points take the plain-Python outer loop."""


def _pairs_each(pr0: Problem, tab: Table, x, ionic, solved) -> Outcome | None:
    """:func:`solve_with_pairs` point by point in plain Python
    (``single_pairs.solve_pairs_one``, from the same starts), or None where that path
    cannot take every point (held systems, metals, a layout it does not know, a round
    without a root)."""
    lay = pr0.lay
    if (not lay.python_path or lay.metals is not None or pr0.am.held is not None
            or pr0.am.shift is not None or np.ndim(pr0.pkw) != 0 or not tab.pairs):
        return None
    from carboy.model.solver.single_pairs import solve_pairs_one

    pkw = float(pr0.pkw)
    got = []
    at_root = [False] * x.shape[0] if solved is None else np.asarray(solved, bool).tolist()
    for row, x0, i0, root in zip(pr0.totals.tolist(), x.tolist(), ionic.tolist(), at_root,
                                 strict=True):
        started = math.isfinite(x0) and math.isfinite(i0)
        one = solve_pairs_one(lay, tab, row, pkw, pr0.a_dh, max_iter=COUPLED_ITER,
                              x0=x0 if started else None,
                              i0=max(i0, 1e-12) if started else None, at_root=root and started)
        if one is None:
            return None
        got.append(one)
    ad = np.array([g.ad for g in got])
    x = np.array([g.x for g in got])
    lg = -ad[:, None] * (tab.charges * tab.charges)[None, :]
    alpha = np.array([[f for fr in g.fractions for f in fr] for g in got]).T
    return Outcome(x, np.array([g.ionic for g in got]), np.array([g.converged for g in got]),
                   max(g.rounds for g in got), np.array([g.table for g in got]), lg,
                   ad - x, (alpha.reshape(lay.flat_j.shape[0], len(got)), pr0.am.c.copy()),
                   {})


def _moved(new: Terms, old: Terms) -> np.ndarray:
    """(N,) the largest change of any term between two rounds."""
    return np.maximum(np.abs(new.shift - old.shift).max(axis=0, initial=0.0),
                      np.abs(new.pkw - old.pkw))


def _pitzer_terms(tab: Table, lg: np.ndarray, lw: np.ndarray, log_s: np.ndarray,
                  pkw: float, lift: np.ndarray, ispec) -> Terms:
    """The inner solve's terms from log10 coefficients ``lg`` (N, U), log10 a_w and
    log10 s (N,), and the pairs' lift (S+1, N)."""
    lg_h = lg[:, 0] + log_s
    shift = (-(lg[:, tab.state_cols].T + np.multiply.outer(tab.state_j, lg_h)) + lift[:-1]
             + np.multiply.outer(tab.state_water, lw))
    log_kw = -pkw + lw - lg[:, 0] - lg[:, 1] - 2.0 * log_s + lift[-1]
    return Terms(shift, -log_kw, ispec)


def solve_pitzer(pr0: Problem, model: PitzerModel, tab: Table, per_molar: np.ndarray,
                 x, lg=None, water=None) -> Outcome:
    """The Pitzer path: outer loop on every species' coefficient (``per_molar`` (N,):
    mol/kg per mol/L; ``lg`` (N, U) a start for the log10 coefficients).  ``water``
    (``molality.OpenWater``, with held systems): the water per litre follows what the
    held systems hold, settled with the coefficients (``per_molar`` its start)."""
    from carboy.model.solver.bracketed import solve_nested

    n, s = x.shape[0], pr0.lay.flat_j.shape[0]
    pkw = float(pr0.pkw)
    log_s = np.log10(per_molar)
    lg = np.zeros((n, len(tab.labels))) if lg is None else lg
    lift = np.zeros((s + 1, n))
    terms = _pitzer_terms(tab, lg, np.zeros(n), log_s, pkw, lift, pr0.ispec)
    conv = np.zeros(n, dtype=bool)
    ionic = pr0.ispec + 1e-7
    res = None
    rounds = 0
    for rounds in range(1, MAX_OUTER + 1):  # noqa: B007 (used after the loop)
        pr = _inner(pr0, terms)
        x, ionic, ok, _ = solve_nested(pr, x, ionic)
        table, _, systems = lumped_table(pr, tab, x, ionic)
        lift, _ = pair_shares(tab, table, lg, per_molar)
        res = model.evaluate(table * per_molar[:, None])
        lg = res.ln_gamma / LN10
        if water is not None and pr0.am.mask is not None:   # the water of what is held
            per_molar = 1.0 / water.at(systems[1][pr0.am.mask].T, slice(None))
            log_s = np.log10(per_molar)
        new = _pitzer_terms(tab, lg, np.log10(res.water_activity), log_s, pkw, lift,
                            pr0.ispec)
        conv = ok & (_moved(new, terms) <= OUTER_TOL)
        terms = new
        if conv.all():
            break
    ph = -(x + log_s + lg[:, 0])
    extra = {"ionic_strength_molal": res.ionic_strength_molal,
             "water_activity": res.water_activity, "osmotic": res.osmotic,
             "valid": res.valid,
             "point_warnings": model.point_warnings(table * per_molar[:, None],
                                                    res.ionic_strength_molal),
             "water_kg_per_l": 1.0 / per_molar}
    return Outcome(x, ionic, conv, rounds, table, lg, ph, systems, extra)


_MODELS: dict = {}


def pitzer_for(tab: Table, temperature_c: float) -> PitzerModel:
    """The Pitzer model of a table's species (ions outside the set: Davies fallback),
    kept beside the table (tables are cached and never change)."""
    key = (id(tab), float(temperature_c))
    hit = _MODELS.get(key)
    if hit is not None and hit[0] is tab:
        return hit[1]
    from carboy.model.pitzer import pitzer_model  # the Pitzer path's: when it is taken

    charges = {lab: int(z) for lab, z in zip(tab.labels, tab.charges.tolist())}
    model = pitzer_model(tab.labels, temperature_c, fallback="davies", charges=charges)
    if len(_MODELS) >= 512:   # as the layouts' other caches: bounded
        _MODELS.clear()
    _MODELS[key] = (tab, model)
    return model


__all__ = ["DAVIES_PAIRS", "MAX_OUTER", "OUTER_TOL", "PITZER_PAIRS", "Outcome", "Pair",
           "Table", "has_pairs", "pitzer_for", "solve_pitzer", "solve_with_pairs",
           "split_pairs", "table_of"]
