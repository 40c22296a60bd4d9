"""Which stoichiometric equivalence points of a titration are worth labelling, and where.

Rule (planning.toml ``[equivalence]``): the steps of every sample system are ordered
by pKa (descending for an acid reagent) and grouped while neighbours are less than
``min_pka_gap`` apart, or both are "strong-like" (pKa below ``strong_like_pka``, or
within that distance of pKw for bases); one point per group, at the amount that
completes the group.  A final group too close to the end of the pH scale (within
``visible_within_pkw_margin`` of pKw, or of 0 for an acid reagent) shows no end point
and is left out.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from carboy.model import thermo, water
from carboy.model.mixture import Mixture

ORDINALS = ("1st", "2nd", "3rd", "4th", "5th", "6th")

Step = tuple[float, str, int]
"""(pKa at 25 °C, or -inf for a strong step; system key; step index)."""


@dataclass(frozen=True, eq=False, repr=False)
class _Ladder:
    """The sample's protons as the rule sees them."""

    ion_q: float                             # Σ z n of the spectators (mol)
    systems: dict                            # weak system key -> (System, mol)
    steps: list[Step]                        # every step of the weak systems, sorted
    base: bool                               # True: the reagent is a base
    pkw: float

    @property
    def has_strong_ions(self) -> bool:
        """True when strong-acid anions (or, for an acid reagent, OH-) are titrated."""
        return self.ion_q < 0 if self.base else self.ion_q > 0

    def strongish(self, pk: float, strong_like: float) -> bool:
        return pk <= strong_like if self.base else pk >= self.pkw - strong_like

    def amount(self, done: list[Step], capacity: int) -> float:
        """Reagent (mol) that completes every step in ``done``."""
        q = self.ion_q
        for key, (s, n) in self.systems.items():
            k_done = sum(1 for _, kk, _ in done if kk == key)
            charge = s.top_charge - k_done if self.base else s.bottom_charge + k_done
            q += charge * n
        return (-q if self.base else q) / capacity


def _ladder(sample: Mixture, catalog, direction: str) -> _Ladder:
    """The spectators' charge, the weak systems and their steps in titration order
    (a system whose every step is strong counts as its anion)."""
    v = sample.volume_l
    ion_q = sum(catalog.ions[k].charge * c * v for k, c in sample.totals.items()
                if k in catalog.ions)
    steps = []
    systems = {}
    for key, c in sample.totals.items():
        if key in catalog.ions:
            continue
        s = catalog.systems[key]
        if s.strong_steps == s.n_steps:
            ion_q += s.bottom_charge * c * v
            continue
        systems[key] = (s, c * v)
        for j, pk in enumerate(s.pka25):
            steps.append((pk if j >= s.strong_steps else -math.inf, key, j))
    base = direction == "base"
    steps.sort(key=lambda t: t[0], reverse=not base)
    return _Ladder(ion_q, systems, steps, base, water.pkw(sample.temperature_c))


def _groups(lad: _Ladder, strong_like: float, gap: float) -> list[list[Step]]:
    """Steps grouped into visible end points: the strong-like lead (empty when only
    strong ions are titrated first), then neighbours closer than ``gap``."""
    groups: list[list] = []
    lead = [st for st in lad.steps if lad.strongish(st[0], strong_like)]
    rest = [st for st in lad.steps if not lad.strongish(st[0], strong_like)]
    if lead or lad.has_strong_ions:
        groups.append(lead)
    for st in rest:
        if groups and groups[-1] and abs(st[0] - groups[-1][-1][0]) < gap:
            groups[-1].append(st)
        elif groups and not groups[-1] and abs(st[0] - (0.0 if lad.base else lad.pkw)) < gap:
            groups[-1].append(st)
        else:
            groups.append([st])
    return groups


def _label(g: list[Step], first: bool, lad: _Ladder, sample: Mixture, catalog,
           strong_like: float) -> str:
    """``"hydrochloric acid + phosphoric acid 1st"`` and the like; the system key alone
    when nothing names the group."""
    names = []
    if first and lad.has_strong_ions and (not g or lad.strongish(g[0][0], strong_like)):
        anions = [catalog.strong_acid_by_anion.get(k, k) for k in sample.totals
                  if k in catalog.strong_acid_by_anion] if lad.base else ["hydroxide"]
        names += anions
    names += [f"{catalog.systems[k].name} {ORDINALS[j]}" for _, k, j in g]
    sysk = g[-1][1] if g else "strong"
    return " + ".join(names) if names else sysk


def equivalence_amounts(sample: Mixture, catalog, direction: str, capacity: int,
                        n_max: float) -> list[tuple[float, str, int, str]]:
    """Equivalence points worth labelling (see the module docstring), up to ``n_max`` mol
    of reagent: (mol reagent, system key or "strong", step completed, label)."""
    rule = thermo.planning_constants()["equivalence"]
    gap = float(rule["min_pka_gap"])
    strong_like = float(rule["strong_like_pka"])
    margin = float(rule["visible_within_pkw_margin"])
    lad = _ladder(sample, catalog, direction)
    out = []
    done: list = []
    for g in _groups(lad, strong_like, gap):
        done = done + g
        last_pk = g[-1][0] if g else (-math.inf if lad.base else math.inf)
        if (lad.base and last_pk > lad.pkw - margin) or (not lad.base and last_pk < margin):
            break
        n = lad.amount(done, capacity)
        if not (n > 0) or n > n_max:
            continue
        sysk, step = (g[-1][1], g[-1][2] + 1) if g else ("strong", 1)
        out.append((n, sysk, step, _label(g, not out, lad, sample, catalog, strong_like)))
    return out
