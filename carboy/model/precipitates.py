"""Saturation checks: which salts a neutralized batch may deposit.

The saturation index of a solid is ``SI = log10(IAP / Ksp)``, with the ion activity
product from the solved species and their activity coefficients (Davies, or 1 for an
ideal solution).  SI > 0: supersaturated, expected to precipitate (a sludge to handle,
not to drain); SI < 0: undersaturated.  Ksp values at 25 °C with sources are in
``data/planning.toml``; no temperature correction is applied (stated in each note).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass

from carboy.model.thermo import planning_constants


@dataclass(frozen=True)
class Precipitate:
    """Saturation of one solid in the final batch."""

    solid: str
    saturation_index: float
    expected: bool
    source: str
    note: str

    def to_dict(self) -> dict:
        return {"solid": self.solid, "saturation_index": self.saturation_index,
                "expected": self.expected, "source": self.source, "note": self.note}


def ksp_table() -> tuple[dict, ...]:
    """The solubility-product records of planning.toml."""
    return tuple(planning_constants()["ksp"])


def saturation_indices(species_molar: Mapping[str, float], log_gamma_by_charge,
                       charges: Mapping[str, int], temperature_c: float = 25.0
                       ) -> tuple[Precipitate, ...]:
    """Saturation of each tabulated solid whose ions are all present.

    Parameters
    ----------
    species_molar : species label -> concentration (mol/L) of the final state.
    log_gamma_by_charge : sequence, log10 γ for |z| = 0, 1, 2, ...
    charges : species label -> charge.
    """
    out = []
    for rec in ksp_table():
        ions = rec["ions"]
        if not all(species_molar.get(lab, 0.0) > 0 for lab in ions):
            continue
        log_iap = 0.0
        for lab, count in ions.items():
            z = abs(int(charges.get(lab, 0)))
            lg = float(log_gamma_by_charge[z]) if z < len(log_gamma_by_charge) else 0.0
            log_iap += count * (math.log10(species_molar[lab]) + lg)
        si = log_iap - float(rec["log10_ksp"])
        note = rec.get("note", "")
        if abs(temperature_c - 25.0) > 5:
            note = (note + "; " if note else "") + "Ksp is the 25 °C value"
        out.append(Precipitate(rec["solid"], si, si > 0.0,
                               f"{rec['source']} [{rec['status']}]", note))
    return tuple(out)


def slurry_check(reagent_key: str, found: tuple[Precipitate, ...]) -> tuple[str, bool]:
    """For a reagent fed as a slurry: its solid's solubility note (Ksp with source) and
    whether ``found`` (the final batch's saturation) expects that solid to remain."""
    consts = planning_constants()
    solid = consts["slurry"][reagent_key]
    rec = next(r for r in consts["ksp"] if r["solid"] == solid)
    limit = (f"{solid}, Ksp 10^{rec['log10_ksp']:g} at 25 °C, {rec['source']} "
             f"[{rec['status']}]")
    return limit, any(p.solid == solid and p.expected for p in found)
