"""The fast path for one solution, in plain Python floats.

numpy's per-call overhead dominates for a single solution of a few systems, so this
path does the arithmetic of the coupled iteration (``coupled``) with floats, step for
step: the plain Newton step at a held ionic strength far from the root, the exact 2×2
step near it, the bisection guard, and acceptance only on an unclipped Newton step
below ``QUADRATIC_STEP`` at a self-consistent ionic strength, or on the prediction of
two exact steps (``coupled._quadratic``).  A solution without a start starts at the
edge the strong acids or bases set where they decide the side of the root
(:func:`edge_start`, as ``coupled`` does).  It gives up (returns
None) rather than fall back itself: the caller then takes the vectorized paths.
``tests/unit/test_speciation_paths.py`` checks that the paths agree.
"""

from __future__ import annotations

import math

import numpy as np

from carboy.model.activity import davies_d_float, davies_dprime_float
from carboy.model.solver.constants import (
    COUPLED_ITER,
    COUPLED_NEAR,
    F_TOL,
    I_RTOL,
    LN10,
    PREDICTED_ERROR,
    QUADRATIC_MAX,
    QUADRATIC_STEP,
)
from carboy.model.solver.layout import Layout


def _inputs(lay: Layout, row, held: dict, extra: tuple = (), systems=None):
    """The systems present (total, states, held spec), the spectators' positive and
    negative charge and ionic strength, and the charge bounds Q and P (mol/L);
    ``extra`` are more systems in ``Layout.py_systems``' form (never held), ``systems``
    the layout's own with other weights (ion pairs lumped in, see ``single_pairs``)."""
    every = lay.py_systems if systems is None else systems
    every = every + extra if extra else every
    systems = [(row[col], states, held.get(k), fast)
               for k, (col, states, _, _, fast) in enumerate(every)
               if row[col] > 0.0 or k in held]
    zs_pos = zs_neg = ispec = 0.0
    for col, z in lay.py_ions:
        c = row[col]
        if z > 0:
            zs_pos += z * c
        else:
            zs_neg -= z * c
        ispec += 0.5 * z * z * c
    q, p = zs_neg, zs_pos
    for k, (col, _, neg_cap, pos_cap, _) in enumerate(every):
        if k not in held:
            q += row[col] * neg_cap
            p += row[col] * pos_cap
    return systems, zs_pos, zs_neg, ispec, q, p


