"""Complexes of the metal cations with one state of a ligand system (CaSO4°, MgSO4° ...).

A complex ML (``data/metals.toml`` ``complexes``: M + L_j = ML, log K from its
``ion_pairs.toml`` record) counts in its cation's mass balance and in its ligand
system's.  Given F, the ligand system's dissolved total outside complexes and salts
(mol/L), every cation is on its own: the complex is one more species of its ladder,
with log10([ML]/[M]) = log K + log10(alpha_j F) - A·D (z_M² + z_L² - z_ML²), and a salt
of the cation with that system (gypsum) caps the free cation as the hydroxide does,
at log10[M] = (log Ksp + A·D (a z_M² + b z_L²) - b log10(alpha_j F) - c log10 a(OH-))
/ a.  So F is one unknown per point, found by a safeguarded Newton search on log10 F
(a bisection where a step leaves the bracket, or is not half the one two steps
before) where

    g(F) = F + Σ_M ([ML] + b · salt) - total = 0,

which rises with F: more free ligand binds more of every cation.  Salts of a cation
with other ligand systems (fluorite, brushite) are settled inside, for each F, by
:func:`carboy.model.metal_salts.solve_free_cation`.

Derivatives by x and by A·D (the solver's Newton steps) are exact: the partial ones at
a fixed F, plus the F-direction times dF/dx = -g_x / g_F (implicit differentiation of
g = 0).  The ligand system loses what the complexes and its salts hold, total - F, at
its states' mean charge (the states' shares move with x as an acid-base ladder's do).
Sums are weighted sums (``einsum``), never matrix products (no BLAS).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from types import MappingProxyType

import numpy as np

from carboy.model.metal_data import Complex, LigandSolid, Metal, MetalData
from carboy.model.metal_salts import (
    LIGAND_SPAN,
    LIGAND_STEPS,
    add_ligand_terms,
    free_ligand,
    ladder,
    salt_plan,
    salt_si,
    salts_at,
    solve_free_cation,
)

LN10 = math.log(10.0)
BELOW_JUMP = 1e-12
"""Where a hydroxide and a salt both cap a cation, the search's g is judged this far
(relative, in log10 F) below the F of the jump, inside the hydroxide's regime."""
COMPLEX_TOL = 1e-14
"""The search on log10 F stops at a Newton step below this and keeps the point it was
taken from: the ligand's mass balance then holds to about 2.3 times this (relative).
At 1e-12 a sulfate total of 0.25 M was left some 6e-13 M off its balance, which moved a
nearly unbuffered solution (HCl 1e-5 M, Na2SO4 0.25 M, Ca(OH)2 1e-6 M, pH 6.1) by 5e-8
pH from the one-solution path; at 1e-14 the two agree to 5e-12 (the benchmark's
1000-point curve with calcium costs 1.8 % more instructions, a ZnSO4 plan 1.9 %)."""


@dataclass(frozen=True)
class ComplexPlan:
    """The complexes of the cations present with the ligand system ``system``: one per
    cation (``complexes``), with each cation's salts of that system (``salts``)."""

    system: str
    cations: tuple[str, ...]
    complexes: tuple[Complex, ...]
    salts: tuple[tuple[LigandSolid, ...], ...]


_PLANS: dict = {}


def complex_plan(data: MetalData, keys: tuple, ligands) -> ComplexPlan | None:
    """The :class:`ComplexPlan` of the cations ``keys`` with the systems ``ligands``, or
    None when none of them forms a complex there (cached per data set, cations and
    systems)."""
    key = (id(data), keys, tuple(ligands))
    hit = _PLANS.get(key)
    if hit is not None and hit[0] is data:
        return hit[1]
    found = tuple(c for k in keys for c in data.complexes
                  if c.cation == k and c.ligand_system in ligands)
    plan = None
    if found:
        system = found[0].ligand_system
        plan = ComplexPlan(system, tuple(c.cation for c in found), found, tuple(
            tuple(s for s in data.ligand_solids
                  if s.cation == c.cation and s.ligand_system == system) for c in found))
    if len(_PLANS) >= 256:
        _PLANS.clear()
    _PLANS[key] = (data, plan)
    return plan


