"""One solution with modelled metals in plain Python floats, where no solid forms.

While none of a metal's solids is present, its mass balance is its hydrolysis ladder
alone, and that ladder is an acid–base ladder: the free ion is the top state and each
hydroxo complex M(OH)n one more proton lost, with the weight
``10**(log *beta_n - n x - 2 A·D c_n)``, c_n = (z² - q_n² - n)/2 (q_n the complex's
charge; the same terms as ``metals._log_ratios``).  So the one-solution path
(``single.solve_one``) takes each metal as one more system, and at its root every
solid's saturation index is worked out as ``metals`` does.  When a solid of the dose
(a hydroxide, or a salt with ``in_dose``) is saturated there, :func:`solve_unsaturated`
returns None and the caller takes the guaranteed path, which decides the solids;
otherwise the root is that of the same equations the vectorized path solves.

Complexes (CaSO4°, MgSO4° ..., ``metal_complexes``): an outer loop holds each complex's
amount Q, takes it out of its cation's and its ligand system's totals (a charged one,
AlSO4+, joins as a one-state system of its own charge), solves, and splits the ligand
again at the root (F + Σ [ML] = total, by Newton in F: no solid is present on this
path), until no amount moves more than ``COMPLEX_RTOL`` of itself, or the contraction of
the last two rounds puts it within that of the fixed point.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from carboy.model.activity import davies_d_float
from carboy.model.solver.constants import LN10
from carboy.model.solver.layout import Layout, python_systems
from carboy.model.solver.mixing import anderson
from carboy.model.solver.single import solve_one

COMPLEX_RTOL = 1e-11
"""The complexes' outer loop stops when no amount moved more than this share of itself."""
COMPLEX_ROUNDS = 40
"""Rounds of that loop before the vectorized path takes the solution."""


@dataclass(frozen=True)
class MetalPart:
    """The metals of one solution solved without solids (mol/L)."""

    values: list               # each metal species, in ``MetalLayout.labels`` order
    solids: dict               # every solid -> 0.0 (none is present)
    saturation_indices: dict   # every solid -> log10(IAP / K) (< 0 for those in the dose)
    dissolved: dict            # each metal -> its total
    row: list | None = None    # the totals less what the complexes hold (None: none)


@dataclass(frozen=True)
class _Compiled:
    """The metals of a layout as plain tuples (cached beside the layout)."""

    ladders: tuple     # each metal as a system, ``Layout.py_systems``' form
    metals: tuple      # (col, key, z, ((log *beta, n, q² - z²), ...), log Ks, solid name)
    salts: tuple       # (name, metal index, ligand column, state, its states, zl², zm²,
                       #  a, b, c, log Ksp, in the dose)
    complexes: tuple = ()   # (metal index, ligand column, state, its states, log K,
                            #  z_M² + z_L² - z_ML², the complex's charge)


_COMPILED: dict = {}


def compiled(lay: Layout) -> _Compiled | None:
    """The metals of ``lay`` for this path, or None when some metal's complexes are not
    a ladder n = 1, 2, ... (cached beside the layout, which never changes)."""
    hit = _COMPILED.get(id(lay))
    if hit is not None and hit[0] is lay:
        return hit[1]
    got = _compile(lay)
    if len(_COMPILED) >= 512:
        _COMPILED.clear()
    _COMPILED[id(lay)] = (lay, got)
    return got


