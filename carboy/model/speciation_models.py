"""Which activity model solves a batch, and what its result says about it.

``speciate``/``speciate_batch`` hand a batch here (:func:`route`) when it needs more than
the Davies path's fast solve:

* ``activity="pitzer"``: the specific-interaction model, in molalities, with the pairs
  of its own set (MgOH+): one solution on floats (``solver.pitzer_one``), a batch on
  arrays (``solver.pitzer_batch``), both from the totals alone, held species (open
  systems) too; an open system that could form a salt goes to the outer loop
  (``solver.outer.solve_pitzer``), started from the Davies solution;
* ``activity="davies"``: the Davies equation with the ion pairs of a spectator cation
  (NaSO4-, KSO4-; ``solver.outer.solve_with_pairs``; calcium and magnesium are modelled
  metals, whose own hydrolysis gives CaOH+ and MgOH+, and whose sulfate complexes
  CaSO4° and MgSO4° the metal path forms, ``metal_complexes``) where a pair-forming
  cation and ligand are both
  present; without them (:func:`davies_pairs` False) it never comes here and stays on
  the charge-only fast paths;
* ``activity="auto"``: the Davies equation with those pairs where the whole batch stays
  at or below ``AUTO_LIMIT_MOLAL`` of ionic strength, the Pitzer model above it.  A batch
  (a curve) is never split between the two models, so it has no jump where one takes over.

Modelled metal ions (Ca2+ and Mg2+ among them, ``metals.toml``) are solved with their own
hydrolysis (CaOH+ and MgOH+ there) and solids, and take no part in the pairs; a layout
with metals keeps the charge-only path.  ``activity="ideal"`` stays on the charge-only
path too.  ``state_at`` (the exact inverse) knows no pairs: where they form, the planner
settles its doses on the forward solve (:func:`settles_forward`).

Calcium and magnesium (modelled metals) take the Pitzer path as ions with their
hydroxides and 1:1 salts settled by saturation (``pitzer_metals``); a batch where another
of their solids would form falls back, whole, to the Davies metal path and says so.
Other metals keep the Davies metal path (``auto``) or are refused (``pitzer``).

pH scales (``ph_scale`` in every result and in ``--json``)
-----------------------------------------------------------
``"macinnes"`` (Pitzer): pH = -log10(m_H γ_H), molal, with the single-ion coefficients
on the MacInnes convention (γ(Cl-) = γ±(KCl) at the same ionic strength), as PHREEQC's
Pitzer model reports it.  ``"davies"``: pH = -log10(c_H γ_H), mol/L, γ_H by the Davies
equation.  ``"concentration"`` (ideal): pH = -log10([H+]/(mol/L)).

Ions outside the Pitzer set (phosphate, organic anions, fluoride, ...) take the Davies
form at the solution's molal ionic strength; the result's warnings name them.  Beyond
``I_MAX_MOLAL`` (6 mol/kg) a point says it is outside the parameters' range; every
coefficient is still evaluated at the point's own composition (none is held).
"""

from __future__ import annotations

import dataclasses
import math
from contextlib import contextmanager, nullcontext
from contextvars import ContextVar
from dataclasses import dataclass
from functools import lru_cache
from operator import mul
from types import MappingProxyType

import numpy as np

from carboy.errors import InvalidInput
from carboy.model import water
from carboy.model.activity import DAVIES_LIMIT_MOLAR, outside_range_warning
from carboy.model.mixture import MixtureBatch
from carboy.model.molality import open_water, water_kg_one, water_kg_per_litre
from carboy.model.pitzer_reach import NUMERIC_FAILURES, auto_note, beyond_reach, refused_past_reach
from carboy.model.result_warnings import METAL_T_SPAN_C, warning_texts
from carboy.model.solver.charge_balance import padded_fractions
from carboy.model.solver.layout import ENTHALPY_DATA_MAX_C, Layout, cached_layout
from carboy.model.solver.outer import (
    Outcome,
    has_pairs,
    pitzer_for,
    solve_pitzer,
    solve_with_pairs,
    table_of,
)
from carboy.model.solver.problem import build_problem, held_amounts

