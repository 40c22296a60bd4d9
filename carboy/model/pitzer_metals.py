"""Calcium and magnesium under the specific-interaction (Pitzer) model.

The solver's metal path (``solver/metal_terms``, ``metals.py``) decides hydrolysis and
solids by saturation with Davies coefficients.  The Pitzer parameter set (HMW 1984 as
PHREEQC's pitzer.dat carries it) covers Ca2+ and Mg2+ as ions: binary β0, β1, β2, Cφ
with chloride, sulfate, bisulfate, hydroxide and bicarbonate, θ and ψ with the other
ions, and MgOH+ as its one hydrolysis species (``outer.PITZER_PAIRS``; the set has no
CaOH+).  So the Pitzer path takes them as spectator ions (a layout compiled with
``metals=False``), with their hydroxides (portlandite, brucite: :func:`hydroxides`) and
the 1:1 calcium salts of a ligand system in the dose (gypsum, brushite: :func:`salts`;
metals.toml's solubility products) present or absent by saturation at Pitzer
activities (``solver.pitzer_one``, ``solver.pitzer_salts``), and reports them as the
metal path does: dissolved totals, each solid precipitated, the hydroxide the metals
hold, and the saturation index of every solid the metal path knows (0 where present).

Where some point of a batch is saturated with a solid this path does not settle (fluorite,
two ligands per cation; a second salt of the same cation; any solid on the held-species
path), the whole batch falls back to the metal path with the Davies equation, and says
so (:data:`SOLID_FALLBACK`).  Other modelled metals (Zn2+, Cu2+, Al3+, ...) have no
specific-interaction parameters here.
"""

from __future__ import annotations

import dataclasses
import math
import re

import numpy as np

from carboy.model.water import PKW25

PITZER_METALS = frozenset({"Ca+2", "Mg+2"})
"""The modelled metal ions the specific-interaction parameters cover."""
SOLID_MIN = 1e-12
"""A hydroxide amount below this share of its metal's total is rounding, not a solid."""
SATURATION_TOL = 1e-6
"""A solid counts as saturated above this saturation index (log10)."""
SOLID_FALLBACK = ("{solids} would precipitate: the specific-interaction path settles only "
                  "the calcium and magnesium hydroxides and 1:1 calcium salts, so the "
                  "metals' solids are settled with the Davies equation (outside its range "
                  "above 0.5 mol/kg)")
_HYDRATE = re.compile(r"\.(\d*)H2O$")


def pitzer_takes(lay) -> bool:
    """True when every modelled metal of the layout is one the parameters cover."""
    ml = getattr(lay, "metals", None)
    return ml is None or set(ml.keys) <= PITZER_METALS


def _hydrate_water(formula: str) -> int:
    m = _HYDRATE.search(formula)
    return 0 if m is None else int(m.group(1) or 1)


def _log_activity(res, label: str) -> np.ndarray:
    """(N,) log10 of the molal activity of ``label`` in a Pitzer result (-inf if absent)."""
    if label not in res.species_labels:
        return np.full(len(res), -np.inf)
    i = res.species_labels.index(label)
    molal = res.species_molar[:, i] / res.model_part.water_kg_per_l
    with np.errstate(divide="ignore"):
        return np.log10(molal) + res.model_part.log_gamma[:, i]


def _ligand_label(catalog, system: str, index: int) -> str | None:
    sysm = catalog.systems.get(system)
    return None if sysm is None else sysm.species[index]


def saturation(res, ml, catalog) -> np.ndarray:
    """(N, P) log10(IAP/K) of each solid of ``ml.solids`` from a Pitzer result ``res``
    that keeps the metals as ions (molal activities, a_w for hydrates)."""
    data = ml.data
    log_aw = np.log10(res.model_part.water_activity)
    log_oh = _log_activity(res, "OH-")
    out = np.full((len(res), len(ml.solids)), -np.inf)
    by_name = {s.name: s for s in data.ligand_solids}
    for p, name in enumerate(ml.solids):
        hyd = next((m for m in data.metals.values() if m.solid.name == name), None)
        if hyd is not None:
            z = hyd.charge
            out[:, p] = (_log_activity(res, hyd.key) + z * log_oh
                         - (hyd.solid.log_ks - z * PKW25))
            continue
        s = by_name[name]
        label = _ligand_label(catalog, s.ligand_system, s.ligand_index)
        if label is None:
            continue
        iap = (s.cation_count * _log_activity(res, s.cation)
               + s.ligand_count * _log_activity(res, label)
               + s.oh_count * log_oh + _hydrate_water(s.formula) * log_aw)
        out[:, p] = iap - s.log_ksp
    return out