def _compile(lay: Layout) -> _Compiled | None:
    ml = lay.metals
    ladders, metals = [], []
    for col, key in zip(ml.cols.tolist(), ml.keys):
        m = ml.data.metals[key]
        ns = [s.n for s in m.species]
        if ns != list(range(len(ns))):
            return None
        z = m.charge
        zs = [s.charge for s in m.species]
        lb = np.array([[s.log_beta for s in m.species]])
        cm = np.array([[0.5 * (z * z - q * q - n) for q, n in zip(zs, ns)]])
        ladders.append(python_systems([col], [zs], lb, cm)[0])
        metals.append((col, key, z, tuple((s.log_beta, s.n, s.charge ** 2 - z * z)
                                          for s in m.species), m.solid.log_ks, m.solid.name))
    links = {lk.key: lk for lk in ml.ligands}

    def linked(entries):
        """Each entry of a cation present with a linked system, with (metal index, the
        system's column, the state among its kept ones, its states, z_M², z_L²)."""
        for e in entries:
            lk = links.get(e.ligand_system)
            if e.cation in ml.keys and lk is not None:
                col, states = lay.py_systems[lk.k][:2]
                yield e, (ml.keys.index(e.cation), col, e.ligand_index - lk.strong, states,
                          ml.data.metals[e.cation].charge ** 2, lk.charges[e.ligand_index] ** 2)

    salts = [(s.name, i, col, idx, states, zl2, zm2, s.cation_count, s.ligand_count,
              s.oh_count, s.log_ksp, s.in_dose)
             for s, (i, col, idx, states, zm2, zl2) in linked(ml.data.ligand_solids)]
    cxs = [(i, col, idx, states, c.log_k, float(zm2 + zl2 - c.charge ** 2), c.charge)
           for c, (i, col, idx, states, zm2, zl2) in linked(ml.data.complexes)]
    return _Compiled(tuple(ladders), tuple(metals), tuple(salts), tuple(cxs))


def solve_unsaturated(lay: Layout, row, pkw: float, a_dh: float, *, max_iter: int):
    """``(x, ionic, iterations, MetalPart)`` of one solution whose layout has metals
    (``row``: totals in the layout's column order), or None where the plain-Python
    path cannot take it: a layout with shifted exponentials or a metal whose
    complexes are no ladder, no root within ``max_iter`` steps, or a solid of the dose
    saturated at the root."""
    comp = None if lay.needs_shift else compiled(lay)
    if comp is None:
        return None
    got = solve_one(lay, row, pkw, a_dh, max_iter=max_iter, extra=comp.ladders)
    if got is None:
        return None
    x, ionic, iterations = got
    held = None
    if any(row[comp.metals[i][0]] > 0 and row[col] > 0 for i, col, *_ in comp.complexes):
        got = _with_complexes(lay, comp, row, pkw, a_dh, max_iter, x, ionic)
        if got is None:
            return None
        x, ionic, iterations, held = got
    part = _metal_part(lay, comp, row, x, a_dh * davies_d_float(ionic), pkw, held)
    return None if part is None else (x, ionic, iterations, part)


def _held_row(lay: Layout, comp: _Compiled, row, held):
    """The totals less the complexes ``held`` (mol/L each), and the charged complexes
    as one-state systems of their own (their amounts in columns after the row's)."""
    out = list(row)
    extra = []
    for (i, col, _, _, _, _, zc), q in zip(comp.complexes, held):
        out[comp.metals[i][0]] -= q
        out[col] -= q
        if zc:
            extra += python_systems([len(out)], [[zc]], np.zeros((1, 1)), np.zeros((1, 1)))
            out.append(q)
    return out, tuple(extra)


def _split(comp: _Compiled, row, x: float, ad: float) -> list:
    """The complexes' amounts at the root (x, A·D) for the totals ``row``: Newton in F,
    the ligand outside complexes, on F + Σ c_M k_M F / (S_M + k_M F) = total (rising
    and concave in F: from F = total every step lands at or below the root)."""
    log_h_act = x - ad
    exp = math.exp
    terms = []
    for i, _, idx, states, log_k, dz2, _ in comp.complexes:
        species = comp.metals[i][3]
        s_h = sum(exp((lb - n * log_h_act + ad * d) * LN10) for lb, n, d in species)
        k = 10.0 ** (log_k - ad * dz2) * (_fraction(states, idx, x, 2.0 * ad)
                                          if idx >= 0 else 0.0)
        terms.append((row[comp.metals[i][0]], k, s_h))
    total = row[comp.complexes[0][1]]
    f = total
    for _ in range(100):
        g, gp = f - total, 1.0
        for c, k, s_h in terms:
            den = s_h + k * f
            g += c * k * f / den
            gp += c * k * s_h / (den * den)
        step = g / gp
        f = max(f - step, 0.5 * f)
        if abs(step) <= 1e-15 * total:
            break
    return [c * k * f / (s_h + k * f) for c, k, s_h in terms]