def _sums(systems, x: float, tad: float):
    """The systems' charge sums at x = log10[H+] and 2·A·D = ``tad``, with their
    derivatives: (pos, neg, dpos/dx, dneg/dx, iz2, diz2/dx, dpos/dAD, dneg/dAD,
    diz2/dAD), as ``charge_balance.moments`` gives them for many points.

    A system whose states all carry charge of one sign takes closed forms in the
    moments of j (protons lost from the top state, top charge t, so z = t - j and
    cmat = (t² - z²)/2 - j/2): with m_k the mean of j^k, v = m2 - m1², u3 = m3 - m1 m2
    and u4 = m4 - m2², the charge is ±C (t - m1), its x-derivative ±ln10 C v, and the
    rest follows (see :func:`_closed_form`).  Others (and held systems) take the
    general sums (:func:`_general`).
    """
    acc = [0.0] * 9   # pos, neg, dpos, dneg, iz2, diz2, apos, aneg, aiz2
    exp = math.exp
    xl = x * LN10
    # the two-state systems' share, in local floats (the hot path)
    pos = neg = dpos = dneg = iz2 = diz2 = apos = aneg = aiz2 = 0.0
    for ctot, states, hold, fast in systems:
        if fast is None:
            _general(acc, ctot, states, hold, x, tad)
            continue
        sign, t, ladder = fast
        if hold is None and len(ladder) == 1:
            # two states: every moment of j is the fraction p of the second state and
            # v = u3 = u4 = p (1 - p); _closed_form written out for them
            lb, cl = ladder[0][0], ladder[0][1]
            e = exp(lb - tad * cl - xl)
            p = e / (1.0 + e)
            lcv = LN10 * ctot * p * (1.0 - p)
            k1 = 1.0 - 2.0 * t
            if sign > 0:
                pos += ctot * (t - p)
                dpos += lcv
                apos -= lcv * (k1 + 1.0)
            else:
                neg -= ctot * (t - p)
                dneg -= lcv
                aneg += lcv * (k1 + 1.0)
            iz2 += ctot * (t * t + p * k1)
            diz2 -= lcv * k1
            aiz2 += lcv * (k1 * k1 - 2.0 * t + 1.0)
            continue
        e_ref = 1.0   # e of the held state (the first state's e is 1)
        if len(ladder) == 1:  # two states: every moment of j is the fraction p of the second
            lb, cl, _, _, _, _, _ = ladder[0]
            e = exp(lb - tad * cl - xl)
            p0 = 1.0 + e
            m1 = e / p0
            m2 = m1
            v = u3 = u4 = m1 * (1.0 - m1)
            if hold is not None and hold[0] == 1.0:
                e_ref = e
        else:
            p0, p1, p2, p3, p4 = 1.0, 0.0, 0.0, 0.0, 0.0
            for lb, cl, jl, j, j2, j3, j4 in ladder:
                e = exp(lb - tad * cl - x * jl)
                p0 += e
                p1 += j * e
                p2 += j2 * e
                p3 += j3 * e
                p4 += j4 * e
                if hold is not None and j == hold[0]:
                    e_ref = e
            m1, m2 = p1 / p0, p2 / p0
            v, u3, u4 = m2 - m1 * m1, p3 / p0 - m1 * m2, p4 / p0 - m2 * m2
        if hold is None:
            _closed_form(acc, ctot, sign, t, m1, m2, v, u3, u4)
        else:  # the total follows x: C = F·S/e_ref, and j0, c0 replace jbar, cbar
            _held_form(acc, hold, hold[2] * p0 / e_ref, sign, t, m1, m2, v, u3, u4)
    return [acc[0] + pos, acc[1] + neg, acc[2] + dpos, acc[3] + dneg, acc[4] + iz2,
            acc[5] + diz2, acc[6] + apos, acc[7] + aneg, acc[8] + aiz2]


def _held_form(acc, hold, c, sign, t, m1, m2, v, u3, u4):
    """:func:`_closed_form` for a system whose state j0 is held (total ``c`` at x):
    sums over (j - j0) and (cmat - c0) are the covariances plus (jbar - j0) and
    (cbar - c0) times the sum itself."""
    j0, c0, _ = hold
    side = 0 if sign > 0 else 1
    _closed_form(acc, c, sign, t, m1, m2, v, u3, u4)
    charge, iz2 = c * (t - m1) * sign, c * (m2 - 2.0 * t * m1 + t * t)
    cbar = 0.5 * (t * t - (m2 - 2.0 * t * m1 + t * t)) - 0.5 * m1
    acc[2 + side] -= LN10 * (m1 - j0) * charge
    acc[5] -= LN10 * (m1 - j0) * iz2
    acc[6 + side] -= 2.0 * LN10 * (cbar - c0) * charge
    acc[8] -= 2.0 * LN10 * (cbar - c0) * iz2


def _closed_form(acc, c, sign, t, m1, m2, v, u3, u4):
    """Add one single-signed system (total ``c``) to the sums ``acc`` (see :func:`_sums`):
    cov(j, z²) = u3 - 2 t v, cov(z², z²) = u4 - 4 t u3 + 4 t² v, cov(c, w) =
    -(cov(z², w) + cov(j, w))/2."""
    cjz2 = u3 - 2.0 * t * v
    lc = LN10 * c
    side = 0 if sign > 0 else 1
    acc[side] += c * (t - m1) * sign
    acc[2 + side] += lc * v * sign
    acc[4] += c * (m2 - 2.0 * t * m1 + t * t)
    acc[5] -= lc * cjz2
    acc[6 + side] -= lc * (cjz2 + v) * sign
    acc[8] += lc * (u4 - 4.0 * t * u3 + 4.0 * t * t * v + cjz2)


