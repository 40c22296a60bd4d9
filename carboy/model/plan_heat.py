"""The heat and gas step of a neutralization plan (:mod:`carboy.model.planner`, step 8).

One sign everywhere: the heat *released* is positive (the batch warms), negative when the
batch takes heat up (it cools), in ``prep`` and ``neutralize`` alike.  It is ``-ΔH`` of:

* the change in speciation from the sample and the reagent in its formula state to the
  batch at the target (``thermo``: species enthalpies and water formation);
* the CO2 that has left once the batch has vented (CO2(aq) -> CO2(g));
* a solid reagent's heat of solution (every solid reagent carboy knows: NaOH, KOH, LiOH,
  Na2CO3, K2CO3, NaHCO3, Ca(OH)2, Mg(OH)2), for the amount dosed;
* a concentrate's heat of dilution, where a table is held (H2SO4, HCl, HNO3, NaOH, NH3,
  H3PO4 ...); otherwise a warning says it is not included;
* a metal hydroxide's own heat of precipitation in place of its OH- counted as water
  formed (``metals_dh_kj``, from the plan's metals step).

What the heat does to the batch (its heat capacity, the boiling cap and the stages that
keep it under the safe temperature) is :mod:`carboy.model.batch_heat`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from carboy.model import gas, thermo, water
from carboy.model.batch_heat import BatchHeat, assess
from carboy.model.heat_capacity import batch_heat_capacity
from carboy.model.reagents import Reagent

ASSUMPTIONS = (
    "heat: adiabatic batch; species enthalpies at 25 °C, infinite dilution "
    "(CODATA-derived water formation -55.815 kJ/mol); {cp}; the sample's mass taken as "
    "that of its volume of water",
    "gas volume at {conditions}",
    "CO2 beyond its solubility at 1 atm leaves as it forms and does not return; doses, "
    "stages and the curve are for the batch after it has vented to air (dissolved CO2 "
    "no higher than in equilibrium with air, none taken up from it)",
    "local disposal rules set the real acceptance window",
)


@dataclass(frozen=True, eq=False, repr=False)
class HeatAndGas:
    """Heat and gas of the dose to the target."""

    released_kj: float
    batch: BatchHeat
    gas_mol: float
    gas_l: float
    vented_gas_l: float
    pH_before_venting: float | None
    warnings: list[str]
    assumptions: tuple[str, ...]

    @property
    def rise_k(self) -> float:
        return self.batch.rise_k


def _reagent_heats(reagent: Reagent, n_end: float, warnings: list[str],
                   assumptions: list[str]) -> float:
    """ΔH (kJ) of dissolving a solid or diluting a concentrate, for ``n_end`` mol."""
    dh = 0.0
    if reagent.is_solid:
        sol = thermo.heat_of_solution_kj(reagent.key)
        if sol is not None:
            dh += n_end * sol[0]
        elif n_end > 0:
            warnings.append(f"no heat-of-solution data for {reagent.key}: the heat of "
                            "dissolving it is not included")
        assumptions.append("the volume of the solid reagent is neglected")
    if reagent.form == "concentrate":
        dil = thermo.dilution_heat_kj(reagent.key, reagent.mass_percent)
        if dil is not None:
            dh += n_end * dil[0]
        else:
            warnings.append(f"no dilution-heat data for {reagent.describe()}: its heat of "
                            "dilution is not estimated, so the heat is underestimated")
    return dh


def heat_and_gas(reagent: Reagent, catalog, sample_volume_l: float, temperature_c: float,
                 dosing, target: tuple, start: tuple, fresh_pH: float | None,
                 safe_c: float | None = None, safe_from: str = "", *,
                 metals_dh_kj: float = 0.0) -> HeatAndGas:
    """The heat released by the dose to the target, what it does to the batch, and the CO2.

    ``target`` is ``(speciation, index, volume_l)`` of the batch at the target, ``start``
    the same for the sample before any reagent; ``dosing`` the plan's
    :class:`~carboy.model.dosing.Dosing`; ``fresh_pH`` the pH right after the addition
    (carbonate only).  ``safe_c`` the safe temperature (default carboy's).
    ``metals_dh_kj`` is added to ΔH: the metal hydroxides' own heat of precipitation
    against their OH- counted as water formed (:mod:`~carboy.model.plan_metals`).
    """
    res, i_tp, vol = target
    n_end = dosing.target_mol
    h_final = thermo.state_enthalpy_kj(res, np.array([i_tp]), np.array([vol]), catalog)[0]
    h_start = thermo.state_enthalpy_kj(start[0], np.array([start[1]]), np.array([start[2]]),
                                       catalog)[0]
    gas_mol, vented_gas_mol = dosing.co2_lost_mol(n_end)
    dh = h_final - h_start - n_end * thermo.reagent_enthalpy_kj(reagent, catalog)
    dh += vented_gas_mol * thermo.co2_degassing_kj() + metals_dh_kj
    warnings: list[str] = []
    extra: list[str] = []
    dh += _reagent_heats(reagent, n_end, warnings, extra)
    sample_g = sample_volume_l * 1000.0 * water.density_g_cm3(temperature_c)
    reagent_g = reagent.mass_g(n_end)
    species = dict(zip(res.species_labels, res.species_molar[i_tp].tolist()))
    charges = dict(zip(res.species_labels, res.species_charges))
    cp = batch_heat_capacity(species, charges, vol, sample_g + reagent_g, temperature_c)
    batch = assess(-dh, sample_g, reagent_g, cp, temperature_c, safe_c, safe_from)
    conditions = gas.gas_conditions(temperature_c)
    assumptions = [a.format(conditions=conditions, cp=cp.note()) for a in ASSUMPTIONS] + extra
    vm = gas.molar_volume_l(temperature_c, gas.gas_pressure_kpa())
    return HeatAndGas(float(-dh), batch, gas_mol, float(gas_mol * vm),
                      float(vented_gas_mol * vm), fresh_pH, warnings, tuple(assumptions))