AUTO_LIMIT_MOLAL = 0.5
"""``activity="auto"`` keeps the Davies equation up to this ionic strength (mol/kg),
the upper end of its usual range (Davies 1962), and takes the Pitzer model above."""
ROUTED = ("pitzer", "auto")
PH_SCALES = {"pitzer": "macinnes", "davies": "davies", "ideal": "concentration"}
"""The pH scale of each model (see the module docstring)."""
MODEL_WORDS = {"pitzer": "specific-interaction (Pitzer) activity",
               "davies": "Davies activity", "ideal": "ideal solution"}
SCALE_WORDS = {"macinnes": "MacInnes pH scale, mol/kg",
               "davies": "pH from Davies activity, mol/L",
               "concentration": "pH = -log10[H+], mol/L"}


def describe_model(activity: str, model: str) -> str:
    """The model and pH scale in words, e.g. ``"auto: Davies activity (pH from Davies
    activity, mol/L)"``; ``model`` is the model used (``activity`` itself but for auto)."""
    used = model or activity
    text = f"{MODEL_WORDS.get(used, used)} ({SCALE_WORDS.get(ph_scale_of(used), used)})"
    return f"auto: {text}" if activity == "auto" else text


def ph_scale_of(model: str) -> str:
    """The pH scale a model's results are on (``"auto"`` reads as the model used)."""
    return PH_SCALES.get(model, model)


@dataclass(frozen=True, eq=False, repr=False)
class ModelPoint:
    """What one solution's result says about its activity model."""

    model: str
    ph_scale: str
    water_kg_per_l: float
    ionic_strength_molal: float
    water_activity: float | None


@dataclass(frozen=True, eq=False, repr=False)
class ModelPart:
    """The activity model's part of a batch result (arrays by point)."""

    model: str
    log_gamma: np.ndarray               # (N, S) log10 γ of the result's species_labels
    water_kg_per_l: np.ndarray          # (N,)
    ionic_strength_molal: np.ndarray    # (N,)
    water_activity: np.ndarray | None = None

    @property
    def ph_scale(self) -> str:
        return ph_scale_of(self.model)

    def rows(self, idx) -> ModelPart:
        return ModelPart(self.model, self.log_gamma[idx], self.water_kg_per_l[idx],
                         self.ionic_strength_molal[idx],
                         None if self.water_activity is None else self.water_activity[idx])

    def point(self, n: int) -> ModelPoint:
        aw = None if self.water_activity is None else float(self.water_activity[n])
        return ModelPoint(self.model, self.ph_scale, float(self.water_kg_per_l[n]),
                          float(self.ionic_strength_molal[n]), aw)


def needs_route(lay: Layout, activity: str, temperature_c: float) -> bool:
    """True when a batch with this layout must go through :func:`route`: the Pitzer
    and auto models, and Davies where ion pairs form."""
    return activity in ROUTED or (activity == "davies" and davies_pairs(lay, temperature_c))


def davies_pairs(lay: Layout, temperature_c: float) -> bool:
    """True when ``activity="davies"`` forms ion pairs in this layout."""
    return _pairs_apply(lay, temperature_c)


def settles_forward(activity: str, keys: tuple[str, ...], catalog,
                    temperature_c: float) -> bool:
    """True when the exact inverse (``state_at``, charge-only Davies coefficients) is only
    a start for a dose with these components: the model's own solve must settle it."""
    if activity in ROUTED:
        return True
    if activity != "davies":
        return False
    from carboy.model.solver.layout import cached_layout

    return davies_pairs(cached_layout(catalog, tuple(keys), temperature_c), temperature_c)


def _pairs_apply(lay: Layout, temperature_c: float) -> bool:
    # a layout with modelled metals (Ca2+, Mg2+ ...) keeps them out of the pairs
    return getattr(lay, "metals", None) is None and has_pairs(lay, temperature_c)


# --------------------------------------------------------------------------- routing

