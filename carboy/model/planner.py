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
  and lost CO2 never returns (see ``dosing``).  After venting, CO2(aq) is held at
  K_H·pCO2(air) (an open-system solve).
* **Curve.**  ``curve_points`` amounts from 0 to 1.3 × the largest dose of interest,
  solved in one ``speciate_batch`` call; stages, equivalence points and doses in a
  second one.

The steps of a plan
-------------------
:func:`plan_neutralization` is this sequence; each step is a function of its own:

1. ``check_request``      the arguments, checked and gathered in a ``PlanRequest``
                          (an unknown component is an error naming it, field ``sample``)
                          and ``with_safe_temperature``, the batch's safe temperature
                          (``plan_request``);
2. ``_settled``           ``"auto"`` settled for the whole plan (``plan_activity``) and
   ``_start``             the sample's own pH, the direction (base or acid) and the
                          reagent's capacity that way; a cyanide or sulfide waste the
                          plan would acidify is refused (``cautions.refuse_plan``), and a
                          reagent that moves the pH the wrong way too;
3. ``_proton_demand``     every dissociable proton (``plan_demand``): the full dose and
                          its breakdown (a modelled metal cation counts as its
                          hydroxide, z OH- each);
   ``_reagent_reach``     with a carbonate reagent, only the protons it can take count
                          in the full dose (``reagent_reach``);
4. ``_find_doses``        the doses to the target and the window edges, with CO2
                          leaving and the hydroxide the metals take, and the curve's
                          amounts (``dosing``, ``metal_doses``);
   ``_bicarbonate_ceiling`` no dose above about pH 8.3 with a bicarbonate;
5-6. ``_solve_states``    the pH curve and every other state (full dose, doses,
                          stages, ±1 % of the target dose, equivalence points): one
                          batch solve of both without carbonate, else the curve then
                          the states from it;
7. ``_dose_results``      the doses, stages, sensitivity and equivalence points read
                          from it;
8. ``_heat_and_gas``      heat released, the batch's rise with its own heat capacity,
                          boiling and the stages that keep it safe, CO2 given off and
                          the pH before venting (``plan_heat``, ``batch_heat``);
9. ``_at_target``         the state at the target: protons still bound, saturation of
                          solids (``precipitates``);
   ``_salt_limits``       soluble salts against their solubility at the batch's
                          temperature (``precipitates.salt_limits``);
10. ``_metals``           the sludge, the metal left dissolved, the hydroxide the metals
                          hold and the cations without data (``plan_metals``);
11. ``_warnings``         the solver's and the planner's own warnings;
12. ``_facts``            what the caution rules look at (``_limit_facts``: heat, salts,
                          reach); ``cautions.evaluate`` then
                          gives the cautions and ``cautions.not_for_drain`` the drain
                          verdict;
13. ``_waste_cautions``   the waste's own cautions (gas escaping now, ammonia, the
                          compatibility rules its compounds break, its stream) and the
                          drain verdict settled with them (``cautions.amend``).

Metals (Zn2+, Cu2+, Pb2+, Al3+, Fe3+ ...; ``metals.toml``) are solved with the acid-base
system at every state: hydrolysis, and hydroxide or salt precipitation decided by
saturation.  The doses count the hydroxide they take; the plan reports the sludge
(``sludge``), the metal left dissolved (``dissolved_metals_mg_l``) and that hydroxide
(``metal_hydroxide_mol``), and names cations with no data (``unmodelled_metals``).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import ClassVar

import numpy as np

from carboy.errors import HazardRefused, InvalidInput
from carboy.model import cautions as caution_rules
from carboy.model import gas, thermo
from carboy.model.activity import davies_d, debye_huckel_scale
from carboy.model.cautions import derived_hazards
from carboy.model.dosing import Dosing, find_doses
from carboy.model.equivalence import equivalence_amounts
from carboy.model.heat_capacity import solute_mass_g
from carboy.model.mixture import Mixture
from carboy.model.plan_activity import model_used, one_way, settle_with_sample
from carboy.model.plan_demand import Demand, proton_demand
from carboy.model.plan_heat import HeatAndGas, heat_and_gas
from carboy.model.plan_metals import MetalReport, dissolved_totals_mol, metals_at_target
from carboy.model.plan_request import PlanRequest, check_request, with_safe_temperature
from carboy.model.plan_result import Dose, EquivalencePoint, Plan, Stage
from carboy.model.precipitates import (
    Precipitate,
    SaltLimit,
    salt_limits,
    saturation_indices,
    slurry_check,
)
from carboy.model.reagent_reach import Reach, bicarbonate_ceiling, proton_reach
from carboy.model.reagents import Reagent
from carboy.model.speciation import BatchSpeciation, speciate, start_along

