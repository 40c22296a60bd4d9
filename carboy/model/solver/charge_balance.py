"""The charge balance at a given log10[H+], for every point at once.

The charge balance is written as POS(x) = NEG(x), with POS the positive charge
([H+] and every positive species) and NEG the negative charge.  POS rises and NEG
falls with x, so F = ln POS - ln NEG is strictly increasing with the same root as
f = POS - NEG.  Newton on F is nearly linear where one species dominates each side (a
strong acid converges in one step), which is what makes the solve fast; the bracket
(``problem.Problem.bounds``) keeps it safe.  :func:`moments` gives the systems' share of POS,
NEG and the ionic strength, with their derivatives.

Arrays here hold the points last: (S, N) for the S valid states of the layout
(system after system), (K, N) for the K systems, so that each sum over a system's
states adds whole rows.  Every sum is a weighted sum of rows (``einsum`` on rows or a
slice's ``sum``): no matrix product, so no BLAS call and none of its threads.
"""

from __future__ import annotations

import threading

import numpy as np

from carboy.model.solver.constants import LN10
from carboy.model.solver.layout import Layout
from carboy.model.solver.problem import Amounts

_WORK = threading.local()


def _buffer(name: str, rows: int, n: int) -> np.ndarray:
    """A reusable (rows, n) work array of this thread.  The (states, points) arrays are
    rewritten at every step of a solve: taking fresh memory for each would cost a page
    fault per page (the allocator hands such blocks back to the system when freed)."""
    cache = getattr(_WORK, "arrays", None)
    if cache is None:
        cache = _WORK.arrays = {}
    buf = cache.get(name)
    if buf is None or buf.shape != (rows, n):
        buf = cache[name] = np.empty((rows, n))
    return buf


def state_weights(x, ad, lay: Layout) -> np.ndarray:
    """(S + 1, N) unnormalized weights e of every state at log10[H+] = ``x`` and A·D =
    ``ad``, and a last row of zeros (for :func:`group_sums`).

    e = 10**(log beta0 - 2 A D cmat - j x): with log10 gamma = -A D z², the step
    HA(z) = H+ + A(z-1) has log10 K' = log10 K - 2 A D (z - 1), summed in cmat.  Where
    the layout says the range could overflow, each system is shifted by its largest
    exponent (a common factor of the system's states, which cancels).
    """
    s, n = lay.flat_j.shape[0], x.shape[0]
    t = _buffer("t", s + 1, n)
    np.multiply.outer(lay.flat_j, x, out=t[:s])
    np.subtract(lay.flat_lb0[:, None], t[:s], out=t[:s])
    if ad is not None:
        tmp = _buffer("tmp", s, n)
        np.multiply.outer(lay.flat_c, 2.0 * ad, out=tmp)
        t[:s] -= tmp
    if lay.needs_shift:
        for a, b in lay.sys_slices:
            t[a:b] -= t[a:b].max(axis=0)
    t[:s] *= LN10
    np.exp(t[:s], out=t[:s])
    t[s] = 0.0
    return t


def group_sums(e: np.ndarray, lay: Layout):
    """Each system's sums over its states of e, j·e and cmat·e: three (K, N) arrays."""
    k, m = lay.z.shape
    pad = _buffer("pad", k * m, e.shape[1])
    np.take(e, lay.pad_rows, axis=0, out=pad)
    e3 = pad.reshape(k, m, e.shape[1])
    return (e3.sum(axis=1), np.einsum("m,kmn->kn", lay.jj, e3),
            np.einsum("km,kmn->kn", lay.cmat, e3))


def _row_sum(weights, rows) -> np.ndarray:
    """sum_s weights[s] rows[s] (an (N,) array)."""
    return np.einsum("s,sn->n", weights, rows)


def _concentrations(x, ad, lay: Layout, am: Amounts):
    """The (S, N) weights e, each system's sums (see :func:`group_sums`), its total
    (K, N) and the (S, N) concentration of each state."""
    e = state_weights(x, ad, lay)
    sums = group_sums(e, lay)
    e = e[:-1]
    s0 = sums[0]
    if am.held is None:
        ceff = am.c
    else:
        with np.errstate(divide="ignore", invalid="ignore"):
            ceff = np.where(am.mask[:, None], am.held * s0 / e[am.e0_col], am.c)
    return e, sums, ceff, _scaled(e, ceff / s0, lay, "conc")


