"""Salts of a metal cation with a ligand system (calcium with fluoride, phosphate,
sulfate): the free cation among them, its slopes and the ligands' corrections.

:mod:`carboy.model.metals` calls these at every trial point of the solver, so the
constants of each cation's salts are compiled once (:func:`salt_plan`, cached per data
set, cation and set of ligand systems present) and every evaluation works on stacked
(P salts, N points) arrays: its cost is a fixed number of numpy calls whatever the
number of salts.  A salt that is undersaturated at every point at the unsaturated
free-cation level cannot be present at any point (the salts and the hydroxide only
lower the free cation, which raises every salt's saturation level of ligand): it is
left out of the evaluation (:func:`salts_at`), which changes no result.
Sums are weighted sums (``einsum``), never matrix products (no BLAS).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from carboy.model.metal_data import LigandSolid, Metal, MetalData

LN10 = math.log(10.0)
LIGAND_SPAN = 60.0
"""Decades below the unsaturated free-cation level where the salt search starts."""
LIGAND_STEPS = 100
"""Safeguarded Newton steps (bisection where a step leaves the bracket, or is not half
the one two steps before) on log10 of the free cation when salts precipitate."""
LIGAND_TOL = 1e-13
"""The free-cation search stops when its step in log10 is below this."""
FLOAT_POINTS = 16
"""A search over at most this many points runs point by point in floats (numpy's
per-call cost would dominate a vectorized step)."""


@dataclass(frozen=True)
class LigandAtX:
    """An acid-base system at the trial points, from the solver: its total (mol/L), the
    fraction of each protonation state (N, M) and their charges (most protonated first)."""

    total_molar: np.ndarray
    alpha: np.ndarray
    charges: tuple[int, ...]


def ladder(charges: tuple[int, ...]) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(j, c, weights) of a ladder of ``charges``: each state's protons lost from the top,
    its activity term (log10 of the state's weight carries -j x - 2 A·D c) and its
    (M, 3) positive charge, negative charge and z²."""
    q = np.array(charges, dtype=float)
    j = np.arange(q.shape[0], dtype=float)
    c = 0.5 * (q[0] ** 2 - q * q) - 0.5 * j
    return j, c, np.stack([np.maximum(q, 0), np.maximum(-q, 0), q * q], axis=1)


@dataclass(frozen=True)
class SaltPlan:
    """The constants of one cation's salts with the ligand systems present, (P, 1) each
    for the P salts of the dose (``dosed``); ``salts`` also holds those that only get a
    saturation index.  ``systems`` are the dosed salts' ligand systems, with each one's
    (M, 2) j and c columns; ``sys_of`` each salt's system (its index there)."""

    salts: tuple[LigandSolid, ...]
    dosed: tuple[LigandSolid, ...]
    systems: tuple[str, ...]
    jc: tuple[np.ndarray, ...]
    weights: tuple[np.ndarray, ...]
    sys_of: tuple[int, ...]
    a: np.ndarray
    b: np.ndarray
    k: np.ndarray
    kk: np.ndarray
    oh: np.ndarray
    const: np.ndarray      # log10 Ksp / b
    coef_ad: np.ndarray    # a z² / b + z_L²
    coef_oh: np.ndarray    # oh / b
    gx0: np.ndarray        # oh / b + j of the salt's state
    ga0: np.ndarray        # (a z² - oh) / b + z_L² + 2 c of the salt's state


_PLANS: dict = {}


