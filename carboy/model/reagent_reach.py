"""Which protons a carbonate reagent can take: the full dose with NaHCO3 or Na2CO3.

A hydroxide takes every dissociable proton; a carbonate does not.  The protons a
carbonate takes leave as CO2, and the reaction runs only as far as the carbonate is the
stronger base:

* a proton taken by CO3 2- (giving HCO3-) comes from an acid of pKa below pKa2 of
  carbonic acid (10.33): the transfer's equilibrium constant is then above 1;
* a proton taken by HCO3- (giving CO2, which vents) comes from an acid of pKa below
  about ½(pKa1 + pKa2) = 8.34, the pH a fresh bicarbonate solution holds: venting at
  1 atm moves it little, and a fresh mix of boric acid and NaHCO3 stays near pH 8.3.

So NaHCO3 takes the protons of strong acids and of steps below pKa 8.34 (H2PO4-, citric,
acetic...) but not those of boric acid (9.24), ammonium (9.25) or HPO4 2- (12.35); Na2CO3
takes the strong ones two per unit, those below pKa 10.33 one per unit (CO3 2- to HCO3-),
and not HPO4 2-'s.  The full dose counts only the protons the reagent can take; the
others are named.  This is a rule of thumb on the 25 °C pKa values, stated in the plan:
the doses to a pH are still the exact solves of :mod:`carboy.model.dosing`.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from dataclasses import dataclass

from carboy.model.mixture import Mixture
from carboy.model.reagents import Reagent

__all__ = ["Reach", "bicarbonate_ceiling", "carbonate_levels", "proton_reach"]

CARBONATE = "carbonate"


@dataclass(frozen=True, eq=False, repr=False)
class Reach:
    """The protons a carbonate reagent can take from a sample.

    ``n_full`` is the reagent (mol) that takes every proton it can; ``cannot`` the
    protons (mol) it cannot take, by component name; ``levels`` the (pKa limit, protons
    per formula unit) of the reagent, strongest first.
    """

    n_full: float
    cannot: Mapping[str, float]
    levels: tuple[tuple[float, int], ...]
    reagent_key: str

    @property
    def limited(self) -> bool:
        return any(v > 0 for v in self.cannot.values())

    def note(self) -> str:
        limits = " and ".join(f"pKa below {p:.2f} ({k} per unit)" for p, k in self.levels)
        return (f"{self.reagent_key} takes protons of acids of {limits}: the CO2 it forms "
                "leaves, but a weaker acid's proton stays")

    def to_dict(self) -> dict:
        return {"cannot_take_mol": dict(self.cannot),
                "levels": [{"below_pka": p, "per_unit": k} for p, k in self.levels],
                "note": self.note()}


def carbonate_levels(reagent: Reagent, catalog) -> tuple[tuple[float, int], ...] | None:
    """(pKa below which a proton is taken, protons per formula unit that far), strongest
    first, for a reagent holding carbonate; None for any other reagent."""
    count = reagent.compound.composition.get(CARBONATE)
    if not count:
        return None
    pk1, pk2 = catalog.systems[CARBONATE].pka25[:2]
    lost = min(max(reagent.base_capacity // int(count), 0), 2)  # CO3 2-: 2, HCO3-: 1
    bicarbonate = 0.5 * (pk1 + pk2)
    levels = [(bicarbonate, lost * int(count))]
    if lost == 2:
        levels.append((pk2, 1 * int(count)))
    return tuple(levels)


def bicarbonate_ceiling(reach: Reach | None) -> float | None:
    """The highest pH a bicarbonate reagent carries a batch to (about 8.3), or None for a
    reagent that reaches further (a carbonate, whose CO3 2- goes on to pH 10 and above)."""
    if reach is None or len(reach.levels) != 1:
        return None
    return reach.levels[0][0]


def _bound_protons(sample: Mixture, catalog, fractions: Mapping[str, Mapping[str, float]]
                   ) -> list[tuple[str, float, float]]:
    """(what it is, pKa, protons bound at that step, mol) for every weak step of the
    sample's systems, from the species fractions of its initial state."""
    out = []
    for key, total in sample.totals.items():
        system = catalog.systems.get(key)
        if system is None or key not in fractions:
            continue
        f = fractions[key]
        held = 0.0
        for j, pka in enumerate(system.pka25):
            held += f.get(system.species[j], 0.0)
            if j >= system.strong_steps:
                name = system.name if len(system.pka25) == 1 else \
                    f"{system.name} ({ion_text(system.species[j])}, pKa {pka:.2f})"
                out.append((name, float(pka), total * sample.volume_l * held))
    return out


def ion_text(label: str) -> str:
    """``HPO4-2`` -> ``HPO4 2-``; ``NH4+`` and neutral labels unchanged."""
    m = re.search(r"([+-])(\d+)$", label)
    return f"{label[:m.start()]} {m.group(2)}{m.group(1)}" if m else label


def proton_reach(sample: Mixture, reagent: Reagent, catalog, proton_eq: float,
                 fractions: Mapping[str, Mapping[str, float]]) -> Reach | None:
    """The full dose of a carbonate reagent (see the module), or None for other reagents.

    ``proton_eq`` is every proton to take (mol; the plan's ``proton_equivalents_mol``),
    ``fractions`` the sample's species fractions by system before any reagent.
    """
    levels = carbonate_levels(reagent, catalog)
    if levels is None or proton_eq <= 0:
        return None
    steps = _bound_protons(sample, catalog, fractions)
    strong = max(proton_eq - sum(n for _, _, n in steps), 0.0)
    n_full = strong / levels[0][1]
    cannot: dict[str, float] = {}
    for name, pka, n in steps:
        per_unit = max((k for limit, k in levels if pka < limit), default=0)
        if per_unit:
            n_full += n / per_unit
        elif n > 1e-12:
            cannot[name] = cannot.get(name, 0.0) + n
    return Reach(n_full, cannot, levels, reagent.key)
