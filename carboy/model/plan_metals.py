"""The planner's metals step: the sludge, the metal left dissolved and what the metals cost.

The solver has settled, at every state of a plan, each modelled metal's hydrolysis and
which solids are present (:mod:`carboy.model.solver.metal_terms`).  At the state the
dose to the target leaves, this step reads: the sludge (each solid present, mol and dry
mass in the batch), the metal left dissolved (mg/L of each metal, free ion and hydroxo
complexes), the hydroxide the metals hold (mol: what they cost in the dose), and the
cations the sample holds that have no metal data (a warning names them).  The solids
the solver found join the plan's saturation list as expected (SI 0: present), so the
sludge caution names them.
"""

from __future__ import annotations

import dataclasses
import re
from dataclasses import dataclass

import numpy as np

from carboy.model import numbers
from carboy.model.catalog import molar_mass_of
from carboy.model.metal_index import unmodelled_cations
from carboy.model.precipitates import Precipitate

ASSUMPTION = ("metals: hydrolysis and solids at 25 °C constants (mononuclear hydroxo "
              "complexes; fresh, amorphous hydroxides; chloride, sulfate and polynuclear "
              "complexes not modelled); a solid is present where the batch is saturated "
              "with it, and its hydroxide is counted in the doses; the heat counts each "
              "hydroxide's own heat of precipitation where metals.toml holds it, and the "
              "OH- of dissolved hydroxo complexes (and of a hydroxide without a value) as "
              "if it formed water")


@dataclass(frozen=True, eq=False, repr=False)
class SludgeItem:
    """One solid present at the target, in the whole batch."""

    solid: str
    formula: str
    mol: float
    dry_mass_g: float

    def to_dict(self) -> dict:
        return {"solid": self.solid, "formula": self.formula, "mol": self.mol,
                "dry_mass_g": self.dry_mass_g}


@dataclass(frozen=True, eq=False, repr=False)
class MetalReport:
    """What the metals step gives the plan."""

    sludge: tuple[SludgeItem, ...] = ()
    dissolved_mg_l: dict = dataclasses.field(default_factory=dict)
    hydroxide_mol: float = 0.0
    unmodelled: tuple[str, ...] = ()
    precipitates: tuple[Precipitate, ...] = ()
    warnings: tuple[str, ...] = ()
    assumptions: tuple[str, ...] = ()
    precipitation_dh_kj: float = 0.0
    """What the hydroxides' own heat of precipitation changes in the batch's ΔH, kJ, against
    counting their OH- as water formed (:func:`precipitation_heat`)."""


def precipitation_heat(sludge: tuple[SludgeItem, ...], data=None
                       ) -> tuple[float, tuple[str, ...]]:
    """(ΔH correction kJ, notes) for the hydroxides in ``sludge``.

    The heat step counts every OH- the metals take as if it formed water (z ΔH_w per mol
    of solid).  A hydroxide's own precipitation, M(z+) + z OH- = solid, has ΔH =
    -ΔH_acid + z ΔH_w, with ΔH_acid that of solid + z H+ = M(z+) + H2O's (metals.toml
    ``dh_acid_kj``); so the correction is -ΔH_acid per mol of solid.  The notes cite
    each value used and name the solids without one (left as water formed)."""
    from carboy.model.metal_data import metal_data  # loaded with the metals (metal_index)

    by_name = {m.solid.name: m.solid for m in (data or metal_data()).metals.values()}
    dh, notes = 0.0, []
    for item in sludge:
        solid = by_name.get(item.solid)
        if solid is None:
            continue          # a salt (gypsum, fluorite ...): no hydroxide counted
        if solid.dh_acid_kj is None:
            notes.append(f"{item.solid}: no heat of precipitation held, its OH- counted as "
                         "water formed (an overestimate)")
            continue
        dh -= item.mol * solid.dh_acid_kj
        notes.append(f"{item.solid}: heat of precipitation from ΔH {solid.dh_acid_kj:g} "
                     f"kJ/mol of its reaction with acid, {solid.dh_source}")
    return dh, tuple(notes)


def element_of(ion_key: str) -> str:
    """``"Zn+2"`` -> ``"Zn"``: the element a metal ion key names."""
    found = re.match(r"[A-Z][a-z]?", ion_key)
    return found.group(0) if found else ion_key


def _unmodelled_warning(keys: tuple[str, ...]) -> str:
    return (f"no hydrolysis or solubility data for {', '.join(keys)}: "
            f"{'its' if len(keys) == 1 else 'their'} hydrolysis and any solid "
            f"{'it forms' if len(keys) == 1 else 'they form'} are not counted in the dose or "
            "the sludge; treat the dose as a lower bound and measure the pH")