@dataclass
class _Cation:
    """One cation at the points, for the search on F: its ladder, its complex's terms
    at F = 1 and their slopes, the hydroxide's and the salt's caps on log10[M]."""

    m: Metal
    cx: Complex
    c: np.ndarray
    cc: np.ndarray
    has: np.ndarray
    r: np.ndarray           # (N, S) log10(c_s / c_free) of the hydroxo species
    log_s: np.ndarray       # log10 of their sum
    rc0: np.ndarray         # log10([ML] / [M]) at F = 1
    rcx: np.ndarray         # its x- and A·D-slopes
    rca: np.ndarray
    uh: np.ndarray          # the hydroxide's cap (inf: no solid allowed)
    salt: LigandSolid | None
    us0: np.ndarray         # the salt's cap at F = 1 (inf: none); cap = us0 - kb log10 F
    usx: np.ndarray
    usa: np.ndarray
    kb: float
    a: float                # the capping salt's cations and ligands per formula unit
    b: float
    level: np.ndarray       # log10[M] over the hydroxide (for its saturation index)
    salts: tuple            # every salt of the cation with the system (saturation index)
    plan: object            # the cation's salts with the other systems (or None)
    at: object
    others: dict
    u_free: np.ndarray | None = None   # log10[M] the other salts left at the last trial


def _prepare(m: Metal, cx: Complex, salts, c, ad, log_h_act, log_oh_act, lig, means,
             others, precipitate, data) -> _Cation:
    n, q, lb = m.arrays
    z = float(m.charge)
    jv, cv, _ = ladder(tuple(lig.charges))
    jbar, cbar = means
    r = lb - np.multiply.outer(log_h_act, n) + np.multiply.outer(ad, q * q - z * z)
    top = r.max(axis=1)
    log_s = top + np.log10(np.exp((r - top[:, None]) * LN10).sum(axis=1))
    i = cx.ligand_index
    zl = float(lig.charges[i])
    la = np.log10(lig.alpha[:, i])
    dz2 = z * z + zl * zl - cx.charge ** 2
    rcx, rca = jbar - jv[i], -2.0 * (cv[i] - cbar) - dz2
    uh_sat = m.solid.log_ks + z * log_h_act + ad * z * z
    dosed = next((s for s in salts if s.in_dose), None) if precipitate else None
    inf = np.full(c.shape, np.inf)
    us0, usx, usa, kb, a, b = inf, inf, inf, 0.0, 1.0, 0.0
    if dosed is not None:
        a, b, oh = float(dosed.cation_count), float(dosed.ligand_count), float(dosed.oh_count)
        us0 = (dosed.log_ksp + ad * (a * z * z + b * zl * zl) - b * la - oh * log_oh_act) / a
        usx = (b * (jv[i] - jbar) + oh) / a
        usa = (a * z * z + b * zl * zl + 2.0 * b * (cv[i] - cbar) - oh) / a
        kb = b / a
    has = c > 0
    cc = np.where(has, c, 1e-300)
    plan = at = None
    if precipitate and others:
        plan = salt_plan(m, data, others)
        if plan.dosed:
            at = salts_at(plan, others, ad, log_oh_act, np.log10(cc) - log_s)
    return _Cation(m, cx, c, cc, has, r, log_s, cx.log_k + la - ad * dz2, rcx, rca,
                   uh_sat if precipitate else inf, dosed, us0, usx, usa, kb, a, b, uh_sat,
                   tuple(salts), plan, at, others)


@dataclass
class _AtF:
    """One cation at a trial F: log10[M] and which solid caps it, the complex, the
    dissolved total, the other salts' part, and what it takes of the ligand with its
    F-derivative (``cons``, ``dcons``, per ln 10 of log10 F as for every slope here)."""

    u: np.ndarray
    lsp: np.ndarray
    hcap: np.ndarray
    scap: np.ndarray
    complex: np.ndarray
    dissolved: np.ndarray
    held: np.ndarray | None     # (P, N) the other salts' free ligand where present
    amounts: np.ndarray | None  # (P, N) the other salts precipitated
    sa: np.ndarray              # cation they hold
    salt: np.ndarray            # the capping salt precipitated
    den: np.ndarray
    du_v: np.ndarray
    cons: np.ndarray
    dcons: np.ndarray


