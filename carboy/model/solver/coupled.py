"""The fast path: vectorized Newton on the pair (log10[H+], ionic strength).

The unknowns are x = log10[H+] and the ionic strength I; the equations are the charge
balance F(x, I) = 0 (see ``charge_balance``) and g(x, I) = I, with g the ionic
strength the solved species give.  Far from the root a plain Newton step in x is taken
at a held I (the coupled step can cycle there), with a bisection guard against
cycling on buffer plateaus; near it (plain step below ``COUPLED_NEAR``) the exact 2×2
Newton step.  A point is accepted only on an unclipped Newton step below
``QUADRATIC_STEP`` at a self-consistent I, so the answer is within about the square
of that step of the solution.  Points not accepted within the step limit go to the
guaranteed path (``bracketed``).
"""

from __future__ import annotations

import numpy as np

from carboy.model.activity import davies_d, davies_d_and_slope
from carboy.model.solver.charge_balance import moments
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
from carboy.model.solver.problem import Problem
from carboy.model.solver.single import solve_each
from carboy.model.solver.starts import cubic_between, edge_starts

TAIL_POINTS = 8
"""When no more than this many points are left unsettled, the plain-Python path
finishes them (numpy's per-call cost would dominate a vectorized step)."""


def _newton_2x2(d_ad, dz_x, ia, dd, pos, neg, big_f, f_x, g):
    """The step (dx, I_new, I settled?, exact 2x2 step?) with Davies coefficients (``dd`` = d(AD)/dI,
    ``d_ad`` the charge sums' A·D-derivatives, ``dz_x`` that of Σ c z² in x): the exact
    2×2 step near the root, the plain step in x at a held I far from it, and the plain
    update g of I where the 2×2 step of I is not trusted."""
    f_i = (d_ad[0] / pos - d_ad[1] / neg) * dd
    g_x = 0.5 * dz_x
    g_i = 0.5 * d_ad[2] * dd - 1.0
    res_g = g - ia
    det = f_x * g_i - f_i * g_x
    with np.errstate(divide="ignore", invalid="ignore"):
        dx = (f_i * res_g - big_f * g_i) / det
        di = (g_x * big_f - res_g * f_x) / det
    # far from the root the coupled step can cycle: there, take the plain Newton
    # step in x at a held I; near it, the exact 2x2 step (or, if that fails,
    # the plain step with the plain update of I)
    plain = -big_f / f_x
    far = np.abs(plain) > COUPLED_NEAR
    # ...and an ionic-strength step far from the plain update g is not trusted
    inew = ia + di
    bad = far | ~(np.isfinite(dx) & (inew > 0.5 * g) & (inew < 2.0 * g))
    if bad.any():
        dx = np.where(bad, plain, dx)
        inew = np.where(far, ia, np.where(bad, g, inew))
    i_ok = np.abs(inew - ia) <= I_RTOL * np.maximum(inew, 1e-12)
    return dx, inew, i_ok, ~bad


