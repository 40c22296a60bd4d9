"""The sums of the Pitzer equations on arrays of points, laid out once per model.

:class:`ArraySums` holds a :class:`~carboy.model.pitzer.PitzerModel`'s parameters as
stacks of matrices, one stack per block of ions (cation rows by anion columns for the
binary terms; like-signed ions for θ and Eθ), and every product is numpy's own sum of
products (``einsum``) with the summed index last and contiguous in both operands: that
form is several times faster than a product whose summed index is the first of the
matrix, and it makes no BLAS call (the solver's rule, tests/unit/test_solver_no_blas).

The per-point factors of each matrix in a stack (2, 2g(α√I), Z, 2Eθ, …) are columns of
one (N, K) array, so a block costs the same few calls whatever the number of parameters:

* binary: Σ_a m_a(2B_ca + Z C_ca) for each cation and the same sum over cations for each
  anion, Σ m_c m_a B' for F, and the osmotic Σ m_c m_a (B^φ + Z C);
* like-signed: Σ_j m_j (2θ_ij + 2Eθ_ij) and the pair sums of Eθ' and of Eθ + I Eθ';
* triplets (ψ of two like-signed ions and one other, ζ of a neutral, a cation and an
  anion): each member takes the product of the other two, grouped by their first pair;
* λ of a neutral with any species, as one symmetric matrix over the species involved.

``tests/unit/test_pitzer_scalar.py`` holds these sums to the scalar form within 1e-12.
"""

from __future__ import annotations

import numpy as np

from carboy.model.etheta import etheta

_SERIES_X = 1e-3


def _gfuncs(x: np.ndarray):
    """g(x), g'(x) and e^-x of ``x`` (any shape), with their series below 1e-3."""
    small = bool(x.size) and float(x.min()) < _SERIES_X
    xs = np.where(x < _SERIES_X, 1.0, x) if small else x
    e = np.exp(-xs)
    inv = 2.0 / (xs * xs)
    a = (1.0 + xs) * e
    g = (1.0 - a) * inv
    gp = -(1.0 - a - 0.5 * xs * xs * e) * inv
    if small:
        g = np.where(x < _SERIES_X, 1.0 - 2.0 * x / 3.0 + x * x / 4.0, g)
        gp = np.where(x < _SERIES_X, -(x / 3.0 - x * x / 4.0), gp)
        e = np.exp(-x)
    return g, gp, e


def binary_terms(p) -> list[tuple[float | None, np.ndarray]]:
    """β0 and the β1, β2 matrices grouped by α: [(α or None for β0, matrix (nc, na))],
    the nonzero ones."""
    terms: list[tuple[float | None, np.ndarray]] = [(None, p.b0)]
    for beta, alpha in ((p.b1, p.alpha1), (p.b2, p.alpha2)):
        for a in sorted(set(alpha.ravel().tolist())):   # (np.unique would load numpy.ma)
            terms.append((float(a), np.where(alpha == a, beta, 0.0)))
    return [(a, mat) for a, mat in terms if np.any(mat)]


def charge_pairs(zs: np.ndarray) -> list[tuple[int, int, np.ndarray]]:
    """Charge classes (a < b) among like-signed ions, with their symmetric pair masks."""
    out = []
    classes = sorted(set(zs.tolist()))
    for a in classes:
        for b in classes:
            if a < b:
                sel = np.outer(zs == a, zs == b)
                out.append((int(a), int(b), (sel | sel.T).astype(float)))
    return out


def triplets(p) -> list[tuple[int, int, int, float]]:
    """ψ (two like-signed ions and one other) and ζ (a neutral, a cation, an anion) of a
    ``ParameterArrays`` as (i, j, k, v), indices into the species: in every sum each
    member takes v times the product of the other two (so one list serves both)."""
    trip = []
    for group, other, arr in ((p.cat, p.ani, p.psi_c), (p.ani, p.cat, p.psi_a)):
        for a, i in enumerate(group):
            for b in range(a + 1, len(group)):
                trip.extend((int(i), int(group[b]), int(o), float(arr[a, b, k]))
                            for k, o in enumerate(other) if arr[a, b, k])
    for k, n in enumerate(p.neu):
        trip.extend((int(n), int(c), int(a), float(p.zeta[k, ci, ai]))
                    for ci, c in enumerate(p.cat) for ai, a in enumerate(p.ani)
                    if p.zeta[k, ci, ai])
    return trip