__all__ = ["Dose", "EquivalencePoint", "Plan", "Stage", "plan_neutralization"]


# ----------------------------------------------------------------------------- the plan

def plan_neutralization(sample: Mixture, reagent: Reagent, *, target_pH: float = 7.0,  # noqa: N803
                        window: tuple[float, float] = (6.0, 9.0), activity: str = "davies",
                        catalog=None, hazards: frozenset[str] = frozenset(),
                        curve_points: int = 400, safe_temperature_c: float | None = None,
                        safe_from: str = "",
                        waste: caution_rules.Sample | None = None) -> Plan:
    """Plan the neutralization of ``sample`` with ``reagent``.

    Parameters
    ----------
    sample : the waste, with ``volume_l`` and ``temperature_c``.
    reagent : from :func:`~carboy.model.reagents.parse_reagent`.
    target_pH : pH to aim for, 0–14.
    window : (low, high) acceptance window, 0–14, low < high (local rules set the real one).
    activity : ``"auto"``, ``"pitzer"``, ``"davies"`` or ``"ideal"`` (``"auto"`` is
        settled once for the whole plan: ``plan_activity``).
    hazards : hazard tags known about the sample (the store passes its additions' tags).
    curve_points : points of the pH curve (>= 20).
    safe_temperature_c : the temperature a batch is kept under (°C; default carboy's, 50);
        the disposal profile's when the plan is made under the storeroom's rules, with
        ``safe_from`` saying whose it is.
    waste : what is known of the waste beyond its totals (its compounds, a container's
        stream and material): the compatibility rules and the stream's drain verdict
        look at it (:func:`carboy.model.cautions.amend`).

    Raises
    ------
    InvalidInput for a bad target, window, volume, an unknown component (field
    ``sample``) or a reagent of the wrong direction; HazardRefused for a cyanide or
    sulfide waste the plan would acidify (:func:`carboy.model.cautions.refuse_plan`).
    """
    req = check_request(sample, reagent, target_pH, window, activity, catalog, hazards,
                         curve_points, waste)
    req = with_safe_temperature(req, safe_temperature_c, safe_from)
    req, start, demand, reach = _settled(req)
    dosing = _bicarbonate_ceiling(req, reach, _find_doses(req, start, demand))
    curve_res, curve_vol, pts = _solve_states(req, start, dosing, demand.n_full)
    doses = _dose_results(req, dosing, pts, demand.n_full)
    bound, precipitates = _at_target(req, pts)
    metals = _metals(req, pts, precipitates)
    precipitates = metals.precipitates
    heat = _heat_and_gas(req, dosing, pts, curve_res, curve_vol, metals.precipitation_dh_kj)
    salts = _salt_limits(req, pts, heat)
    warnings = heat.warnings + _warnings(req, dosing, pts, doses) + list(metals.warnings)
    facts = dataclasses.replace(_facts(req, start, dosing, pts, doses, heat, precipitates),
                                **_limit_facts(heat, salts, reach, doses, start),
                                activity_model=req.activity)
    plan = Plan(
        sample=sample, reagent=reagent, direction=start.direction, activity=activity,
        initial_pH=start.initial_pH, proton_equivalents_mol=float(demand.proton_eq),
        breakdown=demand.breakdown, full=doses.full, to_target=doses.to_target,
        window=req.window, window_doses=doses.window, bound_protons_at_target=bound,
        heat_released_kj=heat.released_kj, temperature_rise_c=heat.batch.reached_rise_k,
        gas_l=heat.gas_l,
        gas_mol=heat.gas_mol, gas_conditions=gas.gas_conditions(req.temperature_c),
        vented_pH=facts.vented_pH, vent_pco2_atm=dosing.pco2_atm,
        pH_before_venting=heat.pH_before_venting, vented_gas_l=heat.vented_gas_l,
        stages=doses.stages, sensitivity_pH_per_percent=doses.sensitivity,
        curve=np.column_stack([dosing.grid, curve_res.pH]),
        equivalence_points=doses.equivalence, precipitates=precipitates,
        cautions=caution_rules.evaluate(facts), warnings=tuple(warnings),
        hazards=facts.hazards, drain_plan=not caution_rules.not_for_drain(facts),
        assumptions=heat.assumptions + metals.assumptions, curve_speciation=curve_res,
        curve_volume_l=curve_vol, batch_heat=heat.batch, salt_limits=salts,
        reagent_reach=reach, sludge=metals.sludge, dissolved_metals_mg_l=metals.dissolved_mg_l,
        metal_hydroxide_mol=metals.hydroxide_mol, unmodelled_metals=metals.unmodelled,
        activity_model=model_used(req.activity, curve_res),
    )
    return _waste_cautions(req, plan)


