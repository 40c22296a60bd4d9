"""Depth-one Anderson mixing of a fixed-point iteration on plain float lists.

The outer loops of the float paths (the Pitzer coefficients of one solution in
``pitzer_one``, the complexes' amounts in ``single_metals``) iterate v -> f(v); from the
second round on, the next iterate is the point on the line through the last two
(v, f(v)) pairs whose residual is least: a secant step that turns their linear
contraction into a much faster one.
"""

from __future__ import annotations

from operator import mul, sub


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
