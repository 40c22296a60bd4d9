"""Heat of a neutralization: enthalpy bookkeeping over species, solution and dilution heats.

Every state is given an enthalpy from its species, relative to water, free H+ and the
fully protonated form of each system (all at infinite dilution, 25 °C):

* species j of a system (j protons lost) carries ``Σ_{i<j} ΔH_i`` (the catalog's
  ionization enthalpies);
* OH- carries ``-ΔH_w`` = +55.815 kJ/mol, from H2O(l) -> H+ + OH- (``ΔH_w`` = -55.815 is
  the heat of H+ + OH- -> H2O, DERIVED from CODATA);
* H+, water and spectator ions carry 0;
* CO2 that leaves as gas carries +19.75 kJ/mol (CO2(aq) -> CO2(g), DERIVED from CODATA).

The reaction heat is then ``H(final) - H(sample) - n·H(reagent)`` plus the heat of
solution of a solid reagent (every solid reagent: NaOH, KOH, LiOH, Na2CO3, K2CO3, NaHCO3,
Ca(OH)2, Mg(OH)2) and the heat of diluting a concentrated reagent (the H2SO4, HCl, HNO3
... tables; NaOH, NH3 and H3PO4 from Koretsky's Table 6.1; none for KOH).  Proton transfer is thereby counted exactly: e.g.
HA + OH- -> A- + H2O gives ``ΔH_a + ΔH_w``, and H+ + HCO3- -> CO2(g) + H2O gives
``-ΔH_1 + 19.75`` = +10.6 kJ/mol.  The reagent enters in its nominal formula state
(Na2CO3 as CO3 2-, NH3 as NH3); its own slight hydrolysis in the bottle is neglected.

The heat *released* (positive when the batch warms) is ``-ΔH``; the temperature rise
assumes an adiabatic batch, with the batch's own heat capacity where
:mod:`carboy.model.heat_capacity` has parameters for its solutes (water's otherwise).
"""

from __future__ import annotations

import functools
import math
from collections.abc import Mapping
from typing import TYPE_CHECKING

import numpy as np

from carboy.model import water
from carboy.model.catalog_files import default_catalog
from carboy.model.planning_data import load_planning

if TYPE_CHECKING:
    from carboy.model.reagents import Reagent
    from carboy.model.speciation import BatchSpeciation


@functools.lru_cache(maxsize=1)
def planning_constants() -> Mapping:
    """The packaged ``planning.toml``, validated (constants with sources; see that file)."""
    return load_planning()


def water_formation_kj() -> float:
    """ΔH of H+ + OH- -> H2O(l), kJ/mol (DERIVED from CODATA: -55.815)."""
    return float(planning_constants()["water_formation"]["dh_kj"])


def co2_degassing_kj() -> float:
    """ΔH of CO2(aq) -> CO2(g), kJ/mol (DERIVED from CODATA: +19.75)."""
    return float(planning_constants()["co2_degassing"]["dh_kj"])


def species_enthalpies(system) -> tuple[float, ...]:
    """Enthalpy of each species of ``system`` relative to its fully protonated form, kJ/mol."""
    out = [0.0]
    for dh in system.dh_kj:
        out.append(out[-1] + float(dh))
    return tuple(out)


def reagent_enthalpy_kj(reagent: Reagent, catalog) -> float:
    """Enthalpy of one mol of reagent in its nominal formula state, kJ.

    The formula unit's ions fix how many protons each system has lost (Na2CO3:
    carbonate as CO3 2-); positive charge the systems leave unbalanced is OH- (NaOH).
    """
    comp = reagent.compound.composition
    remaining = sum(catalog.ions[k].charge * c for k, c in comp.items() if k in catalog.ions)
    h = 0.0
    for key, count in comp.items():
        if key in catalog.ions:
            continue
        s = catalog.systems[key]
        d = -remaining / count
        d = int(round(min(max(d, s.bottom_charge), s.top_charge)))
        j = s.top_charge - d
        h += count * species_enthalpies(s)[j]
        remaining += count * d
    if remaining > 0:
        h += remaining * -water_formation_kj()
    return h


def state_enthalpy_kj(res: BatchSpeciation, idx: np.ndarray, volume_l: np.ndarray,
                      catalog) -> np.ndarray:
    """Enthalpy (kJ) of the solved states ``idx`` of ``res``, of volumes ``volume_l``."""
    h = np.zeros(len(idx))
    for k, key in enumerate(res.system_keys):
        s = catalog.systems[key]
        hs = np.asarray(species_enthalpies(s)[s.strong_steps:])
        labels = res.system_labels[k]
        cols = [res.species_labels.index(lab) for lab in labels]
        conc = res.species_molar[idx][:, cols]
        h += (conc @ hs[: len(labels)]) * volume_l
    oh = res.species_molar[idx, res.species_labels.index("OH-")]
    return h + oh * volume_l * -water_formation_kj()


def heat_of_solution_kj(compound_key: str) -> tuple[float, str] | None:
    """Heat of solution of a solid to infinite dilution (kJ/mol) and its source, if known."""
    rec = planning_constants()["heat_of_solution"].get(compound_key)
    if rec is None:
        return None
    return float(rec["dh_kj"]), f"{rec['source']} [{rec['status']}]"