def _scaled(rows: np.ndarray, per_system: np.ndarray, lay: Layout, name: str) -> np.ndarray:
    """``rows`` (S, N) times ``per_system`` (K, N) at each state's system, in the work
    array ``name``."""
    out = _buffer(name, *rows.shape)
    np.take(per_system, lay.flat_sys, axis=0, out=out)
    out *= rows
    return out


def _deviation(conc: np.ndarray, weights: np.ndarray, ref: np.ndarray, lay: Layout):
    """(weights - ref) conc for every state: ``weights`` (S,) per state, ``ref`` (K, N)
    per system (its mean, or a held state's value), in the work array ``dev``."""
    out = _buffer("dev", *conc.shape)
    np.take(ref, lay.flat_sys, axis=0, out=out)
    np.subtract(weights[:, None], out, out=out)
    out *= conc
    return out


def species_at(x, ad, lay: Layout, am: Amounts):
    """The solved state's sums: ``pos``, ``neg``, ``iz2`` (N,), ``ceff`` (K, N) and the
    (S, N) ``conc`` and fractions ``alpha`` of every state (see :func:`moments`)."""
    e, sums, ceff, conc = _concentrations(x, ad, lay, am)
    return {"pos": _row_sum(lay.flat_zp, conc), "neg": _row_sum(lay.flat_zn, conc),
            "iz2": _row_sum(lay.flat_z2, conc), "ceff": ceff, "conc": conc,
            "alpha": e / sums[0][lay.flat_sys]}


def fractions_at(x, ad, lay: Layout) -> np.ndarray:
    """(S, N) fraction of each state in its system at log10[H+] = ``x``, A·D = ``ad``."""
    e = state_weights(x, ad, lay)
    return e[:-1] / group_sums(e, lay)[0][lay.flat_sys]


def moments(x, ad, lay: Layout, am: Amounts, want_jac: bool = False):
    """Charge sums, their derivatives and the ionic-strength sum at log10[H+] = x.

    ``ad`` is A·D(I) of each point (``None``: ideal, every coefficient 1).  Returns a
    dict of (N,) arrays summed over systems (mol/L): ``pos``, ``neg`` (charge carried by
    positive and negative system species), ``dpos``, ``dneg`` (their x-derivatives),
    ``iz2`` (sum of c z²); with ``want_jac`` also ``diz2`` (its x-derivative) and
    ``apos``, ``aneg``, ``aiz2`` (derivatives with respect to A·D, for the ionic
    strength); ``ceff`` (K, N), each system's total (solved where a state is held).

    With alpha_j proportional to 10**(log beta0_j - 2 A D c_j - j x), d alpha_j/dx
    = -ln10 alpha_j (j - jbar) and d alpha_j/d(AD) = -2 ln10 alpha_j (c_j - cbar): each
    derivative is a sum over states of a weight times (j - jbar) or (c - cbar) times
    the state's concentration.  A held state j0 takes the place of jbar and cbar (the
    system's total then moves with it, see ``problem.Amounts``).
    """
    e, (s0, s_j, s_c), ceff, conc = _concentrations(x, ad, lay, am)
    jref = s_j / s0
    if am.held is not None:
        jref = np.where(am.mask[:, None], am.j0[:, None], jref)
    dev = _deviation(conc, lay.flat_j, jref, lay)
    out = {"pos": _row_sum(lay.flat_zp, conc), "neg": _row_sum(lay.flat_zn, conc),
           "iz2": _row_sum(lay.flat_z2, conc), "dpos": -LN10 * _row_sum(lay.flat_zp, dev),
           "dneg": -LN10 * _row_sum(lay.flat_zn, dev), "ceff": ceff}
    if want_jac:
        out["diz2"] = -LN10 * _row_sum(lay.flat_z2, dev)
        cref = s_c / s0
        if am.held is not None:
            cref = np.where(am.mask[:, None], am.c0[:, None], cref)
        dev = _deviation(conc, lay.flat_c, cref, lay)
        out.update(apos=-2 * LN10 * _row_sum(lay.flat_zp, dev),
                   aneg=-2 * LN10 * _row_sum(lay.flat_zn, dev),
                   aiz2=-2 * LN10 * _row_sum(lay.flat_z2, dev))
    return out


def padded_fractions(alpha: np.ndarray, lay: Layout) -> np.ndarray:
    """(N, K, M) fractions, padded with 0, from the (S, N) flat ones."""
    k, m = lay.z.shape
    full = np.zeros((alpha.shape[1], k * m))
    full[:, lay.flat_index] = alpha.T
    return full.reshape(alpha.shape[1], k, m)