def _general(acc, ctot, states, hold, x: float, tad: float):
    """Add one system to the sums ``acc`` with the general weighted sums (any signs of
    charge; a held state, whose system's total then follows x)."""
    exp = math.exp
    s0 = sj = sp = sn = sjp = sjn = sz2 = sc = scp = scn = sjz2 = scz2 = 0.0
    e0 = 0.0
    for lb0, cc, st, zp, zn, z2 in states:
        e = exp((lb0 - tad * cc - st * x) * LN10)
        if hold is not None and st == hold[0]:
            e0 = e
        s0 += e
        sj += st * e
        sc += cc * e
        if zp:
            sp += zp * e
            sjp += st * zp * e
            scp += cc * zp * e
        if zn:
            sn += zn * e
            sjn += st * zn * e
            scn += cc * zn * e
        sz2 += z2 * e
        sjz2 += st * z2 * e
        scz2 += cc * z2 * e
    if hold is None:
        inv = ctot / s0
        jb, cb = sj / s0, sc / s0
    else:  # a held state: the total follows x (see problem.Amounts)
        inv = hold[2] / e0
        jb, cb = hold[0], hold[1]
    pk, nk, zk = sp * inv, sn * inv, sz2 * inv
    acc[0] += pk
    acc[1] += nk
    acc[4] += zk
    acc[2] -= LN10 * (sjp * inv - jb * pk)
    acc[3] -= LN10 * (sjn * inv - jb * nk)
    acc[5] -= LN10 * (sjz2 * inv - jb * zk)
    acc[6] -= 2 * LN10 * (scp * inv - cb * pk)
    acc[7] -= 2 * LN10 * (scn * inv - cb * nk)
    acc[8] -= 2 * LN10 * (scz2 * inv - cb * zk)


def _step(x: float, ionic: float, sums, log_kw: float, a_dh: float, spectators,
          first: bool = False):
    """F at (x, I) and the Newton step: ``(F, dx, I_new, x_lin, g, exact)`` (see
    ``coupled``); with ``first``, x_lin is the proton balance's own estimate of x (as
    if only H+ or OH- took up the imbalance) and g the ionic strength of the species as
    they are; ``exact`` is True for the exact Newton step (the 2x2 step; with ideal
    activity, the step in x)."""
    psys, nsys, dpsys, dnsys, iz2, diz2, apos, aneg, aiz2 = sums
    zs_pos, zs_neg, ispec = spectators
    h = math.exp(x * LN10)
    oh = math.exp((log_kw - x) * LN10)
    pos = h + zs_pos + psys
    neg = oh + zs_neg + nsys
    big_f = math.log(pos / neg)
    f_x = (LN10 * h + dpsys) / pos + (LN10 * oh - dnsys) / neg
    g = ispec + 0.5 * (h + oh + iz2)
    dx = -big_f / f_x
    lin = None
    if first:
        lin = (math.log10(max(h + neg - pos, 1e-300)) if neg > pos
               else log_kw - math.log10(max(oh + pos - neg, 1e-300)))
    if a_dh == 0.0:
        return big_f, dx, g, lin, g, True
    if abs(dx) > COUPLED_NEAR:   # far from the root: the plain step at a held I
        return big_f, dx, ionic, lin, g, False
    inew = g
    dd = a_dh * davies_dprime_float(ionic)
    f_i = (apos / pos - (2 * LN10 * oh + aneg) / neg) * dd
    g_x = 0.5 * (LN10 * (h - oh) + diz2)
    g_i = 0.5 * (2 * LN10 * oh + aiz2) * dd - 1.0
    res_g = g - ionic
    det = f_x * g_i - f_i * g_x
    if det != 0.0:
        dx2 = (f_i * res_g - big_f * g_i) / det
        di = (g_x * big_f - res_g * f_x) / det
        if math.isfinite(dx2) and math.isfinite(di) and 0.5 * g < ionic + di < 2.0 * g:
            return big_f, dx2, ionic + di, lin, g, True
    return big_f, dx, inew, lin, g, False