def route(batch: MixtureBatch, lay: Layout, activity: str, catalog, held, start,
          solve_davies, frame=None):
    """Solve ``batch`` (its layout ``lay``) with ``activity``; ``solve_davies(batch,
    lay, activity, t_c, held, start, root_only=False)`` is the Davies path's batch solve
    (a ``BatchSpeciation``; ``root_only``: its root and warnings, no species), whose
    result is the start and the frame of the answer;
    ``frame(batch, lay, activity, t_c)`` an empty result for the one-solution path."""
    t_c = batch.temperature_c
    metals = getattr(lay, "metals", None) is not None
    paths = _Paths(solve_davies, frame, held, start)
    if activity == "pitzer":
        with refused_past_reach(catalog, batch):   # a concentrate past the model's reach
            if metals:
                return _pitzer_with_metals(batch, lay, activity, catalog, paths)
            return _pitzer(batch, lay, activity, catalog, paths)
    pairs = activity == "davies" or _pairs_apply(lay, t_c)   # "davies": pairs form
    # with pairs the charge-only solve is only their loop's start: its root, not its species
    base = solve_davies(batch, lay, "davies", t_c, held, start, root_only=pairs)
    if activity == "davies":
        return _with_pairs(base, lay, activity, held)
    w, _ = water_kg_per_litre(catalog, batch.keys, base.batch.totals, t_c)
    res = base
    if pairs:
        res = _with_pairs(base, lay, activity, held)
    molal_i = res.ionic_strength_molar / w
    high = float(molal_i.max(initial=0.0)) > AUTO_LIMIT_MOLAL
    if not high or (metals and not _pitzer_takes(lay)):
        return _auto_davies(res, activity, w, molal_i, (_METALS_NOTE,) if high else ())
    try:
        if metals:
            return _pitzer_with_metals(batch, lay, activity, catalog, paths,
                                       davies=_auto_davies(res, activity, w, molal_i))
        return _pitzer(batch, lay, activity, catalog, paths, base)
    except NUMERIC_FAILURES as exc:   # a concentrate past the model's reach: Davies, said
        if not beyond_reach(exc):
            raise
        return _auto_davies(res, activity, w, molal_i, (auto_note(molal_i),))


@dataclass(frozen=True, eq=False, repr=False)
class _Paths:
    """What :func:`route` was handed to solve with: the Davies batch solve, the frame of
    a one-solution result, the held species and the start."""

    solve_davies: object
    frame: object
    held: object
    start: object


def _auto_davies(res, activity: str, w, molal_i, extra: tuple[str, ...] = ()):
    """A Davies result as ``auto`` reports it (with its model part)."""
    return dataclasses.replace(
        res, activity=activity, warnings=_with(res.warnings, extra),
        model_part=ModelPart("davies", _davies_log_gamma(res), w, molal_i))


_METALS_NOTE = ("the specific-interaction model covers calcium and magnesium only, not "
                "the other metals' hydrolysis and solids: the Davies equation is used, "
                "outside its range")


def _pitzer_with_metals(batch, lay: Layout, activity: str, catalog, paths: _Paths,
                        davies=None):
    """Calcium and magnesium under the Pitzer model while they stay dissolved
    (``pitzer_metals``); a batch where one of their solids would form falls back, whole,
    to the metal path with the Davies equation (``davies``, solved here if not given)."""
    from carboy.model.pitzer_metals import (
        SOLID_FALLBACK,
        hydroxides,
        salts,
        saturated_solids,
        saturation,
        with_metal_fields,
    )

    if not _pitzer_takes(lay):
        raise InvalidInput("activity model", activity, _METALS_NOTE)
    t_c = batch.temperature_c
    lay_s = cached_layout(catalog, batch.keys, t_c, metals=False)
    res = _pitzer(batch, lay_s, activity, catalog, paths,
                  solids=(hydroxides(lay.metals), salts(lay.metals, catalog)))
    si = saturation(res, lay.metals, catalog)
    solids = saturated_solids(si, lay.metals)
    if not solids:
        warm = warning_texts(False, False, False, activity, True)   # 25 °C constants
        res = with_metal_fields(res, lay.metals, si)
        if abs(t_c - 25.0) > METAL_T_SPAN_C:
            res = dataclasses.replace(res, warnings=_with(res.warnings, warm))
        return res
    if davies is None:
        dav = paths.solve_davies(batch, lay, "davies", t_c, paths.held, paths.start)
        w = res.model_part.water_kg_per_l
        davies = _auto_davies(dav, activity, w, dav.ionic_strength_molar / w)
    text = SOLID_FALLBACK.format(solids=", ".join(solids))
    return dataclasses.replace(davies, warnings=_with(davies.warnings, (text,)))