class _Block:
    """A stack of K matrices between the row ions ``rows`` and the column ions ``cols``
    (indices into the model's species), laid out for ``Σ_col m_col M[k, row, col]``."""

    def __init__(self, rows, cols, mats):
        self.rows, self.cols = np.asarray(rows, dtype=int), np.asarray(cols, dtype=int)
        self.m = np.ascontiguousarray(np.stack(mats)) if mats else np.zeros((0, 0, 0))
        self.mt = np.ascontiguousarray(self.m.transpose(0, 2, 1))
        self.k = len(mats)


def _like_mats(theta, masks):
    out = [theta] if np.any(theta) else []
    return out + [mask for _, _, mask in masks], bool(np.any(theta))


class ArraySums:
    """The HMW sums of one model, for (N, S) molalities over the model's species (the
    reference anion included)."""

    def __init__(self, model):
        p, z = model._p, model._z
        self.n = len(z)
        self.z2, self.az = z * z, np.abs(z)
        terms = binary_terms(p)
        alphas = sorted({a for a, _ in terms if a is not None} | {2.0})
        self.alphas = np.array(alphas)
        self.kcl_alpha = alphas.index(2.0)
        mats = [mat for _, mat in terms]
        # per kind: the column of its alpha (-1: β0), and whether C follows
        self.kind_alpha = np.array([-1 if a is None else alphas.index(a) for a, _ in terms],
                                   dtype=int)
        self.has_c = bool(np.any(p.c))
        if self.has_c:
            mats.append(p.c)
        self.binary = _Block(p.cat, p.ani, mats) if mats else None
        self.beta_alpha = self.kind_alpha >= 0
        pairs_c, pairs_a = model._pairs_c, model._pairs_a
        self.charge_pairs = [(a, b) for a, b, _ in pairs_c + pairs_a]
        self.like = []
        for idx, theta, pairs in ((p.cat, p.theta_c, pairs_c), (p.ani, p.theta_a, pairs_a)):
            mats, has_theta = _like_mats(theta, pairs)
            if mats:
                self.like.append((_Block(idx, idx, mats), has_theta,
                                  [(a, b) for a, b, _ in pairs]))
        self._triplets(p)
        self._lambdas(p)

    # ------------------------------------------------------------------ layout

    def _triplets(self, p) -> None:
        """ψ and ζ as triplets (i, j, k, v), grouped by (i, j): V (G, S) holds Σ_k v."""
        trip = triplets(p)
        groups = sorted({(i, j) for i, j, _, _ in trip})
        self.tri_i = np.array([g[0] for g in groups], dtype=int)
        self.tri_j = np.array([g[1] for g in groups], dtype=int)
        v = np.zeros((len(groups), self.n))
        for i, j, k, val in trip:
            v[groups.index((i, j)), k] += val
        self.tri_v = v
        # scatter of (m_j s, m_i s, m_i m_j) back to the species: (S, 3G)
        g = len(groups)
        inc = np.zeros((self.n, 3 * g))
        inc[self.tri_i, np.arange(g)] = 1.0
        inc[self.tri_j, g + np.arange(g)] = 1.0
        inc[:, 2 * g:] = v.T
        self.tri_inc = np.ascontiguousarray(inc)

    def _lambdas(self, p) -> None:
        """λ as one symmetric matrix over the species it involves."""
        lam = np.zeros((self.n, self.n))
        for k, nk in enumerate(p.neu):
            for idx, arr in ((p.cat, p.lam_c), (p.ani, p.lam_a)):
                lam[nk, idx] = arr[k]
                lam[idx, nk] = arr[k]
            for t, nt in enumerate(p.neu):
                if t >= k and p.lam_n[k, t]:
                    lam[nk, nt] = lam[nt, nk] = p.lam_n[k, t]
        used = np.flatnonzero(lam.any(axis=1))
        self.lam_idx = used
        self.lam = np.ascontiguousarray(lam[np.ix_(used, used)])

    # ------------------------------------------------------------------ evaluation

    def sums(self, m, ionic, root, big_z, aphi: float, b: float):
        """(ln γ (N, S) before the MacInnes shift and the fallback, the osmotic sum
        (N,), f^γ (N,), g and g' at 2√I for the reference electrolyte)."""
        f_dh = -aphi * (root / (1.0 + b * root) + 2.0 / b * np.log1p(b * root))
        osm = -aphi * ionic * root / (1.0 + b * root)
        g, gp, e = _gfuncs(root[:, None] * self.alphas)
        ln = np.zeros_like(m)
        big_f = f_dh
        if self.binary is not None:
            lb, fb, ob = self._binary(m, ionic, big_z, g, gp, e)
            ln += lb
            big_f = big_f + fb
            osm = osm + ob
        if self.like:
            eth = etheta(self.charge_pairs, ionic, aphi)
            for blk, has_theta, pairs in self.like:
                lb, fb, ob = self._like(blk, has_theta, pairs, m, ionic, eth)
                ln[:, blk.rows] += lb
                big_f = big_f + fb
                osm = osm + ob
        ln += np.multiply.outer(big_f, self.z2)
        if self.tri_i.shape[0]:
            osm = osm + self._triples(m, ln)
        if self.lam_idx.shape[0]:
            mu = m[:, self.lam_idx]
            r = np.einsum("nu,vu->nv", mu, self.lam)
            ln[:, self.lam_idx] += 2.0 * r
            osm = osm + 0.5 * np.einsum("nu,nu->n", mu, r)
        return ln, osm, f_dh, g[:, self.kcl_alpha], gp[:, self.kcl_alpha]

    def _binary(self, m, ionic, big_z, g, gp, e):
        blk = self.binary
        mc, ma = m[:, blk.rows], m[:, blk.cols]
        qc = np.einsum("na,kca->nkc", ma, blk.m)        # Σ_a m_a M_k[c, a]
        qa = np.einsum("nc,kac->nka", mc, blk.mt)       # Σ_c m_c M_k[c, a]
        both = np.einsum("nc,nkc->nk", mc, qc)          # Σ m_c m_a M_k
        npts, kinds = both.shape
        fg, fphi = np.empty((npts, kinds)), np.empty((npts, kinds))
        nb = self.kind_alpha.shape[0]
        fg[:, :nb] = 2.0
        fphi[:, :nb] = 1.0
        sel = self.beta_alpha
        cols = self.kind_alpha[sel]
        fg[:, :nb][:, sel] = 2.0 * g[:, cols]
        fphi[:, :nb][:, sel] = e[:, cols]
        fprime = np.einsum("nk,nk->n", gp[:, cols], both[:, :nb][:, sel]) / ionic
        if self.has_c:
            fg[:, -1] = big_z
            fphi[:, -1] = big_z
        ln = np.zeros_like(m)
        ln[:, blk.rows] = np.einsum("nk,nkc->nc", fg, qc)
        ln[:, blk.cols] = np.einsum("nk,nka->na", fg, qa)
        if self.has_c:   # every ion takes |z| Σ m_c m_a C
            ln += np.multiply.outer(both[:, -1], self.az)
        return ln, fprime, np.einsum("nk,nk->n", fphi, both)

    @staticmethod
    def _like(blk: _Block, has_theta: bool, pairs, m, ionic, eth):
        mx = m[:, blk.rows]
        r = np.einsum("nj,kij->nki", mx, blk.m)        # Σ_j m_j M_k[i, j]
        half = 0.5 * np.einsum("ni,nki->nk", mx, r)
        npts = mx.shape[0]
        f = np.empty((npts, blk.k))
        fprime = np.zeros(npts)
        osm = half[:, 0] if has_theta else np.zeros(npts)
        if has_theta:
            f[:, 0] = 2.0
        for k, pair in enumerate(pairs, start=int(has_theta)):
            e, ep = eth[pair]
            f[:, k] = 2.0 * e
            fprime = fprime + ep * half[:, k]
            osm = osm + (e + ionic * ep) * half[:, k]
        return np.einsum("nk,nki->ni", f, r), fprime, osm

    def _triples(self, m, ln):
        """Add each triplet member's product of the other two to ``ln``; the osmotic
        sum of the triplets."""
        s = np.einsum("ns,gs->ng", m, self.tri_v)      # Σ_k v m_k, per (i, j)
        mi, mj = m[:, self.tri_i], m[:, self.tri_j]
        mm = mi * mj
        ln += np.einsum("ng,sg->ns", np.concatenate([mj * s, mi * s, mm], axis=1),
                        self.tri_inc)
        return np.einsum("ng,ng->n", mm, s)
