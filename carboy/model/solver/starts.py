"""Start values for points between solved neighbours (warm starts along a curve).

A start only saves Newton steps: a point is accepted on the same test whatever its
start.  Between two solved neighbours, log10[H+] is taken from the cubic through the
four nearest roots where the curve is smooth; across a jump (an equivalence point,
where log10[H+] changes by whole units from one neighbour to the next) a cubic
overshoots and a straight line in log10[H+] misses by as much, but the net excess of
H+ over OH-, [H+] - Kw/[H+], changes nearly linearly with the amount added there: the
start then comes from the straight line in that excess (:func:`start_between`, for
states between the points of a coarse grid; a batch's own warm start, whose
neighbours are close, takes the cubic alone).
"""

from __future__ import annotations

import numpy as np

CUBIC_TRUST = 0.05
"""A start interpolated by a cubic is used only this close to the straight line."""
QUINTIC_TRUST = 0.01
"""...and one by a quintic only this close to that (see :func:`cubic_between`)."""
JUMP = 2.0
"""Neighbouring roots this far apart (in log10[H+]) mark a jump."""


def _lagrange(at: np.ndarray, nodes: np.ndarray, order: int):
    """The first of the ``order`` nodes nearest each position ``at`` and their Lagrange
    weights: w_k = prod_(q != k) (at - p_q) / (p_k - p_q)."""
    first = np.clip(np.searchsorted(nodes, at) - order // 2, 0, nodes.shape[0] - order)
    p = [nodes[first + k].astype(float) for k in range(order)]
    d = [at - pk for pk in p]
    weights = []
    for k in range(order):
        w = 1.0
        for q in range(order):
            if q != k:
                w = w * d[q] / (p[k] - p[q])
        weights.append(w)
    return first, weights


def _through(first, weights, v: np.ndarray) -> np.ndarray:
    """The polynomial of :func:`_lagrange` through the values ``v`` at the nodes."""
    out = weights[0] * v[first]
    for k in range(1, len(weights)):
        out = out + weights[k] * v[first + k]
    return out


def cubic_between(at: np.ndarray, nodes: np.ndarray, *columns: np.ndarray) -> list:
    """Each of ``columns`` (values known at the increasing positions ``nodes``) at the
    positions ``at``: the cubic through the four nearest nodes where it stays within
    ``CUBIC_TRUST`` of the straight line between the two neighbours, the line
    elsewhere; where the quintic through the six nearest nodes stays within
    ``QUINTIC_TRUST`` (relative to the column's largest value, at least 1) of that
    cubic, the quintic (on a smooth stretch of a curve it is the closer by orders of
    magnitude)."""
    m = nodes.shape[0]
    at = np.asarray(at, dtype=float)
    lines = [np.interp(at, nodes, v) for v in columns]
    if m < 4:
        return lines
    cubic_at = _lagrange(at, nodes, 4)
    quintic_at = _lagrange(at, nodes, 6) if m >= 6 else None
    out = []
    for v, line in zip(columns, lines):
        cubic = _through(*cubic_at, v)
        best = np.where(np.abs(cubic - line) <= CUBIC_TRUST, cubic, line)
        if quintic_at is not None:
            quintic = _through(*quintic_at, v)
            scale = max(1.0, float(np.max(np.abs(v))))
            best = np.where(np.abs(quintic - best) <= QUINTIC_TRUST * scale, quintic, best)
        out.append(best)
    return out


def start_between(at, nodes, log_h, ionic, pkw: float):
    """(log10[H+], I) starts at the positions ``at`` from roots known at the increasing
    positions ``nodes`` (see the module docstring); ``pkw`` sets the excess's Kw."""
    at = np.asarray(at, dtype=float)
    x, i = cubic_between(at, nodes, log_h, ionic)
    right = np.clip(np.searchsorted(nodes, at), 1, nodes.shape[0] - 1)
    jump = np.abs(log_h[right] - log_h[right - 1]) > JUMP
    if jump.any():
        x = np.where(jump, _excess_line(at, nodes, log_h, pkw), x)
    return x, i


def _excess_line(at, nodes, log_h, pkw: float) -> np.ndarray:
    """log10[H+] from the straight line in [H+] - Kw/[H+] between the nodes."""
    h = 10.0 ** log_h
    kw = 10.0 ** -pkw
    excess = np.interp(at, nodes, h - kw / h)
    root = np.sqrt(excess * excess + 4.0 * kw)
    # the larger of [H+] and [OH-] from the root that does not cancel (np.where works
    # out both: the other one may take the log of 0)
    with np.errstate(divide="ignore"):
        return np.where(excess >= 0, np.log10(0.5 * (excess + root)),
                        np.log10(kw) - np.log10(0.5 * (root - excess)))


def edge_starts(top, bottom, i_top, i_bottom, ispec, log_kw):
    """Cold starts (x, I, buffered?) from the totals alone (``problem.Problem.edges``).

    Deprotonation only adds negative charge, so at the root [H+] - [OH-] lies between
    the excess of acid over base with every system at its most protonated state
    (``top``) and at its least (``bottom``).  Where both have one sign the root is on
    that side, nearer the edge the strong acids or bases set than neutral: x starts
    where [H+] - Kw'/[H+] equals the excess nearer zero, I with the species at that
    edge.  Elsewhere (``buffered``) x = -7 and the spectators' I, for a first step
    that balances the protons."""
    acid = top > 0.0
    base = (bottom < 0.0) & ~acid
    d = np.where(acid, top, np.where(base, bottom, 0.0))
    root = np.sqrt(d * d + 4.0 * 10.0 ** log_kw)
    with np.errstate(divide="ignore"):
        x = np.where(acid, np.log10(0.5 * (d + root)),
                     np.where(base, log_kw - np.log10(0.5 * (root - d)), -7.0))
    free = np.where(acid, 10.0 ** x, 10.0 ** (log_kw - x))
    ionic = ispec + np.where(acid, i_top + 0.5 * free,
                             np.where(base, i_bottom + 0.5 * free, 1e-7))
    return x, ionic, ~(acid | base)
