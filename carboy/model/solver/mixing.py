"""Depth-one Anderson mixing of a fixed-point iteration on plain float lists, and its
one-unknown form on arrays: the secant step on the ionic strength.

The outer loops of the float paths (the Pitzer coefficients of one solution in
``pitzer_one``, the complexes' amounts in ``single_metals``) iterate v -> f(v); from the
second round on, the next iterate is the point on the line through the last two
(v, f(v)) pairs whose residual is least: a secant step that turns their linear
contraction into a much faster one.  For one unknown this is the secant step on
r(I) = g(I) - I that the ionic-strength loops of the vectorized paths take, every point
at once (:func:`next_ionic`: ``bracketed.solve_nested`` and the titration's inverse,
``gas``).
"""

from __future__ import annotations

from operator import mul, sub

import numpy as np


def anderson(v, g, prev):
    """The next iterate from v, f(v) = g and the last pair ``prev`` (None: g)."""
    if prev is None:
        return g
    v0, g0 = prev
    r = list(map(sub, g, v))
    dr = list(map(sub, r, map(sub, g0, v0)))
    den = sum(map(mul, dr, dr))
    if den == 0.0:
        return g
    theta = sum(map(mul, r, dr)) / den
    return [gi - theta * (gi - gj) for gi, gj in zip(g, g0)]


def next_ionic(i_now, r_now, i_prev, r_prev, g):
    """Secant step on r(I) = g(I) - I, falling back to the plain fixed point g."""
    if i_prev is None:
        return g
    denom = r_now - r_prev
    with np.errstate(divide="ignore", invalid="ignore"):
        sec = i_now - r_now * (i_now - i_prev) / denom
    # accept a secant step only when it is finite, positive and no wilder than 2 plain steps
    ok = np.isfinite(sec) & (sec > 0) & (np.abs(sec - g) <= 2.0 * np.abs(r_now))
    return np.where(ok, sec, g)