def _newton_step(pr: Problem, xa, ia, cold=None):
    """F at (xa, ia) and the Newton step from there.

    Returns ``(F, dx, I_new, I settled?, log10 Kw', exact?)``; with ideal activity the
    step of I is the plain update g and I counts as settled.  ``exact`` is True where
    the step is the exact Newton step of the equations (the 2x2 step; with ideal
    activity, the step in x), not a plain step at a held I or a cold start's.  Where
    ``cold`` (a mask: a first step from no start, see :func:`_cold_starts`) a point far
    from its root first balances the protons, as if only H+ or OH- took up the
    imbalance, and takes the ionic strength of the species as they are (as
    ``single.solve_one`` does).
    """
    davies = pr.a_dh != 0.0
    if davies:
        d, slope = davies_d_and_slope(ia)
        ad = pr.a_dh * d
        log_kw = 2.0 * ad - pr.pkw
    else:
        ad, log_kw = None, np.full(xa.shape, -pr.pkw)
    sums, d_x, d_ad, _ = moments(xa, ad, log_kw, pr.lay, pr.am, want_jac=davies)
    pos = sums[0] + pr.zs_pos
    neg = sums[1] + pr.zs_neg
    big_f = np.log(pos / neg)
    f_x = d_x[0] / pos - d_x[1] / neg
    g = pr.ispec + 0.5 * sums[2]
    if davies:
        dx, inew, i_ok, exact = _newton_2x2(d_ad, d_x[2], ia, pr.a_dh * slope, pos, neg,
                                            big_f, f_x, g)
    else:
        dx = -big_f / f_x
        inew = g
        i_ok = exact = np.ones(xa.shape, dtype=bool)
    if cold is not None:
        far = cold & (np.abs(dx) > COUPLED_NEAR)
        if far.any():
            h, oh = np.exp(LN10 * xa), np.exp(LN10 * (log_kw - xa))
            lin = np.where(neg > pos, np.log10(np.maximum(h + neg - pos, 1e-300)),
                           log_kw - np.log10(np.maximum(oh + pos - neg, 1e-300)))
            dx = np.where(far, lin - xa, dx)
            inew = np.where(far, g, inew)
            i_ok = i_ok & ~far
            exact = exact & ~far
    if pr.lay.metals is not None and pr.lay.metals.complexes:
        # the metals' free ligand comes from a search of its own (to its tolerance, not
        # to the last bit): the quadratic prediction of two steps cannot be trusted
        exact = np.zeros_like(exact)
    return big_f, dx, inew, i_ok, log_kw, exact


def _cold_starts(pr: Problem):
    """``(x, I, cold)`` of points without starts: from the totals alone where the
    strong acids or bases decide the side of the root (``starts.edge_starts``), else
    x = -7 and the spectators' I, whose first step balances the protons (``cold``)."""
    n = pr.ispec.shape[0]
    if pr.am.held is not None or pr.am.shift is not None or np.ndim(pr.pkw) != 0:
        return np.full(n, -7.0), pr.ispec + 1e-7, np.ones(n, dtype=bool)
    ionic = pr.ispec + 1e-7
    log_kw = -pr.pkw + (2.0 * pr.a_dh * davies_d(ionic) if pr.a_dh != 0.0 else 0.0)
    x, ionic, _ = edge_starts(*pr.edges(), pr.ispec, log_kw)
    return x, ionic, np.ones(n, dtype=bool)


def _blockwise(pr: Problem, xa, ia, cold):
    """:func:`_newton_step` block by block (``Layout.chunk`` points at a time: the work
    arrays of a block stay in cache), the results joined: the iteration itself runs
    over every point at once, so the few points left after a step are one block."""
    n, c = xa.shape[0], pr.lay.chunk
    if n <= c:
        return _newton_step(pr, xa, ia, cold)
    parts = [_newton_step(pr[a:a + c], xa[a:a + c], ia[a:a + c],
                          None if cold is None else cold[a:a + c])
             for a in range(0, n, c)]
    return tuple(np.concatenate(col) for col in zip(*parts, strict=True))


def _plateau_guard(xa, xn, big_f, held_i, seen_lo, seen_hi):
    """Where F was seen negative / positive while I stayed the same: a step leaving
    that interval is replaced by its midpoint (plain Newton can cycle on a buffer
    plateau); the memory is dropped whenever I moves.  Returns (xn, seen_lo, seen_hi)."""
    if not held_i.any():   # I moved everywhere: nothing to remember
        seen_lo.fill(-np.inf)
        seen_hi.fill(np.inf)
        return xn, seen_lo, seen_hi
    seen_lo = np.where(held_i, np.where(big_f < 0, np.maximum(seen_lo, xa), seen_lo), -np.inf)
    seen_hi = np.where(held_i, np.where(big_f > 0, np.minimum(seen_hi, xa), seen_hi), np.inf)
    guard = ((xn <= seen_lo) | (xn >= seen_hi)) & np.isfinite(seen_lo) & np.isfinite(seen_hi)
    if guard.any():
        xn = np.where(guard, 0.5 * (np.where(guard, seen_lo, 0.0)
                                    + np.where(guard, seen_hi, 0.0)), xn)
    return xn, seen_lo, seen_hi


