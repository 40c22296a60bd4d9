"""The charge balance at a given log10[H+], for every point at once.

The charge balance is written as POS(x) = NEG(x), with POS the positive charge
([H+] and every positive species) and NEG the negative charge.  POS rises and NEG
falls with x, so F = ln POS - ln NEG is strictly increasing with the same root as
f = POS - NEG.  Newton on F is nearly linear where one species dominates each side (a
strong acid converges in one step), which is what makes the solve fast; the bracket
(:func:`bracket`) keeps it safe.  :func:`moments` gives every system's share of POS,
NEG and the ionic strength, with their derivatives, from one matrix product.
"""

from __future__ import annotations

import numpy as np

from carboy.model.solver.constants import LN10
from carboy.model.solver.layout import NMOM, Layout
from carboy.model.solver.problem import Amounts

_POS_NEG_Z2 = [2, 3, 6]
"""The moment columns of z+, z- and z² (see ``layout.NMOM``)."""


def bracket(q, p, log_kw):
    """log10[H+] bounds with f(lo) < 0 < f(hi), from the totals alone.

    With Q the largest negative charge the solutes can carry and P the largest
    positive one, f(x) >= [H+] - [OH-] - Q and f(x) <= [H+] - [OH-] + P.  So
    [H+] = Q + 1 gives f > 0 and [H+] = Kw'/(P + 1) gives f < 0.
    """
    return log_kw - np.log10(p + 1.0) - 1e-3, np.log10(q + 1.0) + 1e-3


def conditional_logbeta(lay: Layout, ad):
    """Cumulative log10 beta of each state with Davies coefficients, ``ad`` = A·D(I).

    With log10 gamma = -A D z², the step HA(z) = H+ + A(z-1) has
    log10 K' = log10 K - 2 A D (z - 1); summed over the steps below each state.
    """
    return lay.logbeta0[None] - (2.0 * ad)[:, None, None] * lay.cmat[None]


def _state_weights(x, ad, lay: Layout):
    """e (unnormalized state weights, shifted where the layout needs it) and the
    (N, K, NMOM) moments, each still multiplied by the system's sum of e."""
    n = x.shape[0]
    k, m = lay.z.shape
    if lay.needs_shift:  # rare: padded layout with a per-system shift against overflow
        t = conditional_logbeta(lay, ad) - np.arange(m, dtype=float) * x[:, None, None]
        t -= t.max(axis=2, keepdims=True)
        e = np.exp(t * LN10)
        mom = (e.reshape(n, k * m) @ lay.wmat).reshape(n, k, NMOM)
    else:  # valid states only; 10**t stays within the float range (see _needs_shift)
        t = lay.flat_lb0 - np.multiply.outer(2.0 * ad, lay.flat_c) - np.multiply.outer(x, lay.flat_j)
        e = np.exp(t * LN10)
        mom = (e @ lay.flat_w).reshape(n, k, NMOM)
    return e, mom


def moments(x, ad, lay: Layout, am: Amounts, want_alpha: bool = False,
            want_jac: bool = False):
    """Charge sums, their derivatives and the ionic-strength sum at log10[H+] = x.

    ``ad`` is A·D(I) of each point.  All per-system weighted sums come from one
    matrix product with the block-diagonal moment weights of the layout.  Returns a
    dict of arrays summed over systems (mol/L): ``pos``, ``neg`` (charge carried by
    positive and negative system species), ``dpos``, ``dneg`` (their x-derivatives),
    ``iz2`` (sum of c z²); with ``want_jac`` also ``diz2`` (its x-derivative) and
    ``apos``, ``aneg``, ``aiz2`` (derivatives with respect to A·D, for the ionic
    strength); ``ceff`` (N, K), each system's total (solved where a state is held);
    with ``want_alpha`` the fractions ``alpha`` (N, K, M).

    With alpha_j proportional to 10**(log beta0_j - 2 A D c_j - j x), d alpha_j/dx
    = -ln10 alpha_j (j - jbar) and d alpha_j/d(AD) = -2 ln10 alpha_j (c_j - cbar), so
    a weighted sum's derivatives are -ln10 cov(j, w) and -2 ln10 cov(c, w).
    """
    n = x.shape[0]
    k, m = lay.z.shape
    e, mom = _state_weights(x, ad, lay)
    ssum = mom[:, :, 0].copy()
    mom /= mom[:, :, :1]
    jbar = mom[:, :, 1]
    cbar = mom[:, :, 7]
    if am.held is None:
        ceff, jref, cref = am.c, jbar, cbar
    else:
        e0 = e.reshape(n, -1)[:, am.e0_col]
        with np.errstate(divide="ignore", invalid="ignore"):
            ceff = np.where(am.mask, am.held * ssum / e0, am.c)
        jref = np.where(am.mask, am.j0, jbar)
        cref = np.where(am.mask, am.c0, cbar)
    # sums over systems: a = sum C m_w, b = sum C jref m_w, c = sum C cref m_w
    a = np.einsum("nk,nkw->wn", ceff, mom)
    b = np.einsum("nk,nkw->wn", ceff * jref, mom[:, :, _POS_NEG_Z2])
    out = {"pos": a[2], "neg": a[3], "iz2": a[6],
           "dpos": -LN10 * (a[4] - b[0]), "dneg": -LN10 * (a[5] - b[1])}
    if want_jac:
        c = np.einsum("nk,nkw->wn", ceff * cref, mom[:, :, _POS_NEG_Z2])
        out.update(diz2=-LN10 * (a[10] - b[2]), apos=-2 * LN10 * (a[8] - c[0]),
                   aneg=-2 * LN10 * (a[9] - c[1]), aiz2=-2 * LN10 * (a[11] - c[2]))
    out["ceff"] = ceff
    if want_alpha:
        if not lay.needs_shift:
            full = np.zeros((n, k * m))
            full[:, lay.valid.reshape(-1)] = e
            e = full.reshape(n, k, m)
        out["alpha"] = e / e.sum(axis=2, keepdims=True)
    return out