def edge_start(excess_top: float, excess_bottom: float, log_kw: float) -> float | None:
    """A cold start for log10[H+] from the totals alone, or None.

    With every system in its most protonated state the net excess of acid over base
    (NEG - POS less H+ and OH-, mol/L) is ``excess_top``; in its least protonated one
    ``excess_bottom``; deprotonation only adds negative charge, so at the root
    [H+] - [OH-] lies between the two.  Where both have one sign the root is on that
    side, nearer the edge the strong acids or bases set than neutral: the start is
    where [H+] - Kw'/[H+] equals the excess nearer zero.  Otherwise None (a buffer: the
    caller's start at neutral, whose first step balances the protons)."""
    if excess_top > 0.0:
        d = excess_top
    elif excess_bottom < 0.0:
        d = excess_bottom
    else:
        return None
    kw = 10.0 ** log_kw
    root = math.sqrt(d * d + 4.0 * kw)
    if d > 0.0:
        return math.log10(0.5 * (d + root))
    return log_kw - math.log10(0.5 * (root - d))


def _edges(systems, zs_pos: float, zs_neg: float):
    """The excesses of :func:`edge_start` (at the most and at the least protonated
    states) and Σ c z² / 2 at each edge, from ``_inputs``' systems (states:
    (…, z+, z-, z²))."""
    top = bottom = zs_neg - zs_pos
    i_top = i_bottom = 0.0
    for ctot, states, _, _ in systems:
        first, last = states[0], states[-1]
        top -= ctot * (first[3] - first[4])
        bottom -= ctot * (last[3] - last[4])
        i_top += 0.5 * ctot * first[5]
        i_bottom += 0.5 * ctot * last[5]
    return top, bottom, i_top, i_bottom


def _cold_start(systems, spectators, pkw: float, a_dh: float, held) -> tuple:
    """(x, I) of a solution without a start: at the edge the strong acids or bases set
    (:func:`edge_start`, I with the species there), else x = -7 and the spectators' I."""
    zs_pos, zs_neg, ispec = spectators
    ionic = ispec + 1e-7
    if held:
        return -7.0, ionic
    top, bottom, i_top, i_bottom = _edges(systems, zs_pos, zs_neg)
    log_kw = 2.0 * a_dh * davies_d_float(ionic) - pkw
    edge = edge_start(top, bottom, log_kw)
    if edge is None:
        return -7.0, ionic
    if top > 0.0:
        return edge, ispec + i_top + 0.5 * 10.0 ** edge
    return edge, ispec + i_bottom + 0.5 * 10.0 ** (log_kw - edge)


def solve_one(lay: Layout, row, pkw: float, a_dh: float, held=None, *,
              max_iter: int = COUPLED_ITER, x0: float | None = None,
              i0: float | None = None, extra: tuple = (), systems=None,
              ispec_add: float = 0.0):
    """The coupled (x, I) iteration for one solution with totals ``row`` (mol/L, in the
    layout's column order), from ``x0`` and ``i0`` where given (else x = -7 and the
    spectators' ionic strength).

    ``held`` maps a system's index to (reference state, its cmat term, its
    concentration); ``extra`` are more systems in ``Layout.py_systems``' form (the
    metals' hydrolysis ladders, see ``single_metals``); ``systems`` replaces
    ``Layout.py_systems`` and ``ispec_add`` is added to the spectators' ionic strength
    (both held by the outer loop of ``single_pairs``).  Returns ``(x, ionic,
    iterations)``, or ``None`` when it did not get there within ``max_iter`` steps (the
    caller then takes the vectorized solve).
    """
    x, ionic, it, done = iterate_one(lay, row, pkw, a_dh, held, max_iter=max_iter, x0=x0,
                                     i0=i0, extra=extra, systems=systems,
                                     ispec_add=ispec_add)
    return (x, ionic, it) if done else None