def _at_f(p: _Cation, v: np.ndarray, start=None) -> _AtF:
    """One cation at log10 F = ``v`` (``start``: the other salts' search begins at this
    log10[M], the last trial's)."""
    rc = p.rc0 + v
    hi = np.maximum(p.log_s, rc)
    lsp = hi + np.log10(np.exp((p.log_s - hi) * LN10) + np.exp((rc - hi) * LN10))
    at = p.at
    u_free = (np.log10(p.cc) - lsp if at is None
              else solve_free_cation(p.cc, lsp, at, start))
    p.u_free = u_free
    us = p.us0 - p.kb * v
    scap = (us < u_free) & (us < p.uh) & p.has
    hcap = (p.uh <= us) & (p.uh < u_free) & p.has
    u = np.where(p.has, np.minimum(np.minimum(u_free, p.uh), us), -np.inf)
    cplx = np.exp(LN10 * (u + rc))
    dissolved = np.exp(LN10 * (u + lsp))
    held = amounts = None
    sa = kkh = 0.0
    if at is not None:
        free, present = free_ligand(at.lsat0, at.k, at.total, u)
        amounts = np.where(p.has, (at.total - free) / at.b, 0.0)
        held = np.where(present, free, 0.0)
        sa = (at.k * at.b * amounts).sum(axis=0)
        kkh = (at.kk * held).sum(axis=0)
    a, b = p.a, p.b
    salt = np.where(scap, np.maximum(p.c - dissolved - sa, 0.0) / a, 0.0)
    den = dissolved + kkh
    du_v = np.where(scap, -p.kb, np.where(hcap | ~p.has, 0.0,
                                          -cplx / np.where(den > 0, den, 1.0)))
    ddis = LN10 * (dissolved * du_v + cplx)
    dsalt = np.where(scap, -(ddis + LN10 * du_v * kkh) / a, 0.0)
    return _AtF(u, lsp, hcap, scap, cplx, dissolved, held, amounts, sa, salt, den, du_v,
                cplx + b * salt, LN10 * cplx * (1.0 + du_v) + b * dsalt)


def _both_solids(ps: list[_Cation], total: np.ndarray):
    """Where a cation's hydroxide and its salt with the system are both present (lime
    on sulfuric acid past pH 12): the free cation is the hydroxide's level, F the salt's
    there, and g jumps across that F (below it the hydroxide holds the rest of the
    cation, above it the salt).  Returns (True at those points, their log10 F, its x-
    and A·D-slopes), or (None, None, None) where no point is so."""
    capped = [p for p in ps if p.salt is not None]
    if len(capped) != 1:
        return None, None, None
    p = capped[0]
    v_star = (p.us0 - p.uh) / p.kb
    maybe = p.has & np.isfinite(v_star) & (total > 0) & (p.uh < np.log10(p.cc) - p.log_s)
    if not maybe.any():
        return None, None, None
    # g and the cation's state just below the jump, where the hydroxide caps: at F* itself
    # the two caps are equal to the last bit and either may be taken (the search then
    # bisected onto the jump for some forty steps, and kept one side's solids)
    v = np.where(maybe, v_star - BELOW_JUMP * np.maximum(np.abs(v_star), 1.0), 0.0)
    g = np.exp(LN10 * v) - total
    for q in ps:
        g = g + _at_f(q, v).cons
    s = _at_f(p, v)
    rest = np.maximum(p.c - s.dissolved - s.sa, 0.0) * p.kb
    both = maybe & s.hcap & (g < 0) & (g + rest > 0)
    if not both.any():
        return None, None, None
    z = float(p.m.charge)
    return both, np.where(maybe, v_star, 0.0), ((p.usx - z) / p.kb, (p.usa - z * z + z) / p.kb)


def _start(ps: list[_Cation], total: np.ndarray) -> np.ndarray:
    """log10 F where every cation were one, free of solids: F + c w F / (1 + w F) = total
    with c the cations' total and w = Σ [ML] / ([M] F) over the ladders' sums (exact for
    one cation without solids), in the stable form of the quadratic's root."""
    c = sum(p.c for p in ps)
    w = sum(np.exp(LN10 * (p.rc0 - p.log_s)) for p in ps)
    b = 1.0 + (c - total) * w
    f = 2.0 * total / (b + np.sqrt(b * b + 4.0 * w * total))
    # where a hydroxide caps the cation, [ML] = 10^(uh + rc0) F: F = total / (1 + that
    # sum); the root is at or above both (each regime only lowers what the complexes
    # take), so the larger is the start (exact for one cation)
    capped = sum(np.where(p.has, np.exp(LN10 * np.minimum(p.uh + p.rc0, 300.0)), 0.0)
                 for p in ps)
    f = np.maximum(f, total / (1.0 + capped))
    return np.log10(np.where(total > 0, f, 1.0))


