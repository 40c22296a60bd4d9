"""Every dissociable proton of a waste: the full dose and its breakdown (plan step 3).

For acid waste, the base that takes every system to its fully deprotonated form, from
the charge-balance identity E = -(sum over ions of z n + sum over systems of n times the
bottom charge); for alkaline waste the acid that takes every system to its fully
protonated form (see :mod:`carboy.model.planner`).  It needs only the totals and the
direction, not any state of the sample: the planner may work it out before the sample's
pH is known (``plan_activity.one_way``).
"""

from __future__ import annotations

from dataclasses import dataclass

from carboy.model import gas
from carboy.model.mixture import Mixture


@dataclass(frozen=True, eq=False, repr=False)
class Demand:
    """Every dissociable proton: mol per component, the signed total, the full dose."""

    breakdown: dict
    proton_eq: float
    n_full: float


def proton_demand(sample: Mixture, catalog, direction: str, capacity: int) -> Demand:
    """The protons to remove (``direction`` "base") or add ("acid"), per component and in
    all, and the reagent (mol) that does it, ``capacity`` protons a formula unit."""
    # 0.0 - x, not -x: nothing to remove is 0, never -0 (which prints as "-0 mol")
    if direction == "base":
        parts = _charge_parts(sample, catalog, "bottom")
        breakdown = {_component_name(k, catalog): 0.0 - v for k, v in parts.items()}
        equivalents = 0.0 - sum(parts.values())
        proton_eq = equivalents
    else:
        parts = _charge_parts(sample, catalog, "top")
        breakdown = {_component_name(k, catalog): v for k, v in parts.items()}
        equivalents = sum(parts.values())
        proton_eq = 0.0 - equivalents
    return Demand(breakdown, proton_eq, max(equivalents, 0.0) / capacity)


def _charge_parts(sample: Mixture, catalog, which: str) -> dict:
    """Per-key contribution to Σ z n (ions) or n·top/bottom charge (systems), mol.

    Towards base a modelled metal cation counts as its hydroxide (z OH- per ion, the
    neutral form that settles), so its two parts cancel: its charge (+z n, as a spectator
    cation counts as base already present) and the OH- its hydroxide takes (-z n, under
    ``HYDROXIDE_PART``), both shown so that the anions it came with are not read as
    acid."""
    out = {}
    v = sample.volume_l
    metals = gas.metal_doses_of(tuple(sample.totals), catalog) if which == "bottom" else None
    for key, c in sample.totals.items():
        n = c * v
        if metals is not None and key in metals.keys:
            out[key] = catalog.ions[key].charge * n
            out[HYDROXIDE_PART + key] = -catalog.ions[key].charge * n
            continue
        if key in catalog.ions:
            out[key] = catalog.ions[key].charge * n
        else:
            s = catalog.systems[key]
            out[key] = (s.top_charge if which == "top" else s.bottom_charge) * n
    return out


HYDROXIDE_PART = "hydroxide of "
"""A breakdown key's prefix for the OH- a metal's hydroxide takes."""


def _component_name(key: str, catalog) -> str:
    """What the breakdown calls a component: its strong acid (Cl- -> hydrochloric acid),
    its system's name, its ion's name, or the key; a metal's hydroxide part is
    ``"zinc, as its hydroxide"``."""
    if key.startswith(HYDROXIDE_PART):
        return f"{_component_name(key[len(HYDROXIDE_PART):], catalog)}, as its hydroxide"
    if key in catalog.strong_acid_by_anion:
        return catalog.strong_acid_by_anion[key]
    if key in catalog.systems:
        return catalog.systems[key].name
    return catalog.ions[key].name if key in catalog.ions else key