def iterate_one(lay: Layout, row, pkw: float, a_dh: float, held=None, *,
                max_iter: int = COUPLED_ITER, x0: float | None = None,
                i0: float | None = None, extra: tuple = (), systems=None,
                ispec_add: float = 0.0):
    """:func:`solve_one`'s iteration: ``(x, ionic, iterations, done)``, where not done
    (no step accepted within ``max_iter``) x and ionic are the last iterate (an outer
    loop that takes one step a round goes on from there)."""
    held = held or {}
    systems, zs_pos, zs_neg, ispec, q, p = _inputs(lay, row, held, extra, systems)
    ispec += ispec_add
    spectators = (zs_pos, zs_neg, ispec)
    davies = a_dh != 0.0
    lo_below, hi = math.log10(p + 1.0) + 1e-3, math.log10(q + 1.0) + 1e-3
    if x0 is None:
        x, ionic = _cold_start(systems, spectators, pkw, a_dh, held)
    else:
        x, ionic = x0, (ispec + 1e-7 if i0 is None else max(i0, 1e-12))
    seen_lo, seen_hi = -math.inf, math.inf
    last = 0.0   # the last exact step, where it was taken in full
    for it in range(1, max_iter + 1):
        tad = 2.0 * (a_dh * davies_d_float(ionic))
        log_kw = tad - pkw
        cold = it == 1 and x0 is None
        big_f, dx, inew, lin, g, exact = _step(x, ionic, _sums(systems, x, tad), log_kw,
                                               a_dh, spectators, cold)
        if cold and abs(dx) > COUPLED_NEAR:
            # a cold start far from the root: first balance the protons, and take the
            # ionic strength of the species as they are
            dx, inew, exact = lin - x, g, False
        if held:
            xn = min(max(x + dx, -20.0), 4.0)
        else:
            xn = min(max(x + dx, log_kw - lo_below), hi)
        # the bisection guard of coupled._plateau_guard
        if inew == ionic or not davies:
            if big_f < 0:
                seen_lo = max(seen_lo, x)
            elif big_f > 0:
                seen_hi = min(seen_hi, x)
        else:
            seen_lo, seen_hi = -math.inf, math.inf
        if (xn <= seen_lo or xn >= seen_hi) and math.isfinite(seen_lo + seen_hi):
            xn = 0.5 * (seen_lo + seen_hi)
        size = max(abs(dx), abs(inew - ionic) / max(inew, 1e-12)) if davies else abs(dx)
        if (abs(big_f) < F_TOL or abs(dx) < QUADRATIC_STEP) and (
                not davies or abs(inew - ionic) <= I_RTOL * max(inew, 1e-12)) or (
                exact and size < QUADRATIC_STEP) or (
                exact and size <= QUADRATIC_MAX
                and size * size * size <= PREDICTED_ERROR * last * last):
            return x + dx, inew, it, True   # the Newton step itself, never a guarded one
        last = size if exact and xn == x + dx else 0.0   # (coupled._quadratic)
        x, ionic = xn, inew
    return x, ionic, max_iter, False


def solve_each(pr, x0=None, i0=None, *, chain: bool = False, max_iter: int = COUPLED_ITER):
    """:func:`solve_one` for every point of the problem ``pr`` in turn, each from its
    own start (``x0``, ``i0``: arrays, or None for the cold start) or, with ``chain``,
    from the line through the roots of the two points before it (a curve solved step
    by step).

    Returns ``(x, ionic, ok, iterations)`` as the vectorized paths do; a point the
    plain-Python path gives up on keeps its start and ``ok`` False.
    """
    n = pr.ispec.shape[0]
    x = np.full(n, -7.0) if x0 is None else np.array(x0, dtype=float)
    ionic = pr.ispec + 1e-7 if i0 is None else np.array(i0, dtype=float)
    ok = np.zeros(n, dtype=bool)
    worst = 0
    rows = pr.totals.tolist()
    xs, iss = x.tolist(), ionic.tolist()
    for i in range(n):
        # without starts, a point not chained starts cold (see solve_one)
        start_x, start_i = (None, None) if x0 is None else (xs[i], iss[i])
        if chain and i and ok[i - 1]:
            start_x, start_i = xs[i - 1], iss[i - 1]
            if i > 1 and ok[i - 2]:   # the straight line through the two roots before
                start_x += max(-2.0, min(2.0, xs[i - 1] - xs[i - 2]))
                start_i = max(start_i + iss[i - 1] - iss[i - 2], 0.5 * start_i)
        got = solve_one(pr.lay, rows[i], pr.pkw, pr.a_dh, pr.held_of(i), max_iter=max_iter,
                        x0=start_x, i0=start_i)
        if got is not None:
            xs[i], iss[i], ok[i] = got[0], got[1], True
            worst = max(worst, got[2])
    return np.array(xs), np.array(iss), ok, worst
