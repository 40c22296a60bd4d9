"""The specific-interaction (Pitzer) path for a batch: ``pitzer_one``'s iteration on arrays.

The same unknowns and rounds as the one-solution path (x = log10 m(H+) in mol/kg; each
round solves the charge balance at held coefficients by a bracketed Newton iteration,
then evaluates every coefficient and the water activity at the composition it gives,
and mixes them by depth-one Anderson), with every point of the batch at once and three
savings that a curve allows:

* only the points still moving are carried into the next round (a point's rounds end
  when no log10 coefficient moved more than ``pitzer_one.ONE_TOL``; x is then solved
  once more at the last coefficients);
* a batch of ``WARM_MIN`` points or more is solved coarse to fine: every
  ``WARM_STRIDE``-th point and the last first, then each point between from the cubic
  through its solved neighbours' coefficients and roots (the coefficients change
  smoothly along a curve even where x jumps, so those points settle in a round or two);
  so are the points of such a batch started from given coefficients (a nearby curve's:
  the plan's vented curve from the batch open to air), the points between from their
  own starts moved as their solved neighbours' moved (:func:`_warm_rounds`; most settle
  in one round), and the few points of such a batch without a start are solved on
  floats (:func:`_left_on_floats`);
* no Davies solve first: the start is the bound on H+ or OH- the totals give
  (``pitzer_one._start``, on arrays).

Sums are einsum reductions and elementwise products, no matrix products (no BLAS).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from carboy.model.pitzer import I_MAX_MOLAL, PitzerModel
from carboy.model.pitzer_scalar import scalar_model
from carboy.model.solver.constants import LN10
from carboy.model.solver.outer import Outcome
from carboy.model.solver.pitzer_one import (
    ONE_ROUNDS,
    ONE_TOL,
    ROUND_X_TOL,
    SETTLED_TOL,
    X_STEP_TOL,
    OneTable,
    one_outcome,
    solve_one_pitzer,
)
from carboy.model.solver.pitzer_x import BatchTable, batch_table, solve_x, start

WARM_MIN = 25
"""Batches of at least this many points are solved coarse to fine."""
WARM_STRIDE = 8
"""The coarse pass takes every this-many-th point (and the last)."""
COLD_TOL = 0.1
"""The first round from coefficients of 1 needs x only roughly (log10)."""
WARM_TOL = 1e-10
"""The first round from interpolated coefficients needs x as closely as they are known."""



def _anderson(v, g, prev):
    if prev is None:
        return g
    v0, g0 = prev
    r = g - v
    dr = r - (g0 - v0)
    den = np.einsum("nu,nu->n", dr, dr)
    theta = np.einsum("nu,nu->n", r, dr) / np.where(den > 0, den, 1.0)
    theta = np.where(den > 0, theta, 0.0)
    return g - theta[:, None] * (g - g0)


@dataclass(eq=False, repr=False)
class _State:
    """Per point: x, the held coefficients v (log10 γ, then log10 a_w), and, once
    settled, the molalities and the model's osmotic coefficient and ionic strength."""

    x: np.ndarray
    v: np.ndarray
    m: np.ndarray
    extra: np.ndarray        # (N, 3): φ, a_w, I
    rounds: np.ndarray
    ok: np.ndarray
    w: np.ndarray            # (N,) kg of water per litre (open systems: settled too)