def salt_plan(m: Metal, data: MetalData, ligands) -> SaltPlan:
    """The :class:`SaltPlan` of ``m`` with the systems ``ligands`` (a mapping of system
    key -> :class:`LigandAtX`), compiled once per data set and set of systems."""
    key = (id(data), m.key, tuple(ligands))
    hit = _PLANS.get(key)
    if hit is not None and hit[0] is data:
        return hit[1]
    salts = tuple(s for s in data.ligand_solids if s.cation == m.key and s.ligand_system in ligands)
    dosed = tuple(s for s in salts if s.in_dose)
    systems = tuple(dict.fromkeys(s.ligand_system for s in dosed))
    lads = [ladder(tuple(ligands[k].charges)) for k in systems]

    def col(f):
        return np.array([[f(s)] for s in dosed], dtype=float).reshape(len(dosed), 1)

    z2 = float(m.charge) ** 2
    sys_of = tuple(systems.index(s.ligand_system) for s in dosed)
    zl2 = col(lambda s: ligands[s.ligand_system].charges[s.ligand_index] ** 2)
    jl = np.array([[lads[i][0][s.ligand_index]] for i, s in zip(sys_of, dosed, strict=True)]
                  ).reshape(len(dosed), 1)
    cl = np.array([[lads[i][1][s.ligand_index]] for i, s in zip(sys_of, dosed, strict=True)]
                  ).reshape(len(dosed), 1)
    a, b, oh = col(lambda s: s.cation_count), col(lambda s: s.ligand_count), col(
        lambda s: s.oh_count)
    plan = SaltPlan(
        salts=salts, dosed=dosed, systems=systems,
        jc=tuple(np.stack([j, c], axis=1) for j, c, _ in lads),
        weights=tuple(np.hstack([w, j[:, None] * w, c[:, None] * w]) for j, c, w in lads),
        sys_of=sys_of, a=a, b=b, k=a / b,
        kk=(a / b) ** 2, oh=oh, const=col(lambda s: s.log_ksp) / b,
        coef_ad=a * z2 / b + zl2, coef_oh=oh / b, gx0=oh / b + jl,
        ga0=(a * z2 - oh) / b + zl2 + 2.0 * cl)
    _PLANS[key] = (data, plan)
    return plan


@dataclass(frozen=True)
class Salts:
    """The salts kept at the trial points (``rows`` of the plan's dosed salts), stacked
    (P, N): the ligand's total, ``lsat0`` with log10(dissolved ligand at saturation)
    = lsat0 - k u (u = log10[cation]), and ``gx``, ``ga`` its derivatives by x and by
    A·D; ``means`` holds each kept salt's system's fractions (N, M), its mean j and c
    ((2, N)) and its (M, 9) weights (see :class:`SaltPlan`)."""

    rows: np.ndarray
    k: np.ndarray
    kk: np.ndarray
    b: np.ndarray
    total: np.ndarray
    lsat0: np.ndarray
    gx: np.ndarray
    ga: np.ndarray
    means: tuple


def salts_at(plan: SaltPlan, ligands, ad, log_oh_act, u0) -> Salts:
    """The plan's salts at the points, less those undersaturated at every point at the
    unsaturated free-cation level ``u0`` (they cannot be present)."""
    p, n = len(plan.dosed), ad.shape[0]
    ligs = [ligands[k] for k in plan.systems]
    means = [np.einsum("nm,mk->kn", lig.alpha, jc) for lig, jc in zip(ligs, plan.jc,
                                                                        strict=True)]
    lf = np.empty((p, n))
    total = np.empty((p, n))
    jbar = np.empty((p, n))
    cbar = np.empty((p, n))
    for i, (s, si) in enumerate(zip(plan.dosed, plan.sys_of, strict=True)):
        lf[i] = ligs[si].alpha[:, s.ligand_index]
        total[i] = ligs[si].total_molar
        jbar[i], cbar[i] = means[si]
    lsat0 = plan.const + plan.coef_ad * ad - plan.coef_oh * log_oh_act - np.log10(lf)
    sat = np.exp(LN10 * np.minimum(lsat0 - plan.k * u0, 300.0))
    keep = (sat < total).any(axis=1)
    rows = np.flatnonzero(keep)
    if rows.size < p:
        lsat0, total, jbar, cbar = lsat0[rows], total[rows], jbar[rows], cbar[rows]
    sel = (lambda v: v) if rows.size == p else (lambda v: v[rows])
    return Salts(rows, sel(plan.k), sel(plan.kk), sel(plan.b), total, lsat0,
                 sel(plan.gx0) - jbar, sel(plan.ga0) - 2.0 * cbar,
                 tuple((ligs[plan.sys_of[r]].alpha, means[plan.sys_of[r]],
                        plan.weights[plan.sys_of[r]]) for r in rows))


def free_ligand(lsat0, k, total, u) -> tuple[np.ndarray, np.ndarray]:
    """(dissolved ligand, True where the salt is present) of each salt (P, n) at
    log10[cation] = u (n,), from its saturation level and total (P, n)."""
    sat = np.exp(LN10 * np.minimum(lsat0 - k * u, 300.0))
    present = sat < total
    return np.where(present, sat, total), present


