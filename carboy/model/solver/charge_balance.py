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
states adds whole rows.  H+ and OH- ride along as two more rows (H+ as a "state" one
proton above the top, OH- one below, whose amounts are their own: no total fixes
them), so that POS, NEG and the ionic strength with all their derivatives come from
three weighted sums of rows each.  Every sum is a weighted sum of rows (``einsum``)
or of a system's rows: no matrix product, so no BLAS call and none of its threads.
Modelled metal ions add their terms to the sums and their derivatives at the same x
(``metal_terms``), the systems they form salts with read from the same weights.
"""

from __future__ import annotations

import threading

import numpy as np

from carboy.model.solver.constants import LN10
from carboy.model.solver.layout import Layout
from carboy.model.solver.problem import Amounts

try:  # numpy's own loop behind np.einsum, without the Python wrapper (a call per step)
    from numpy._core._multiarray_umath import c_einsum as _einsum
except ImportError:  # pragma: no cover - another numpy layout
    _einsum = np.einsum

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


def state_weights(x, ad, lay: Layout, log_kw=None, shift=None) -> np.ndarray:
    """(S + 3, N): the unnormalized weights e of every state at log10[H+] = ``x`` and
    A·D = ``ad``, then [H+] and [OH-] (with ``log_kw``, log10 Kw' at A·D; else 0) and a
    row of zeros (for :func:`group_sums`).

    e = 10**(log beta0 - 2 A D cmat - j x): with log10 gamma = -A D z², the step
    HA(z) = H+ + A(z-1) has log10 K' = log10 K - 2 A D (z - 1), summed in cmat.  Where
    the layout says the range could overflow, each system is shifted by its largest
    exponent (a common factor of the system's states, which cancels).  ``shift`` (S, N),
    where given, is added to each state's exponent (see ``problem.Amounts.shift``).
    """
    s, n = lay.flat_j.shape[0], x.shape[0]
    t = _buffer("t", s + 3, n)
    np.multiply.outer(lay.flat_j, x, out=t[:s])
    np.subtract(lay.flat_lb0[:, None], t[:s], out=t[:s])
    if ad is not None:
        tmp = _buffer("tmp", s, n)
        np.multiply.outer(lay.flat_c, 2.0 * ad, out=tmp)
        t[:s] -= tmp
    if shift is not None:
        t[:s] += shift
    if lay.needs_shift:
        for a, b in lay.sys_slices:
            t[a:b] -= t[a:b].max(axis=0)
    if log_kw is None:
        t[s:s + 2] = -np.inf
    else:
        t[s] = x
        np.subtract(log_kw, x, out=t[s + 1])
    t[:s + 2] *= LN10
    np.exp(t[:s + 2], out=t[:s + 2])
    t[s + 2] = 0.0
    return t


def group_sums(e: np.ndarray, lay: Layout):
    """Each system's sums over its states of e, j·e and cmat·e: three (K, N) arrays."""
    k, m = lay.z.shape
    pad = _buffer("pad", k * m, e.shape[1])
    # mode="clip" (the rows are valid anyway): "raise" would first take into a copy
    e.take(lay.pad_rows, axis=0, out=pad, mode="clip")
    e3 = pad.reshape(k, m, e.shape[1])
    return (e3.sum(axis=1), _einsum("m,kmn->kn", lay.jj, e3),
            _einsum("km,kmn->kn", lay.cmat, e3))


def _concentrations(x, ad, log_kw, lay: Layout, am: Amounts):
    """The weights e (see :func:`state_weights`), each system's sums (see
    :func:`group_sums`), its total (K, N) and the (S + 2, N) concentration of each
    state, then of H+ and OH-."""
    e = state_weights(x, ad, lay, log_kw, am.shift)
    sums = group_sums(e, lay)
    s = lay.flat_j.shape[0]
    s0 = sums[0]
    if am.held is None:
        ceff = am.c
    else:
        with np.errstate(divide="ignore", invalid="ignore"):
            ceff = np.where(am.mask[:, None], am.held * s0 / e[am.e0_col], am.c)
    conc = _buffer("conc", s + 2, e.shape[1])
    (ceff / s0).take(lay.flat_sys, axis=0, out=conc[:s], mode="clip")
    conc[:s] *= e[:s]
    conc[s:] = e[s:s + 2]
    return e, sums, ceff, conc


def _deviation(conc: np.ndarray, weights: np.ndarray, ref: np.ndarray, lay: Layout):
    """(weights - ref) conc for every row of ``conc``: ``weights`` per row, ``ref``
    (K + 1, N) per system (its mean, or a held state's value; 0 in the last row, for H+
    and OH-), in the work array ``dev``."""
    out = _buffer("dev", *conc.shape)
    ref.take(lay.row_sys, axis=0, out=out, mode="clip")
    np.subtract(weights[:, None], out, out=out)
    out *= conc
    return out


def species_at(x, ad, log_kw, lay: Layout, am: Amounts):
    """The solved state: ``sums`` (3, N) as :func:`moments` gives them, ``ceff``
    (K, N), and the (S, N) ``conc`` and fractions ``alpha`` of every state; with metals,
    ``metal`` (their :class:`~carboy.model.metals.MetalState`), and ``conc`` and
    ``ceff`` less what salts hold (the dissolved part)."""
    e, sums, ceff, conc = _concentrations(x, ad, log_kw, lay, am)
    s = lay.flat_j.shape[0]
    alpha = e[:s] / sums[0][lay.flat_sys]
    out = {"sums": _einsum("ws,sn->wn", lay.row_w, conc), "ceff": ceff, "conc": conc[:s],
           "alpha": alpha, "metal": None}
    if lay.metals is not None and am.metal is not None:  # metal_terms is loaded with them
        from carboy.model.solver.metal_terms import dissolved_ligands, ligands_at, solved_state

        metal = solved_state(lay.metals, am.metal, x, ad, log_kw,
                             ligands_at(lay.metals, e, sums[0], ceff))
        out["sums"][0] += metal.pos + metal.ligand_pos
        out["sums"][1] += metal.neg + metal.ligand_neg
        out["sums"][2] += metal.iz2 + metal.ligand_iz2
        out["ceff"] = ceff = ceff.copy()
        dissolved_ligands(lay.metals, metal, conc[:s], alpha, ceff, lay.sys_slices)
        out["metal"] = metal
    return out


def fractions_at(x, ad, lay: Layout) -> np.ndarray:
    """(S, N) fraction of each state in its system at log10[H+] = ``x``, A·D = ``ad``."""
    e = state_weights(x, ad, lay)
    return e[:lay.flat_j.shape[0]] / group_sums(e, lay)[0][lay.flat_sys]


def moments(x, ad, log_kw, lay: Layout, am: Amounts, want_jac: bool = False):
    """Charge sums, their derivatives and the ionic-strength sum at log10[H+] = x.

    ``ad`` is A·D(I) of each point (``None``: ideal, every coefficient 1) and ``log_kw``
    log10 Kw' there.  Returns ``(sums, d_x, d_ad, ceff)``: ``sums`` (3, N) holds POS and
    NEG less the spectator ions (the charge carried by H+, OH- and the positive and
    negative system species, mol/L) and Σ c z² of the same species; ``d_x`` their
    x-derivatives; with ``want_jac`` ``d_ad`` their derivatives with respect to A·D
    (for the ionic strength; else None); ``ceff`` (K, N), each system's total (solved
    where a state is held).

    With alpha_j proportional to 10**(log beta0_j - 2 A D c_j - j x), d alpha_j/dx
    = -ln10 alpha_j (j - jbar) and d alpha_j/d(AD) = -2 ln10 alpha_j (c_j - cbar): each
    derivative is a sum over states of a weight times (j - jbar) or (c - cbar) times
    the state's concentration.  A held state j0 takes the place of jbar and cbar (the
    system's total then moves with it, see ``problem.Amounts``); H+ counts as j = -1,
    c = 0 and OH- as j = 1, c = -1, both about 0.
    """
    e, (s0, s_j, s_c), ceff, conc = _concentrations(x, ad, log_kw, lay, am)
    k = s0.shape[0]
    ref = _buffer("ref", k + 1, x.shape[0])
    ref[k] = 0.0
    np.divide(s_j, s0, out=ref[:k])
    if am.held is not None:
        ref[:k] = np.where(am.mask[:, None], am.j0[:, None], ref[:k])
    d_x = _einsum("ws,sn->wn", lay.row_w_dx, _deviation(conc, lay.row_j, ref, lay))
    d_ad = None
    if want_jac:
        np.divide(s_c, s0, out=ref[:k])
        if am.held is not None:
            ref[:k] = np.where(am.mask[:, None], am.c0[:, None], ref[:k])
        d_ad = _einsum("ws,sn->wn", lay.row_w_dad, _deviation(conc, lay.row_c, ref, lay))
    sums = _einsum("ws,sn->wn", lay.row_w, conc)
    if lay.metals is not None and am.metal is not None:  # metal_terms is loaded with them
        from carboy.model.solver.metal_terms import add_terms, ligands_at

        add_terms(lay.metals, am.metal, x, ad, log_kw, ligands_at(lay.metals, e, s0, ceff),
                  sums, d_x, d_ad, am.ligand_start)
    return sums, d_x, d_ad, ceff


def padded_fractions(alpha: np.ndarray, lay: Layout) -> np.ndarray:
    """(N, K, M) fractions, padded with 0, from the (S, N) flat ones."""
    k, m = lay.z.shape
    full = np.zeros((alpha.shape[1], k * m))
    full[:, lay.flat_index] = alpha.T
    return full.reshape(alpha.shape[1], k, m)