def _step_size(dx, inew, ia, davies: bool):
    """The size of each point's Newton step: |dx|, and with Davies coefficients the
    larger of that and the step of I relative to I."""
    if not davies:
        return np.abs(dx)
    return np.maximum(np.abs(dx), np.abs(inew - ia) / np.maximum(inew, 1e-12))


def _quadratic(size, last, exact):
    """Where an exact Newton step of ``size`` follows an exact step of ``last`` (taken
    in full), the root is within about C size² of the point the step reaches, with
    C = size / last² (Newton's error squares from step to step): accept there when
    that is below ``PREDICTED_ERROR`` and the step below ``QUADRATIC_MAX``.  The first
    step (no ``last``) and any step after a clipped, guarded or plain one never pass."""
    with np.errstate(divide="ignore", invalid="ignore"):
        return (exact & (size <= QUADRATIC_MAX)
                & (size * size * size <= PREDICTED_ERROR * last * last))


def plain_python(pr: Problem) -> bool:
    """True when ``single.solve_each`` can take points of ``pr``: a layout it knows
    (``Layout.python_path``) and no terms an outer loop holds (state shifts, a pKw or a
    spectators' ionic strength of its own per point), which it would not see."""
    return pr.lay.python_path and pr.am.shift is None and np.ndim(pr.pkw) == 0


def solve_coupled(pr: Problem, *, max_iter: int = COUPLED_ITER, x0=None, i0=None):
    """Newton on (x, I) for every point of ``pr``, from ``x0`` and ``i0`` where given
    (a neighbour's root, say), else from x = -7 and the spectators' I.

    Steps are kept inside the bracket of x (moderate steps for an open system, whose
    totals do not bound it) and at positive I.  Returns ``(x, ionic, ok, iterations)``;
    ``ok`` is False where a point was not accepted within ``max_iter`` steps.
    """
    n = pr.ispec.shape[0]
    cold = None
    if x0 is None:
        x_out, i_out, cold = _cold_starts(pr)
    else:
        x_out = np.array(x0, dtype=float)
        i_out = np.maximum(np.array(i0, dtype=float), 1e-12)
    ok = np.zeros(n, dtype=bool)
    # working copies of the unfinished points, compacted whenever some finish
    idx = np.arange(n)
    xa, ia = x_out.copy(), i_out.copy()
    cur = pr
    seen_lo, seen_hi = np.full(n, -np.inf), np.full(n, np.inf)
    last = np.zeros(n)   # each point's last exact step (0: none, or it was not taken)
    it = 0
    davies = pr.a_dh != 0.0
    for it in range(1, max_iter + 1):  # noqa: B007 (used after the loop)
        big_f, dx, inew, i_ok, log_kw, exact = _blockwise(cur, xa, ia,
                                                          cold if it == 1 else None)
        if cur.open_system:  # the totals do not bound a held system: keep steps moderate
            xn = xa + np.minimum(np.maximum(dx, -3.0), 3.0)
        else:
            lo, hi = cur.bounds(log_kw)
            xn = np.minimum(np.maximum(xa + dx, lo), hi)
        held_i = (inew == ia) if davies else np.ones(xa.shape, dtype=bool)
        xn, seen_lo, seen_hi = _plateau_guard(xa, xn, big_f, held_i, seen_lo, seen_hi)
        # accept on the Newton step itself, and keep that step (never a clipped or
        # guarded one) as the answer
        size = _step_size(dx, inew, ia, davies)
        fin = (((np.abs(big_f) < F_TOL) | (np.abs(dx) < QUADRATIC_STEP)) & i_ok
               | (exact & (size < QUADRATIC_STEP)) | _quadratic(size, last, exact))
        last = np.where(exact & (xn == xa + dx), size, 0.0)
        xa, ia = np.where(fin, xa + dx, xn), inew
        if fin.any():
            done = idx[fin]
            x_out[done], i_out[done], ok[done] = xa[fin], ia[fin], True
            keep = ~fin
            if not keep.any():
                return x_out, i_out, ok, it
            idx, xa, ia = idx[keep], xa[keep], ia[keep]
            seen_lo, seen_hi, last = seen_lo[keep], seen_hi[keep], last[keep]
            cur = cur[keep]
        if idx.size <= TAIL_POINTS and plain_python(cur) and it < max_iter:
            xt, i_t, okt, itt = solve_each(cur, xa, ia, max_iter=max_iter - it)
            x_out[idx], i_out[idx], ok[idx] = xt, i_t, okt
            return x_out, i_out, ok, it + itt
    x_out[idx], i_out[idx] = xa, ia
    return x_out, i_out, ok, it


