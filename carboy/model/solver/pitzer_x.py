"""The charge balance's root at held coefficients on the Pitzer path, on arrays.

``pitzer_batch``'s rounds hold every point's coefficients (log10 γ, log10 a_w) and ask
for x = log10 m(H+) there: :func:`solve_x`, a bracketed Newton iteration over the points
still moving, from :func:`start` (the bound on H+ or OH- the totals give) or the last
round's root.  :class:`BatchTable` is ``pitzer_one.OneTable`` as arrays.  Sums are
einsum reductions and elementwise products, no matrix products (no BLAS).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from carboy.model.solver.constants import LN10
from carboy.model.solver.pitzer_one import (
    MAX_STEP,
    NEWTON_STEPS,
    QUADRATIC,
    X_BOUNDS,
    X_STEP_TOL,
    OneTable,
)
from carboy.model.solver.pitzer_salts import salt_array


@dataclass(frozen=True, eq=False, repr=False)
class BatchTable:
    """A :class:`OneTable` as arrays."""

    n: int
    zpos: np.ndarray                 # (U,) positive charge of each column
    zneg: np.ndarray                 # (U,) magnitude of the negative charge
    ion_cols: np.ndarray             # (J,) column of each spectator
    ion_batch: np.ndarray            # (J,) its batch column
    systems: tuple                   # (batch column, cols (M,), log beta0 (M,), j (M,))
    pairs: tuple                     # (pair column, cation column, log10 K)
    pkw: float
    # every system's states in one row, system after system (S states in all)
    cols: np.ndarray                 # (S,) column of each state
    lb: np.ndarray                   # (S,) log10 beta0
    j: np.ndarray                    # (S,) protons lost from the top state
    sys_of: np.ndarray               # (S,) its system
    starts: np.ndarray               # (K,) first state of each system
    repeats: bool                    # does a column hold states of two systems?
    water: np.ndarray                # (S,) water each state takes (outer.HYDRATED)
    solids: tuple = ()               # OneTable.solids: the hydroxides that may form
    salts: tuple = ()                # OneTable.salts: the 1:1 salts that may form
    held: np.ndarray | None = None   # (K,) OneTable.held: an open system's held state's
    #                                  place among the states (-1 closed), or None
    zz: np.ndarray | None = None     # (2, U) zpos and zneg as rows
    hydrated: bool = False           # does any state take water?
    span: slice | None = None        # cols as a slice when they are consecutive


def batch_table(ot: OneTable) -> BatchTable:
    z = np.array(ot.charges)
    systems = tuple((b, np.array([s[0] for s in st], dtype=int),
                     np.array([s[1] for s in st]), np.array([s[2] for s in st]))
                    for b, st in ot.systems)
    flat = [(c, lb, j, k, h2o) for k, (_, st) in enumerate(ot.systems)
            for c, lb, j, h2o in st]
    sizes = [len(st) for _, st in ot.systems]
    cols = [f[0] for f in flat]
    repeats = len(set(cols)) < len(cols)
    water = np.array([f[4] for f in flat])
    span = slice(cols[0], cols[-1] + 1) if cols and not repeats and all(
        b - a == 1 for a, b in zip(cols, cols[1:])) else None
    return BatchTable(ot.n, np.maximum(z, 0.0), np.maximum(-z, 0.0),
                      np.array([c for c, _ in ot.ions], dtype=int),
                      np.array([b for _, b in ot.ions], dtype=int), systems, ot.pairs, ot.pkw,
                      np.array(cols, dtype=int), np.array([f[1] for f in flat]),
                      np.array([f[2] for f in flat]), np.array([f[3] for f in flat], dtype=int),
                      np.cumsum([0] + sizes[:-1]).astype(int), repeats, water,
                      ot.solids, ot.salts,
                      np.array(ot.held, dtype=int) if any(h >= 0 for h in ot.held) else None,
                      np.stack([np.maximum(z, 0.0), np.maximum(-z, 0.0)]),
                      bool(np.any(water)), span)


class _Held:
    """What the x-solve's Newton steps reuse at held coefficients, per point: the
    systems' log10 weights less their x-term, the x-free part of log10 m(OH-), and the
    inputs the pairs, solids and salts need (``take`` keeps the points still moving)."""

    __slots__ = ("lg", "lw", "ions", "sys_tot", "tot_safe", "base", "lg0", "log_oh")

    def __init__(self, bt: BatchTable, lg, lw, ions, sys_tot):
        self.lg, self.lw, self.ions, self.sys_tot = lg, lw, ions, sys_tot
        self.lg0 = lg[:, 0]
        self.log_oh = lw - bt.pkw - lg[:, 0] - lg[:, 1]     # log10 m(OH-) + x
        if bt.systems:
            self.base = bt.lb - lg[:, bt.cols]
            if bt.hydrated:
                self.base = self.base + np.multiply.outer(lw, bt.water)
            self.tot_safe = np.where(sys_tot > 0, sys_tot, 1.0)

    def take(self, bt: BatchTable, keep) -> _Held:
        """These points only (``keep``: indices; np.take is several times faster than a
        boolean mask on rows)."""
        out = object.__new__(_Held)
        out.lg, out.lw, out.ions, out.sys_tot = (self.lg.take(keep, axis=0), self.lw[keep],
                                                 self.ions.take(keep, axis=0),
                                                 self.sys_tot.take(keep, axis=0))
        out.lg0, out.log_oh = self.lg0[keep], self.log_oh[keep]
        if bt.systems:
            out.base = self.base.take(keep, axis=0)
            out.tot_safe = self.tot_safe.take(keep, axis=0)
        return out


def _composition(bt: BatchTable, x, hd: _Held):
    """(N, U) molalities at x and their x-derivatives, and ln POS - ln NEG with its
    x-derivative."""
    m = hd.ions.copy()
    dm = np.zeros_like(m)
    h = np.exp(LN10 * x)
    oh = np.exp(LN10 * (hd.log_oh - x))
    m[:, 0], m[:, 1] = h, oh
    dm[:, 0], dm[:, 1] = LN10 * h, -LN10 * oh
    lg, lw = hd.lg, hd.lw
    for pc, mc, log_k in bt.pairs:
        total = hd.ions[:, mc]
        k = np.exp(LN10 * (log_k + lg[:, mc] + lg[:, 1] - lg[:, pc]))
        p = total * k * oh / (1.0 + k * oh)
        dp = total * k * dm[:, 1] / (1.0 + k * oh) ** 2
        m[:, pc] += p
        m[:, mc] -= p
        dm[:, pc] += dp
        dm[:, mc] -= dp
    if bt.solids:
        _hydroxides(bt, m, dm, lg, lw - bt.pkw - lg[:, 0] - x, oh)
    if bt.systems:
        _systems(bt, x, hd, m, dm)
    ps = np.einsum("nu,ku->kn", m, bt.zz)
    dps = np.einsum("nu,ku->kn", dm, bt.zz)
    return m, dm, np.log(ps[0]) - np.log(ps[1]), dps[0] / ps[0] - dps[1] / ps[1]


def _systems(bt: BatchTable, x, hd: _Held, m, dm) -> None:
    """Add the acid-base systems' states at x (and their salts) to ``m`` and ``dm``."""
    j, so, sys_tot = bt.j, bt.sys_of, hd.sys_tot
    logw = hd.base - np.multiply.outer(x + hd.lg0, j)
    logw -= np.maximum.reduceat(logw, bt.starts, axis=1)[:, so]
    w = np.exp(LN10 * logw)
    if bt.held is None:
        conc = w * (sys_tot / np.add.reduceat(w, bt.starts, axis=1))[:, so]
        cj = conc * j
        jbar = np.add.reduceat(cj, bt.starts, axis=1) / hd.tot_safe
    else:   # an open system's held state is at its sys_tot (its total follows x)
        ref = bt.starts + np.maximum(bt.held, 0)
        den = np.where(bt.held >= 0, w[:, ref], np.add.reduceat(w, bt.starts, axis=1))
        conc = w * (sys_tot / den)[:, so]
        cj = conc * j
        jbar = np.where(bt.held >= 0, j[ref], np.add.reduceat(cj, bt.starts, axis=1)
                        / hd.tot_safe)
    slope = -LN10 * (cj - conc * jbar[:, so])
    if bt.repeats:   # a label two systems share: add column by column
        np.add.at(m.T, bt.cols, conc.T)
        np.add.at(dm.T, bt.cols, slope.T)
    elif bt.span is not None:
        m[:, bt.span] += conc
        dm[:, bt.span] += slope
    else:
        m[:, bt.cols] += conc
        dm[:, bt.cols] += slope
    lw = hd.lw
    for k, entry in bt.salts:
        _, cols, _, jk = bt.systems[k]
        a = bt.starts[k]
        salt_array(entry, m, dm, hd.lg, lw, lw - bt.pkw - hd.lg0 - x, cols, jk,
                   conc[:, a:a + cols.shape[0]], jbar[:, k], sys_tot[:, k])