def _pitzer_takes(lay: Layout) -> bool:
    """:func:`~carboy.model.pitzer_metals.pitzer_takes` (loaded with a modelled metal)."""
    from carboy.model.pitzer_metals import pitzer_takes

    return pitzer_takes(lay)


def _with_pairs(base, lay: Layout, activity: str, held):
    """The Davies result with the ion pairs, from the charge-only one ``base``."""
    t_c = base.temperature_c
    pr = build_problem(lay, base.batch.totals, held, base.pkw, water.debye_huckel_a(t_c))
    out = solve_with_pairs(pr, t_c, base.log_h.copy(), base.ionic_strength_molar.copy(),
                           base.converged)
    return _assemble(base, out, lay, table_of(lay, "davies", t_c), activity, ())


def _pitzer(batch, lay: Layout, activity: str, catalog, paths: _Paths, base=None,
            solids: tuple = ((), ())):
    """The Pitzer path: one solution on floats (``solver.pitzer_one``), a batch on
    arrays (``solver.pitzer_batch``), held species too (``pitzer_one.open_table``); where
    those do not take the table (an open system with a salt, a pair on a state), the
    outer loop (``solver.outer.solve_pitzer``) from the Davies result ``base``.  (The
    Pitzer path's modules load when it is first taken: a Davies command never needs them.)"""
    from carboy.model.pitzer_scalar import scalar_model
    from carboy.model.solver.pitzer_batch import FEW_POINTS, batch_outcome, few_outcome
    from carboy.model.solver.pitzer_one import one_outcome, one_table

    t_c = batch.temperature_c
    tab = table_of(lay, "pitzer", t_c)
    model = pitzer_for(tab, t_c)
    one = held = None
    if len(batch) and paths.frame is not None and not paths.held:
        one = one_table(lay, tab, water.pkw(t_c), *solids)
    elif len(batch) and paths.frame is not None:
        # held species (no solids on this path, as on the outer loop's)
        one, held = _opened(lay, tab, batch, paths.held)
    if one is not None:
        opened = None
        if held is None:
            w, notes = water_kg_per_litre(catalog, batch.keys, batch.totals, t_c)
        else:   # the water follows what the open systems hold (settled in the rounds)
            w, notes, opened = open_water(catalog, batch.keys, batch.totals, t_c, tuple(
                b for (b, _), h in zip(one.systems, one.held) if h >= 0))
        frame = paths.frame(batch, lay, activity, t_c)
        v0, w0 = _started(len(batch), len(tab.labels))
        if opened is not None and w0 is not None:   # an open solve's water: its start's
            w = np.where(np.isfinite(w0), 10.0 ** w0, w)
        x0 = None if paths.start is None else paths.start[0] - np.log10(w)   # molal
        if len(batch) == 1 and held is None and x0 is None and v0 is None:
            out = one_outcome(one, model, scalar_model(model), batch.totals[0].tolist(),
                              float(w[0]))
        elif len(batch) <= FEW_POINTS:
            out = few_outcome(one, model, batch.totals, w, x0, held, v0, opened)
        else:
            out = batch_outcome(one, model, batch.totals, w, held, x0, v0, opened)
        return _pitzer_result(frame, out, lay, tab, activity, out.extra["water_kg_per_l"],
                              notes)
    if base is None:
        base = paths.solve_davies(batch, lay, "davies", t_c, paths.held, paths.start)
    pr = build_problem(lay, base.batch.totals, paths.held, base.pkw, 0.0)
    opened = None
    if pr.am.mask is None:
        w, notes = water_kg_per_litre(catalog, batch.keys, base.batch.totals, t_c)
    else:
        w, notes, opened = open_water(catalog, batch.keys, base.batch.totals, t_c,
                                      tuple(np.asarray(lay.sys_cols)[pr.am.mask].tolist()))
    out = solve_pitzer(pr, model, tab, 1.0 / w, base.log_h.copy(), water=opened)
    return _pitzer_result(base, out, lay, tab, activity, out.extra["water_kg_per_l"], notes)


_COEFFICIENTS: ContextVar = ContextVar("pitzer_coefficients", default=None)


