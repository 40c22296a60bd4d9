"""The guaranteed path: bracketed Newton for log10[H+] inside an ionic-strength loop.

At a fixed ionic strength the charge balance F(x) is strictly increasing and its
root lies inside a bracket computed from the totals alone (widened step by step when
a state is held fixed), so a Newton iteration that falls back to bisection whenever
a step leaves the bracket cannot miss it (:func:`root`); a step that is not half the
one two steps before is a bisection too, so that Newton cannot cycle about a kink
(where a metal's solid appears, F's slope jumps) and every point settles in a bounded
number of steps.  Around it, the ionic
strength is iterated to self-consistency by secant steps with a fixed-point fallback
(:func:`solve_nested`).  Slower than the coupled fast path; it takes the points that
path leaves unsettled.
"""

from __future__ import annotations

import numpy as np

from carboy.model.activity import davies_d
from carboy.model.solver.charge_balance import moments
from carboy.model.solver.constants import (
    F_TOL,
    I_RTOL,
    MAX_I_ITER,
    MAX_ROOT_ITER,
    WIDEN_STEPS,
    X_TOL,
)
from carboy.model.solver.coupled import coarse_fine, solve_coupled
from carboy.model.solver.mixing import next_ionic
from carboy.model.solver.problem import Problem
from carboy.model.solver.starts import cubic_between


def root(x0, ad, log_kw, pr: Problem):
    """Safeguarded Newton on F for every point at fixed ``ad`` = A·D(I); converged
    points drop out.

    Returns ``(x, done, gi)``: ``gi`` is the ionic strength of the solutes other than
    the spectator ions at each point's last evaluation (within ``X_TOL`` of ``x``).
    A point is done when its step is below ``X_TOL``, when |F| (a relative charge
    imbalance) is below ``F_TOL``, or when its bracket has shrunk below ``X_TOL``.
    """
    lay, am, zs_pos, zs_neg = pr.lay, pr.am, pr.zs_pos, pr.zs_neg
    lo, hi = pr.bounds(log_kw)
    if pr.open_system:
        lo, hi = widen(lo, hi, ad, log_kw, pr)
    x = np.clip(x0, lo, hi)
    done = np.zeros(x.shape, dtype=bool)
    gi = np.zeros(x.shape)
    act = np.arange(x.shape[0])
    # the last two steps of each point: a Newton step that is not half the one two steps
    # before becomes a bisection (Newton can cycle about a kink, where a solid appears)
    last = np.full((2, x.shape[0]), np.inf)
    for _ in range(MAX_ROOT_ITER):
        xa = x[act]
        sums, d_x, _, _ = moments(xa, None if pr.a_dh == 0.0 else ad[act], log_kw[act], lay,
                                  am[act])
        pos = zs_pos[act] + sums[0]
        neg = zs_neg[act] + sums[1]
        big_f = np.log(pos / neg)
        fp = d_x[0] / pos - d_x[1] / neg
        la = np.where(big_f < 0, xa, lo[act])
        ha = np.where(big_f > 0, xa, hi[act])
        xn = xa - big_f / fp
        small = np.abs(xn - xa) < X_TOL
        out = (~((xn >= la) & (xn <= ha)) | (np.abs(xn - xa) > 0.5 * last[0, act])) & ~small
        xn = np.where(out, 0.5 * (la + ha), xn)
        last[0, act], last[1, act] = last[1, act], np.abs(xn - xa)
        fin = (np.abs(xn - xa) < X_TOL) | (np.abs(big_f) < F_TOL) | ((ha - la) < X_TOL)
        x[act] = np.where(big_f == 0, xa, xn)
        lo[act], hi[act] = la, ha
        done[act] = fin
        gi[act] = 0.5 * sums[2]
        act = act[~fin]
        if act.size == 0:
            break
    return x, done, gi


def charge_ratio(x, ad, log_kw, pr: Problem):
    """F = ln(POS / NEG) at log10[H+] = ``x`` for every point."""
    sums = moments(x, None if pr.a_dh == 0.0 else ad, log_kw, pr.lay, pr.am)[0]
    return np.log((pr.zs_pos + sums[0]) / (pr.zs_neg + sums[1]))


def widen(lo, hi, ad, log_kw, pr: Problem):
    """With a held state the totals no longer bound the charge: widen the bracket
    until F(lo) < 0 < F(hi) (F is still increasing: every state gains charge with x)."""
    lo, hi = lo.copy(), hi.copy()
    for _ in range(WIDEN_STEPS):
        f_lo = charge_ratio(lo, ad, log_kw, pr)
        f_hi = charge_ratio(hi, ad, log_kw, pr)
        bad_lo, bad_hi = ~(f_lo < 0), ~(f_hi > 0)
        if not (bad_lo.any() or bad_hi.any()):
            break
        lo = np.where(bad_lo, lo - 3.0, lo)
        hi = np.where(bad_hi, hi + 3.0, hi)
    return lo, hi


