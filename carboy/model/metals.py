"""Metal cations in the charge balance: hydrolysis, and hydroxide or salt precipitation.

Every function here is a pure, vectorized function of ``x = log10[H+]`` (the
concentration, as in ``speciation.py``) that a charge-balance solver can call at each
trial point.  For each metal with a total concentration it gives the dissolved species
(mononuclear hydroxo complexes), whether the hydroxide or oxide is present (decided by
saturation, never assumed), the amount precipitated, the positive and negative charge
the dissolved species carry, and the hydroxide the metal has bound (what it costs in a
dose).  Calcium salts of fluoride, phosphate and sulfate are handled the same way, with
the ligand's fractions at ``x`` supplied by the caller.  The data (``data/metals.toml``,
each constant with its source) is read by :mod:`carboy.model.metal_data`.

Monotonicity.  At a fixed ionic strength the metal terms keep the solver's
``POS(x) = NEG(x)`` monotone: a hydrolysis ladder is an acid-base ladder (the positive
charge rises and the negative falls with x); with the solid present the free ion is
``*Ks {H+}^z`` and every species is a power of [H+] whose sign follows its charge; the
two pieces meet continuously where the solution just saturates.  A salt that precipitates
takes ``a`` cations of charge z and ``b`` ligands whose mean charge is at most their
fully deprotonated charge, so it removes at least as much positive as negative charge,
and less of it precipitates as x rises: ``POS - NEG`` still rises with x.

Derivatives.  Each state carries the derivatives of the charges and of Σ c z² with
respect to x and to A·D (the solver's Newton steps on x and the ionic strength), in
closed form: where a salt precipitates, the free cation's own derivative follows from
the mass balance by implicit differentiation, with the ligand's fractions moving as an
acid-base ladder's do (the ``alpha`` given must be the ladder's fractions at x and A·D,
as the solver's are).  Sums are weighted sums (``einsum``), never matrix products: the
solver calls this at every step and uses no BLAS.

Activity: ``ad`` is A·D(I) of the Davies equation (log10 gamma_z = -ad z²; 0 = ideal),
as in ``speciation.py``.  The constants are for 25 °C; there is no temperature
correction.

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

from carboy.errors import InvalidInput
from carboy.model.metal_data import (  # noqa: F401 (re-exported: the public metal API)
    PKW25,
    STATUSES,
    Hydroxide,
    HydroxoSpecies,
    LigandSolid,
    Metal,
    MetalData,
    charge_bounds,
    metal,
    metal_data,
    unmodelled_cations,
)

LN10 = math.log(10.0)
LIGAND_SPAN = 60.0
"""Decades below the unsaturated free-cation level where the salt search starts."""
LIGAND_STEPS = 100
"""Safeguarded Newton steps (bisection where a step leaves the bracket, or is not half
the one two steps before) on log10 of the free cation when salts precipitate."""
LIGAND_TOL = 1e-13
"""The free-cation search stops when its step in log10 is below this."""

_SUMS = ("pos", "neg", "iz2", "dpos", "dneg", "diz2", "apos", "aneg", "aiz2", "oh_bound",
         "ligand_pos", "ligand_neg", "ligand_iz2")


@dataclass(frozen=True)
class LigandAtX:
    """An acid-base system at the trial points, from the solver: its total (mol/L), the
    fraction of each protonation state (N, M) and their charges (most protonated first)."""

    total_molar: np.ndarray
    alpha: np.ndarray
    charges: tuple[int, ...]


@dataclass(frozen=True)
class MetalState:
    """The metal terms at N trial points (arrays of shape (N,), mol/L).

    ``pos`` and ``neg`` are the charge the dissolved metal species carry (add them to
    the solver's POS and NEG), ``iz2`` the species' sum of c z² (ionic strength);
    ``dpos``, ``dneg`` and ``diz2`` the x-derivatives, at fixed ionic strength, of
    ``pos + ligand_pos``, ``neg + ligand_neg`` and ``iz2 + ligand_iz2``; ``apos``,
    ``aneg`` and ``aiz2`` their derivatives with respect to A·D at fixed x.
    ``oh_bound`` is the hydroxide bound in hydroxo complexes, hydroxides and basic salts
    (mol OH- per L): what the metals cost in a dose.  ``ligand_pos``, ``ligand_neg`` and
    ``ligand_iz2`` (all <= 0) correct the ligand systems' charge and c z² for the share
    held in salts; ``ligand_removed`` is that share per system.
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
    diz2: np.ndarray | None = None
    apos: np.ndarray | None = None
    aneg: np.ndarray | None = None
    aiz2: np.ndarray | None = None


@dataclass(frozen=True)
class Sludge:
    """One precipitated solid at one point: mol per L and dry mass per L."""

    solid: str
    formula: str
    mol_per_l: float
    dry_g_per_l: float


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
    derivatives : accepted for compatibility; the derivatives are closed forms and
        always given (where salts precipitate, at the ligands' fractions as given).

    Returns
    -------
    MetalState, whose ``pos - neg`` (plus the ligand corrections) rises with x.
    """
    data = data or metal_data()
    x, ad, log_kw = _as_points(x, ad, log_kw)
    tot = _totals(totals, x.shape, data)
    return state_of(tot, x, ad, log_kw, dict(ligands or {}), precipitate, data)


def state_of(tot: Mapping[str, np.ndarray], x, ad, log_kw, ligands: Mapping[str, LigandAtX],
             precipitate: bool, data: MetalData, *, detail: bool = True):
    """:func:`metal_state` of checked arrays (the solver's entry: no validation).

    With ``detail`` False only the sums are worked out (the solver's trial points): a
    dict of the arrays named as :class:`MetalState`'s charge and derivative fields."""
    acc = _Accumulator(x.shape, detail)
    for key, c in tot.items():
        m = data.metals[key]
        salts = [s for s in data.ligand_solids
                 if s.cation == key and s.ligand_system in ligands]
        dosed = [s for s in salts if s.in_dose]
        if dosed and precipitate:
            _with_salts(acc, m, c, x, ad, log_kw, salts, dosed, ligands)
        else:
            _hydroxide_only(acc, m, c, x, ad, precipitate)
    return acc.state() if detail else acc.sums


class _Accumulator:
    """Sums the metals' terms into one :class:`MetalState`."""

    def __init__(self, shape, detail: bool = True):
        zero = np.zeros(shape)
        self.sums = dict.fromkeys(_SUMS, zero)
        self.detail = detail
        self.removed, self.dissolved, self.species = {}, {}, {}
        self.precipitated, self.si = {}, {}

    def add(self, **terms):
        sums = self.sums
        for k, v in terms.items():
            sums[k] = sums[k] + v

    def state(self) -> MetalState:
        ro = MappingProxyType
        return MetalState(**self.sums, ligand_removed=ro(self.removed),
                          dissolved=ro(self.dissolved), species=ro(self.species),
                          precipitated=ro(self.precipitated), saturation_index=ro(self.si))


def _log_ratios(m: Metal, log_h_act: np.ndarray, ad: np.ndarray) -> np.ndarray:
    """log10(c_n / c_free) of each species, shape (N, S)."""
    n, q, lb = m.arrays
    return (lb - np.multiply.outer(log_h_act, n)
            + np.multiply.outer(ad, q * q - m.charge**2))


def _log_sum(r: np.ndarray) -> np.ndarray:
    top = r.max(axis=1)
    return top + np.log10(np.exp((r - top[:, None]) * LN10).sum(axis=1))


def _log_free_saturated(m: Metal, log_h_act, ad) -> np.ndarray:
    """log10 of the free ion's concentration over the hydroxide."""
    return m.solid.log_ks + m.charge * log_h_act + ad * m.charge**2


def _weighted(a: np.ndarray, w: np.ndarray) -> np.ndarray:
    """(N,) sum over species of ``a`` (N, S) times ``w`` (S,), without BLAS."""
    return np.einsum("ns,s->n", a, w)


def _species_terms(m: Metal, conc: np.ndarray, slope_x: np.ndarray, slope_ad: np.ndarray):
    """Charges, c z², bound OH- and their derivatives from the species concentrations
    (N, S) and d log10 c / dx, d log10 c / d(A·D) of each species (N, S)."""
    n, q, _ = m.arrays
    pos_w, neg_w, z2_w = np.maximum(q, 0), np.maximum(-q, 0), q * q
    dcx, dca = LN10 * conc * slope_x, LN10 * conc * slope_ad
    return dict(pos=_weighted(conc, pos_w), neg=_weighted(conc, neg_w),
                iz2=_weighted(conc, z2_w), dpos=_weighted(dcx, pos_w),
                dneg=_weighted(dcx, neg_w), diz2=_weighted(dcx, z2_w),
                apos=_weighted(dca, pos_w), aneg=_weighted(dca, neg_w),
                aiz2=_weighted(dca, z2_w), oh_bound=_weighted(conc, n))


def _hydroxide_only(acc: _Accumulator, m: Metal, c, x, ad, precipitate: bool) -> None:
    n, q, _ = m.arrays
    log_h_act = x - ad
    r = _log_ratios(m, log_h_act, ad)
    log_s = _log_sum(r)
    with np.errstate(divide="ignore"):
        log_free_unsat = np.log10(c) - log_s
    log_free_sat = _log_free_saturated(m, log_h_act, ad)
    present = (log_free_unsat > log_free_sat) & (c > 0) & precipitate
    log_free = np.where(present, log_free_sat, log_free_unsat)
    conc = np.where(c[:, None] > 0, np.exp(LN10 * (log_free[:, None] + r)), 0.0)
    total = np.maximum(conc.sum(axis=1), np.finfo(float).tiny)
    w = n + q * q - m.charge**2                       # d r_n / d(A·D)
    nbar, wbar = _weighted(conc, n) / total, _weighted(conc, w) / total
    # unsaturated: the ladder's shares move; saturated: the free ion follows *Ks {H+}^z
    slope_x = np.where(present[:, None], float(m.charge), nbar[:, None]) - n
    slope_ad = np.where(present[:, None], w - m.charge + m.charge**2, w - wbar[:, None])
    terms = _species_terms(m, conc, slope_x, slope_ad)
    dissolved = conc.sum(axis=1)
    solid = np.where(present, c - dissolved, 0.0)
    terms["oh_bound"] = terms["oh_bound"] + m.charge * solid
    acc.add(**terms)
    if acc.detail:
        _record(acc, m, conc, dissolved, solid, log_free - log_free_sat)


def _record(acc, m: Metal, conc, dissolved, solid, si) -> None:
    acc.dissolved[m.key] = dissolved
    acc.species[m.key] = MappingProxyType({s.label: conc[:, i] for i, s in enumerate(m.species)})
    acc.precipitated[m.solid.name] = solid
    acc.si[m.solid.name] = si


# ----------------------------------------------------------------------------- salts


@dataclass(frozen=True)
class _Salts:
    """The salts of one cation in the dose at the trial points, stacked (P salts, N
    points): a cations and b ligands each (``ab`` = a/b, ``k`` = a/b too: the slope of
    the saturation level in u), the ligand's total, and ``lsat0`` with
    log10(dissolved ligand at saturation) = lsat0 - k u, u = log10[cation]; ``gx`` and
    ``ga`` are the derivatives of ``lsat0`` by x and by A·D.  ``ladders`` holds each
    ligand's (j, c, jbar, cbar) (see :func:`_ladder_moments`)."""

    solids: tuple[LigandSolid, ...]
    ligands: tuple[LigandAtX, ...]
    ladders: tuple
    a: np.ndarray          # (P, 1)
    b: np.ndarray          # (P, 1)
    k: np.ndarray          # (P, 1)
    total: np.ndarray      # (P, N)
    lsat0: np.ndarray      # (P, N)
    gx: np.ndarray         # (P, N)
    ga: np.ndarray         # (P, N)


@lru_cache(maxsize=64)
def _ladder(charges: tuple[int, ...]) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(j, c, weights) of a ladder of ``charges``: each state's protons lost from the top,
    its activity term (log10 of the state's weight carries -j x - 2 A·D c) and its
    (M, 3) positive charge, negative charge and z²."""
    q = np.array(charges, dtype=float)
    j = np.arange(q.shape[0], dtype=float)
    c = 0.5 * (q[0] ** 2 - q * q) - 0.5 * j
    return j, c, np.stack([np.maximum(q, 0), np.maximum(-q, 0), q * q], axis=1)


def _ladder_moments(lig: LigandAtX) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """(j, c, jbar, cbar): see :func:`_ladder`, with the means of j and c at the points.
    The fractions move with x and A·D as d alpha_j = -ln10 alpha_j ((j - jbar) dx
    + 2 (c_j - cbar) d(A·D))."""
    j, c, _ = _ladder(tuple(lig.charges))
    jc = np.einsum("nm,mk->kn", lig.alpha, np.stack([j, c], axis=1))
    return j, c, jc[0], jc[1]


def _salts_at(m: Metal, dosed, ligands, ad, log_oh_act) -> _Salts:
    rows = {k: [] for k in ("lsat0", "gx", "ga", "total")}
    ligs, ladders = [], []
    for s in dosed:
        lig = ligands[s.ligand_system]
        zl = lig.charges[s.ligand_index]
        with np.errstate(divide="ignore"):
            lf = np.log10(lig.alpha[:, s.ligand_index]) - ad * zl * zl
        a, b = s.cation_count, s.ligand_count
        ladder = _ladder_moments(lig)
        j, c, jbar, cbar = ladder
        rows["lsat0"].append((s.log_ksp + a * ad * m.charge**2 - s.oh_count * log_oh_act) / b
                             - lf)
        rows["gx"].append(s.oh_count / b + (j[s.ligand_index] - jbar))
        rows["ga"].append((a * m.charge**2 - s.oh_count) / b + zl * zl
                          + 2.0 * (c[s.ligand_index] - cbar))
        rows["total"].append(lig.total_molar)
        ligs.append(lig)
        ladders.append(ladder)
    a = np.array([[s.cation_count] for s in dosed], dtype=float)
    b = np.array([[s.ligand_count] for s in dosed], dtype=float)
    return _Salts(tuple(dosed), tuple(ligs), tuple(ladders), a, b, a / b,
                  **{k: np.array(v) for k, v in rows.items()})


def _free_ligand(lsat0, k, total, u) -> tuple[np.ndarray, np.ndarray]:
    """(dissolved ligand, True where the salt is present) of each salt (P, n) at
    log10[cation] = u (n,), from its saturation level and total (P, n)."""
    sat = np.exp(LN10 * np.minimum(lsat0 - k * u, 300.0))
    present = sat < total
    return np.where(present, sat, total), present


def _excess(u, log_s, c, k, lsat0, total):
    """Dissolved plus held in salts, less the total, and its u-derivative / ln 10."""
    dissolved = np.exp(LN10 * (u + log_s))
    free, present = _free_ligand(lsat0, k, total, u)
    held = (k * (total - free)).sum(axis=0)            # a/b per ligand taken
    slope = (k * k * np.where(present, free, 0.0)).sum(axis=0)
    return dissolved + held - c, dissolved + slope


def _solve_free_cation(c, log_s, salts: _Salts) -> np.ndarray:
    """log10 of the free cation where dissolved + salts = total: safeguarded Newton (a
    bisection where a step leaves the bracket) at the points where some salt is present
    at the unsaturated level, the others keep that level."""
    with np.errstate(divide="ignore"):
        u = np.log10(c) - log_s
    k = salts.k
    e, slope = _excess(u, log_s, c, k, salts.lsat0, salts.total)
    idx = np.flatnonzero(e > 0)
    if idx.size == 0:
        return u
    whole = idx.size == u.size
    hi = u[idx]
    lo, ua, ea, sa = hi - LIGAND_SPAN, hi.copy(), e[idx], slope[idx]
    ca, ls = (c, log_s) if whole else (c[idx], log_s[idx])
    lsat0, total = ((salts.lsat0, salts.total) if whole
                    else (salts.lsat0[:, idx], salts.total[:, idx]))
    # the last two steps of each point: a Newton step that is not half the one two steps
    # before becomes a bisection (Newton can bounce about a kink, where a salt appears)
    last = np.full((2, idx.size), np.inf)
    for _ in range(LIGAND_STEPS):
        step = -ea / (LN10 * sa)
        small = np.abs(step) < LIGAND_TOL   # converged (the bracket may sit on u itself)
        nxt = ua + step
        out = ~((nxt > lo) & (nxt < hi) & (np.abs(step) <= 0.5 * last[0]) | small)
        nxt = np.where(out, 0.5 * (lo + hi), nxt)
        last = np.stack([last[1], np.abs(nxt - ua)])
        fin = small | (np.abs(nxt - ua) < LIGAND_TOL) | (hi - lo < LIGAND_TOL)
        u[idx] = nxt
        if fin.all():
            break
        if fin.any():
            keep = ~fin
            idx, nxt, lo, hi, ca, ls = (idx[keep], nxt[keep], lo[keep], hi[keep], ca[keep],
                                        ls[keep])
            lsat0, total, last = lsat0[:, keep], total[:, keep], last[:, keep]
        ea, sa = _excess(nxt, ls, ca, k, lsat0, total)
        hi = np.where(ea >= 0, nxt, hi)
        lo = np.where(ea < 0, nxt, lo)
        ua = nxt
    return u


def _with_salts(acc, m: Metal, c, x, ad, log_kw, salts, dosed, ligands) -> None:
    n, q, _ = m.arrays
    log_h_act, log_oh_act = x - ad, log_kw - x + ad  # log10 a(OH-) = log10 Kw - log10 a(H+)
    r = _log_ratios(m, log_h_act, ad)
    log_s = _log_sum(r)
    at = _salts_at(m, dosed, ligands, ad, log_oh_act)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        u = _solve_free_cation(np.where(c > 0, c, 1e-300), log_s, at)
    log_free_sat = _log_free_saturated(m, log_h_act, ad)
    capped = (u >= log_free_sat) & (c > 0)             # the hydroxide is present
    u = np.where(c > 0, np.minimum(u, log_free_sat), -np.inf)
    conc = np.exp(LN10 * (u[:, None] + r))
    with np.errstate(over="ignore", invalid="ignore"):
        free, present = _free_ligand(at.lsat0, at.k, at.total, u)
    amounts = np.where(c > 0, (at.total - free) / at.b, 0.0)       # (P, N)
    dissolved = conc.sum(axis=1)
    hydroxide = np.where(capped, np.maximum(c - dissolved - (at.a * amounts).sum(axis=0),
                                            0.0), 0.0)
    du_x, du_a, dp_x, dp_a = _salt_slopes(m, conc, dissolved, capped, at,
                                          np.where(present, free, 0.0))
    w = n + q * q - m.charge**2
    terms = _species_terms(m, conc, du_x[:, None] - n, du_a[:, None] + w)
    lig = _ligand_terms(at, amounts, dp_x, dp_a)
    for k in ("pos", "neg", "iz2"):
        terms[f"d{k}"] = terms[f"d{k}"] + lig[f"d{k}"]
        terms[f"a{k}"] = terms[f"a{k}"] + lig[f"a{k}"]
    oh = np.array([[s.oh_count] for s in at.solids], dtype=float)
    terms["oh_bound"] = terms["oh_bound"] + m.charge * hydroxide + (oh * amounts).sum(axis=0)
    acc.add(**terms, ligand_pos=lig["pos"], ligand_neg=lig["neg"], ligand_iz2=lig["iz2"])
    if not acc.detail:
        return
    for system, arr in lig["removed"].items():
        acc.removed[system] = acc.removed.get(system, 0.0) + arr
    _record(acc, m, conc, dissolved, hydroxide, u - log_free_sat)
    for s, p in zip(at.solids, amounts, strict=True):
        acc.precipitated[s.name] = p
    for s in salts:
        acc.si[s.name] = _salt_si(s, m, u, ligands, lig["removed"], log_oh_act, ad)


def _salt_slopes(m: Metal, conc, dissolved, capped, at: _Salts, held):
    """d u/dx and d u/d(A·D) of the free cation (u = log10 of it), and each salt's
    d(amount)/dx and d(amount)/d(A·D) (P, N), by implicit differentiation of the mass
    balance dissolved + Σ a·amount = total (the hydroxide, where present, fixes u
    itself); ``held`` is each salt's dissolved ligand where it is present, else 0."""
    n, q, _ = m.arrays
    z = float(m.charge)
    tiny = np.finfo(float).tiny
    nbar = _weighted(conc, n) / np.maximum(dissolved, tiny)
    wbar = _weighted(conc, n + q * q - z * z) / np.maximum(dissolved, tiny)
    # d log10(dissolved ligand at saturation) = -k du + g (g by x and by A·D, per salt)
    den = dissolved + (at.k * at.k * held).sum(axis=0)
    num_x = dissolved * nbar + (at.k * held * at.gx).sum(axis=0)
    num_a = -dissolved * wbar + (at.k * held * at.ga).sum(axis=0)
    with np.errstate(divide="ignore", invalid="ignore"):
        du_x = np.where(capped, z, np.where(den > 0, num_x / den, 0.0))
        du_a = np.where(capped, z * z - z, np.where(den > 0, num_a / den, 0.0))
    scale = -held * LN10 / at.b
    return du_x, du_a, scale * (at.gx - at.k * du_x), scale * (at.ga - at.k * du_a)


def _ligand_terms(at: _Salts, amounts, dp_x, dp_a) -> dict:
    """The ligand systems' corrections (charge and c z² held in salts, <= 0) and their
    derivatives (the amounts' and the held states' shares' own)."""
    out = dict.fromkeys(("pos", "neg", "iz2", "dpos", "dneg", "diz2", "apos", "aneg",
                         "aiz2"), 0.0)
    removed: dict[str, np.ndarray] = {}
    for i, (s, lig, (j, c, jbar, cbar)) in enumerate(zip(at.solids, at.ligands, at.ladders,
                                                          strict=True)):
        b, p, px, pa = s.ligand_count, amounts[i], dp_x[i], dp_a[i]
        if not (p.any() or px.any() or pa.any()):   # absent at every point: adds nothing
            continue
        removed[s.ligand_system] = removed.get(s.ligand_system, 0.0) + b * p
        alpha = lig.alpha
        # the mean of each weight, and its x- and A·D-derivatives (the fractions move)
        stacked = np.stack([alpha, -LN10 * alpha * (j[None, :] - jbar[:, None]),
                            -2.0 * LN10 * alpha * (c[None, :] - cbar[:, None])])
        mean, mean_x, mean_a = np.einsum("knm,mw->kwn", stacked, _ladder(tuple(lig.charges))[2])
        for row, name in enumerate(("pos", "neg", "iz2")):
            out[name] = out[name] - b * p * mean[row]
            out[f"d{name}"] = out[f"d{name}"] - b * (px * mean[row] + p * mean_x[row])
            out[f"a{name}"] = out[f"a{name}"] - b * (pa * mean[row] + p * mean_a[row])
    out["removed"] = removed
    return out


def _salt_si(s: LigandSolid, m: Metal, log_free, ligands, removed, log_oh_act, ad):
    lig = ligands[s.ligand_system]
    dissolved = np.maximum(lig.total_molar - removed.get(s.ligand_system, 0.0), 0.0)
    z = lig.charges[s.ligand_index]
    with np.errstate(divide="ignore"):
        log_lig = np.log10(dissolved) + np.log10(lig.alpha[:, s.ligand_index]) - ad * z * z
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
    from scipy.optimize import minimize_scalar  # slow to import; only this needs it

    res = minimize_scalar(lambda p: float(np.log10(solubility(key, p, ad=ad, data=data))[0]),
                          bounds=(0.0, 14.0), method="bounded",
                          options={"xatol": 1e-6})
    return float(res.x), float(solubility(key, res.x, ad=ad, data=data)[0])


def solid_formulas(data: MetalData | None = None) -> dict[str, tuple[str, float]]:
    """Solid name -> (formula, molar mass g/mol) of every hydroxide and salt."""
    data = data or metal_data()
    out = {m.solid.name: (m.solid.formula, m.solid.molar_mass_g_mol)
           for m in data.metals.values()}
    out.update({s.name: (s.formula, s.molar_mass_g_mol) for s in data.ligand_solids})
    return out


def sludge(state: MetalState, point: int = 0, data: MetalData | None = None
           ) -> tuple[Sludge, ...]:
    """The solids present at one point, with their dry mass (mol/L times molar mass)."""
    formulas = solid_formulas(data)
    out = []
    for name, arr in state.precipitated.items():
        mol = float(np.asarray(arr)[point])
        if mol > 0:
            formula, mass = formulas[name]
            out.append(Sludge(name, formula, mol, mol * mass))
    return tuple(out)
