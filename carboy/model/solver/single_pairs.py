"""One solution with ion pairs (the Davies path) in plain Python floats.

The outer loop of ``outer.solve_with_pairs`` for one solution without numpy's per-call
cost: each round solves the charge balance with the pairs lumped into their ligands'
states (``single.solve_one`` with those states' weights lifted by log10(lumped/free),
pKw lowered by the OH- row's lift and the spectators' ionic strength corrected), then
splits the lumped amounts into free ions and pairs as ``outer.pair_shares`` does, until
no term moves more than ``outer.OUTER_TOL``.  It gives up (returns None) rather than
fall back itself: a layout with shifted exponentials or metals, or a round that finds
no root within ``max_iter`` steps; the caller then takes the vectorized outer loop.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from carboy.model.activity import davies_d_float
from carboy.model.solver.constants import LN10
from carboy.model.solver.layout import Layout
from carboy.model.solver.mixing import anderson
from carboy.model.solver.pair_table import (
    LAGGED_ROUNDS,
    MAX_OUTER,
    OUTER_TOL,
    SPLIT_ROUNDS,
    Table,
)
from carboy.model.solver.single import iterate_one


@dataclass(frozen=True, eq=False, repr=False)
class PairsSolved:
    """The settled outer loop of one solution."""

    x: float
    ionic: float
    rounds: int
    converged: bool
    table: list          # mol/L of each column of the Table: free ions, states, pairs
    fractions: list      # per system, the lumped fraction of each state
    ad: float            # A·D at the inner solve's ionic strength


def solve_pairs_one(lay: Layout, tab: Table, row, pkw: float, a_dh: float, *,
                    max_iter: int, x0: float | None = None, i0: float | None = None,
                    at_root: bool = False) -> PairsSolved | None:
    """The Davies path with the pairs of ``tab`` for one solution (``row``: totals in
    the layout's column order), or None where this path cannot take it.  ``x0`` and
    ``i0`` start the first round (``at_root``: they are its root, the solution without
    pairs, solved already); rounds up to ``pair_table.LAGGED_ROUNDS`` after the first take
    one Newton step each, as the vectorized loop's do."""
    if not lay.python_path or not tab.pairs:
        return None
    n_states = len(tab.state_cols)
    # the terms of a round: each state's lift, pKw and the spectators' I correction
    terms = [0.0] * n_states + [pkw, 0.0]
    ispec = sum(0.5 * z * z * row[col] for col, z in lay.py_ions)
    x, ionic = x0, i0
    prev = None
    conv, rounds = False, 0
    for rounds in range(1, MAX_OUTER + 1):  # noqa: B007 (used after the loop)
        systems = _lifted(lay, terms[:n_states])
        pkw_eff = terms[n_states]
        if rounds == 1 and at_root:
            done = True
        else:
            lagged = rounds > 1 and rounds <= LAGGED_ROUNDS
            got = iterate_one(lay, row, pkw_eff, a_dh, max_iter=1 if lagged else max_iter,
                              x0=x, i0=ionic, systems=systems, ispec_add=terms[-1])
            if lagged and not (got[3] or (got[1] > 0.0 and math.isfinite(got[0] + got[1]))):
                # a step that leaves the domain (far from the root): this round in full
                got = iterate_one(lay, row, pkw_eff, a_dh, max_iter=max_iter, x0=x, i0=ionic,
                                  systems=systems, ispec_add=terms[-1])
                lagged = False
            x, ionic, _, done = got
            if not (done or lagged):
                return None
        ad = a_dh * davies_d_float(ionic)
        table, fractions = _lumped(lay, tab, systems, row, x, ad, pkw_eff)
        lift, corr = _split(tab, table, ad)
        new = lift[:-1] + [pkw - lift[-1], corr]
        conv = done and max(abs(a - b) for a, b in zip(new[:-1], terms[:-1])) <= OUTER_TOL
        if conv:
            break
        # the next terms: the secant (Anderson) step through the last two rounds (the
        # map contracts linearly; the test above is on the plain map's move only), from
        # the third round (the first round's move, from no pairs, is off that line); an
        # ionic-strength correction that would take more than half of what the split
        # leaves the spectators is the split's own
        step = anderson(terms, new, prev)
        if ispec + step[-1] < 0.5 * (ispec + corr):
            step[-1] = corr
        terms, prev = step, ((terms, new) if rounds > 1 else None)
    return PairsSolved(x, ionic, rounds, conv, table, fractions, ad)


def _lifted(lay: Layout, shift: list) -> tuple:
    """``Layout.py_systems`` with each state's log10 weight raised by its ``shift`` (the
    closed forms' ln10-scaled weights with it, as ``layout.python_systems`` makes them)."""
    if not any(shift):
        return lay.py_systems
    out = []
    for system, (a, b) in zip(lay.py_systems, lay.sys_slices):
        lifts = shift[a:b]
        if not any(lifts):
            out.append(system)
            continue
        col, states, neg_cap, pos_cap, fast = system
        states = tuple((st[0] + d, *st[1:]) for st, d in zip(states, lifts))
        if fast is not None:
            fast = (fast[0], fast[1], tuple((LN10 * st[0], *f[1:])
                                            for f, st in zip(fast[2], states[1:])))
        out.append((col, states, neg_cap, pos_cap, fast))
    return tuple(out)


def _lumped(lay: Layout, tab: Table, systems, row, x: float, ad: float, pkw_eff: float):
    """The Table's columns at the root (pairs still lumped in their ligands, pair
    columns 0) and each system's (lumped) fractions."""
    tad = 2.0 * ad
    plain = _plain(tab)
    table = [0.0] * plain.columns
    table[0] = 10.0 ** x
    table[1] = 10.0 ** (tad - pkw_eff - x)
    for (col, _), c in zip(lay.py_ions, plain.ion_cols):
        table[c] += row[col]
    fractions = []
    cols = plain.state_cols
    for (col, states, _, _, _), (a, _) in zip(systems, lay.sys_slices):
        es = [math.exp((lb0 - tad * cc - st * x) * LN10) for lb0, cc, st, _, _, _ in states]
        inv = 1.0 / sum(es)
        fr = [e * inv for e in es]
        fractions.append(fr)
        for i, f in enumerate(fr):
            table[cols[a + i]] += row[col] * f
    return table, fractions


def _split(tab: Table, table: list, ad: float):
    """Split the lumped ``table`` in place into free ions and pairs (see
    ``outer.pair_shares``): (the lift of each state and, last, of OH-, the
    ionic-strength correction)."""
    plain = _plain(tab)
    pairs = plain.pairs
    k = [10.0 ** (log_k - ad * dzz) for _, _, _, log_k, dzz, _, _ in pairs]
    amount, factor = _amounts(k, [table[m] for m, *_ in pairs],
                              [table[lc] for _, lc, *_ in pairs], plain)
    lift = [0.0] * (len(plain.state_cols) + 1)
    corr = 0.0
    done: set = set()
    for a, (m, lc, pc, _, _, dz2, state) in enumerate(pairs):
        table[pc] += amount[a]
        table[m] -= amount[a]
        corr -= 0.5 * dz2 * amount[a]
        if lc not in done:
            done.add(lc)
            table[lc] /= factor[a]
            lift[state] = math.log10(factor[a])   # state -1 is the OH- row (last)
    return lift, corr


@dataclass(frozen=True, eq=False, repr=False)
class _Plain:
    """A :class:`Table` as plain Python lists for this module's loops (made once per
    table): its columns' count, the spectators' and the states' columns, per pair
    (cation column, ligand column, pair column, log K, z_M² + z_L² - z_P² by column,
    ``Pair.dz2``, ligand state), and how the pairs share their ions (``kind``: "own"
    where none shares one, "one ligand", else "shared" with each pair's partners)."""

    columns: int
    ion_cols: list
    state_cols: list
    pairs: tuple
    kind: str
    same_l: tuple
    same_m: tuple


_PLAIN: dict = {}


def _plain(tab: Table) -> _Plain:
    hit = _PLAIN.get(id(tab))
    if hit is not None and hit[0] is tab:
        return hit[1]
    z2 = [z * z for z in tab.charges.tolist()]
    ion_cols, state_cols = tab.ion_cols.tolist(), tab.state_cols.tolist()
    pairs = []
    for p, pc in zip(tab.pairs, tab.pair_cols.tolist()):
        m, lc = ion_cols[p.ion], 1 if p.state < 0 else state_cols[p.state]
        pairs.append((m, lc, pc, p.log_k, z2[m] + z2[lc] - z2[pc], p.dz2, p.state))
    m_key, l_key = [q[0] for q in pairs], [q[1] for q in pairs]
    own_m = len(set(m_key)) == len(m_key)
    kind = ("own" if own_m and len(set(l_key)) == len(l_key)
            else "one ligand" if own_m and len(set(l_key)) == 1 else "shared")
    same_l = tuple(tuple(b for b in range(len(l_key)) if l_key[b] == la) for la in l_key)
    same_m = tuple(tuple(b for b in range(len(m_key)) if m_key[b] == ma) for ma in m_key)
    plain = _Plain(len(tab.labels), ion_cols, state_cols, tuple(pairs), kind, same_l,
                   same_m)
    if len(_PLAIN) >= 64:
        _PLAIN.clear()
    _PLAIN[id(tab)] = (tab, plain)
    return plain


def _one_ligand(k: list, metal: list, lig: float):
    """:func:`_amounts` where every pair holds the same ligand and each its own cation
    (NaSO4- and KSO4-): Newton on the free ligand l of l (1 + Σ k M / (1 + k l)) = L,
    increasing and concave in l, from below (so every step stays below the root)."""
    if lig <= 0.0:
        return [0.0] * len(k), [1.0 + sum(kk * mm for kk, mm in zip(k, metal))] * len(k)
    free = lig / (1.0 + sum(kk * mm for kk, mm in zip(k, metal)))
    for _ in range(SPLIT_ROUNDS):
        terms = [kk * mm / (1.0 + kk * free) for kk, mm in zip(k, metal)]
        f = free * (1.0 + sum(terms)) - lig
        slope = 1.0 + sum(t / (1.0 + kk * free) for t, kk in zip(terms, k))
        step = -f / slope
        free += step
        if abs(step) <= 1e-15 * free:
            break
    factor = lig / free
    return [kk * mm * free / (1.0 + kk * free) for kk, mm in zip(k, metal)], \
        [factor] * len(k)


def _amounts(k: list, metal: list, lig: list, plain: _Plain):
    """Each pair's amount and, per pair, lumped/free of its ligand (``outer.split_pairs``
    for one point): the closed form where no ion takes part in two pairs, else
    alternating mass balances to a relative change of 1e-13."""
    if plain.kind == "own":
        amount, factor = [], []
        for kk, mm, ll in zip(k, metal, lig):
            b = kk * (mm + ll) + 1.0
            c = 2.0 * kk * mm * ll / (b + math.sqrt(max(b * b - 4.0 * kk * kk * mm * ll, 0.0)))
            amount.append(c)
            factor.append(ll / (ll - c) if ll > 0 else 1.0 + kk * (mm - c))
        return amount, factor
    if plain.kind == "one ligand":
        return _one_ligand(k, metal, lig[0])
    same_l, same_m = plain.same_l, plain.same_m
    m_free = list(metal)
    for _ in range(SPLIT_ROUNDS):
        l_free = [lig[a] / (1.0 + sum(k[b] * m_free[b] for b in same_l[a]))
                  for a in range(len(k))]
        new = [metal[a] / (1.0 + sum(k[b] * l_free[b] for b in same_m[a]))
               for a in range(len(k))]
        settled = all(abs(n - o) <= 1e-13 * max(t, 1e-300)
                      for n, o, t in zip(new, m_free, metal))
        m_free = new
        if settled:
            break
    factor = [1.0 + sum(k[b] * m_free[b] for b in same_l[a]) for a in range(len(k))]
    return [k[a] * m_free[a] * (lig[a] / factor[a]) for a in range(len(k))], factor
