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
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from carboy.model.activity import davies_d_float
from carboy.model.solver.constants import LN10
from carboy.model.solver.layout import Layout, python_systems
from carboy.model.solver.single import solve_one


@dataclass(frozen=True)
class MetalPart:
    """The metals of one solution solved without solids (mol/L)."""

    values: list               # each metal species, in ``MetalLayout.labels`` order
    solids: dict               # every solid -> 0.0 (none is present)
    saturation_indices: dict   # every solid -> log10(IAP / K) (< 0 for those in the dose)
    dissolved: dict            # each metal -> its total


@dataclass(frozen=True)
class _Compiled:
    """The metals of a layout as plain tuples (cached beside the layout)."""

    ladders: tuple     # each metal as a system, ``Layout.py_systems``' form
    metals: tuple      # (col, key, z, ((log *beta, n, q² - z²), ...), log Ks, solid name)
    salts: tuple       # (name, metal index, ligand column, state, its states, zl², zm²,
                       #  a, b, c, log Ksp, in the dose)


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
    salts = []
    for s in ml.data.ligand_solids:
        lk = links.get(s.ligand_system)
        if s.cation not in ml.keys or lk is None:
            continue
        col, states = lay.py_systems[lk.k][:2]
        zl, zm = lk.charges[s.ligand_index], ml.data.metals[s.cation].charge
        salts.append((s.name, ml.keys.index(s.cation), col, s.ligand_index - lk.strong, states,
                      zl * zl, zm * zm, s.cation_count, s.ligand_count, s.oh_count,
                      s.log_ksp, s.in_dose))
    return _Compiled(tuple(ladders), tuple(metals), tuple(salts))


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
    part = _metal_part(lay, comp, row, x, a_dh * davies_d_float(ionic), pkw)
    return None if part is None else (x, ionic, iterations, part)


def _fraction(states, index: int, x: float, tad: float) -> float:
    """The share of state ``index`` of a system with ``states`` (``py_systems``)."""
    es = [math.exp((lb0 - tad * cc - st * x) * LN10) for lb0, cc, st, _, _, _ in states]
    return es[index] / sum(es)


def _metal_part(lay: Layout, comp: _Compiled, row, x: float, ad: float,
                pkw: float) -> MetalPart | None:
    """The metals at the root (x, A·D), or None where a solid of the dose is saturated."""
    log_h_act, log_oh_act = x - ad, -pkw - x + ad
    values, si, dissolved, log_free = [], {}, {}, []
    exp, log10 = math.exp, math.log10
    for col, key, z, species, log_ks, solid in comp.metals:
        c = row[col]
        ws = [exp((lb - n * log_h_act + ad * dz2) * LN10) for lb, n, dz2 in species]
        free = c / sum(ws)
        values.extend([free * w for w in ws])
        dissolved[key] = c
        u = log10(free) if free > 0 else -math.inf
        log_free.append(u)
        si[solid] = u - (log_ks + z * log_h_act + ad * z * z)
        if si[solid] >= 0:
            return None
    for name, i, col, idx, states, zl2, zm2, a, b, oh, log_ksp, in_dose in comp.salts:
        lig = row[col] * (_fraction(states, idx, x, 2.0 * ad) if idx >= 0 else 0.0)
        log_lig = (log10(lig) if lig > 0 else -math.inf) - ad * zl2
        si[name] = a * (log_free[i] - ad * zm2) + b * log_lig + oh * log_oh_act - log_ksp
        if in_dose and si[name] >= 0:
            return None
    solids = lay.metals.solids
    return MetalPart(values, dict.fromkeys(solids, 0.0), {n: si[n] for n in solids},
                     dissolved)
