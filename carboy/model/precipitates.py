"""Saturation checks: which salts a neutralized batch may deposit.

The saturation index of a solid is ``SI = log10(IAP / Ksp)``, with the ion activity
product from the solved species and their activity coefficients (Davies, or 1 for an
ideal solution).  SI > 0: supersaturated, expected to precipitate (a sludge to handle,
not to drain); SI < 0: undersaturated.  Ksp values at 25 °C with sources are in
``data/planning.toml``; no temperature correction is applied (stated in each note).

Soluble salts (Na2SO4, K2SO4, CaSO4, NaCl, the sulfates and chlorides of the metals
carboy knows...) are judged by :func:`salt_limits` against their published solubility at
the batch's temperature (``[[solubility]]``): a concentrated waste neutralized can hold
more salt than water dissolves, and it crystallizes as the batch cools.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from carboy.model.catalog import molar_mass_of
from carboy.model.thermo import planning_constants


@dataclass(frozen=True, eq=False, repr=False)
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


# ----------------------------------------------------------------------------- soluble salts

@dataclass(frozen=True, eq=False, repr=False)
class SaltLimit:
    """How much of a soluble salt the batch holds against what water dissolves.

    ``molality`` is the batch's content as the molality of a pure solution with the same
    stoichiometric ion product (common ions counted), ``saturated_molality`` the published
    solubility at ``temperature_c``; ``ratio`` their quotient (above 1: it cannot all stay
    dissolved).  ``water_to_add_l`` is the water that would bring the ratio to 1.
    """

    salt: str
    solid: str
    molality: float
    saturated_molality: float
    temperature_c: float
    source: str
    note: str = ""
    water_to_add_l: float = 0.0

    @property
    def ratio(self) -> float:
        return self.molality / self.saturated_molality

    @property
    def exceeded(self) -> bool:
        return self.ratio > 1.0

    def to_dict(self) -> dict:
        return {"salt": self.salt, "solid": self.solid, "molality": self.molality,
                "saturated_molality": self.saturated_molality,
                "temperature_c": self.temperature_c, "ratio": self.ratio,
                "exceeded": self.exceeded, "water_to_add_l": self.water_to_add_l,
                "source": self.source, "note": self.note}


def solubility_table() -> tuple[dict, ...]:
    """The ``[[solubility]]`` records of planning.toml."""
    return tuple(planning_constants().get("solubility", ()))


def saturated_molality(rec: Mapping, temperature_c: float) -> tuple[float, str]:
    """Solubility of a ``[[solubility]]`` salt at ``temperature_c`` (mol/kg water), and a note
    when the table does not reach that temperature (its nearest row is used)."""
    temps = [float(t) for t in rec["temperature_c"]]
    if "molality" in rec:
        values = [float(v) for v in rec["molality"]]
    else:
        mass = molar_mass_of(rec["salt"], entry=rec["salt"])
        values = [1000.0 * (w / 100.0) / (mass * (1.0 - w / 100.0)) for w in rec["mass_percent"]]
    note = ""
    if not temps[0] <= temperature_c <= temps[-1]:
        note = (f"the table covers {temps[0]:g}–{temps[-1]:g} °C: its value at "
                f"{min(max(temperature_c, temps[0]), temps[-1]):g} °C is used")
    return float(np.interp(temperature_c, temps, values)), note


def salt_limits(totals_mol: Mapping[str, float], water_kg: float, temperature_c: float
                ) -> tuple[SaltLimit, ...]:
    """Every tabulated salt whose ions the batch holds, with how much of it the batch holds
    against its solubility at ``temperature_c``.

    ``totals_mol``: mol of each catalog ion and system in the batch; ``water_kg`` its water.
    The content is judged by the stoichiometric ion product against that of the pure
    saturated solution, ``Π (ν_i m)^ν_i``: an estimate that counts common ions and
    neglects how activity coefficients change between the two solutions.
    """
    out = []
    if water_kg <= 0:
        return ()
    for rec in solubility_table():
        ions = {k: int(v) for k, v in rec["ions"].items()}
        if not all(totals_mol.get(k, 0.0) > 0 for k in ions):
            continue
        m_sat, note = saturated_molality(rec, temperature_c)
        nu = sum(ions.values())
        log_q = sum(c * math.log(totals_mol[k] / water_kg) for k, c in ions.items())
        log_q_sat = sum(c * math.log(c * m_sat) for c in ions.values())
        ratio = math.exp((log_q - log_q_sat) / nu)
        out.append(SaltLimit(rec["salt"], rec["solid"], ratio * m_sat, m_sat, temperature_c,
                             f"{rec['source']} [{rec['status']}]", note,
                             max(ratio - 1.0, 0.0) * water_kg))
    return tuple(out)