def _excess(u, log_s, c, at: Salts, lsat0, total):
    """Dissolved plus held in salts, less the total, and its u-derivative / ln 10."""
    dissolved = np.exp(LN10 * (u + log_s))
    free, present = free_ligand(lsat0, at.k, total, u)
    held = (at.k * (total - free)).sum(axis=0)            # a/b per ligand taken
    slope = (at.kk * np.where(present, free, 0.0)).sum(axis=0)
    return dissolved + held - c, dissolved + slope


def _excess_floats(u, log_s, c, lsat0, total, k, kk):
    """:func:`_excess` at one point, in floats (numpy's per-call cost would dominate)."""
    dissolved = math.exp(LN10 * (u + log_s))
    held = slope = 0.0
    for li, ti, ki, kki in zip(lsat0, total, k, kk, strict=True):
        sat = math.exp(LN10 * min(li - ki * u, 300.0))
        if sat < ti:
            held += ki * (ti - sat)
            slope += kki * sat
    return dissolved + held - c, dissolved + slope


def _free_cation_floats(u, e, slope, c, log_s, lsat0, total, k, kk, lo, hi, last0, last1,
                        steps) -> float:
    """The steps of :func:`solve_free_cation` at one point, in floats, from its state
    there (``u`` with its excess ``e`` and slope, its bracket and its last two steps)."""
    for _ in range(steps):
        den = LN10 * slope
        step = -e / den if den != 0.0 and math.isfinite(den) else math.nan
        small = abs(step) < LIGAND_TOL
        nxt = u + step
        if not ((lo < nxt < hi and abs(step) <= 0.5 * last0) or small):
            nxt = 0.5 * (lo + hi)
        moved = abs(nxt - u)
        last0, last1 = last1, moved
        fin = small or moved < LIGAND_TOL or hi - lo < LIGAND_TOL
        u = nxt
        if fin:
            break
        e, slope = _excess_floats(u, log_s, c, lsat0, total, k, kk)
        if e >= 0:
            hi = u
        elif e < 0:
            lo = u
    return u


def _finish_in_floats(left, k, kk, ua, *state, steps: int) -> None:
    """:func:`_free_cation_floats` for the points ``left`` (indices), in place in ``ua``;
    ``state`` holds (e, slope, c, log_s, lsat0 (P, n), total (P, n), lo, hi, last0,
    last1) of every point."""
    ks, kks = k[:, 0].tolist(), kk[:, 0].tolist()
    cols = [ua[left].tolist()] + [
        (s[:, left].T if s.ndim == 2 else s[left]).tolist() for s in state]
    for i, args in zip(left.tolist(), zip(*cols, strict=True), strict=True):
        ua[i] = _free_cation_floats(*args[:7], ks, kks, *args[7:], steps)


def solve_free_cation(c, log_s, at: Salts, start=None) -> np.ndarray:
    """log10 of the free cation where dissolved + salts = total: safeguarded Newton (a
    bisection where a step leaves the bracket, or is not half the one two steps before:
    Newton can bounce about a kink, where a salt appears) at the points where some salt
    is present at the unsaturated level; the others keep that level.  Points that
    finish keep their value while the others go on (no compaction: its calls cost more
    than the arithmetic it saves); the last ``FLOAT_POINTS`` unfinished points go on
    point by point in floats.  ``start`` (log10 of the free cation, per point), where
    given, is where the search begins (a solve at nearby terms: the complexes' search
    on the free ligand), its bracket set by the excess there."""
    u = np.log10(c) - log_s
    if at.rows.size == 0:
        return u
    e, slope = _excess(u, log_s, c, at, at.lsat0, at.total)
    idx = np.flatnonzero(e > 0)
    if idx.size == 0:
        return u
    ca, ls, lsat0, total = c[idx], log_s[idx], at.lsat0[:, idx], at.total[:, idx]
    ua, ea, sa = u[idx], e[idx], slope[idx]
    hi, lo = ua, ua - LIGAND_SPAN
    if start is not None:
        us = np.clip(start[idx], lo, hi)
        es, ss = _excess(us, ls, ca, at, lsat0, total)
        hi, lo = np.where(es >= 0, us, hi), np.where(es < 0, us, lo)
        ua, ea, sa = us, es, ss
    last0 = last1 = np.full(ua.shape, np.inf)
    done = np.zeros(ua.shape, dtype=bool)
    for it in range(LIGAND_STEPS):
        left = np.flatnonzero(~done)
        if left.size <= FLOAT_POINTS:
            _finish_in_floats(left, at.k, at.kk, ua, ea, sa, ca, ls, lsat0, total, lo, hi,
                              last0, last1, steps=LIGAND_STEPS - it)
            break
        step = -ea / (LN10 * sa)
        small = np.abs(step) < LIGAND_TOL   # converged (the bracket may sit on u itself)
        nxt = ua + step
        out = ~((nxt > lo) & (nxt < hi) & (np.abs(step) <= 0.5 * last0) | small)
        nxt = np.where(out, 0.5 * (lo + hi), nxt)
        moved = np.abs(nxt - ua)
        last0, last1 = last1, moved
        fin = small | (moved < LIGAND_TOL) | (hi - lo < LIGAND_TOL)
        ua = np.where(done, ua, nxt)
        done = done | fin
        ea, sa = _excess(ua, ls, ca, at, lsat0, total)
        hi = np.where(ea >= 0, ua, hi)
        lo = np.where(ea < 0, ua, lo)
    u[idx] = ua
    return u