# ----------------------------------------------------------------------------- the steps

def _settled(req: PlanRequest) -> tuple[PlanRequest, _Start, Demand, Reach | None]:
    """Steps 2-3b with ``"auto"`` settled once for the whole plan (``plan_activity``):
    the request on the model settled, the start, the demand and the reagent's reach.
    Where the direction is known beforehand (``plan_activity.one_way``) the batch that
    settles the model solves the sample too and the start takes its pH; else the
    sample is solved first (its pH gives the direction, which gives the full dose the
    settling batch needs)."""
    way = one_way(req)
    if way is not None:
        capacity = req.reagent.base_capacity if way == "base" else req.reagent.acid_capacity
        demand = proton_demand(req.sample, req.catalog, way, capacity)
        settled, sample_pH = settle_with_sample(req, demand.n_full, sample_too=True)
        if sample_pH is not None:   # (always, without metals)
            # the start refuses a sample that needs the other way (the reagent has no
            # capacity that way), so the demand worked out for ``way`` is the plan's
            return settled, _start(settled, sample_pH=sample_pH), demand, None
    start = _start(req)
    demand, reach = _reagent_reach(req, start, _proton_demand(req, start))
    settled, sample_pH = settle_with_sample(req, demand.n_full)
    if settled.activity != req.activity:   # the sample's state too (a solid's fallback)
        start = _start(settled, start, sample_pH)
    return settled, start, demand, reach


@dataclass(frozen=True, eq=False, repr=False)
class _Start:
    """The sample before any reagent, and which way it has to go."""

    model: gas.TitrationModel
    initial_pH: float
    direction: str        # "base" (the pH must rise) or "acid"
    capacity: int         # protons one formula unit of reagent moves that way
    model_used: str = ""  # the activity model the sample's state was solved with
    own_pH: float = float("nan")   # the reagent's own pH (Davies)
    state: BatchSpeciation | None = None   # the sample's state, where solved here


def _start(req: PlanRequest, before: _Start | None = None,
           sample_pH: float | None = None) -> _Start:  # noqa: N803
    """Step 2: the sample's pH and direction; InvalidInput for a reagent that cannot
    move the pH towards the target (judged by its capacity and its own pH).  ``before``:
    the start worked out with another activity choice ("auto" before it was settled);
    its state of the sample is taken where it was solved with the model now asked (the
    same solve), and the reagent's own pH (Davies either way) always.  ``sample_pH``:
    the sample's pH as the batch that settled the model solved it (Pitzer; see
    :func:`~carboy.model.plan_activity.settle_with_sample`), taken as is.  The sample's
    state, where solved here, is kept for the reagent's reach (step 3b)."""
    reagent, target = req.reagent, req.target
    model = gas.TitrationModel(req.sample, dict(reagent.compound.composition),
                               reagent.l_per_mol, activity=req.activity, catalog=req.catalog)
    state = None
    if before is not None and before.model_used == req.activity:
        initial_pH, used = before.initial_pH, before.model_used
    elif sample_pH is not None:
        initial_pH, used = sample_pH, req.activity
    else:
        state = model.forward([0.0]).result
        initial_pH, used = float(state.pH[0]), model_used(req.activity, state)
    direction = "base" if initial_pH < target else "acid"
    refused = caution_rules.refuse_plan(req.sample.totals, req.hazards, initial_pH, target,
                                        direction)
    if refused:
        raise HazardRefused("a neutralization plan", refused)
    capacity = reagent.base_capacity if direction == "base" else reagent.acid_capacity
    own_pH = before.own_pH if before is not None else _own_pH(req)
    wrong = capacity <= 0 or (own_pH <= target if direction == "base" else own_pH >= target)
    if wrong:
        need = "a base" if direction == "base" else "an acid"
        raise InvalidInput(
            "reagent", reagent.text or reagent.key,
            f"the sample is at pH {initial_pH:.2f} and needs {need} to reach pH {target:g}; "
            f"{reagent.key} (its own pH about {own_pH:.1f}) cannot move it that way: choose "
            f"{caution_rules.stronger_reagent_words(direction, reagent.key)}", field="reagent")
    return _Start(model, initial_pH, direction, capacity, used, own_pH, state)