def _rounds(bt: BatchTable, model: PitzerModel, st: _State, idx, ions, sys_tot,
            first_tol: float, water=None) -> None:
    """Settle the points ``idx`` of ``st`` (from their x and v), in place; the first
    round's x-solve stops at a step below ``first_tol``.  A point whose coefficients
    settled takes its last x-solve (at those coefficients, to ``X_STEP_TOL``) together
    with the next round's x-solve of the points still moving.  ``water``
    (``molality.OpenWater``): the water per litre follows what the open systems hold,
    one more entry of the rounds' vector (log10 W after log10 a_w: mixed and tested
    with the coefficients; ``st.w``, ``ions`` and ``sys_tot`` follow it in place)."""
    n = bt.n
    x, v = st.x[idx], st.v[idx]
    if water is not None:
        v = np.concatenate([v, np.log10(st.w[idx])[:, None]], axis=1)
    prev = None
    moved = last = np.ones(idx.shape[0])
    tol = np.full(idx.shape[0], first_tol)
    fin = np.zeros(idx.shape[0], dtype=bool)   # settled: this x-solve is their last
    for r in range(1, ONE_ROUNDS + 2):
        x, m = solve_x(bt, x, v[:, :n], v[:, n], ions[idx], sys_tot[idx], tol)
        if fin.any():
            if fin.all():
                st.x[idx], st.v[idx], st.m[idx] = x, v[:, :n + 1], m
                return
            f, keep = np.flatnonzero(fin), np.flatnonzero(~fin)   # (np.take: faster)
            d = idx[f]
            st.x[d], st.v[d], st.m[d] = x[f], v.take(f, axis=0)[:, :n + 1], m.take(f, axis=0)
            idx, x, last = idx[keep], x[keep], last[keep]
            v, m = v.take(keep, axis=0), m.take(keep, axis=0)
            prev = None if prev is None else (prev[0].take(keep, axis=0),
                                              prev[1].take(keep, axis=0))
        ln_gamma, phi, aw, ionic = model.coefficients(m)
        g = np.concatenate([ln_gamma / LN10, np.log10(aw)[:, None]] + (
            [] if water is None else [np.log10(_held_water(bt, water, st, idx, m))[:, None]]),
            axis=1)
        moved = np.abs(g - v).max(axis=1)
        rho = moved / np.where(last > 0, last, 1.0)
        ok = (moved <= ONE_TOL) | ((r >= 3) & (rho < 0.5) & (water is None)   # (pitzer_one)
                                   & (moved * rho <= SETTLED_TOL * (1.0 - rho)))
        fin = ok | (r == ONE_ROUNDS)
        if fin.any():
            d = idx[fin]
            st.rounds[d], st.ok[d] = r, ok[fin]
            st.extra[d] = np.column_stack([phi[fin], aw[fin], ionic[fin]])
        # the next coefficients: Anderson's, also for a point the contraction settled
        # (closer than g); g itself where it moved less than ONE_TOL or never settled
        take_g = fin & ((moved <= ONE_TOL) | ~ok)
        nv = g if take_g.all() else np.where(take_g[:, None], g, _anderson(v, g, prev))
        prev = (v, g)
        v, last = nv, moved
        if water is not None:
            _set_water(st, idx, 10.0 ** v[:, n + 1], ions, sys_tot)
        tol = np.where(fin, X_STEP_TOL, np.maximum(X_STEP_TOL, ROUND_X_TOL * moved))


def _held_water(bt: BatchTable, water, st: _State, idx, m) -> np.ndarray:
    """The water per litre of the points ``idx`` from what their open systems hold at
    ``m`` (molal, at the water ``st.w``)."""
    held = np.stack([m[:, c].sum(axis=1) for (_, c, _, _), h in zip(bt.systems, bt.held)
                     if h >= 0], axis=1) * st.w[idx][:, None]
    return water.at(held, idx)


def _set_water(st: _State, idx, new: np.ndarray, ions, sys_tot) -> None:
    """Start the points ``idx`` at the water per litre ``new`` (``ions`` and ``sys_tot``
    rescaled in place)."""
    ratio = st.w[idx] / new
    ions[idx] *= ratio[:, None]
    sys_tot[idx] *= ratio[:, None]
    st.w[idx] = new


SEEDS = 3
"""Points of a coarse pass solved first on floats (its first, middle and last): their
coefficients, interpolated, start every coarse point (instead of coefficients of 1)."""
SEEDED_TOL = 1e-2
"""The first round of seeded coarse points solves x to this (log10)."""


def _seed(ot: OneTable, model: PitzerModel, st: _State, coarse, totals, water_kg_per_l,
          held, water=None, molal=None) -> bool:
    """Start the ``coarse`` points' coefficients from ``SEEDS`` of them solved one by one
    on floats, linearly in the point index (x keeps its start from the totals: along a
    curve it jumps where the coefficients do not), and with ``water`` their water per
    litre (the seeds' ratio to their start, ``molal`` the (ions, sys_tot) it rescales);
    False where a seed did not settle (the coarse points then start from coefficients
    of 1).  On bench_speciation's
    concentrated waste the coarse rounds fall from five to four."""
    scalar = scalar_model(model)
    at = np.array(sorted({int(coarse[round(k * (coarse.shape[0] - 1) / (SEEDS - 1))])
                          for k in range(SEEDS)}))
    vs = []
    for i in at.tolist():
        hold = () if held is None else tuple(np.asarray(held[i], dtype=float).tolist())
        _, _, lg, (_, aw, _, w), _, ok = solve_one_pitzer(
            ot, scalar, totals[i].tolist(), 1.0 / float(water_kg_per_l[i]), None, hold,
            None, None if water is None else water.one(i))
        if not ok:
            return False
        vs.append(lg + [math.log10(aw), math.log10(w / float(water_kg_per_l[i]))])
    vs = np.array(vs)
    for k in range(vs.shape[1] - 1):
        st.v[coarse, k] = np.interp(coarse, at, vs[:, k])
    if water is not None:   # the water: its seeds' ratio to the start's
        _set_water(st, coarse, st.w[coarse] * 10.0 ** np.interp(coarse, at, vs[:, -1]),
                   *molal)
    return True