def _with_complexes(lay: Layout, comp: _Compiled, row, pkw: float, a_dh: float,
                    max_iter: int, x: float, ionic: float):
    """The outer loop on the complexes' amounts, from the root without them."""
    held = _split(comp, row, x, a_dh * davies_d_float(ionic))
    iterations = 0
    last = math.inf
    prev = None
    for _ in range(COMPLEX_ROUNDS):
        inner, extra = _held_row(lay, comp, row, held)
        got = solve_one(lay, inner, pkw, a_dh, max_iter=max_iter, x0=x, i0=ionic,
                        extra=comp.ladders + extra)
        if got is None:
            return None
        x, ionic, its = got
        iterations += its
        new = _split(comp, row, x, a_dh * davies_d_float(ionic))
        moved = max(abs(a - b) / max(abs(a), 1e-300) for a, b in zip(new, held))
        # the amounts contract towards their fixed point by about moved / last a round:
        # what is left to move is that ratio times this move, over one less the ratio.
        # The root is returned with the amounts it was solved at (its charge balance
        # exact, the complexes' mass action within COMPLEX_RTOL).
        # (after a secant step that ratio no longer measures a contraction: only the
        # move itself ends the loop)
        ratio = moved / last if prev is None and 0.0 < last < math.inf else 1.0
        if moved <= COMPLEX_RTOL or (ratio < 0.5 and moved * ratio / (1.0 - ratio)
                                     <= COMPLEX_RTOL):
            return x, ionic, iterations, held
        # the next amounts: the secant (Anderson) step through the last two rounds,
        # kept positive (a complex's amount is above zero wherever it forms)
        step = anderson(held, new, prev)
        prev = (held, new)
        held = [a if a > 0 else b for a, b in zip(step, new)]
        last = moved
    return None


def _fraction(states, index: int, x: float, tad: float) -> float:
    """The share of state ``index`` of a system with ``states`` (``py_systems``)."""
    es = [math.exp((lb0 - tad * cc - st * x) * LN10) for lb0, cc, st, _, _, _ in states]
    return es[index] / sum(es)


def _metal_part(lay: Layout, comp: _Compiled, row, x: float, ad: float,
                pkw: float, held=None) -> MetalPart | None:
    """The metals at the root (x, A·D), or None where a solid of the dose is saturated;
    ``held``: the complexes' amounts (None: none form)."""
    log_h_act, log_oh_act = x - ad, -pkw - x + ad
    values, si, dissolved, log_free = [], {}, {}, []
    exp, log10 = math.exp, math.log10
    inner = row if held is None else _held_row(lay, comp, row, held)[0][:len(row)]
    bound = dict.fromkeys(range(len(comp.metals)))
    for (i, *_), q in zip(comp.complexes, held or [0.0] * len(comp.complexes)):
        bound[i] = q   # each complex after its cation's hydroxo species
    for m, (col, key, z, species, log_ks, solid) in enumerate(comp.metals):
        c = inner[col]
        ws = [exp((lb - n * log_h_act + ad * dz2) * LN10) for lb, n, dz2 in species]
        free = c / sum(ws)
        values.extend([free * w for w in ws])
        if bound[m] is not None:
            values.append(bound[m])
        dissolved[key] = row[col]
        u = log10(free) if free > 0 else -math.inf
        log_free.append(u)
        si[solid] = u - (log_ks + z * log_h_act + ad * z * z)
        if si[solid] >= 0:
            return None
    for name, i, col, idx, states, zl2, zm2, a, b, oh, log_ksp, in_dose in comp.salts:
        lig = inner[col] * (_fraction(states, idx, x, 2.0 * ad) if idx >= 0 else 0.0)
        log_lig = (log10(lig) if lig > 0 else -math.inf) - ad * zl2
        si[name] = a * (log_free[i] - ad * zm2) + b * log_lig + oh * log_oh_act - log_ksp
        if in_dose and si[name] >= 0:
            return None
    solids = lay.metals.solids
    return MetalPart(values, dict.fromkeys(solids, 0.0), {n: si[n] for n in solids},
                     dissolved, None if held is None else inner)