def _own_pH(req: PlanRequest) -> float:  # noqa: N802
    """The reagent's own pH: it only says which way it moves a batch, so the Davies form
    is enough (a concentrate would send auto to the Pitzer model for a rough figure)."""
    reagent = req.reagent
    own = gas.TitrationModel(Mixture.from_compounds(
        [(reagent.compound, reagent.conc_molar or 1.0)], volume_l=1.0,
        temperature_c=req.temperature_c), {}, 0.0, activity="davies", catalog=req.catalog)
    return float(own.forward([0.0]).pH[0])


def _proton_demand(req: PlanRequest, start: _Start) -> Demand:
    """Step 3: the protons to remove (base) or add (acid), per component and in all,
    and the reagent (mol) that does it (``plan_demand``)."""
    return proton_demand(req.sample, req.catalog, start.direction, start.capacity)


def _reagent_reach(req: PlanRequest, start: _Start, demand: Demand
                   ) -> tuple[Demand, Reach | None]:
    """Step 3b: with a carbonate reagent, the full dose counts only the protons it can
    take (:mod:`~carboy.model.reagent_reach`); the others are named in the plan."""
    if start.direction != "base" or not req.reagent.has_carbonate:
        return demand, None
    initial = (start.state.point(0) if start.state is not None   # the same solution
               else speciate(req.sample, activity=req.activity, catalog=req.catalog))
    reach = proton_reach(req.sample, req.reagent, req.catalog, demand.proton_eq,
                         initial.fractions)
    if reach is None:
        return demand, None
    return dataclasses.replace(demand, n_full=reach.n_full), reach


def _bicarbonate_ceiling(req: PlanRequest, reach: Reach | None, dosing: Dosing) -> Dosing:
    """Step 4b: a bicarbonate reagent cannot carry a batch above about pH 8.3 (the pH of
    a fresh bicarbonate solution, ``reagent_reach``): a dose to a higher pH, which only the
    slow loss of CO2 to the air would reach, is not offered (it reads as unreachable)."""
    ceiling = bicarbonate_ceiling(reach)
    if ceiling is None:
        return dosing
    asked = np.array([req.target, *req.window])
    doses = np.where(asked > ceiling, np.nan, dosing.doses)
    return dataclasses.replace(dosing, doses=doses)


def _find_doses(req: PlanRequest, start: _Start, demand: Demand) -> Dosing:
    """Step 4: the doses (mol) to the target and to the window's low and high edges, the
    curve's amounts, and the batch each amount leaves (see :mod:`carboy.model.dosing`)."""
    reagent = req.reagent
    return find_doses(start.model, dict(reagent.compound.composition), reagent.l_per_mol,
                      np.array([req.target, *req.window]), demand.n_full,
                      initial_pH=start.initial_pH, direction=start.direction,
                      points=req.curve_points)


@dataclass(frozen=True, eq=False, repr=False)
class _Points:
    """One batch solve of every state the plan reports besides the curve, in this
    order: the full dose, the target, the window's low and high edges, the stages,
    0.99 and 1.01 times the target dose, the equivalence points (all after venting),
    and with carbonate the target dose right after the addition."""

    res: BatchSpeciation
    volume_l: np.ndarray
    stage_fractions: np.ndarray
    equivalence: list          # (mol, system, step, label) from equivalence_amounts

    TARGET: ClassVar[int] = 1
    FIRST_STAGE: ClassVar[int] = 4

    @property
    def first_sensitivity(self) -> int:
        return self.FIRST_STAGE + len(self.stage_fractions)

    @property
    def first_equivalence(self) -> int:
        return self.first_sensitivity + 2

    @property
    def fresh(self) -> int:
        """The state right after the dose to the target (before venting): the last
        point, present when carbonate is."""
        return self.first_equivalence + len(self.equivalence)