def solve_nested(pr: Problem, x, ionic):
    """The guaranteed solve from the start values ``x`` (log10[H+]) and ``ionic`` (M).

    Bracketed Newton for x at fixed ionic strength, inside a secant-accelerated
    fixed-point iteration on the ionic strength (at most ``MAX_I_ITER`` rounds).
    Returns ``(x, ionic, converged, iterations)``: converged where the root find
    met its tolerance and the ionic strength agreed to ``I_RTOL``.
    """
    n = x.shape[0]
    pkw, a_dh = pr.pkw, pr.a_dh
    i_prev = r_prev = None
    i_conv = np.zeros(n, dtype=bool)
    root_ok = np.zeros(n, dtype=bool)
    outer = 0
    for outer in range(1, MAX_I_ITER + 1):  # noqa: B007 (used after the loop)
        ad = a_dh * davies_d(ionic)
        log_kw = -pkw + 2.0 * ad
        x, root_ok, gi = root(x, ad, log_kw, pr)
        if a_dh == 0.0:
            i_conv[:] = True
            break
        g = pr.ispec + gi
        r = g - ionic
        i_conv = np.abs(r) <= I_RTOL * np.maximum(g, 1e-12)
        if i_conv.all():
            break
        nxt = next_ionic(ionic, r, i_prev, r_prev, g)
        i_prev, r_prev = ionic, r
        ionic = np.where(i_conv, ionic, nxt)
    return x, ionic, root_ok & i_conv, outer


def _from(pr: Problem, start):
    """Start values for every point: ``start`` (a pair of arrays) where finite, else
    x = -7 and the spectators' ionic strength."""
    n = pr.ispec.shape[0]
    x, ionic = np.full(n, -7.0), pr.ispec + 1e-7
    if start is not None:
        given = np.isfinite(start[0]) & np.isfinite(start[1])
        x, ionic = np.where(given, start[0], x), np.where(given, start[1], ionic)
    return x, ionic


def coupled_then_nested(pr: Problem, x0, i0, max_iter: int):
    """Points started near their roots: the coupled iteration (at most ``max_iter``
    steps), and :func:`solve_nested` for those it leaves unsettled (about a kink)."""
    x, ionic, ok, iterations = solve_coupled(pr, max_iter=max_iter, x0=x0, i0=i0)
    bad = np.flatnonzero(~ok)
    if bad.size:
        x[bad], ionic[bad], ok[bad], more = solve_nested(pr[bad], x[bad], ionic[bad])
        iterations += more
    return x, ionic, ok, iterations


METAL_WARM_MIN = 400
"""A batch with metals at least this long is solved coarse to fine.  Each level costs
some evaluations of the metals' terms whatever its size (about 0.4 ms each on a
2-CPU machine, against about 1 µs a point): a few hundred points are solved
together from cold in fewer evaluations than a coarse level and its fine one take."""


def solve_with_metals(pr: Problem, start=None, *, max_iter: int):
    """Every point of a problem with metals: ``(x, ionic, converged, iterations)``.

    Where a metal's solid appears F's slope jumps, and the coupled iteration can wander
    about the kink: each point takes the coupled iteration (at most ``max_iter`` steps,
    fewer evaluations) first and the guaranteed path (:func:`solve_nested`) where that
    leaves it unsettled.  A batch without starts is solved coarse to fine (every
    ``WARM_STRIDE``-th point, from ``METAL_WARM_MIN`` points on, then each point
    between from the polynomial through its solved neighbours, see
    ``starts.cubic_between``); a point without a start starts at x = -7.  A start only saves steps:
    a point is accepted on the same test whatever its start.
    """
    n = pr.ispec.shape[0]
    if start is not None:
        return coupled_then_nested(pr, *_from(pr, start), max_iter)
    if n < METAL_WARM_MIN:   # cold: x = -7 (and the first step balances the protons)
        return coupled_then_nested(pr, None, None, max_iter)
    coarse, fine = coarse_fine(n)
    xc, ic, okc, itc = solve_with_metals(pr[coarse], max_iter=max_iter)
    xs, i_s = cubic_between(fine, coarse, xc, ic)
    xf, i_f, okf, itf = coupled_then_nested(pr[fine], xs, i_s, max_iter)
    x, ionic, ok = np.empty(n), np.empty(n), np.empty(n, dtype=bool)
    x[coarse], ionic[coarse], ok[coarse] = xc, ic, okc
    x[fine], ionic[fine], ok[fine] = xf, i_f, okf
    return x, ionic, ok, max(itc, itf)