def _search(ps: list[_Cation], total: np.ndarray, both=None, v_both=None, start=None):
    """log10 F at every point (-inf where the system is absent; ``v_both`` where
    ``both``), and each cation's :class:`_AtF` there (None: not worked out); the search
    starts from ``start`` where it is given and inside the bracket (the last trial
    point's F: a start only saves steps, the stopping test is the same)."""
    pos = total > 0
    done = ~pos
    if both is not None:
        done = done | both
    if done.all():
        return np.where(pos, v_both if both is not None else 0.0, -np.inf), None
    hi = np.log10(np.where(pos, total, 1.0))
    lo = hi - LIGAND_SPAN
    v = np.minimum(_start(ps, total), hi)
    if start is not None:
        v = np.where((start > lo) & (start < hi), start, v)   # NaN: False
    v = np.where(pos, v, -np.inf)   # an absent system: no free ligand
    if both is not None:
        v = np.where(both, v_both, v)
    last0 = last1 = np.full(v.shape, np.inf)
    states = None
    for _ in range(LIGAND_STEPS):
        f = np.exp(LN10 * v)
        g, gp = f - total, LN10 * f
        states = [_at_f(p, v, p.u_free) for p in ps]
        for st in states:
            g, gp = g + st.cons, gp + st.dcons
        g = np.where(done, 0.0, g)
        hi = np.where(g >= 0, v, hi)
        lo = np.where(g < 0, v, lo)
        step = np.where(done, 0.0, _f_step(f, g, gp))
        small = np.abs(step) < COMPLEX_TOL
        nxt = v + step
        out = ~(((nxt > lo) & (nxt <= hi) & (np.abs(step) <= 0.5 * last0)) | small)
        nxt = np.where(out, 0.5 * (lo + hi), nxt)
        moved = np.abs(nxt - v)
        last0, last1 = last1, moved
        done = done | small | (moved < COMPLEX_TOL) | (hi - lo < COMPLEX_TOL)
        if done.all():   # every point at the F last worked out (within LIGAND_TOL)
            break
        v = np.where(done, v, nxt)
    return v, states