def _solve_states(req: PlanRequest, start: _Start, dosing: Dosing, n_full: float
                  ) -> tuple[BatchSpeciation, np.ndarray, _Points]:
    """Steps 5 and 6: the vented batch at every amount of the curve grid and its volumes
    (L), and the :class:`_Points`.  Without carbonate both are one batch solve, the
    states' amounts placed in order among the grid's (a few points more cost the
    vectorized solve next to nothing; a solve of their own, some 1–2 ms of fixed
    cost); with carbonate the grid's states open to air are solved already, so the
    curve is solved first and each state starts from it."""
    at, vented, fracs, eqs = _point_amounts(req, start, dosing, n_full)
    if dosing.carbonate:
        curve, curve_vol = dosing.solve(dosing.grid)
        x0, i0 = start_along(at, dosing.grid, curve)
        # a dose that reaches a pH leaves that pH: its root is known but for the coefficient
        ad = debye_huckel_scale(req.activity, req.temperature_c) * davies_d(i0[1:4])
        reached = np.isfinite(dosing.doses) & (dosing.doses > 0)
        x0[1:4] = np.where(reached, ad - np.array([req.target, *req.window]), x0[1:4])
        pres, pvol = dosing.solve(at, vented=vented, start=(x0, i0), curve=curve)
        return curve, curve_vol, _Points(pres, pvol, fracs, eqs)
    grid = dosing.grid
    every = np.concatenate([grid, at])
    order = np.argsort(every, kind="stable")
    place = np.empty_like(order)
    place[order] = np.arange(order.size)   # where each amount of ``every`` was solved
    res, vol = dosing.solve(every[order])
    on_grid, states = place[:grid.size], place[grid.size:]
    return (res.rows(on_grid), vol[on_grid],
            _Points(res.rows(states), vol[states], fracs, eqs))


def _point_amounts(req: PlanRequest, start: _Start, dosing: Dosing, n_full: float):
    """The amounts (mol) of :class:`_Points` in its order, whether each is vented, the
    stages' fractions (planning.toml ``[stages]``) and the labelled equivalence points."""
    fracs = np.asarray(thermo.planning_constants()["stages"]["cumulative_fractions"],
                       dtype=float)
    eqs = equivalence_amounts(req.sample, req.catalog, start.direction, start.capacity,
                              dosing.grid[-1])
    base_t = dosing.target_mol
    pts = [n_full]
    pts += [d if np.isfinite(d) else 0.0 for d in dosing.doses]
    pts += list(fracs * base_t) + [0.99 * base_t, 1.01 * base_t]
    pts += [e[0] for e in eqs]
    vented = [True] * len(pts)
    if dosing.carbonate:  # and the state right after the addition, in the same solve
        pts.append(base_t)
        vented.append(False)
    return np.asarray(pts), vented, fracs, eqs


@dataclass(frozen=True, eq=False, repr=False)
class _Doses:
    """What the plan reports at each dose of interest."""

    full: Dose
    to_target: Dose
    window: tuple[Dose, Dose]
    stages: tuple[Stage, ...]
    sensitivity: float
    equivalence: tuple[EquivalencePoint, ...]


def _dose(reagent: Reagent, pts: _Points, i_pt: int, n, target=None) -> Dose:
    """The :class:`Dose` of ``n`` mol, whose state is point ``i_pt`` (unreachable: NaN)."""
    if n is None or not np.isfinite(n):
        return Dose(None, None, None, None, None, target)
    return Dose(float(n), reagent.volume_l(n), reagent.mass_g(n), float(pts.res.pH[i_pt]),
                float(pts.volume_l[i_pt]), target)