def hydroxides(ml) -> tuple:
    """(cation label, z, log10 Ksp of M(OH)z = M + z OH-) of each metal's hydroxide, for
    the Pitzer paths that let it precipitate (``solver.pitzer_one``)."""
    out = []
    for key in ml.keys:
        m = ml.data.metals[key]
        out.append((key, m.charge, m.solid.log_ks - m.charge * PKW25))
    return tuple(out)


def settled_salts(ml) -> list:
    """The 1:1 salts in the dose (gypsum, brushite) whose cation has no other such salt
    with a ligand system of this layout: the salts the Pitzer paths settle."""
    linked = {lk.key for lk in ml.ligands}
    found = [s for s in ml.data.ligand_solids
             if s.in_dose and s.cation in ml.keys and s.ligand_system in linked
             and s.cation_count == 1 and s.ligand_count == 1 and s.oh_count == 0]
    return [s for s in found if sum(o.cation == s.cation for o in found) == 1]


def salts(ml, catalog) -> tuple:
    """(cation, system key, ligand label, log10 Ksp, waters of hydration) of each of
    :func:`settled_salts`, for the Pitzer paths (``solver.pitzer_salts``)."""
    return tuple((s.cation, s.ligand_system,
                  _ligand_label(catalog, s.ligand_system, s.ligand_index), s.log_ksp,
                  _hydrate_water(s.formula)) for s in settled_salts(ml))


def in_dose(ml) -> np.ndarray:
    """(P,) True for each solid of ``ml.solids`` the metal path lets precipitate."""
    data = ml.data
    hydroxides = {m.solid.name for m in data.metals.values()}
    dosed = {s.name for s in data.ligand_solids if s.in_dose}
    return np.array([n in hydroxides or n in dosed for n in ml.solids], dtype=bool)


def saturated_solids(si: np.ndarray, ml) -> tuple[str, ...]:
    """The solids (that take part in the dose) saturated at some point."""
    hit = (si > SATURATION_TOL).any(axis=0) & in_dose(ml)
    return tuple(n for n, h in zip(ml.solids, hit.tolist()) if h)


def with_metal_fields(res, ml, si: np.ndarray):
    """``res`` (a Pitzer result with the metals as ions) with the metal path's fields:
    dissolved totals (the free ion and MgOH+), each hydroxide precipitated (the total
    less the dissolved), the hydroxide the metals hold (MgOH+ and the solids)."""
    labels = res.species_labels
    col = {lab: i for i, lab in enumerate(labels)}
    n = len(res)
    dissolved = np.zeros((n, len(ml.keys)))
    oh = np.zeros(n)
    solids = np.zeros((n, len(ml.solids)))
    settled = settled_salts(ml)
    for k, key in enumerate(ml.keys):
        metal = ml.data.metals[key]
        for s in metal.species:   # the free ion first (n = 0)
            if s.label in col:
                dissolved[:, k] += res.species_molar[:, col[s.label]]
                oh += s.n * res.species_molar[:, col[s.label]]
        total = res.batch.totals[:, ml.cols[k]]
        held = total - dissolved[:, k]
        for s in settled:   # a salt: what its ligand system lost
            if s.cation == key and s.ligand_system in res.system_keys:
                i = res.system_keys.index(s.ligand_system)
                lost = res.batch.totals[:, res.batch.keys.index(s.ligand_system)] \
                    - res.system_totals_molar[:, i]
                amount = np.where(lost > SOLID_MIN * total, lost / s.ligand_count, 0.0)
                solids[:, ml.solids.index(s.name)] = amount
                held = held - s.cation_count * amount
        solid = np.where(held > SOLID_MIN * total, held, 0.0)
        solids[:, ml.solids.index(metal.solid.name)] = solid
        oh += metal.charge * solid
    return dataclasses.replace(
        res, metal_keys=ml.keys, dissolved_metal_molar=dissolved, metal_oh_molar=oh,
        solid_names=ml.solids, solids_molar=solids,
        saturation_indices=np.where(solids > 0, 0.0, np.where(np.isfinite(si), si, -math.inf)))


__all__ = ["PITZER_METALS", "SATURATION_TOL", "SOLID_FALLBACK", "hydroxides", "in_dose",
           "pitzer_takes", "salts", "settled_salts", "saturated_solids", "saturation", "with_metal_fields"]
