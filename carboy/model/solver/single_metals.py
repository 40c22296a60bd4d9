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


_LADDERS: dict = {}


def metal_ladders(lay: Layout):
    """Each metal of ``lay`` as a system of the one-solution path (``py_systems``'
    form), or None when some metal's complexes are not a ladder n = 1, 2, ... (cached
    beside the layout, which never changes)."""
    hit = _LADDERS.get(id(lay))
    if hit is not None and hit[0] is lay:
        return hit[1]
    ml = lay.metals
    out = []
    for col, key in zip(ml.cols.tolist(), ml.keys):
        m = ml.data.metals[key]
        ns = [s.n for s in m.species]
        if ns != list(range(len(ns))):
            out = None
            break
        z = m.charge
        zs = [s.charge for s in m.species]
        lb = np.array([[s.log_beta for s in m.species]])
        cm = np.array([[0.5 * (z * z - q * q - n) for q, n in zip(zs, ns)]])
        out.append(python_systems([col], [zs], lb, cm)[0])
    got = None if out is None else tuple(out)
    if len(_LADDERS) >= 512:
        _LADDERS.clear()
    _LADDERS[id(lay)] = (lay, got)
    return got


def solve_unsaturated(lay: Layout, row, pkw: float, a_dh: float, *, max_iter: int):
    """``(x, ionic, iterations, MetalPart)`` of one solution whose layout has metals
    (``row``: totals in the layout's column order), or None where the plain-Python
    path cannot take it: a layout with shifted exponentials or a metal whose
    complexes are no ladder, no root within ``max_iter`` steps, or a solid of the dose
    saturated at the root."""
    ladders = None if lay.needs_shift else metal_ladders(lay)
    if ladders is None:
        return None
    got = solve_one(lay, row, pkw, a_dh, max_iter=max_iter, extra=ladders)
    if got is None:
        return None
    x, ionic, iterations = got
    part = _metal_part(lay, row, x, a_dh * davies_d_float(ionic), pkw)
    return None if part is None else (x, ionic, iterations, part)


def _fraction(states, index: int, x: float, tad: float) -> float:
    """The share of state ``index`` of a system with ``states`` (``py_systems``)."""
    es = [math.exp((lb0 - tad * cc - st * x) * LN10) for lb0, cc, st, _, _, _ in states]
    return es[index] / sum(es)


def _metal_part(lay: Layout, row, x: float, ad: float, pkw: float) -> MetalPart | None:
    """The metals at the root (x, A·D), or None where a solid of the dose is saturated."""
    ml = lay.metals
    log_h_act, log_oh_act = x - ad, -pkw - x + ad
    values, si, dissolved, log_free = [], {}, {}, {}
    for col, key in zip(ml.cols.tolist(), ml.keys):
        m = ml.data.metals[key]
        c, z = row[col], m.charge
        rs = [s.log_beta - s.n * log_h_act + ad * (s.charge ** 2 - z * z) for s in m.species]
        ws = [math.exp(r * LN10) for r in rs]
        free = c / sum(ws)
        values.extend(free * w for w in ws)
        dissolved[key] = c
        u = math.log10(free) if free > 0 else -math.inf
        log_free[key] = u
        si[m.solid.name] = u - (m.solid.log_ks + z * log_h_act + ad * z * z)
        if si[m.solid.name] >= 0:
            return None
    links = {lk.key: lk for lk in ml.ligands}
    for s in ml.data.ligand_solids:
        lk = links.get(s.ligand_system)
        if s.cation not in log_free or lk is None:
            continue
        col, states = lay.py_systems[lk.k][:2]
        idx = s.ligand_index - lk.strong
        lig = row[col] * (_fraction(states, idx, x, 2.0 * ad) if idx >= 0 else 0.0)
        zl, zm = lk.charges[s.ligand_index], ml.data.metals[s.cation].charge
        log_lig = (math.log10(lig) if lig > 0 else -math.inf) - ad * zl * zl
        log_iap = (s.cation_count * (log_free[s.cation] - ad * zm * zm)
                   + s.ligand_count * log_lig + s.oh_count * log_oh_act)
        si[s.name] = log_iap - s.log_ksp
        if s.in_dose and si[s.name] >= 0:
            return None
    return MetalPart(values, dict.fromkeys(ml.solids, 0.0),
                     {name: si[name] for name in ml.solids}, dissolved)