def salt_slopes(z: float, nbar, wbar, dissolved, capped, at: Salts, held):
    """d u/dx and d u/d(A·D) of the free cation (u = log10 of it), and each salt's
    d(amount)/dx and d(amount)/d(A·D) (P, N), by implicit differentiation of the mass
    balance dissolved + Σ a·amount = total (the hydroxide, where present, fixes u
    itself); ``held`` is each salt's dissolved ligand where it is present, else 0;
    ``nbar`` and ``wbar`` the dissolved species' mean d log10 c / dx and / d(A·D) terms."""
    # d log10(dissolved ligand at saturation) = -k du + g (g by x and by A·D, per salt)
    kh = at.k * held
    den = dissolved + (at.k * kh).sum(axis=0)
    num_x = dissolved * nbar + (kh * at.gx).sum(axis=0)
    num_a = -dissolved * wbar + (kh * at.ga).sum(axis=0)
    ok = den > 0
    du_x = np.where(capped, z, np.where(ok, num_x / np.where(ok, den, 1.0), 0.0))
    du_a = np.where(capped, z * z - z, np.where(ok, num_a / np.where(ok, den, 1.0), 0.0))
    scale = -held * LN10 / at.b
    return du_x, du_a, scale * (at.gx - at.k * du_x), scale * (at.ga - at.k * du_a)


def add_ligand_terms(plan: SaltPlan, at: Salts, amounts, dp_x, dp_a, out) -> dict:
    """Add the ligand systems' corrections (charge and c z² held in salts, <= 0) and
    their derivatives (the amounts' and the held states' shares' own) to ``out``, a
    (9, N) array: pos, neg, iz2, then their x- and their A·D-derivatives.  Returns the
    share held per system (system key -> (N,))."""
    removed: dict[str, np.ndarray] = {}
    for i, r in enumerate(at.rows):
        p, px, pa = amounts[i], dp_x[i], dp_a[i]
        if not (p.any() or px.any() or pa.any()):   # absent at every point: adds nothing
            continue
        s = plan.dosed[r]
        b = float(s.ligand_count)
        removed[s.ligand_system] = removed.get(s.ligand_system, 0.0) + b * p
        alpha, (jbar, cbar), w = at.means[i]
        # the mean of each weight, and its x- and A·D-derivatives (the fractions move:
        # d alpha_j = -ln10 alpha_j ((j - jbar) dx + 2 (c_j - cbar) d(A·D)))
        got = np.einsum("nm,mw->wn", alpha, w)
        mean = got[0:3]
        mean_x = -LN10 * (got[3:6] - jbar * mean)
        mean_a = -2.0 * LN10 * (got[6:9] - cbar * mean)
        out[0:3] -= b * p * mean
        out[3:6] -= b * (px * mean + p * mean_x)
        out[6:9] -= b * (pa * mean + p * mean_a)
    return removed


def salt_si(s: LigandSolid, m: Metal, log_free, ligands, removed, log_oh_act, ad):
    """log10(IAP / Ksp) of the salt ``s`` at the points."""
    lig = ligands[s.ligand_system]
    dissolved = np.maximum(lig.total_molar - removed.get(s.ligand_system, 0.0), 0.0)
    z = lig.charges[s.ligand_index]
    with np.errstate(divide="ignore"):
        log_lig = np.log10(dissolved) + np.log10(lig.alpha[:, s.ligand_index]) - ad * z * z
    log_iap = (s.cation_count * (log_free - ad * m.charge**2) + s.ligand_count * log_lig
               + s.oh_count * log_oh_act)
    return log_iap - s.log_ksp