@contextmanager
def pitzer_start(log_gamma, log_water_activity):
    """Within this block, a Pitzer batch solve of N points whose species table has U
    columns (``Outcome.log_gamma``'s, a result's ``model_part.log_gamma`` on the Pitzer
    model) starts each point's coefficients from ``log_gamma`` (N, U) and
    ``log_water_activity`` (N,) (a nearby solution's: the same batch open to air, say; a
    row with a NaN: no start).  Other solves ignore it.  A start only saves rounds: a
    point settles on the same test whatever its start."""
    with _given(np.column_stack([log_gamma, log_water_activity])):
        yield


@contextmanager
def _given(v0: np.ndarray):
    """:func:`pitzer_start` with its two parts as one array (N, U + 1)."""
    token = _COEFFICIENTS.set(v0)
    try:
        yield
    finally:
        _COEFFICIENTS.reset(token)


def coefficients_of(res) -> np.ndarray | None:
    """(N, U + 2) the coefficients of a result on the Pitzer model (``model_part``:
    log10 γ of its species, log10 a_w, then log10 of the kg of water per litre, which
    starts an open solve's), as :func:`start_coefficients` takes them; None for a result
    on another model."""
    part = getattr(res, "model_part", None)
    if part is None or part.model != "pitzer" or part.water_activity is None:
        return None
    return np.column_stack([part.log_gamma, np.log10(part.water_activity),
                            np.log10(part.water_kg_per_l)])


def start_coefficients(v0: np.ndarray | None):
    """:func:`pitzer_start` with ``v0`` (N, U + 2) as :func:`coefficients_of` gives
    them (rows with a NaN: no start; the last column, the water per litre, starts only
    an open solve's, whose water follows what it holds); a block that does nothing for
    None."""
    return nullcontext() if v0 is None else _given(np.asarray(v0, dtype=float))


def _started(n: int, u: int):
    """The coefficients' starts (:func:`pitzer_start`, :func:`start_coefficients`) for a
    batch of ``n`` points and ``u`` species: (N, U + 1) and the log10 water per litre
    (N,) or None; (None, None) without."""
    v0 = _COEFFICIENTS.get()
    if v0 is None or v0.ndim != 2 or v0.shape[0] != n or v0.shape[1] not in (u + 1, u + 2):
        return None, None
    return v0[:, :u + 1], (v0[:, u + 1] if v0.shape[1] == u + 2 else None)


def _opened(lay: Layout, tab, batch: MixtureBatch, held):
    """The float table of ``lay`` with the ``held`` systems open, and each point's held
    mol/L of them (N, H); (None, None) where the float path does not take it."""
    from carboy.model.solver.pitzer_one import one_table, open_table

    ot = one_table(lay, tab, water.pkw(batch.temperature_c))
    if ot is None:
        return None, None
    am = held_amounts(lay, np.ascontiguousarray(batch.totals[:, lay.sys_cols].T), held)
    places = tuple(int(j) if on else -1 for j, on in zip(am.j0.tolist(), am.mask.tolist()))
    opened = open_table(ot, places)
    return opened, (None if opened is None else am.held[am.mask].T)