def dilution_heat_kj(compound_key: str, mass_percent: float) -> tuple[float, str] | None:
    """Enthalpy change (kJ per mol of solute) on diluting a concentrate to infinite dilution.

    Negative means heat released.  ``None`` where no table is held (e.g. KOH) or the
    strength lies above the table.

    Inside a table the value is interpolated linearly (in n mol H2O per mol for the
    ``n_water`` tables, in molality for the CRC acid tables).  At the dilute end nothing is
    clamped: below the first row of a table that does not reach infinite dilution (m = 0,
    or n = infinity) the value goes to 0 as sqrt(molality), the Debye–Hückel limiting form
    of the relative apparent molar enthalpy (an assumption; the heats there are small), so
    a solution that is already very dilute releases nearly nothing on further dilution.  An
    ``n_water`` table without ``dh_inf_kj`` neglects the heat beyond its last row.  Above
    the last molality row a table may give ``pure_released_kj`` (the pure liquid diluted to
    infinite dilution); when its last row is the n = 1 row (55.506 mol/kg) the value is
    interpolated linearly in n between the pure liquid (n = 0) and that row.
    """
    rec = planning_constants()["dilution"].get(compound_key)
    if rec is None:
        return None
    note = f"{rec['source']} [{rec['status']}]"
    w = mass_percent / 100.0
    if w <= 0.0:
        return 0.0, note
    m_solute = default_catalog().compound(compound_key).molar_mass_g_mol
    if rec["basis"] == "n_water":
        n = (1.0 - w) / water_MW() / (w / m_solute) if w < 1.0 else 0.0
        return _n_water_dilution(rec, n, note)
    molality = (w / m_solute) / ((1.0 - w) / 1000.0) if w < 1.0 else float("inf")
    ms, released = rec["m"], rec["released_kj"]
    if ms[-1] < molality <= ms[-1] * (1.0 + 1e-9):
        molality = ms[-1]  # the last row itself, up to rounding of the mass percent
    if molality > ms[-1]:
        pure = rec.get("pure_released_kj")
        if pure is None or not math.isclose(ms[-1], 1000.0 / water_MW(), rel_tol=1e-3):
            return None
        n = (1.0 - w) / water_MW() / (w / m_solute) if w < 1.0 else 0.0
        n_last = 1000.0 / water_MW() / ms[-1]
        value = float(pure) + (float(released[-1]) - float(pure)) * n / n_last
        return -value, note + " (above the last row: interpolated in n towards the pure liquid)"
    if molality < ms[0]:
        return -float(released[0]) * math.sqrt(molality / ms[0]), note
    return -float(np.interp(molality, ms, released)), note


EXTRAPOLATE_BELOW_FIRST_ROW = 0.9
"""An ``n_water`` table that does not start at n = 0 is extrapolated linearly from its first
two rows down to this fraction of its first n (a concentrate slightly stronger than its
first row, e.g. 85 % H3PO4 at n = 0.96 against a first row at n = 1); below: no value."""


def _n_water_dilution(rec: Mapping, n: float, note: str) -> tuple[float, str] | None:
    """ΔH (kJ/mol) from n mol H2O per mol of solute to infinite dilution, by an ``n_water``
    table (see :func:`dilution_heat_kj`)."""
    ns, hs = [float(x) for x in rec["n"]], [float(x) for x in rec["dh_kj"]]
    dh_inf = rec.get("dh_inf_kj")
    end = float(dh_inf) if dh_inf is not None else hs[-1]
    if dh_inf is None:
        note += " (the heat of diluting beyond the last row is neglected)"
    if n < ns[0]:
        if n < EXTRAPOLATE_BELOW_FIRST_ROW * ns[0] or len(ns) < 2:
            return None
        slope = (hs[1] - hs[0]) / (ns[1] - ns[0])
        return end - (hs[0] + slope * (n - ns[0])), note + " (just above its first row)"
    if n > ns[-1]:
        h_n = end + (hs[-1] - end) * math.sqrt(ns[-1] / n) if dh_inf is not None else end
    else:
        h_n = float(np.interp(n, ns, hs))
    return end - h_n, note


def dilution_understated(compound_key: str) -> tuple[float, float, str] | None:
    """``(from %, to %, note)`` where the dilution table of a compound understates the heat.

    ``planning.toml [dilution.KEY] understated``: between two sparse rows linear
    interpolation gives less heat than released; None where the table has no such range.
    """
    rec = planning_constants()["dilution"].get(compound_key, {}).get("understated")
    if rec is None:
        return None
    return float(rec["from_percent"]), float(rec["to_percent"]), str(rec["note"])


def water_MW() -> float:  # noqa: N802 (chemical symbol)
    return 18.01528


def temperature_rise_k(heat_released_kj: float, mass_g: float, temperature_c: float,
                       cp_j_gk: float | None = None) -> float:
    """Adiabatic temperature rise of ``mass_g`` of batch that takes up ``heat_released_kj``.

    ``ΔT = Q / (m c_p)`` with ``cp_j_gk`` (J/(g K)), by default that of water at
    ``temperature_c``; heat taken up (negative) gives a fall.
    """
    if mass_g <= 0:
        return 0.0
    cp = water.specific_heat_j_gk(temperature_c) if cp_j_gk is None else cp_j_gk
    return heat_released_kj * 1000.0 / (mass_g * cp)