def _hydroxides(bt: BatchTable, m, dm, lg, log_oh_act, oh) -> None:
    """``pitzer_one._hydroxides`` on arrays: the free cation is the smaller of its mass
    balance's and the solubility product's, in place."""
    for mc, pc, log_k, z, log_ksp in bt.solids:
        total = m[:, mc].copy()
        k = np.exp(LN10 * (log_k + lg[:, mc] + lg[:, 1] - lg[:, pc])) if pc >= 0 else 0.0
        free = total / (1.0 + k * oh)
        cap = np.exp(LN10 * (log_ksp - lg[:, mc] - z * log_oh_act))
        present = cap < free
        free = np.where(present, cap, free)
        p = k * free * oh
        m[:, mc] = free
        dfree = np.where(present, z * LN10 * free, LN10 * p / (1.0 + k * oh))
        dm[:, mc] += dfree
        if pc >= 0:
            m[:, pc] += p
            dm[:, pc] += np.where(present, p * LN10 * (z - 1.0), -dfree)


def solve_x(bt: BatchTable, x, lg, lw, ions, sys_tot, tol):
    """The charge balance's root in x at held coefficients, every point (``tol`` (N,)):
    (x, molalities there).  Each Newton step takes only the points still moving."""
    x = np.clip(x, *X_BOUNDS)
    m = np.empty((x.shape[0], bt.n))
    hd = _Held(bt, lg, lw, ions, sys_tot)
    act = np.arange(x.shape[0])
    xa = x.copy()
    # a step s ends the solve when |s| < tol or s² < QUADRATIC tol
    thr = np.maximum(tol, np.sqrt(QUADRATIC * tol))
    lo = np.full(x.shape, X_BOUNDS[0])
    hi = np.full(x.shape, X_BOUNDS[1])
    for it in range(NEWTON_STEPS):
        ma, dma, g, dg = _composition(bt, xa, hd)
        pos = g > 0
        hi = np.where(pos, xa, hi)
        lo = np.where(pos, lo, xa)
        with np.errstate(divide="ignore", invalid="ignore"):
            step = -g / dg
        rising = dg > 0
        if not rising.all():   # cannot happen for a balance that rises with x: bisect
            step = np.where(rising, step, np.inf)
        near = np.abs(step) < thr
        done = near | (hi - lo < X_STEP_TOL)
        n_done = int(np.count_nonzero(done))
        if n_done == done.shape[0] or it == NEWTON_STEPS - 1:   # (or out of steps)
            last = np.where(near, step, 0.0)   # Newton's last step, to first order
            m[act] = ma + dma * last[:, None]
            x[act] = xa + last
            break
        if n_done:
            fin = np.flatnonzero(done)
            last = np.where(near[fin], step[fin], 0.0)
            d = act[fin]
            m[d] = ma.take(fin, axis=0) + dma.take(fin, axis=0) * last[:, None]
            x[d] = xa[fin] + last
        new = xa + np.clip(step, -MAX_STEP, MAX_STEP)
        new = np.where((new > lo) & (new < hi), new, 0.5 * (lo + hi))
        if n_done:
            keep = np.flatnonzero(~done)
            act, new, lo, hi, thr = act[keep], new[keep], lo[keep], hi[keep], thr[keep]
            hd = hd.take(bt, keep)
        xa = new
    return x, m


def start(bt: BatchTable, ions, sys_tot) -> np.ndarray:
    """``pitzer_one._start`` on arrays."""
    z = bt.zpos - bt.zneg
    fixed = np.einsum("nu,u->n", ions, z)
    closed = [(k, c) for k, (_, c, _, _) in enumerate(bt.systems)
              if bt.held is None or bt.held[k] < 0]
    low = fixed + sum(sys_tot[:, k] * z[c].min() for k, c in closed)
    high = fixed + sum(sys_tot[:, k] * z[c].max() for k, c in closed)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(low < 0, np.log10(-low),
                        np.where(high > 0, -bt.pkw - np.log10(high), -7.0))
