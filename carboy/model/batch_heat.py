"""How hot a batch gets: the adiabatic rise, the boiling cap and the stages that keep it safe.

The heat a neutralization releases (positive: released, the batch warms) raises the batch
by ``Q / (m c_p)``, with the batch's own heat capacity
(:func:`carboy.model.heat_capacity.batch_heat_capacity`).  Water cannot be heated past its
boiling point (about 100 °C at 1 atm, ``planning.toml [boiling]``): where the estimate
goes beyond it the plan says the batch would boil and spatter, and gives no temperature
water cannot reach.  Either way, where the batch would pass the safe temperature (carboy's
default, 50 °C, or the storeroom's disposal rules' when the plan is made under them) it
says how many equal stages keep every stage under it, the batch cooling back to its
starting temperature between stages.  The first stage is the worst (the least liquid
takes the same heat), so ``n`` stages are enough when
``Q / n <= (safe - start) c_p (m_sample + m_reagent / n)``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from carboy.model.heat_capacity import HeatCapacity
from carboy.model.thermo import planning_constants

__all__ = ["BatchHeat", "assess", "boil_c", "default_safe_c", "stages_to_stay_below"]

MAX_STAGES = 1000
"""Beyond this many stages the plan says it cannot be staged (dilute or cool instead)."""


def boil_c() -> float:
    """About where a batch boils, °C (``planning.toml [boiling] boil_c``)."""
    return float(planning_constants()["boiling"]["boil_c"])


def default_safe_c() -> float:
    """carboy's safe temperature of a batch, °C, when no disposal profile sets one."""
    return float(planning_constants()["boiling"]["safe_c"])


@dataclass(frozen=True, eq=False, repr=False)
class BatchHeat:
    """The heat of a plan and what it does to the batch.

    ``rise_k`` is the adiabatic estimate (it may go past boiling: then ``boils``);
    ``stages`` is the number of equal stages that keep each under ``safe_c`` (1 when one
    addition does, None when no number of stages can: the batch starts at or above it).
    """

    released_kj: float
    mass_g: float
    heat_capacity: HeatCapacity
    start_c: float
    rise_k: float
    boil_c: float
    safe_c: float
    safe_from: str
    stages: int | None

    @property
    def boils(self) -> bool:
        return bool(self.start_c + self.rise_k >= self.boil_c)

    @property
    def above_safe(self) -> bool:
        return bool(self.start_c + self.rise_k > self.safe_c)

    @property
    def reached_rise_k(self) -> float:
        """The rise the batch can reach: the adiabatic estimate, or up to boiling where it
        would boil (the rest of the heat boils the batch)."""
        return min(self.rise_k, self.boil_c - self.start_c) if self.boils else self.rise_k

    @property
    def final_c(self) -> float | None:
        """The temperature the batch reaches, or None where it would boil first."""
        return None if self.boils else self.start_c + self.rise_k

    def to_dict(self) -> dict:
        return {
            "released_kj": self.released_kj, "batch_mass_g": self.mass_g,
            "heat_capacity_j_gk": self.heat_capacity.cp_j_gk,
            "heat_capacity": self.heat_capacity.to_dict(),
            "start_c": self.start_c, "adiabatic_rise_k": self.rise_k,
            "final_c": self.final_c, "boils": self.boils, "boil_c": self.boil_c,
            "safe_c": self.safe_c, "safe_from": self.safe_from,
            "stages_to_stay_below_safe": self.stages,
        }


def stages_to_stay_below(released_kj: float, sample_mass_g: float, reagent_mass_g: float,
                         cp_j_gk: float, start_c: float, safe_c: float) -> int | None:
    """The fewest equal stages that keep every stage under ``safe_c`` (see the module)."""
    if released_kj <= 0:
        return 1
    room = safe_c - start_c
    if room <= 0 or cp_j_gk <= 0 or sample_mass_g <= 0:
        return None
    need = (released_kj * 1000.0 / (room * cp_j_gk) - reagent_mass_g) / sample_mass_g
    n = max(1, math.ceil(need - 1e-9))
    return n if n <= MAX_STAGES else None


def assess(released_kj: float, sample_mass_g: float, reagent_mass_g: float,
           heat_capacity: HeatCapacity, start_c: float, safe_c: float | None = None,
           safe_from: str = "") -> BatchHeat:
    """The rise, boiling and stages of a batch of ``sample_mass_g`` g taking up
    ``reagent_mass_g`` g of reagent and ``released_kj`` kJ.

    ``safe_c`` defaults to carboy's (``planning.toml [boiling] safe_c``); ``safe_from``
    says whose it is.
    """
    mass = sample_mass_g + reagent_mass_g
    cp = heat_capacity.cp_j_gk
    rise = released_kj * 1000.0 / (mass * cp) if mass > 0 and cp > 0 else 0.0
    if safe_c is None:
        safe_c, safe_from = default_safe_c(), "carboy's default"
    stages = stages_to_stay_below(released_kj, sample_mass_g, reagent_mass_g, cp, start_c,
                                  safe_c)
    return BatchHeat(float(released_kj), float(mass), heat_capacity, float(start_c),
                     float(rise), boil_c(), float(safe_c), safe_from or "given", stages)
