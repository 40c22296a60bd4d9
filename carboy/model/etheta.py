"""Unsymmetrical mixing (E-theta) terms of the Pitzer equations.

For two ions i, j of the same sign and different charge the electrostatic mixing term is
(Pitzer, J. Solution Chem. 4, 249 (1975); Pitzer 1991, ch. 3)::

    Eθ_ij  = z_i z_j / (4 I) · [J(x_ij) - J(x_ii)/2 - J(x_jj)/2],   x_ij = 6 z_i z_j Aφ √I
    Eθ'_ij = -Eθ_ij / I + z_i z_j / (8 I²) · [x_ij J'(x_ij) - x_ii J'(x_ii)/2 - x_jj J'(x_jj)/2]

    J(x) = (1/x) ∫₀^∞ [1 + q + q²/2 - e^q] y² dy,   q = -(x/y) e^(-y)

J is evaluated here from that integral itself, not from a fitted approximation: the
integral is computed on a grid in ln x by the trapezoid rule in ln y (exponentially
convergent for this smooth integrand; 300 nodes give 1e-11 relative), together with J'
and J'' from the differentiated integrands, and then interpolated by cubic Hermite
polynomials.  Outside the grid the integral is evaluated directly.

Computing the grid takes about 80 ms, a third of a command's cold start, so the grid is
shipped with carboy as ``data/etheta_grid.npy`` (:data:`GRID_FILE`), written by
``python -m carboy.model.etheta`` from :func:`computed_grid`; a test checks that the
shipped grid is what :func:`computed_grid` gives now.  A missing or mismatched file is
never used: the grid is then computed.
"""

from __future__ import annotations

import math
from functools import lru_cache

import numpy as np

from carboy.model.data_mirror import package_file

X_MIN = 1e-6
X_MAX = 1e3
GRID_STEP = 0.02
"""Spacing of the table in ln x; the Hermite interpolation error is below 1e-9."""
_S_NODES = np.linspace(-30.0, 6.0, 300)
"""Trapezoid nodes in s = ln y."""
_SERIES_Q = 1e-2
"""Below this |q| the integrands use their Taylor series (no cancellation)."""
GRID_FILE = "etheta_grid.npy"
"""The shipped grid in ``carboy.model.data``: rows J, x J', J', x J'' at :func:`grid_u`."""


def _integrands(q: np.ndarray):
    """h(q) = 1 + q + q²/2 - e^q, q h'(q) and q² h''(q), cancellation-free."""
    small = np.abs(q) < _SERIES_Q
    qs = np.where(small, q, 0.0)
    eq = np.exp(np.where(small, 0.0, q))
    q3, q4, q5, q6, q7 = qs**3, qs**4, qs**5, qs**6, qs**7
    h = np.where(small, -(q3 / 6 + q4 / 24 + q5 / 120 + q6 / 720 + q7 / 5040),
                 1.0 + q + 0.5 * q * q - eq)
    qh1 = np.where(small, -(q3 / 2 + q4 / 6 + q5 / 24 + q6 / 120 + q7 / 720), q * (1.0 + q - eq))
    q2h2 = np.where(small, -(q3 + q4 / 2 + q5 / 6 + q6 / 24 + q7 / 120), q * q * (1.0 - eq))
    return h, qh1, q2h2


