"""The activity model of a plan: ``"auto"`` settled once for the whole plan.

With ``activity="auto"`` each batch solve picks the Davies equation (with its ion pairs)
or the specific-interaction (Pitzer) model by its own largest ionic strength.  A plan
solves several batches (its curve, its doses, the states it reports), and they must
all use one model, so the plan settles it first: the Pitzer model when the sample, the
full dose or the end of the curve is above ``AUTO_LIMIT_MOLAL``
(``speciation_models``), else ``"davies"`` (auto's Davies branch is that same solve, the
Davies equation with its ion pairs) for every batch of the plan, the states that work
out the CO2 a carbonate loses included: left at ``"auto"``, such a batch (held at 1 atm
of CO2, say) would judge its own ionic strength and could take the other model.

Calcium and magnesium stay on the Pitzer path while they are dissolved; where one of
their solids would form at one of those states, the batch falls back to the metal path
with the Davies equation (``pitzer_metals``), and so does the whole plan (``"auto"`` or
``"pitzer"`` become ``"davies"``: with metals present auto's Davies branch has no pairs,
the same solve).  So does a plan where the Pitzer model cannot be evaluated at one of
those states at all (a concentrate far past its range, ``pitzer_reach``): the plan's
warnings say why (``PlanRequest.activity_note``).
"""

from __future__ import annotations

import dataclasses

import numpy as np

from carboy.model.dosing import CURVE_SPAN
from carboy.model.metal_index import modelled_among
from carboy.model.mixture import titration_batch
from carboy.model.pitzer_reach import AUTO_NOTE_START
from carboy.model.speciation import speciate_batch

SOLID_CHECK_POINTS = 41
"""With calcium or magnesium on the Pitzer path, the doses along the curve checked for a
solid that only the Davies metal path settles (gypsum, fluorite, brushite)."""


def one_way(req) -> str | None:
    """The direction (``"base"`` or ``"acid"``) of a plan whose sample the batch that
    settles ``"auto"`` may solve for the planner (its first amount, 0), before the
    sample's own pH is known: ``"auto"``, a reagent that moves the pH one way only (the
    other way the plan is refused whatever the pH) and carries no carbonate (its full
    dose then needs no state of the sample, ``plan_demand``), no modelled metal in the
    sample or the reagent (a solid may send the plan back to the Davies metal path).
    None elsewhere: the planner solves the sample first."""
    reagent = req.reagent
    base, acid = reagent.base_capacity > 0, reagent.acid_capacity > 0
    keys = (*req.sample.totals, *reagent.compound.composition)
    if req.activity != "auto" or base == acid or reagent.has_carbonate \
            or modelled_among(keys):
        return None
    return "base" if base else "acid"


def settle_with_sample(req, n_full: float, *, sample_too: bool = False):
    """``req`` (the planner's request) with ``"auto"`` replaced by ``"pitzer"`` where
    some state of the plan needs it, else by ``"davies"``; ``"pitzer"`` by ``"davies"``
    where a calcium or magnesium solid forms; any other model unchanged.  And the
    sample's own pH where the batch that settled it solved the sample (its first amount,
    0) with the Pitzer model it settles on, without metals (the same solve as the
    sample's alone: the planner need not solve it again), and with ``sample_too`` also
    where it settles ``"auto"`` on ``"davies"`` (auto's Davies branch, the same solve
    again: see :func:`one_way`); else None."""
    if req.activity not in ("auto", "pitzer"):
        return req, None
    amounts = np.array([0.0, n_full, CURVE_SPAN * n_full])
    batch, _ = titration_batch(req.sample, dict(req.reagent.compound.composition), amounts,
                               req.reagent.l_per_mol)
    res = speciate_batch(batch, activity=req.activity, catalog=req.catalog)
    used = res.model_part.model if res.model_part is not None else req.activity
    if res.metal_keys and used == "pitzer":   # a solid may form between those states
        amounts = np.linspace(0.0, CURVE_SPAN * n_full, SOLID_CHECK_POINTS)
        batch, _ = titration_batch(req.sample, dict(req.reagent.compound.composition),
                                   amounts, req.reagent.l_per_mol)
        res = speciate_batch(batch, activity=req.activity, catalog=req.catalog)
        used = res.model_part.model if res.model_part is not None else req.activity
    if res.metal_keys and used == "davies":   # Davies (low I, or a solid's fallback)
        return dataclasses.replace(req, activity="davies", activity_note=_why(res)), None
    if res.model_part is not None and res.model_part.model == "pitzer":
        return (dataclasses.replace(req, activity="pitzer"),
                None if res.metal_keys else float(res.pH[0]))
    if req.activity == "auto":   # auto's Davies branch, the same solve for every batch
        sample = float(res.pH[0]) if sample_too and not res.metal_keys else None
        return dataclasses.replace(req, activity="davies", activity_note=_why(res)), sample
    return req, None


def _why(res) -> str:
    """The note of a batch that ``"auto"`` sent to the Davies equation because the Pitzer
    model could not be evaluated at one of its states (``pitzer_reach``), else ""."""
    return next((w for ws in res.warnings for w in ws if w.startswith(AUTO_NOTE_START)), "")


def model_used(requested: str, curve) -> str:
    """The model a plan's curve was solved with (``requested`` where it says none)."""
    part = getattr(curve, "model_part", None)
    return part.model if part is not None else requested