def _sources() -> dict[str, str]:
    from carboy.model.metal_data import metal_data

    data = metal_data()
    out = {m.solid.name: m.solid.source for m in data.metals.values()}
    out.update({s.name: s.source for s in data.ligand_solids})
    return out


def _merged(found: tuple[Precipitate, ...], res, i: int) -> tuple[Precipitate, ...]:
    """The saturation list with the solver's solids: a solid present at point ``i`` is
    expected (it settles at saturation); one the list lacks is added."""
    if not res.solid_names:
        return found
    amount = dict(zip(res.solid_names, res.solids_molar[i].tolist()))
    si = dict(zip(res.solid_names, res.saturation_indices[i].tolist()))
    note = "present at the target: counted in the dose and the sludge"
    out = []
    for p in found:
        if amount.get(p.solid, 0.0) > 0:
            p = dataclasses.replace(p, expected=True, note="; ".join(filter(None, (p.note,
                                                                                    note))))
        out.append(p)
    listed = {p.solid for p in found}
    sources = _sources()
    for name in res.solid_names:
        if name not in listed and (amount[name] > 0 or np.isfinite(si[name])):
            out.append(Precipitate(name, float(si[name]), amount[name] > 0, sources[name],
                                   note if amount[name] > 0 else "25 °C constant"))
    return tuple(out)


def dissolved_totals_mol(res, i: int, volume_l: float) -> dict[str, float]:
    """What stays dissolved of each component at point ``i`` of the solved batch ``res``
    (volume ``volume_l`` L), mol: a modelled metal's dissolved total, a system's solved
    total (a ligand a solid has taken is not in it), every other ion's total."""
    batch = res.batch
    out = {k: float(c) * volume_l for k, c in zip(batch.keys, batch.totals[i].tolist())}
    out.update({k: float(c) * volume_l
                for k, c in zip(res.system_keys, res.system_totals_molar[i].tolist())})
    if res.metal_keys:
        out.update({k: float(c) * volume_l
                    for k, c in zip(res.metal_keys, res.dissolved_metal_molar[i].tolist())})
    return out


def metals_at_target(res, i: int, volume_l: float, totals, catalog,
                     found: tuple[Precipitate, ...]) -> MetalReport:
    """The metals of point ``i`` of the solved batch ``res`` (volume ``volume_l`` L), for
    a sample of ``totals`` (key -> mol/L); ``found`` is the plan's saturation list."""
    charges = {k: catalog.ions[k].charge for k in totals if k in catalog.ions}
    missing = unmodelled_cations(charges) if any(z > 0 for z in charges.values()) else ()
    warnings = (_unmodelled_warning(missing),) if missing else ()
    if not res.metal_keys:
        return MetalReport(unmodelled=missing, precipitates=found, warnings=warnings)
    from carboy.model.metals import solid_formulas  # a modelled metal is present

    formulas = solid_formulas()
    sludge = []
    for name, mol_l in zip(res.solid_names, res.solids_molar[i].tolist()):
        if mol_l > 0:
            formula, mass = formulas[name]
            sludge.append(SludgeItem(name, formula, mol_l * volume_l, mol_l * volume_l * mass))
    dissolved = {key: float(c) * molar_mass_of(element_of(key)) * 1000.0
                 for key, c in zip(res.metal_keys, res.dissolved_metal_molar[i].tolist())}
    dh, notes = precipitation_heat(tuple(sludge))
    return MetalReport(tuple(sludge), dissolved, float(res.metal_oh_molar[i]) * volume_l,
                       missing, _merged(found, res, i), warnings, (ASSUMPTION, *notes), dh)


def metal_lines(sludge: tuple[SludgeItem, ...], dissolved_mg_l: dict, hydroxide_mol: float,
                ph: float) -> tuple[tuple[str, str], ...]:
    """What a front end shows of the metals in the state the dose to the target leaves
    (at ``ph``), as (heading, text) lines: the sludge, the metal left dissolved and the
    metals' share of the dose (none without metals)."""
    lines = []
    for item in sludge:
        lines.append(("sludge", f"{item.solid}: {numbers.figures(item.mol, 3)} mol, about "
                                f"{numbers.mass(item.dry_mass_g)} dry, in the whole batch"))
    if dissolved_mg_l:
        left = ", ".join(f"{element_of(k)} {numbers.figures(v, 2)} mg/L"
                         for k, v in dissolved_mg_l.items())
        lines.append(("dissolved", f"at pH {ph:.2f}: {left} (free ion and hydroxo "
                                   "complexes)"))
    if hydroxide_mol > 0:
        lines.append(("metals' OH-", f"{numbers.figures(hydroxide_mol, 3)} mol of the dose "
                                     "goes into the metals' hydroxides"))
    return tuple(lines)
