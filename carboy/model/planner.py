"""The neutralization plan: how much reagent, the pH it leaves, heat, gas, solids, cautions.

Modelling choices (each stated in the output where it matters)
---------------------------------------------------------------
* **Every dissociable proton.**  For acid waste, the base that takes every system to
  its fully deprotonated form, from the charge-balance identity
  ``E = −(Σ_ions z·n + Σ_systems n·bottom_charge)`` (NaH2PO4 2, H3PO4 3; base already
  present counts against it).  For alkaline waste the mirror: the acid that takes every
  system to its fully protonated form, ``A = Σ_ions z·n + Σ_systems n·top_charge``
  (carbonate -> CO2, which leaves; NH3 -> NH4+; excess hydroxide).
  ``proton_equivalents_mol`` is +E (mol OH- needed) for acid waste and −A (mol H+
  needed, negative) for alkaline waste.  The full dose is that amount divided by the
  reagent's proton capacity (see ``reagents``).
* **Dose to a pH.**  The root of pH(n) = target on the amount n.  At a fixed pH the
  volume-weighted charge balance is linear in n, so the root is found exactly by
  :meth:`~carboy.model.gas.TitrationModel.amount_at_pH` (ionic strength iterated), then
  every dose is re-solved forward with the speciation solver in one batch; the plan
  reports the solver's pH.
* **CO2.**  Whenever carbonate is present, CO2(aq) beyond K_H·1 atm leaves as it forms
  and lost CO2 never returns: the carbonate kept at amount n is the total added minus
  the running maximum of the loss needed to bring CO2(aq) down to saturation.  After
  venting, CO2(aq) is held at K_H·pCO2(air) (an open-system solve).
* **Curve.**  ``curve_points`` amounts from 0 to 1.3 × the largest dose of interest,
  solved in one ``speciate_batch`` call; stages, equivalence points and doses in a
  second one.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from carboy.errors import InvalidInput
from carboy.model import cautions as caution_rules
from carboy.model import gas, thermo, water
from carboy.model.mixture import Mixture, MixtureBatch, titration_batch
from carboy.model.precipitates import Precipitate, saturation_indices
from carboy.model.reagents import Reagent
from carboy.model.speciation import ACTIVITY_MODELS, BatchSpeciation, speciate_batch

CURVE_SPAN = 1.3
HEAVY_METAL_IONS = frozenset({"Cu+2", "Zn+2", "Ni+2", "Pb+2", "Ag+"})
ORDINALS = ("1st", "2nd", "3rd", "4th", "5th", "6th")


@dataclass(frozen=True)
class Dose:
    """An amount of reagent and the state it leaves (``reagent_mol`` None: unreachable)."""

    reagent_mol: float | None
    reagent_volume_l: float | None
    reagent_mass_g: float | None
    pH: float | None
    final_volume_l: float | None
    target_pH: float | None = None

    @property
    def reachable(self) -> bool:
        return self.reagent_mol is not None

    def to_dict(self) -> dict:
        d = {"reagent_mol": self.reagent_mol, "reagent_volume_l": self.reagent_volume_l,
             "reagent_mass_g": self.reagent_mass_g, "pH": self.pH,
             "final_volume_l": self.final_volume_l}
        if self.target_pH is not None:
            d = {"target_pH": self.target_pH, **d}
        return d


@dataclass(frozen=True)
class Stage:
    index: int
    add_mol: float
    cumulative_mol: float
    add_volume_l: float | None
    add_mass_g: float
    pH_after: float

    def to_dict(self) -> dict:
        return dict(self.__dict__)


@dataclass(frozen=True)
class EquivalencePoint:
    reagent_mol: float
    pH: float
    system: str
    step: int
    label: str

    def to_dict(self) -> dict:
        return dict(self.__dict__)


@dataclass(frozen=True)
class Plan:
    """A neutralization plan; see the module docstring for the modelling choices."""

    sample: Mixture
    reagent: Reagent
    direction: str
    activity: str
    initial_pH: float
    proton_equivalents_mol: float
    breakdown: dict
    full: Dose
    to_target: Dose
    window: tuple[float, float]
    window_doses: tuple[Dose, Dose]
    bound_protons_at_target: dict
    heat_kj: float
    temperature_rise_c: float
    gas_l: float
    gas_mol: float
    gas_conditions: str
    vented_pH: float | None
    vent_pco2_atm: float | None
    pH_before_venting: float | None
    stages: tuple[Stage, ...]
    sensitivity_pH_per_percent: float
    curve: np.ndarray
    equivalence_points: tuple[EquivalencePoint, ...]
    precipitates: tuple[Precipitate, ...]
    cautions: tuple[caution_rules.Caution, ...]
    warnings: tuple[str, ...]
    hazards: frozenset[str]
    drain_plan: bool
    assumptions: tuple[str, ...] = ()
    vented_gas_l: float = 0.0
    curve_speciation: BatchSpeciation | None = field(default=None, repr=False, compare=False)
    curve_volume_l: np.ndarray | None = field(default=None, repr=False, compare=False)

    def to_dict(self) -> dict:
        lo, hi = self.window_doses
        return {
            "sample": {"totals_molar": dict(self.sample.totals), "volume_l": self.sample.volume_l,
                       "temperature_c": self.sample.temperature_c},
            "reagent": {"text": self.reagent.text, "understood": self.reagent.describe(),
                        "form": self.reagent.form},
            "direction": self.direction,
            "activity": self.activity,
            "initial_pH": self.initial_pH,
            "proton_equivalents_mol": self.proton_equivalents_mol,
            "breakdown": self.breakdown,
            "full": {k: v for k, v in self.full.to_dict().items() if k != "final_volume_l"}
            | {"final_volume_l": self.full.final_volume_l},
            "to_target": self.to_target.to_dict(),
            "window": {"low_pH": self.window[0], "high_pH": self.window[1],
                       "low": lo.to_dict(), "high": hi.to_dict(),
                       "note": "local disposal rules set the real acceptance window"},
            "bound_protons_at_target": self.bound_protons_at_target,
            "heat_kj": self.heat_kj,
            "temperature_rise_c": self.temperature_rise_c,
            "gas_l": self.gas_l,
            "gas_mol": self.gas_mol,
            "gas_conditions": self.gas_conditions,
            "vented_pH": self.vented_pH,
            "vent_pco2_atm": self.vent_pco2_atm,
            "pH_before_venting": self.pH_before_venting,
            "vented_gas_l": self.vented_gas_l,
            "stages": [s.to_dict() for s in self.stages],
            "sensitivity_pH_per_percent": self.sensitivity_pH_per_percent,
            "curve": self.curve.tolist(),
            "equivalence_points": [e.to_dict() for e in self.equivalence_points],
            "precipitates": [p.to_dict() for p in self.precipitates],
            "cautions": [c.to_dict() for c in self.cautions],
            "drain_plan": self.drain_plan,
            "hazards": sorted(self.hazards),
            "warnings": list(self.warnings),
            "assumptions": list(self.assumptions),
        }


# ----------------------------------------------------------------------------- helpers

def _check_ph(what: str, value) -> float:
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InvalidInput(what, value, "must be a number") from None
    if not math.isfinite(v) or not 0.0 <= v <= 14.0:
        raise InvalidInput(what, value, "must be a pH between 0 and 14")
    return v


def derived_hazards(sample: Mixture) -> frozenset[str]:
    """Hazard tags that follow from the composition alone."""
    tags = set()
    if "fluoride" in sample.totals:
        tags |= {"hf_type", "no_drain"}
    if "ClO4-" in sample.totals:
        tags |= {"perchloric", "oxidizer", "no_drain"}
    if "NO3-" in sample.totals:
        tags.add("oxidizer")
    if "chromate" in sample.totals:
        tags |= {"chromic", "heavy_metal", "oxidizer", "no_drain"}
    for key in ("cyanide", "sulfide"):
        if key in sample.totals:
            tags |= {key, "no_drain"}
    if any(k in HEAVY_METAL_IONS for k in sample.totals):
        tags |= {"heavy_metal", "no_drain"}
    return frozenset(tags)


def _charge_parts(sample: Mixture, catalog, which: str) -> dict:
    """Per-key contribution to Σ z n (ions) or n·top/bottom charge (systems), mol."""
    out = {}
    v = sample.volume_l
    for key, c in sample.totals.items():
        n = c * v
        if key in catalog.ions:
            out[key] = catalog.ions[key].charge * n
        else:
            s = catalog.systems[key]
            out[key] = (s.top_charge if which == "top" else s.bottom_charge) * n
    return out


def _label(key: str, catalog) -> str:
    if key in catalog.strong_acid_by_anion:
        return catalog.strong_acid_by_anion[key]
    if key in catalog.systems:
        return catalog.systems[key].name
    return catalog.ions[key].name if key in catalog.ions else key


def _reagent_enthalpy_kj(reagent: Reagent, catalog) -> float:
    """Enthalpy of one mol of reagent in its nominal formula state (see thermo)."""
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
        h += count * thermo.species_enthalpies(s)[j]
        remaining += count * d
    if remaining > 0:
        h += remaining * -thermo.water_formation_kj()
    return h


def _state_enthalpy_kj(res: BatchSpeciation, idx: np.ndarray, volume_l: np.ndarray,
                       catalog) -> np.ndarray:
    """Enthalpy (kJ) of solved states relative to the reference of ``thermo``."""
    h = np.zeros(len(idx))
    for k, key in enumerate(res.system_keys):
        s = catalog.systems[key]
        hs = np.asarray(thermo.species_enthalpies(s)[s.strong_steps:])
        labels = res.system_labels[k]
        cols = [res.species_labels.index(lab) for lab in labels]
        conc = res.species_molar[idx][:, cols]
        h += (conc @ hs[: len(labels)]) * volume_l
    oh = res.species_molar[idx, res.species_labels.index("OH-")]
    return h + oh * volume_l * -thermo.water_formation_kj()


# ----------------------------------------------------------------------------- the plan

def plan_neutralization(sample: Mixture, reagent: Reagent, *, target_pH: float = 7.0,  # noqa: N803
                        window: tuple[float, float] = (6.0, 9.0), activity: str = "davies",
                        catalog=None, hazards: frozenset[str] = frozenset(),
                        curve_points: int = 400) -> Plan:
    """Plan the neutralization of ``sample`` with ``reagent``.

    Parameters
    ----------
    sample : the waste, with ``volume_l`` and ``temperature_c``.
    reagent : from :func:`~carboy.model.reagents.parse_reagent`.
    target_pH : pH to aim for, 0–14.
    window : (low, high) acceptance window, 0–14, low < high (local rules set the real one).
    activity : ``"davies"`` or ``"ideal"``.
    hazards : hazard tags known about the sample (the store passes its additions' tags).
    curve_points : points of the pH curve (>= 20).

    Raises
    ------
    InvalidInput for a bad target, window, volume or a reagent of the wrong direction.
    """
    if catalog is None:
        from carboy.model.catalog import default_catalog

        catalog = default_catalog()
    target = _check_ph("target pH", target_pH)
    try:
        lo_w, hi_w = (float(window[0]), float(window[1]))
    except (TypeError, ValueError, IndexError):
        raise InvalidInput("window", window, "expected (low pH, high pH)") from None
    lo_w, hi_w = _check_ph("window low pH", lo_w), _check_ph("window high pH", hi_w)
    if not lo_w < hi_w:
        raise InvalidInput("window", window, "the low pH must be below the high pH")
    if activity not in ACTIVITY_MODELS:
        raise InvalidInput("activity model", activity, f"choose one of {', '.join(ACTIVITY_MODELS)}")
    if sample.volume_l is None:
        raise InvalidInput("sample volume", None, "a plan needs the sample's volume")
    if not sample.totals:
        raise InvalidInput("sample", dict(sample.totals), "holds nothing to neutralize")
    if int(curve_points) < 20:
        raise InvalidInput("curve points", curve_points, "need at least 20")
    curve_points = int(curve_points)
    consts = thermo.planning_constants()
    thresholds = consts["thresholds"]
    t_c = sample.temperature_c
    water.check_temperature(t_c)

    comp = dict(reagent.compound.composition)
    model = gas.TitrationModel(sample, comp, reagent.l_per_mol, activity=activity,
                               catalog=catalog)
    initial_pH = float(model.forward([0.0]).pH[0])
    direction = "base" if initial_pH < target else "acid"

    # ---- direction of the reagent
    capacity = reagent.base_capacity if direction == "base" else reagent.acid_capacity
    own = gas.TitrationModel(Mixture.from_compounds(
        [(reagent.compound, reagent.conc_molar or 1.0)], volume_l=1.0, temperature_c=t_c),
        {}, 0.0, activity=activity, catalog=catalog)
    own_pH = float(own.forward([0.0]).pH[0])
    wrong = capacity <= 0 or (own_pH <= target if direction == "base" else own_pH >= target)
    if wrong:
        need = "a base" if direction == "base" else "an acid"
        raise InvalidInput(
            "reagent", reagent.text or reagent.key,
            f"the sample is at pH {initial_pH:.2f} and needs {need} to reach pH {target:g}; "
            f"{reagent.key} (its own pH about {own_pH:.1f}) cannot move it that way")

    # ---- every dissociable proton
    if direction == "base":
        parts = _charge_parts(sample, catalog, "bottom")
        breakdown = {_label(k, catalog): -v for k, v in parts.items()}
        equivalents = -sum(parts.values())
        n_full = max(equivalents, 0.0) / capacity
        proton_eq = equivalents
    else:
        parts = _charge_parts(sample, catalog, "top")
        breakdown = {_label(k, catalog): v for k, v in parts.items()}
        equivalents = sum(parts.values())
        n_full = max(equivalents, 0.0) / capacity
        proton_eq = -equivalents

    # ---- doses to the target and the window edges
    targets = np.array([target, lo_w, hi_w])
    carbonate = model.carb is not None
    s_sat = gas.henry_co2_molar_per_atm(t_c) * 1.0
    pco2 = gas.air_pco2_atm() if carbonate else None
    s_air = gas.henry_co2_molar_per_atm(t_c) * pco2 if carbonate else None
    if not carbonate:
        doses = model.amount_at_pH(targets)
        span = CURVE_SPAN * max(n_full, np.nanmax(np.r_[doses, 0.0]))
        span = span if span > 0 else 1e-6
        grid = np.linspace(0.0, span, curve_points)
        fresh_loss = None
    else:
        doses, grid, fresh_loss = _vented_doses(model, targets, n_full, s_sat, s_air,
                                                curve_points)
    # doses on the wrong side of the start are unreachable in this direction
    for i, ph_i in enumerate(targets):
        if (direction == "base" and ph_i <= initial_pH) or (
                direction == "acid" and ph_i >= initial_pH):
            doses[i] = 0.0

    def batch_at(n, *, vented=True):
        """The batch after adding ``n``: right after addition, or after venting."""
        n = np.asarray(n, dtype=float)
        b, vol = titration_batch(sample, comp, n, reagent.l_per_mol)
        if fresh_loss is not None:
            kept = _kept_carbonate_mol(model, n, fresh_loss, s_air if vented else None)
            tot = b.totals.copy()
            tot[:, b.keys.index(gas.CARBONATE)] = kept / vol
            b = MixtureBatch(b.keys, tot, b.temperature_c)
        return b, vol

    cb, cvol = batch_at(grid)
    curve_res = speciate_batch(cb, activity=activity, catalog=catalog)
    curve = np.column_stack([grid, curve_res.pH])

    # ---- the point batch: doses, stages, sensitivity, equivalence points
    n_t = doses[0]
    fracs = np.asarray(consts["stages"]["cumulative_fractions"], dtype=float)
    eqs = _equivalence_amounts(sample, catalog, direction, capacity, grid[-1])
    pts = [n_full]
    pts += [d if np.isfinite(d) else 0.0 for d in doses]
    reach_t = bool(np.isfinite(n_t))
    base_t = n_t if reach_t else 0.0
    pts += list(fracs * base_t) + [0.99 * base_t, 1.01 * base_t]
    pts += [e[0] for e in eqs]
    pb, pvol = batch_at(np.asarray(pts))
    pres = speciate_batch(pb, activity=activity, catalog=catalog)
    ph_pts = pres.pH

    def dose(i_pt, n, tgt=None):
        if n is None or not np.isfinite(n):
            return Dose(None, None, None, None, None, tgt)
        return Dose(float(n), reagent.volume_l(n), reagent.mass_g(n), float(ph_pts[i_pt]),
                    float(pvol[i_pt]), tgt)

    full = dose(0, n_full)
    to_target = dose(1, doses[0], target)
    window_doses = (dose(2, doses[1], lo_w), dose(3, doses[2], hi_w))
    i_st = 4
    stages = []
    prev = 0.0
    for j, f in enumerate(fracs):
        cum = f * base_t
        add = cum - prev
        stages.append(Stage(j + 1, add, cum, reagent.volume_l(add), reagent.mass_g(add),
                            float(ph_pts[i_st + j])))
        prev = cum
    i_sens = i_st + len(fracs)
    sensitivity = float(abs(ph_pts[i_sens + 1] - ph_pts[i_sens]) / 2.0) if reach_t else 0.0
    i_eq = i_sens + 2
    equivalence = tuple(
        EquivalencePoint(float(n), float(ph_pts[i_eq + j]), sysk, step, label)
        for j, (n, sysk, step, label) in enumerate(eqs))

    # ---- bound protons at the target
    i_tp = 1
    at_target = pres.point(i_tp)
    bound = {key: at_target.mean_protons_bound(key) for key in pres.system_keys
             if key in sample.totals}

    # ---- heat, temperature, gas
    n_end = base_t
    h_final = _state_enthalpy_kj(pres, np.array([i_tp]), pvol[[i_tp]], catalog)[0]
    h_start = _state_enthalpy_kj(curve_res, np.array([0]), cvol[[0]], catalog)[0]
    gas_mol = vented_gas_mol = 0.0
    fresh_ph = None
    if fresh_loss is not None:
        # right after the addition: CO2 beyond saturation at 1 atm has left
        gas_mol = float(fresh_loss(np.array([n_end]))[0])
        fb, _ = batch_at([n_end], vented=False)
        fresh_ph = float(speciate_batch(fb, activity=activity, catalog=catalog).pH[0])
        # by the time it has vented to air, more has gone: that is the final state
        vented_gas_mol = float(model.carbonate_total_mol([n_end])[0]
                               - _kept_carbonate_mol(model, np.array([n_end]), fresh_loss,
                                                     s_air)[0])
    heat = h_final - h_start - n_end * _reagent_enthalpy_kj(reagent, catalog)
    heat += vented_gas_mol * thermo.co2_degassing_kj()
    warnings: list[str] = []
    assumptions = [
        "heat: adiabatic batch, heat capacity of water; species enthalpies at 25 °C, "
        "infinite dilution (CODATA-derived water formation -55.815 kJ/mol)",
        f"gas volume at {gas.gas_conditions(t_c)}",
        "CO2 beyond its solubility at 1 atm leaves as it forms and does not return; doses, "
        "stages and the curve are for the batch after it has vented to air (dissolved CO2 "
        "no higher than in equilibrium with air, none taken up from it)",
        "local disposal rules set the real acceptance window",
    ]
    if reagent.is_solid:
        sol = thermo.heat_of_solution_kj(reagent.key)
        if sol is not None:
            heat += n_end * sol[0]
        assumptions.append("the volume of the solid reagent is neglected")
    if reagent.form == "concentrate":
        dil = thermo.dilution_heat_kj(reagent.key, reagent.mass_percent)
        if dil is not None:
            heat += n_end * dil[0]
        else:
            warnings.append(f"no dilution-heat data for {reagent.describe()}: its heat of "
                            "dilution is not included, so the heat is underestimated")
    mass = sample.volume_l * 1000.0 * water.density_g_cm3(t_c) + reagent.mass_g(n_end)
    rise = thermo.temperature_rise_k(heat, mass, t_c)
    vm = gas.molar_volume_l(t_c, gas.gas_pressure_kpa())
    gas_l = gas_mol * vm
    vented = float(ph_pts[i_tp]) if carbonate else None

    # ---- precipitates at the target state
    species = {lab: float(c) for lab, c in zip(pres.species_labels, pres.species_molar[i_tp])}
    charges = dict(zip(pres.species_labels, pres.species_charges))
    precipitates = saturation_indices(species, pres.log_gamma_by_charge[i_tp], charges, t_c)
    slurry_limit, slurry_exceeded = "", False
    if reagent.is_slurry:
        solid = consts["slurry"][reagent.key]
        rec = next(r for r in consts["ksp"] if r["solid"] == solid)
        slurry_limit = (f"{solid}, Ksp 10^{rec['log10_ksp']:g} at 25 °C, {rec['source']} "
                        f"[{rec['status']}]")
        slurry_exceeded = any(p.solid == solid and p.expected for p in precipitates)

    # ---- warnings from the solver
    for w in dict.fromkeys(w for ws in (pres.warnings[i_tp],) for w in ws):
        warnings.append(w)
    if not reach_t:
        warnings.append(f"{reagent.key} cannot reach pH {target:g}")
    for d, name in ((window_doses[0], "low"), (window_doses[1], "high")):
        if not d.reachable:
            warnings.append(f"{reagent.key} cannot reach the window's {name} edge")
    check = abs(to_target.pH - target) if reach_t and doses[0] > 0 else 0.0
    if check > 1e-4:
        warnings.append(f"the dose to target re-solved at pH {to_target.pH:.4f} "
                        f"(asked {target:g}): treat the dose as approximate")

    all_hazards = frozenset(hazards) | derived_hazards(sample) | reagent.compound.hazards
    facts = caution_rules.Facts(
        hazards=all_hazards, direction=direction, reagent_key=reagent.key,
        reagent_form=reagent.form, reagent_hazards=reagent.compound.hazards,
        reagent_is_slurry=reagent.is_slurry, reagent_has_carbonate=reagent.has_carbonate,
        slurry_limit=slurry_limit, slurry_exceeded=slurry_exceeded,
        temperature_rise_k=rise, final_temperature_c=t_c + rise, gas_l=gas_l,
        carbonate_present=carbonate, pH_before_venting=fresh_ph, vented_pH=vented, sensitivity_pH_per_percent=sensitivity,
        ionic_strength_molar=float(pres.ionic_strength_molar[i_tp]),
        max_total_molar=max(sample.totals.values()),
        expected_solids=tuple(p.solid for p in precipitates if p.expected),
        target_reached=reach_t, thresholds=dict(thresholds))
    found = caution_rules.evaluate(facts)
    return Plan(
        sample=sample, reagent=reagent, direction=direction, activity=activity,
        initial_pH=initial_pH, proton_equivalents_mol=float(proton_eq), breakdown=breakdown,
        full=full, to_target=to_target, window=(lo_w, hi_w), window_doses=window_doses,
        bound_protons_at_target=bound, heat_kj=float(heat), temperature_rise_c=float(rise),
        gas_l=float(gas_l), gas_mol=gas_mol, gas_conditions=gas.gas_conditions(t_c),
        vented_pH=vented, vent_pco2_atm=pco2, pH_before_venting=fresh_ph,
        vented_gas_l=float(vented_gas_mol * vm), stages=tuple(stages),
        sensitivity_pH_per_percent=sensitivity, curve=curve,
        equivalence_points=equivalence, precipitates=precipitates, cautions=found,
        warnings=tuple(warnings), hazards=all_hazards,
        drain_plan=not caution_rules.not_for_drain(facts), assumptions=tuple(assumptions),
        curve_speciation=curve_res, curve_volume_l=cvol,
    )


def _fresh_loss(model: gas.TitrationModel, grid: np.ndarray, s_sat: float):
    """L(n): CO2 lost (mol) right after adding n, with saturation at 1 atm.

    CO2(aq) beyond ``s_sat`` leaves as it forms, and lost CO2 never returns: the loss
    at n is the largest loss needed anywhere along the addition up to n.
    """
    run = np.maximum.accumulate(model.saturation_loss_mol(grid, s_sat))

    def loss_of(n):
        n = np.atleast_1d(np.asarray(n, dtype=float))
        idx = np.clip(np.searchsorted(grid, n, side="right") - 1, 0, len(run) - 1)
        return np.maximum(run[idx], model.saturation_loss_mol(n, s_sat))

    return loss_of


def _kept_carbonate_mol(model: gas.TitrationModel, n: np.ndarray, fresh_loss,
                        s_air: float | None) -> np.ndarray:
    """Carbonate left (mol) after adding ``n``: right after the addition (``s_air``
    None), or once vented to air, where CO2(aq) falls to ``s_air`` if it was above it
    (carbonate only leaves; none is taken up from the air)."""
    kept = np.maximum(model.carbonate_total_mol(n) - fresh_loss(n), 0.0)
    if s_air is None:
        return kept
    air = model.forward(n, co2_molar=s_air)
    return np.minimum(kept, air.carbonate_molar() * air.volume_l)


def _vented_doses(model: gas.TitrationModel, targets, n_full, s_sat, s_air, points):
    """Doses that reach each target pH once the batch has vented, the curve grid, and
    the right-after-addition loss function.

    The vented pH V(n) is that of the batch holding min(C_fresh(n), C_air(n)) carbonate
    (C_air: the total with CO2(aq) at the air's level).  Its root is either the exact
    open-system inverse (where the min is C_air) or the fresh-state root (where it is
    C_fresh); each candidate is checked against the min it assumed.
    """
    n_air = model.amount_at_pH(targets, co2_molar=s_air)
    span = CURVE_SPAN * max(n_full, np.nanmax(np.r_[n_air, 0.0]))
    span = span if span > 0 else 1e-6
    grid = np.linspace(0.0, span, points)
    loss_of = _fresh_loss(model, grid, s_sat)
    doses = np.full(len(targets), np.nan)
    ok = np.isfinite(n_air)
    if ok.any():
        na = n_air[ok]
        fresh = model.carbonate_total_mol(na) - loss_of(na)
        air = model.forward(na, co2_molar=s_air)
        degassing = air.carbonate_molar() * air.volume_l <= fresh * (1 + 1e-9)
        doses[np.flatnonzero(ok)[degassing]] = na[degassing]
    todo = np.flatnonzero(np.isnan(doses))
    if todo.size:
        # no degassing at the target: the fresh state is the final one
        loss = np.zeros(todo.size)
        for _ in range(6):
            n = model.amount_at_pH(targets[todo], carbonate_loss_mol=loss)
            doses[todo] = n
            good = np.isfinite(n)
            new = loss.copy()
            if good.any():
                new[good] = loss_of(n[good])
            moving = good & (np.abs(new - loss) > 1e-12 + 1e-9 * np.abs(loss))
            if not moving.any():
                break
            todo, loss = todo[moving], new[moving]
    far = np.nanmax(np.r_[doses, 0.0])
    if CURVE_SPAN * far > span * 1.0001:
        grid = np.linspace(0.0, CURVE_SPAN * max(far, n_full), points)
        loss_of = _fresh_loss(model, grid, s_sat)
    return doses, grid, loss_of


def _equivalence_amounts(sample: Mixture, catalog, direction: str, capacity: int,
                         n_max: float) -> list[tuple[float, str, int, str]]:
    """Stoichiometric equivalence points worth labelling: (mol reagent, system, step, label).

    Rule (planning.toml [equivalence]): steps of every sample system are ordered by pKa
    (descending for an acid reagent) and grouped while neighbours are less than
    ``min_pka_gap`` apart, or both are "strong-like" (pKa below ``strong_like_pka``, or
    within that distance of pKw for bases); one point per group, at the amount that
    completes the group.  A final group too close to the end of the pH scale
    (within ``visible_within_pkw_margin`` of pKw, or of 0 for an acid reagent) shows no
    end point and is left out.
    """
    rule = thermo.planning_constants()["equivalence"]
    gap = float(rule["min_pka_gap"])
    strong_like = float(rule["strong_like_pka"])
    margin = float(rule["visible_within_pkw_margin"])
    pkw = water.pkw(sample.temperature_c)
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

    def strongish(pk):
        return pk <= strong_like if base else pk >= pkw - strong_like

    def amount(done):
        q = ion_q
        for key, (s, n) in systems.items():
            k_done = sum(1 for _, kk, _ in done if kk == key)
            charge = s.top_charge - k_done if base else s.bottom_charge + k_done
            q += charge * n
        return (-q if base else q) / capacity

    groups: list[list] = []
    lead = [st for st in steps if strongish(st[0])]
    rest = [st for st in steps if not strongish(st[0])]
    has_strong_ions = ion_q < 0 if base else ion_q > 0
    if lead or has_strong_ions:
        groups.append(lead)
    for st in rest:
        if groups and groups[-1] and abs(st[0] - groups[-1][-1][0]) < gap:
            groups[-1].append(st)
        elif groups and not groups[-1] and abs(st[0] - (0.0 if base else pkw)) < gap:
            groups[-1].append(st)
        else:
            groups.append([st])
    out = []
    done: list = []
    for g in groups:
        done = done + g
        last_pk = g[-1][0] if g else (-math.inf if base else math.inf)
        if (base and last_pk > pkw - margin) or (not base and last_pk < margin):
            break
        n = amount(done)
        if not (n > 0) or n > n_max:
            continue
        names = []
        if not any(True for _ in out) and has_strong_ions and (not g or strongish(g[0][0])):
            anions = [catalog.strong_acid_by_anion.get(k, k) for k in sample.totals
                      if k in catalog.strong_acid_by_anion] if base else ["hydroxide"]
            names += anions
        names += [f"{catalog.systems[k].name} {ORDINALS[j] if base else ORDINALS[j]}"
                  for _, k, j in g]
        sysk, step = (g[-1][1], g[-1][2] + 1) if g else ("strong", 1)
        out.append((n, sysk, step, " + ".join(names) if names else sysk))
    return out