def _dose_results(req: PlanRequest, dosing: Dosing, pts: _Points, n_full: float) -> _Doses:
    """Step 7: doses, staged additions, the pH change per 1 % of the target dose and
    the equivalence points, read from the point solve."""
    reagent, doses, ph = req.reagent, dosing.doses, pts.res.pH
    base_t = dosing.target_mol
    stages = []
    prev = 0.0
    for j, f in enumerate(pts.stage_fractions):
        cum = f * base_t
        add = cum - prev
        stages.append(Stage(j + 1, add, cum, reagent.volume_l(add), reagent.mass_g(add),
                            float(ph[pts.FIRST_STAGE + j])))
        prev = cum
    i_sens = pts.first_sensitivity
    sensitivity = (float(abs(ph[i_sens + 1] - ph[i_sens]) / 2.0) if dosing.target_reached
                   else 0.0)
    equivalence = tuple(
        EquivalencePoint(float(n), float(ph[pts.first_equivalence + j]), sysk, step, label)
        for j, (n, sysk, step, label) in enumerate(pts.equivalence))
    lo_w, hi_w = req.window
    return _Doses(
        full=_dose(reagent, pts, 0, n_full),
        to_target=_dose(reagent, pts, 1, doses[0], req.target),
        window=(_dose(reagent, pts, 2, doses[1], lo_w), _dose(reagent, pts, 3, doses[2], hi_w)),
        stages=tuple(stages), sensitivity=sensitivity, equivalence=equivalence)


def _heat_and_gas(req: PlanRequest, dosing: Dosing, pts: _Points, curve_res: BatchSpeciation,
                  curve_vol: np.ndarray, metals_dh_kj: float) -> HeatAndGas:
    """Step 8: heat released (positive: the batch warms), the batch's rise with its own
    heat capacity, boiling and the stages that keep it under the safe temperature, and
    the CO2 given off with the pH right after the addition (:mod:`~carboy.model.plan_heat`,
    :mod:`~carboy.model.batch_heat`); ``metals_dh_kj`` the hydroxides' own heat of
    precipitation against counting their OH- as water (step 10's
    :func:`~carboy.model.plan_metals.precipitation_heat`)."""
    i_tp = pts.TARGET
    fresh_ph = float(pts.res.pH[pts.fresh]) if dosing.carbonate else None
    return heat_and_gas(req.reagent, req.catalog, req.sample.volume_l, req.temperature_c,
                        dosing, (pts.res, i_tp, float(pts.volume_l[i_tp])),
                        (curve_res, 0, float(curve_vol[0])), fresh_ph,
                        req.safe_temperature_c, req.safe_from, metals_dh_kj=metals_dh_kj)


def _at_target(req: PlanRequest, pts: _Points) -> tuple[dict, tuple[Precipitate, ...]]:
    """Step 9: at the target state, the protons each sample system still holds and the
    saturation of every tabulated solid."""
    res, i_tp = pts.res, pts.TARGET
    at_target = res.point(i_tp)
    bound = {key: at_target.mean_protons_bound(key) for key in res.system_keys
             if key in req.sample.totals}
    species = {lab: float(c) for lab, c in zip(res.species_labels, res.species_molar[i_tp])}
    charges = dict(zip(res.species_labels, res.species_charges))
    found = saturation_indices(species, res.log_gamma_by_charge[i_tp], charges,
                               req.temperature_c)
    return bound, found


def _salt_limits(req: PlanRequest, pts: _Points, heat: HeatAndGas) -> tuple[SaltLimit, ...]:
    """Step 9b: the soluble salts at the target against their solubility at the batch's
    temperature (:func:`~carboy.model.precipitates.salt_limits`), counting what stays
    dissolved (a metal or ligand the solver has settled as a solid is not counted twice;
    a salt the solver itself settles, gypsum, is in the sludge instead); the batch's
    water is its mass less its solutes."""
    res, i_tp = pts.res, pts.TARGET
    volume = float(pts.volume_l[i_tp])
    if res.batch is None:
        return ()
    totals = dissolved_totals_mol(res, i_tp, volume)
    species = dict(zip(res.species_labels, res.species_molar[i_tp].tolist()))
    charges = dict(zip(res.species_labels, res.species_charges))
    water_g = heat.batch.mass_g - solute_mass_g(species, charges, volume)
    found = salt_limits(totals, max(water_g, 0.1 * heat.batch.mass_g) / 1000.0,
                        req.temperature_c)
    return tuple(s for s in found if s.solid not in res.solid_names)