WARM_MIN = 25
"""Batches at least this long are solved coarse to fine (see :func:`solve_warm`)."""
WARM_STRIDE = 8
"""Every this many points is solved first; the points between start from there."""


def coarse_fine(n: int):
    """The indices of every ``WARM_STRIDE``-th of n points and the last (solved first),
    and of the points between them."""
    fine = np.ones(n, dtype=bool)
    fine[::WARM_STRIDE] = False
    fine[n - 1] = False
    return np.flatnonzero(~fine), np.flatnonzero(fine)


def solve_warm(pr: Problem, *, max_iter: int = COUPLED_ITER, x0=None, i0=None):
    """:func:`solve_coupled` for a batch whose neighbouring points are alike (a curve).

    Every ``WARM_STRIDE``-th point (and the last) is solved first, itself coarse to fine
    when it is long; each point between then starts from the cubic through its solved
    neighbours' roots (log10[H+] and I, see ``starts.cubic_between``), a few Newton
    steps from its own.  A start only saves steps: a point is accepted on the same test
    whatever its start, so the order of the points never changes a result beyond the
    tolerances.  Given ``x0`` and ``i0``, a point starts there instead, and the points
    whose start is NaN are solved coarse to fine among themselves.
    """
    n = pr.ispec.shape[0]
    if x0 is not None:
        given = np.isfinite(x0) & np.isfinite(i0)
        if not given.all():
            return _merge(n, (np.flatnonzero(given), _started(pr, given, x0, i0, max_iter)),
                          (np.flatnonzero(~given), solve_warm(pr[~given], max_iter=max_iter)))
        return _started(pr, slice(None), x0, i0, max_iter)
    if n < WARM_MIN:
        return (solve_coupled(pr, max_iter=max_iter) if not plain_python(pr)
                else solve_each(pr, chain=True, max_iter=max_iter))  # step by step
    coarse, fine = coarse_fine(n)
    xc, ic, okc, itc = solve_warm(pr[coarse], max_iter=max_iter)
    xs, i_s = cubic_between(fine, coarse, xc, ic)
    return _merge(n, (coarse, (xc, ic, okc, itc)),
                  (fine, solve_coupled(pr[fine], max_iter=max_iter, x0=xs, i0=i_s)))


def _started(pr: Problem, which, x0, i0, max_iter: int):
    """Solve the points ``which`` of ``pr`` from their starts."""
    sub = pr if isinstance(which, slice) else pr[which]
    xs, i_s = np.asarray(x0)[which], np.asarray(i0)[which]
    if sub.ispec.shape[0] < WARM_MIN and plain_python(pr):
        return solve_each(sub, xs, i_s, max_iter=max_iter)
    return solve_coupled(sub, max_iter=max_iter, x0=xs, i0=i_s)


def _merge(n: int, *parts):
    """``(x, ionic, ok, iterations)`` of n points from (indices, result) parts."""
    x, ionic, ok = np.empty(n), np.empty(n), np.empty(n, dtype=bool)
    worst = 0
    for idx, (xp, ip, okp, itp) in parts:
        x[idx], ionic[idx], ok[idx] = xp, ip, okp
        worst = max(worst, itp)
    return x, ionic, ok, worst
