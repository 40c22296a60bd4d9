"""One solution's result from the plain-Python paths.

:func:`one_fields` works out the species, fractions and coefficients of one solution
solved by ``solver.single`` (or ``solver.single_metals``, with its metals) in floats, as
the fields of a :class:`~carboy.model.speciation.Speciation`: numpy's per-call cost
would dominate for one solution.  The warnings a point carries come from
:func:`~carboy.model.result_warnings.warning_texts`, shared with the batch results.
"""

from __future__ import annotations

import math
import operator
from dataclasses import dataclass
from types import MappingProxyType

from carboy.model.activity import DAVIES_LIMIT_MOLAR, davies_d_float
from carboy.model.result_warnings import METAL_T_SPAN_C, warning_texts
from carboy.model.solver.constants import LN10
from carboy.model.solver.layout import ENTHALPY_DATA_MAX_C


@dataclass(frozen=True)
class _Plan:
    """What :func:`one_fields` needs of a layout, worked out once (cached beside it)."""

    systems: tuple      # (column, key, labels, ((ln10 log beta0, cmat, j), ...)) each
    labels: tuple       # every species: H+, OH-, the ions, every state, the metals'
    charges: tuple
    merged: tuple | None   # each label's column once, where two components share one
    by_charge: tuple    # |z| of each merged species, for its coefficient


_PLANS: dict = {}


def _plan(lay, metals: bool) -> _Plan:
    hit = _PLANS.get((id(lay), metals))
    if hit is not None and hit[0] is lay:
        return hit[1]
    systems = tuple((col, key, labels, tuple((lb0 * LN10, cc, st) for lb0, cc, st, _, _, _
                                             in states))
                    for (col, states, _, _, _), key, labels in zip(lay.py_systems,
                                                                   lay.sys_keys,
                                                                   lay.sys_labels))
    labels, charges = lay.py_species
    if metals:
        labels, charges = labels + lay.metals.labels, charges + lay.metals.charges
    merged = None
    if len(set(labels)) != len(labels):   # a label two components share (Na+ twice)
        order: dict = {}
        for lab in labels:
            order.setdefault(lab, len(order))
        merged = tuple(order[lab] for lab in labels)
    unique = tuple(dict.fromkeys(labels))
    plan = _Plan(systems, labels, charges, merged,
                 tuple(abs(lay.charge_map[lab]) for lab in unique))
    if len(_PLANS) >= 512:
        _PLANS.clear()
    _PLANS[(id(lay), metals)] = (lay, plan)
    return plan


def one_fields(lay, row, x, ionic, iterations, pkw, a_dh, t_c, activity, metals=None) -> dict:
    """The fields of a ``Speciation`` (all but ``mixture``) of one solved solution;
    ``metals`` is the ``single_metals.MetalPart`` of a layout with metals."""
    exp = math.exp
    plan = _plan(lay, metals is not None)
    ad = a_dh * davies_d_float(ionic)
    tad = 2.0 * ad
    h = 10.0 ** x
    oh = 10.0 ** (tad - pkw - x)
    values = [h, oh, *(row[col] for col, _ in lay.py_ions)]
    if metals is not None and metals.row is not None:
        row = metals.row   # the ligand systems less what the metals' complexes hold
    fractions = {}
    xl, tl = x * LN10, tad * LN10
    ro = MappingProxyType
    for col, key, labels, states in plan.systems:
        ctot = row[col]
        if len(states) == 2 and not states[0][0] and not states[0][1] and not states[0][2]:
            # two states, the first of weight 1 (the usual acid-base pair)
            lb, cc, st = states[1]
            e = exp(lb - tl * cc - st * xl)
            f0 = 1.0 / (1.0 + e)
            f1 = e * f0
            fractions[key] = ro({labels[0]: f0, labels[1]: f1})
            values += (ctot * f0, ctot * f1)
            continue
        es = [exp(lb - tl * cc - st * xl) for lb, cc, st in states]
        inv = 1.0 / sum(es)
        fr = [e * inv for e in es]
        fractions[key] = ro(dict(zip(labels, fr)))
        values.extend([ctot * f for f in fr])
    extra = {}
    if metals is not None:
        values.extend(metals.values)
        extra = {"solids": ro(metals.solids), "dissolved_metals": ro(metals.dissolved),
                 "saturation_indices": ro(metals.saturation_indices)}
    charges = plan.charges
    residual = math.fsum(map(operator.mul, charges, values))
    if a_dh == 0.0:
        ionic = 0.5 * sum(z * z * v for z, v in zip(charges, values))
    by_z = [10.0 ** (-ad * z * z) for z in range(lay.zmax + 1)]
    if plan.merged is None:
        species = dict(zip(plan.labels, values))
    else:   # a label two components share (Na+ from two salts) is summed
        species = {}
        for lab, v in zip(plan.labels, values):
            species[lab] = species.get(lab, 0.0) + v
    coeff = dict(zip(species, map(by_z.__getitem__, plan.by_charge)))
    warnings = warning_texts(ionic > DAVIES_LIMIT_MOLAR, False, t_c > ENTHALPY_DATA_MAX_C,
                             activity, metals is not None and abs(t_c - 25.0) > METAL_T_SPAN_C)
    return dict(
        pH=ad - x, h_molar=h, oh_molar=oh, pkw=pkw, species=ro(species),
        fractions=ro(fractions), activity_coefficients=ro(coeff),
        ionic_strength_molar=ionic, temperature_c=t_c, activity=activity, warnings=warnings,
        converged=True, iterations=iterations, charge_residual_molar=residual, **extra,
    )


def pairs_fields(lay, tab, got, pkw: float, t_c: float, activity: str) -> dict:
    """The fields of a ``Speciation`` (all but ``mixture``) of one solution solved with
    its ion pairs (``solver.single_pairs``: ``tab`` its species table, ``got`` its
    ``PairsSolved``), in the order and form the vectorized outer loop gives them."""
    ro = MappingProxyType
    charges = tab.charges.tolist()
    species = dict(zip(tab.labels, got.table))
    ionic = 0.5 * sum(c * z * z for c, z in zip(got.table, charges))
    by_z = {abs(int(z)): 10.0 ** (-got.ad * z * z) for z in charges}
    fractions = {key: ro(dict(zip(labels, fr)))
                 for key, labels, fr in zip(lay.sys_keys, lay.sys_labels, got.fractions)}
    hot = warning_texts(False, False, t_c > ENTHALPY_DATA_MAX_C, activity)
    extra = (warning_texts(True, False, False, activity) if ionic > DAVIES_LIMIT_MOLAR else ())
    extra += () if got.converged else warning_texts(False, True, False, activity)
    return dict(
        pH=got.ad - got.x, h_molar=10.0 ** got.x, oh_molar=species["OH-"], pkw=pkw,
        species=ro(species), fractions=ro(fractions),
        activity_coefficients=ro({lab: by_z[abs(int(z))]
                                  for lab, z in zip(tab.labels, charges)}),
        ionic_strength_molar=ionic, temperature_c=t_c, activity=activity,
        warnings=hot + extra, converged=got.converged, iterations=got.rounds,
        charge_residual_molar=math.fsum(c * z for c, z in zip(got.table, charges)))