def _cubic(coarse: np.ndarray, fine: np.ndarray):
    """The weights (F, 4) of the cubic (in the point index) through the four ``coarse``
    points nearest each ``fine`` point, and those points (F, 4) as positions in
    ``coarse`` (which has at least four)."""
    t = coarse.astype(float)
    pos = np.clip(np.searchsorted(t, fine) - 2, 0, len(t) - 4)
    nodes = pos[:, None] + np.arange(4)[None, :]              # (F, 4) into coarse
    tn = t[nodes]
    f = fine.astype(float)[:, None]
    w = np.ones((fine.shape[0], 4))
    for a in range(4):
        for b in range(4):
            if a != b:
                w[:, a] *= (f[:, 0] - tn[:, b]) / (tn[:, a] - tn[:, b])
    return w, nodes


def _between(st: _State, coarse: np.ndarray, fine: np.ndarray) -> None:
    """x and v of the ``fine`` points from the cubic (in the point index) through the
    four solved ``coarse`` points nearest (``coarse`` has at least four)."""
    w, nodes = _cubic(coarse, fine)
    st.x[fine] = np.einsum("fa,fa->f", w, st.x[coarse][nodes])
    st.v[fine] = np.einsum("fa,fau->fu", w, st.v[coarse][nodes])


def _warm_rounds(bt: BatchTable, model: PitzerModel, st: _State, idx, ions,
                 sys_tot, water=None) -> None:
    """Settle the points ``idx`` from their given starts; from ``WARM_MIN`` points on
    every ``WARM_STRIDE``-th (and the last) first, then each point between from its own
    start moved as its solved neighbours' moved (the cubic through the four nearest
    moves: along a curve started from a nearby curve, the starts' error is smooth)."""
    if idx.shape[0] < WARM_MIN:
        _rounds(bt, model, st, idx, ions, sys_tot, WARM_TOL, water)
        return
    pick = np.zeros(idx.shape[0], dtype=bool)
    pick[::WARM_STRIDE] = True
    pick[-1] = True
    coarse, fine = idx[pick], idx[~pick]
    x0, v0, w0 = st.x[coarse], st.v[coarse], st.w[coarse]
    _rounds(bt, model, st, coarse, ions, sys_tot, WARM_TOL, water)
    w, nodes = _cubic(coarse, fine)
    st.x[fine] += np.einsum("fa,fa->f", w, (st.x[coarse] - x0)[nodes])
    st.v[fine] += np.einsum("fa,fau->fu", w, (st.v[coarse] - v0)[nodes])
    if water is not None:
        _set_water(st, fine, st.w[fine] + np.einsum("fa,fa->f", w, (st.w[coarse] - w0)[nodes]),
                   ions, sys_tot)
    _rounds(bt, model, st, fine, ions, sys_tot, WARM_TOL, water)