def pitzer_one_fields(catalog, lay: Layout, keys: tuple[str, ...], row: list,
                      t_c: float) -> dict | None:
    """The fields of a ``Speciation`` (all but ``mixture``) of one solution (``row`` its
    totals, mol/L, floats) under the Pitzer model, worked out in floats as the batch
    path's result of one point would hold them; None where the float path does not
    take the layout (metals, a pair on a state)."""
    if lay.metals is not None:
        return None
    from carboy.model.pitzer import I_MAX_MOLAL
    from carboy.model.pitzer_scalar import scalar_model
    from carboy.model.solver.pitzer_one import model_warnings, solve_one_pitzer

    tab, ot, model, pkw, hot = _one_setup(lay, t_c)
    if ot is None:
        return None
    w, notes = water_kg_one(catalog, keys, row, t_c)
    try:
        x, m, lg, (_, aw, ionic, _), rounds, ok = solve_one_pitzer(
            ot, scalar_model(model), row, 1.0 / w)
    except NUMERIC_FAILURES as exc:   # past the model's reach: the batch path says so
        if beyond_reach(exc):
            return None
        raise
    _, common = model_warnings(model, m, ionic)
    code = int(ionic > I_MAX_MOLAL) + 2 * int(not ok)
    labels, z = tab.labels, ot.charges
    molar = [v * w for v in m]
    species = dict(zip(labels, molar))
    fractions = {}
    for key, labs, (_, states) in zip(lay.sys_keys, lay.sys_labels, ot.systems):
        tot = sum(m[s[0]] for s in states)
        fractions[key] = MappingProxyType(dict(zip(labs, (
            m[s[0]] / tot if tot > 0 else 0.0 for s in states))))
    log_h = x + math.log10(w)
    return dict(
        pH=-(x + lg[0]), h_molar=10.0 ** log_h, oh_molar=species["OH-"], pkw=pkw,
        species=MappingProxyType(species), fractions=MappingProxyType(fractions),
        activity_coefficients=MappingProxyType({lab: 10.0 ** v for lab, v in zip(labels, lg)}),
        ionic_strength_molar=0.5 * sum(c * q * q for c, q in zip(molar, z)),
        temperature_c=t_c, activity="pitzer", warnings=_pitzer_texts(common + notes + hot)[code],
        converged=ok, iterations=rounds, charge_residual_molar=sum(map(mul, molar, z)),
        model_part=ModelPoint("pitzer", ph_scale_of("pitzer"), w, ionic, aw))


_SETUP: dict = {}


def _one_setup(lay: Layout, t_c: float):
    """What :func:`pitzer_one_fields` needs of a layout at a temperature (the Pitzer
    table, its float table, the model, pKw, the temperature's warning), cached beside the
    layout (layouts are cached and never change)."""
    key = (id(lay), t_c)
    hit = _SETUP.get(key)
    if hit is not None and hit[0] is lay:
        return hit[1]
    from carboy.model.solver.pitzer_one import one_table

    tab = table_of(lay, "pitzer", t_c)
    pkw = water.pkw(t_c)
    hot = tuple(t for t in warning_texts(False, False, t_c > ENTHALPY_DATA_MAX_C, "pitzer")
                if "enthalpy data" in t)
    got = (tab, one_table(lay, tab, pkw), pitzer_for(tab, t_c), pkw, hot)
    if len(_SETUP) >= 512:
        _SETUP.clear()
    _SETUP[key] = (lay, got)
    return got


def _pitzer_result(base, out: Outcome, lay: Layout, tab, activity: str, w, notes):
    """The batch result of the Pitzer path in the frame ``base``."""
    from carboy.model.pitzer import I_MAX_MOLAL

    molal_i = out.extra["ionic_strength_molal"]
    hot = tuple(t for t in base.warnings[0] if "enthalpy data" in t) if len(base) else ()
    own = out.extra["point_warnings"]     # each point's, whatever batch it is in
    texts = {o: _pitzer_texts(o + notes + hot) for o in set(own)}
    code = (molal_i > I_MAX_MOLAL).astype(int) + 2 * (~out.converged).astype(int)
    warnings = tuple(texts[o][c] for o, c in zip(own, code.tolist()))
    return _assemble(base, out, lay, tab, activity, warnings, model_part=ModelPart(
        "pitzer", out.log_gamma, w, molal_i, out.extra["water_activity"]))


@lru_cache(maxsize=256)
def _pitzer_texts(common: tuple[str, ...]) -> tuple[tuple[str, ...], ...]:
    """The warnings of a Pitzer point by code: +1 beyond I_MAX_MOLAL, +2 unsettled."""
    from carboy.model.pitzer import I_MAX_MOLAL

    high = (f"ionic strength above {I_MAX_MOLAL:g} mol/kg, beyond the range the "
            "specific-interaction parameters were fitted to: treat the pH as indicative only")
    bad = "the solver did not reach its tolerance: the result is approximate"
    return tuple(common + ((high,) if c & 1 else ()) + ((bad,) if c & 2 else ())
                 for c in range(4))


def _with(warnings, extra: tuple[str, ...]):
    if not extra:
        return warnings
    return tuple(w + tuple(e for e in extra if e not in w) for w in warnings)