def _f_step(f, g, gp) -> np.ndarray:
    """The Newton step on g taken in F (g' by F is gp / (F ln 10)), as a step in log10 F;
    the Newton step in log10 F where the one in F would not leave F above 0.  g is F less the total plus
    what the complexes and salts take, concave in F where no solid caps the cation, so
    from below the root a step in F stays below it; in log10 F, g is convex where the
    complexes take little (F ~ total), and a step from below went past the bracket's
    top, log10 of the total, to be halved towards it some forty times."""
    safe = np.where(gp > 0, gp, 1.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = 1.0 - LN10 * g / safe      # F after the step, over F
        in_f = np.log10(np.where(ratio > 0, ratio, 1.0))
    return np.where(ratio > 0, in_f, -g / safe)


def with_complexes(acc, cp: ComplexPlan, tot, x, ad, log_kw, ligands, precipitate: bool,
                   data: MetalData, ligand_start=None) -> None:
    """Add the complexing cations' terms (species, solids, the ligands' corrections and
    every derivative) to ``acc`` (``metals._Accumulator``); ``ligand_start`` see
    :func:`carboy.model.metals.state_of`."""
    lig = ligands[cp.system]
    total = lig.total_molar
    jv, cv, wl = ladder(tuple(lig.charges))
    got = np.einsum("nm,mk->kn", lig.alpha, np.stack([jv, cv], axis=1))
    log_h_act, log_oh_act = x - ad, log_kw - x + ad
    others = {k: val for k, val in ligands.items() if k != cp.system}
    ps = [_prepare(data.metals[cx.cation], cx, salts, tot[cx.cation], ad, log_h_act,
                   log_oh_act, lig, (got[0], got[1]), others, precipitate, data)
          for cx, salts in zip(cp.complexes, cp.salts, strict=True)]
    both, v_both, slopes = _both_solids(ps, total)
    v, found = _search(ps, total, both, v_both, ligand_start)
    if ligand_start is not None:
        ligand_start[:] = np.where(np.isfinite(v), v, np.nan)
    f = np.exp(LN10 * v)
    states = list(zip(ps, found or [_at_f(p, v) for p in ps], strict=True))
    parts = [_partials(p, s) for p, s in states]
    g_x = sum(pt[0] for pt in parts)
    g_a = sum(pt[1] for pt in parts)
    g_v = LN10 * f + sum(s.dcons for _, s in states)
    ok = (g_v > 0) & (total > 0)
    dv_x = np.where(ok, -g_x / np.where(ok, g_v, 1.0), 0.0)
    dv_a = np.where(ok, -g_a / np.where(ok, g_v, 1.0), 0.0)
    if both is not None:   # F is the salt's level at the hydroxide's: its slopes, its salt
        dv_x, dv_a = np.where(both, slopes[0], dv_x), np.where(both, slopes[1], dv_a)
        bound = sum(s.complex for _, s in states)
        for p, s in states:
            if p.salt is not None:
                s.salt = np.where(both, np.maximum(total - f - bound, 0.0) / p.b, s.salt)
                # both solids are present: the hydroxide holds the rest of the cation (at
                # the jump the two caps are equal to the last bit and the state may have
                # taken the salt's; the slopes above are the same either way)
                s.hcap = s.hcap | (both & p.has)
    for (p, s), pt in zip(states, parts, strict=True):
        _add_cation(acc, p, s, pt, dv_x, dv_a, log_oh_act, ad, v, lig)
    # the ligand system loses total - F at its states' mean charge
    held = total - f
    w9 = np.hstack([wl, jv[:, None] * wl, cv[:, None] * wl])
    means = np.einsum("nm,mw->wn", lig.alpha, w9)
    mean = means[0:3]
    mean_x = -LN10 * (means[3:6] - got[0] * mean)
    mean_a = -2.0 * LN10 * (means[6:9] - got[1] * mean)
    rows = acc.rows
    rows[10:13] -= held * mean
    rows[3:6] -= -LN10 * f * dv_x * mean + held * mean_x
    rows[6:9] -= -LN10 * f * dv_a * mean + held * mean_a
    if acc.detail:
        acc.removed[cp.system] = acc.removed.get(cp.system, 0.0) + held
        acc.complexed[cp.system] = sum(s.complex for _, s in states)


def _partials(p: _Cation, s: _AtF):
    """(g_x, g_a, du_x, du_a, dp_x, dp_a, dp_v) of one cation at fixed F: its share of
    g's partial derivatives, log10[M]'s, and the other salts' amounts'."""
    conc = np.exp(LN10 * (s.u[:, None] + p.r))
    n, w = p.m.arrays[0], p.m.weights[1]
    tiny = np.finfo(float).tiny
    dis = np.maximum(s.dissolved, tiny)
    mx = (s.complex * p.rcx - np.einsum("ns,s->n", conc, n)) / dis
    ma = (s.complex * p.rca + np.einsum("ns,s->n", conc, w)) / dis
    at = p.at
    den = np.where(s.den > 0, s.den, 1.0)
    z = float(p.m.charge)
    num_x, num_a = -s.dissolved * mx, -s.dissolved * ma
    if at is not None:
        kh = at.k * s.held
        num_x, num_a = num_x + (kh * at.gx).sum(axis=0), num_a + (kh * at.ga).sum(axis=0)
    du_x = np.where(s.scap, p.usx, np.where(s.hcap, z, num_x / den))
    du_a = np.where(s.scap, p.usa, np.where(s.hcap, z * z - z, num_a / den))
    du_x, du_a = np.where(p.has, du_x, 0.0), np.where(p.has, du_a, 0.0)
    dp = (None, None, None)
    sa_x = sa_a = 0.0
    if at is not None:
        scale = -s.held * LN10 / at.b
        dp = (scale * (at.gx - at.k * du_x), scale * (at.ga - at.k * du_a),
              scale * (-at.k * s.du_v))
        sa_x, sa_a = (at.k * at.b * dp[0]).sum(axis=0), (at.k * at.b * dp[1]).sum(axis=0)
    kb = p.kb
    cons = []
    for du, sc, mm, sa in ((du_x, p.rcx, mx, sa_x), (du_a, p.rca, ma, sa_a)):
        dcx = LN10 * s.complex * (du + sc)
        ddis = LN10 * s.dissolved * (du + mm)
        cons.append(dcx + np.where(s.scap, -(ddis + sa) * kb, 0.0))
    return cons[0], cons[1], du_x, du_a, *dp


def _add_cation(acc, p: _Cation, s: _AtF, pt, dv_x, dv_a, log_oh_act, ad, v, lig) -> None:
    """Add one cation's species, solids and the other salts' ligand terms to ``acc``."""
    _, _, du_x, du_a, dp_x, dp_a, dp_v = pt
    m = p.m
    n, w = m.arrays[0], m.weights[1]
    ux, ua = du_x + s.du_v * dv_x, du_a + s.du_v * dv_a
    conc = np.hstack([np.exp(LN10 * (s.u[:, None] + p.r)), s.complex[:, None]])
    sx = np.hstack([ux[:, None] - n, (ux + p.rcx + dv_x)[:, None]])
    sa = np.hstack([ua[:, None] + w, (ua + p.rca + dv_a)[:, None]])
    zc = float(p.cx.charge)
    w4 = np.vstack([m.weights[0], [[max(zc, 0.0), max(-zc, 0.0), zc * zc, 0.0]]])
    rows = acc.rows
    got = np.einsum("ns,sw->wn", conc, w4)
    rows[0:3] += got[:3]
    rows[9] += got[3]
    rows[3:6] += np.einsum("ns,sw->wn", LN10 * conc * sx, w4[:, :3])
    rows[6:9] += np.einsum("ns,sw->wn", LN10 * conc * sa, w4[:, :3])
    z = float(m.charge)
    hydroxide = np.where(s.hcap, np.maximum(p.c - s.dissolved - s.sa - p.a * s.salt, 0.0),
                         0.0)
    rows[9] += z * hydroxide
    removed = {}
    if p.at is not None:
        plan = p.plan
        rows[9] += (plan.oh[p.at.rows] * s.amounts).sum(axis=0)
        lig9 = np.zeros((9, s.u.shape[0]))
        removed = add_ligand_terms(plan, p.at, s.amounts, dp_x + dp_v * dv_x,
                                   dp_a + dp_v * dv_a, lig9)
        rows[3:9] += lig9[3:9]
        rows[10:13] += lig9[0:3]
    if p.salt is not None:
        rows[9] += float(p.salt.oh_count) * s.salt
    if acc.detail:
        _record(acc, p, s, conc, hydroxide, removed, log_oh_act, ad, v, lig)


def _record(acc, p: _Cation, s: _AtF, conc, hydroxide, removed, log_oh_act, ad, v,
            lig) -> None:
    m = p.m
    for system, arr in removed.items():
        acc.removed[system] = acc.removed.get(system, 0.0) + arr
    labels = [sp.label for sp in m.species] + [p.cx.label]
    acc.dissolved[m.key] = s.dissolved
    acc.species[m.key] = MappingProxyType({lab: conc[:, i] for i, lab in enumerate(labels)})
    acc.precipitated[m.solid.name] = hydroxide
    acc.si[m.solid.name] = s.u - p.level
    if p.plan is not None:
        for sol in p.plan.dosed:
            acc.precipitated[sol.name] = np.zeros(s.u.shape)
        if p.at is not None:
            for sol, amt in zip((p.plan.dosed[i] for i in p.at.rows), s.amounts, strict=True):
                acc.precipitated[sol.name] = amt
        for sol in p.plan.salts:
            acc.si[sol.name] = salt_si(sol, m, s.u, p.others, removed, log_oh_act, ad)
    i = p.cx.ligand_index
    z, zl = float(m.charge), float(lig.charges[i])
    log_l = np.log10(lig.alpha[:, i]) + v - ad * zl * zl
    for sol in p.salts:
        acc.precipitated[sol.name] = s.salt if sol is p.salt else np.zeros(s.u.shape)
        acc.si[sol.name] = (sol.cation_count * (s.u - ad * z * z) + sol.ligand_count * log_l
                            + sol.oh_count * log_oh_act - sol.log_ksp)