def _metals(req: PlanRequest, pts: _Points, found: tuple[Precipitate, ...]) -> MetalReport:
    """Step 10: at the target state, the sludge, the metal left dissolved and the
    hydroxide the metals hold; the solids present join the saturation list; cations
    with no metal data are named (see :mod:`carboy.model.plan_metals`)."""
    i_tp = pts.TARGET
    return metals_at_target(pts.res, i_tp, float(pts.volume_l[i_tp]), req.sample.totals,
                            req.catalog, found)


def _warnings(req: PlanRequest, dosing: Dosing, pts: _Points, doses: _Doses) -> list[str]:
    """Step 11: why ``"auto"`` took the Davies equation where it had to, the solver's
    warnings at the target state, doses that cannot be reached, and a dose to target
    whose re-solved pH misses the target."""
    key, target = req.reagent.key, req.target
    warnings = list(dict.fromkeys(((req.activity_note,) if req.activity_note else ())
                                  + tuple(pts.res.warnings[pts.TARGET])))
    reach_t = dosing.target_reached
    if not reach_t:
        warnings.append(f"{key} cannot reach pH {target:g}")
    for d, name in ((doses.window[0], "low"), (doses.window[1], "high")):
        if not d.reachable:
            warnings.append(f"{key} cannot reach the window's {name} edge")
    check = abs(doses.to_target.pH - target) if reach_t and dosing.doses[0] > 0 else 0.0
    if check > 1e-4:
        warnings.append(f"the dose to target re-solved at pH {doses.to_target.pH:.4f} "
                        f"(asked {target:g}): treat the dose as approximate")
    return warnings


def _limit_facts(heat: HeatAndGas, salts: tuple[SaltLimit, ...], reach: Reach | None,
                 doses: _Doses, start: _Start) -> dict:
    """Step 11b: what the heat, salt and reach cautions look at."""
    edge = doses.window[0] if start.direction == "base" else doses.window[1]
    return {"batch_heat": heat.batch, "salt_limits": tuple(s for s in salts if s.exceeded),
            "reagent_reach": reach, "window_reached": edge.reachable}


def _facts(req: PlanRequest, start: _Start, dosing: Dosing, pts: _Points, doses: _Doses,
           heat: HeatAndGas, precipitates: tuple[Precipitate, ...]) -> caution_rules.Facts:
    """Step 12: what the caution rules look at, from the request and every step."""
    reagent = req.reagent
    slurry_limit, slurry_exceeded = "", False
    if reagent.is_slurry:
        slurry_limit, slurry_exceeded = slurry_check(reagent.key, precipitates)
    t_c = req.temperature_c
    return caution_rules.Facts(
        hazards=req.hazards | derived_hazards(req.sample.totals) | reagent.compound.hazards,
        direction=start.direction, reagent_key=reagent.key,
        reagent_form=reagent.form, reagent_hazards=reagent.compound.hazards,
        reagent_is_slurry=reagent.is_slurry, reagent_has_carbonate=reagent.has_carbonate,
        slurry_limit=slurry_limit, slurry_exceeded=slurry_exceeded,
        temperature_rise_k=heat.rise_k, final_temperature_c=t_c + heat.rise_k,
        gas_l=heat.gas_l, vented_gas_l=heat.vented_gas_l, carbonate_present=dosing.carbonate,
        pH_before_venting=heat.pH_before_venting,
        vented_pH=float(pts.res.pH[pts.TARGET]) if dosing.carbonate else None,
        sensitivity_pH_per_percent=doses.sensitivity,
        ionic_strength_molar=float(pts.res.ionic_strength_molar[pts.TARGET]),
        max_total_molar=max(req.sample.totals.values()),
        expected_solids=tuple(p.solid for p in precipitates if p.expected),
        target_reached=dosing.target_reached, target_pH=req.target, window=req.window,
        initial_pH=start.initial_pH,
        thresholds=dict(thermo.planning_constants()["thresholds"]))


def _waste_cautions(req: PlanRequest, plan: Plan) -> Plan:
    """Step 13: the plan with the waste's own cautions and the drain verdict settled by
    them (:func:`carboy.model.cautions.amend`: gas escaping now, ammonia driven off,
    the compatibility rules its compounds break, a container's stream)."""
    return caution_rules.amend(plan, req.waste, catalog=req.catalog)