def _davies_log_gamma(res) -> np.ndarray:
    """(N, S) log10 γ of each species of a Davies (or ideal) result, by its charge."""
    z = np.abs(np.asarray(res.species_charges, dtype=int))
    return res.log_gamma_by_charge[:, z]


def _by_charge(lg: np.ndarray, charges: np.ndarray, zmax: int) -> np.ndarray:
    """(N, zmax+1): per |z|, the mean log10 γ of the species of that charge (for
    callers that read coefficients by charge; 0 for |z| = 0 or none)."""
    z = np.abs(charges).astype(int)
    if np.isfinite(lg).all():   # (a NaN would reach every charge's weighted sum)
        return np.einsum("nu,uq->nq", lg, _charge_shares(tuple(z.tolist()), zmax))
    out = np.zeros((lg.shape[0], zmax + 1))
    for q in range(1, zmax + 1):
        sel = z == q
        if sel.any():
            out[:, q] = lg[:, sel].mean(axis=1)
    return out


@lru_cache(maxsize=256)
def _charge_shares(z: tuple[int, ...], zmax: int) -> np.ndarray:
    """(U, zmax+1): 1/k where a species is one of the k of its |z| (0 for |z| = 0), so
    that the weighted sum of the log10 γ is their mean by charge."""
    share = np.zeros((len(z), zmax + 1))
    for q in range(1, zmax + 1):
        sel = [i for i, c in enumerate(z) if c == q]
        share[sel, q] = 1.0 / len(sel) if sel else 0.0
    return share


def _assemble(base, out: Outcome, lay: Layout, tab, activity: str, warnings, **more):
    """The batch result of an outer loop, in the frame of the Davies result ``base``
    (``more``: other fields of the result set in the same step)."""
    alpha, ceff = out.systems
    z = tab.charges
    table = out.table
    residual = np.einsum("nu,u->n", table, z)
    ionic = 0.5 * np.einsum("nu,u->n", table, z * z)
    if not warnings:
        code = (ionic > DAVIES_LIMIT_MOLAR) & (base.activity != "ideal")
        warnings = _pair_warnings(base.warnings, code, out.converged)
    zmax = max(lay.zmax, int(np.abs(z).max(initial=1)))
    return dataclasses.replace(
        base, pH=out.ph, log_h=out.x, ionic_strength_molar=ionic,
        charge_residual_molar=residual, converged=out.converged & base.converged,
        iterations=base.iterations + out.iterations, species_labels=tab.labels,
        species_charges=tuple(int(c) for c in z.tolist()), species_molar=table,
        fractions=padded_fractions(alpha, lay), system_totals_molar=ceff.T,
        log_gamma_by_charge=_by_charge(out.log_gamma, z, zmax), activity=activity,
        warnings=warnings, **more)


def _pair_warnings(before, high_i: np.ndarray, settled: np.ndarray) -> tuple:
    """Each point's warnings after the pairs' loop: those of the charge-only solve
    ``before``, the ionic-strength one as ``high_i`` now says, the unsettled one where
    not ``settled`` (worked out once per distinct case: a curve has a handful)."""
    high = outside_range_warning("davies")

    def one(w, c, ok):
        w = _drop(w, high) + ((high,) if c else ())
        return w if ok else w + _unsettled(w)

    code = high_i.astype(int) + 2 * (~settled).astype(int)
    if len(before) and len({id(w) for w in before}) == 1:   # the usual case
        texts = [one(before[0], c & 1, not c & 2) for c in range(4)]
        if code.min() == code.max():
            return (texts[int(code[0])],) * len(before)
        return tuple(map(texts.__getitem__, code.tolist()))
    memo: dict = {}
    out = []
    for w, c in zip(before, code.tolist()):
        got = memo.get((w, c))
        if got is None:
            got = memo[(w, c)] = one(w, c & 1, not c & 2)
        out.append(got)
    return tuple(out)


def _drop(texts: tuple[str, ...], text: str) -> tuple[str, ...]:
    return tuple(t for t in texts if t != text)


@lru_cache(maxsize=1)
def _unsettled_text() -> str:
    return "the solver did not reach its tolerance: the result is approximate"


def _unsettled(texts: tuple[str, ...]) -> tuple[str, ...]:
    return () if _unsettled_text() in texts else (_unsettled_text(),)