def solve_batch(bt: BatchTable, model: PitzerModel, totals: np.ndarray,
                water_kg_per_l: np.ndarray, held=None, x0=None, v0=None, ot=None,
                water=None) -> _State:
    """Solve every point (``held``, ``x0``, ``v0`` and ``water``: see
    :func:`few_outcome`; ``water_kg_per_l`` each point's water, or its start where
    ``water`` is given).  Points with started coefficients are solved first, together;
    the others coarse to fine among themselves."""
    s = 1.0 / water_kg_per_l
    npts = totals.shape[0]
    ions = np.zeros((npts, bt.n))
    np.add.at(ions.T, bt.ion_cols, totals[:, bt.ion_batch].T * s)
    sys_tot = np.stack([totals[:, b] * s for b, _, _, _ in bt.systems], axis=1) \
        if bt.systems else np.zeros((npts, 0))
    if bt.held is not None:
        sys_tot[:, bt.held >= 0] = np.asarray(held, dtype=float) * s[:, None]
    st = _State(start(bt, ions, sys_tot), np.zeros((npts, bt.n + 1)),
                np.zeros((npts, bt.n)), np.zeros((npts, 3)), np.zeros(npts, dtype=int),
                np.zeros(npts, dtype=bool), np.array(water_kg_per_l, dtype=float))
    if bt.held is None:
        water = None
    if x0 is not None:
        st.x = np.where(np.isfinite(x0), x0, st.x)
    every = np.arange(npts)
    if v0 is not None:
        warm = np.isfinite(v0).all(axis=1)
        st.v[warm] = v0[warm]
        if warm.any():
            _warm_rounds(bt, model, st, every[warm], ions, sys_tot, water)
            if ot is not None and 0 < npts - warm.sum() <= LEFT_ON_FLOATS:
                _left_on_floats(ot, model, st, every, warm, (totals, water_kg_per_l, held),
                                x0, water)
                return st
        every = every[~warm]
        npts = every.shape[0]
    if npts == 0:
        return st
    if npts >= WARM_MIN:
        pick = np.zeros(npts, dtype=bool)   # every WARM_STRIDE-th and the last
        pick[::WARM_STRIDE] = True
        pick[-1] = True
        coarse = every[pick]
        first = COLD_TOL
        if ot is not None and _seed(ot, model, st, coarse, totals, water_kg_per_l, held,
                                    water, (ions, sys_tot)):
            first = SEEDED_TOL
        _rounds(bt, model, st, coarse, ions, sys_tot, first, water)
        fine = every[~pick]
        _between(st, coarse, fine)
        if water is not None:
            w, nodes = _cubic(coarse, fine)
            _set_water(st, fine, np.einsum("fa,fa->f", w, st.w[coarse][nodes]), ions, sys_tot)
        _rounds(bt, model, st, fine, ions, sys_tot, WARM_TOL, water)
    else:
        _rounds(bt, model, st, every, ions, sys_tot, COLD_TOL, water)
    return st


LEFT_ON_FLOATS = 8
"""A started batch's points without a start, up to this many, are solved one by one on
floats (from their nearest started point's coefficients): a vectorized round costs
about what a handful of points' rounds on floats do, and from cold such a point takes
five of them (the plan's vented curve: the one point whose vented state is not the
state open to air)."""


def _left_on_floats(ot: OneTable, model: PitzerModel, st: _State, every, warm, batch,
                    x0, water=None) -> None:
    """Solve the points of ``every`` not ``warm`` one by one on floats (``batch``: the
    totals, water per litre and held amounts), each from the solved coefficients of the
    nearest ``warm`` point and its own ``x0`` where given, in place."""
    totals, water_kg_per_l, held = batch
    scalar = scalar_model(model)
    started = every[warm]
    for i in every[~warm].tolist():
        near = started[np.abs(started - i).argmin()]
        hold = () if held is None else tuple(np.asarray(held[i], dtype=float).tolist())
        a = None if x0 is None or not np.isfinite(x0[i]) else float(x0[i])
        x, m, lg, extra, rounds, ok = solve_one_pitzer(
            ot, scalar, totals[i].tolist(), 1.0 / float(water_kg_per_l[i]), a, hold,
            st.v[near].tolist(), None if water is None else water.one(i))
        st.x[i], st.m[i], st.v[i] = x, m, lg + [math.log10(extra[1])]
        st.extra[i], st.w[i], st.rounds[i], st.ok[i] = extra[:3], extra[3], rounds, ok


def batch_outcome(ot: OneTable, model: PitzerModel, totals: np.ndarray,
                  water_kg_per_l: np.ndarray, held=None, x0=None, v0=None,
                  water=None) -> Outcome:
    """The :class:`Outcome` of a batch (``totals`` (N, C) mol/L) as ``outer`` gives it
    (``held``, ``x0``, ``v0`` and ``water``: see :func:`few_outcome`)."""
    bt = batch_table(ot)
    st = solve_batch(bt, model, totals, water_kg_per_l, held, x0, v0, ot, water)
    w = st.w
    lg = st.v[:, :bt.n]
    table = st.m * w[:, None]
    # the systems' dissolved totals (a salt holds the rest) and their shares
    dissolved = [st.m[:, c].sum(axis=1) for _, c, _, _ in bt.systems]
    alpha = np.concatenate([st.m[:, c] / np.where(d > 0, d, 1.0)[:, None]
                            for (_, c, _, _), d in zip(bt.systems, dissolved)], axis=1).T \
        if bt.systems else np.zeros((0, totals.shape[0]))
    ceff = np.stack([d * w for d in dissolved]) if bt.systems \
        else np.zeros((0, totals.shape[0]))
    phi, aw, ionic = st.extra.T
    extra = _batch_extra(model, st.m, ionic, aw, phi)
    extra["water_kg_per_l"] = w
    return Outcome(st.x + np.log10(w), np.zeros_like(w), st.ok, int(st.rounds.max(initial=0)),
                   table, lg, -(st.x + lg[:, 0]), (alpha, ceff.copy()), extra)