def rows_times(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """a times b (rows by a matrix, or by a vector) as numpy's own sum of products: no
    BLAS call, so none of its threads (the solver's rule, tests/unit/test_solver_no_blas)."""
    return np.einsum("ij,j->i" if b.ndim == 1 else "ij,jk->ik", a, b)


def j_integral(x: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """J, J' and J'' at ``x`` (> 0) by direct quadrature (1-D input)."""
    x = np.asarray(x, dtype=float)
    y = np.exp(_S_NODES)
    w = y**3 * (_S_NODES[1] - _S_NODES[0])
    w[0] *= 0.5
    w[-1] *= 0.5
    q = -(x[:, None] / y) * np.exp(-y)
    h, qh1, q2h2 = _integrands(q)
    k0, k1, k2 = rows_times(h, w), rows_times(qh1, w), rows_times(q2h2, w)
    lin = k1 - k0
    return k0 / x, lin / x**2, (k2 - 2.0 * lin) / x**3


def grid_u() -> np.ndarray:
    """The table's nodes in u = ln x."""
    return np.arange(np.log(X_MIN), np.log(X_MAX) + GRID_STEP, GRID_STEP)


def computed_grid() -> np.ndarray:
    """J, x J', J' and x J'' at :func:`grid_u` by quadrature, shape (4, nodes)."""
    x = np.exp(grid_u())
    parts = [j_integral(chunk) for chunk in np.array_split(x, 8)]
    j, jp, jpp = (np.concatenate([p[k] for p in parts]) for k in range(3))
    return np.stack([j, x * jp, jp, x * jpp])


def shipped_grid() -> np.ndarray | None:
    """The grid shipped as :data:`GRID_FILE`, or None when it is missing or not a grid
    of this module's nodes."""
    try:
        with open(package_file("carboy.model.data", GRID_FILE), "rb") as fh:
            grid = np.load(fh, allow_pickle=False)
    except (OSError, ValueError):
        return None
    ok = grid.dtype == np.float64 and grid.shape == (4, grid_u().shape[0])
    return grid if ok and np.isfinite(grid).all() else None


@lru_cache(maxsize=1)
def _table():
    u = grid_u()
    grid = shipped_grid()
    if grid is None:
        grid = computed_grid()
    j, dj, jp, djp = grid
    # dj and djp: slopes with respect to u = ln x for the Hermite interpolation
    return u[0], u, j, dj, jp, djp


@lru_cache(maxsize=1)
def _cells() -> np.ndarray:
    """Per grid cell k, (8,): for J and then for J', the node values and the slopes times
    the step at k and k + 1, in the order of the Hermite basis (h00, h10, h01, h11)."""
    _, _, j, dj, jp, djp = _table()
    h = GRID_STEP
    rows = [np.stack([f[:-1], h * d[:-1], f[1:], h * d[1:]], axis=1) for f, d in
            ((j, dj), (jp, djp))]
    return np.ascontiguousarray(np.concatenate(rows, axis=1))


def _interpolate(x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """J and J' at ``x`` (M,), every x in [X_MIN, X_MAX): cubic Hermite in ln x."""
    cells = _cells()
    s = (np.log(x) - math.log(X_MIN)) / GRID_STEP
    k = np.minimum(s.astype(int), cells.shape[0] - 1)
    t = s - k
    t2 = t * t
    t3 = t2 * t
    h01 = 3.0 * t2 - 2.0 * t3
    h00, h10, h11 = 1.0 - h01, t3 - 2.0 * t2 + t, t3 - t2
    c = cells.take(k, axis=0)   # (np.take: a quarter of fancy indexing's time)
    return (h00 * c[:, 0] + h10 * c[:, 1] + h01 * c[:, 2] + h11 * c[:, 3],
            h00 * c[:, 4] + h10 * c[:, 5] + h01 * c[:, 6] + h11 * c[:, 7])


def j_function(x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """J(x) and J'(x) for an array of x >= 0 (taken as 0 below ``X_MIN``)."""
    x = np.asarray(x, dtype=float)
    if x.size and X_MIN <= float(x.min()) and float(x.max()) < X_MAX:
        j, jp = _interpolate(x.ravel())
        return j.reshape(x.shape), jp.reshape(x.shape)
    j_out, jp_out = np.zeros_like(x), np.zeros_like(x)
    inside = (x >= X_MIN) & (x < X_MAX)
    if inside.any():
        j_out[inside], jp_out[inside] = _interpolate(x[inside])
    outside = x >= X_MAX   # below X_MIN (I < 1e-13) the terms are negligible and left 0
    if outside.any():
        jo, jpo, _ = j_integral(x[outside])
        j_out[outside], jp_out[outside] = jo, jpo
    return j_out, jp_out


def etheta(pairs, ionic: np.ndarray, aphi: float) -> dict:
    """Eθ and Eθ' (each shaped like ``ionic``) for every charge pair (zi, zj) in ``pairs``.

    Charges are magnitudes of ions of one sign; a pair of equal charges gives zeros.  All
    the J values needed are evaluated in one interpolation pass.
    """
    ionic = np.maximum(np.asarray(ionic, dtype=float), 1e-100)
    products = sorted({p for zi, zj in pairs if zi != zj for p in (zi * zj, zi * zi, zj * zj)})
    out = {}
    if products:
        xcon = 6.0 * aphi * np.sqrt(ionic)
        x = np.multiply.outer(np.array(products, dtype=float), xcon)
        j, jp = j_function(x)
        xjp = x * jp
        at = {prod: k for k, prod in enumerate(products)}
        inv = 1.0 / ionic
    for zi, zj in pairs:
        if zi == zj:
            out[(zi, zj)] = (np.zeros_like(ionic), np.zeros_like(ionic))
            continue
        a, b, c = at[zi * zj], at[zi * zi], at[zj * zj]
        zz = zi * zj
        eth = (0.25 * zz) * (j[a] - 0.5 * (j[b] + j[c])) * inv
        out[(zi, zj)] = (eth, (-eth + (0.125 * zz) * (xjp[a] - 0.5 * (xjp[b] + xjp[c])) * inv)
                         * inv)
    return out


if __name__ == "__main__":  # python -m carboy.model.etheta: write the shipped grid
    from pathlib import Path

    target = Path(__file__).with_name("data") / GRID_FILE
    np.save(target, computed_grid(), allow_pickle=False)
    print(f"wrote {target}")