def _batch_extra(model: PitzerModel, molal: np.ndarray, ionic, aw, phi) -> dict:
    """The Pitzer part of a batch's :class:`Outcome` (``molal`` (N, n) its species in
    mol/kg): ionic strength, water activity, osmotic coefficient, each point's validity
    and its own warnings (``PitzerModel.point_warnings``)."""
    n = molal.shape[1]
    mall = np.concatenate([molal, np.zeros((molal.shape[0], len(model._all) - n))], axis=1)
    here = model.fallback_here(mall)
    return {"ionic_strength_molal": ionic, "water_activity": aw, "osmotic": phi,
            "valid": (ionic <= I_MAX_MOLAL) & ~here,
            "point_warnings": model.point_warnings(mall, ionic, here)}


FEW_POINTS = 32
"""A batch of at most this many points is solved point by point on floats
(:func:`few_outcome`): the arrays' fixed cost per round is most of a small batch's time
(the planner's dose searches solve two to sixteen points at a time).  Measured on
bench_speciation's concentrated waste (CPU ms, arrays / floats): 12 points 6.1 / 3.2,
24 points 4.3 / 4.5, 32 points 10.1 / 7.4, 48 points 10.1 / 12.2."""


def few_outcome(ot: OneTable, model: PitzerModel, totals: np.ndarray,
                water_kg_per_l: np.ndarray, x0=None, held=None, v0=None,
                water=None) -> Outcome:
    """:func:`batch_outcome` of a few points, each solved as one solution
    (:func:`~carboy.model.solver.pitzer_one.one_outcome`) and stacked; the warnings are
    the batch's, worked out once over all its points.  ``x0`` (N,): starts in log10
    m(H+) (NaN: none); ``held`` (N, H): each point's held mol/L of an open table's open
    systems (``pitzer_one.open_table``); ``v0`` (N, U + 1): starts of the coefficients
    (log10 γ, then log10 a_w; a row with a NaN: none); ``water``
    (``molality.OpenWater``, with ``held``): each point's water per litre follows what
    its open systems hold (``water_kg_per_l`` its start); the Outcome's ``extra`` holds
    the water each point settled with."""
    scalar = scalar_model(model)
    npts = totals.shape[0]
    starts = [None] * npts if x0 is None else \
        [v if v == v else None for v in np.asarray(x0, dtype=float).tolist()]
    fixed = [()] * npts if held is None else [tuple(r) for r in np.asarray(held).tolist()]
    coeffs = [None] * npts if v0 is None else \
        [r if np.isfinite(r).all() else None for r in np.asarray(v0, dtype=float)]
    waters = [None] * npts if water is None or held is None else \
        [water.one(i) for i in range(npts)]
    outs = [one_outcome(ot, model, scalar, row, float(w), a, h,
                        None if c is None else c.tolist(), f)
            for row, w, a, h, c, f in zip(totals.tolist(), water_kg_per_l.tolist(), starts,
                                          fixed, coeffs, waters)]
    table = np.concatenate([o.table for o in outs])
    ionic = np.concatenate([o.extra["ionic_strength_molal"] for o in outs])
    w = np.concatenate([o.extra["water_kg_per_l"] for o in outs])
    extra = _batch_extra(model, table / w[:, None], ionic,
                         np.concatenate([o.extra["water_activity"] for o in outs]),
                         np.concatenate([o.extra["osmotic"] for o in outs]))
    extra["water_kg_per_l"] = w
    alpha = np.concatenate([o.systems[0] for o in outs], axis=1)
    ceff = np.concatenate([o.systems[1] for o in outs], axis=1)
    return Outcome(np.concatenate([o.x for o in outs]), np.zeros(len(outs)),
                   np.concatenate([o.converged for o in outs]), max(o.iterations for o in outs),
                   table, np.concatenate([o.log_gamma for o in outs]),
                   np.concatenate([o.ph for o in outs]), (alpha, ceff), extra)
