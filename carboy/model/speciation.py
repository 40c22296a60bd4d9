"""Exact acid–base speciation: charge balance with mass balances, solved for log10[H+].

For a solution of acid–base systems (each a ladder of dissociation steps) and
spectator ions, the fraction of each system in each protonation state is a
function of [H+] alone; the charge balance

    f(x) = [H+] - [OH-] + sum(z c, spectators) + sum_k C_k zbar_k(x) = 0,   x = log10[H+]

is then one equation in x.  Its derivative

    df/dx = ln(10) ([H+] + [OH-] + sum_k C_k Var_k(j))

is positive everywhere, so f is strictly increasing and has exactly one root.  It
is bracketed from the totals alone (``solver.charge_balance.bracket``) and found by
Newton steps that fall back to bisection whenever a step leaves the bracket: the
root cannot be missed.  No textbook approximation is made.

Modelled metal ions (``metals.toml``: Zn2+, Cu2+, Al3+, Fe3+, Ca2+ ...) are not
spectators: their hydrolysis, and their hydroxides and calcium salts present or absent
by saturation, join the charge balance at every trial x (``solver.metal_terms``); f
stays increasing, with kinks where a solid appears, which the guaranteed path settles.

Activity follows the Davies equation, log10 gamma = -A z² (sqrt(I)/(1+sqrt(I)) - 0.3 I),
with A from the temperature (``water.debye_huckel_a``) and the ionic strength I
iterated to self-consistency; pH is -log10 a(H+).  ``activity="ideal"`` sets every
activity coefficient to 1 and pH = -log10[H+] (see :mod:`carboy.model.activity`).
Temperature enters through pKw (IAPWS R11-07) and each step's pKa by the van 't Hoff
equation integrated with a constant heat-capacity change (Clarke & Glew form).
``activity="pitzer"`` and ``"auto"`` (the specific-interaction model, ion pairs), and
``"davies"`` where ion pairs form (NaSO4-, KSO4- ...), are routed to
:mod:`carboy.model.speciation_models`; ``state_at`` stays charge-only.

This module is the public API: :func:`speciate` (one solution), :func:`speciate_batch`
(N solutions in one set of numpy operations, not a Python loop), :func:`state_at`
(fractions at a given pH, for inverse problems) and their result objects.  The paths
that do the work are in :mod:`carboy.model.solver`: a solution goes first through the
fast path (``solver.single`` for one solution in plain Python, ``solver.coupled``
vectorized), and any point that path leaves unsettled through the guaranteed path
(``solver.bracketed``).  The tolerances are named constants in
``solver.constants``, re-exported here.

References
----------
C. W. Davies, Ion Association, Butterworths, London (1962), p. 41.
E. C. W. Clarke and D. N. Glew, Trans. Faraday Soc. 62, 539 (1966).
A. V. Bandura and S. N. Lvov, J. Phys. Chem. Ref. Data 35, 15 (2006).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

import numpy as np

from carboy.errors import InvalidInput
from carboy.model import water
from carboy.model.activity import (
    ACTIVITY_MODELS,
    DAVIES_LIMIT_MOLAR,
    check_model,
    davies_d,
    debye_huckel_scale,
    log_gamma_by_charge,
)
from carboy.model.activity import davies_d as _davies_d  # noqa: F401 (tests use the old name)
from carboy.model.mixture import Mixture, MixtureBatch
from carboy.model.result_warnings import METAL_T_SPAN_C, point_warnings
from carboy.model.result_warnings import warning_texts as _warning_texts
from carboy.model.solver.charge_balance import fractions_at, padded_fractions, species_at
from carboy.model.solver.constants import (  # noqa: F401 (re-exported)
    COUPLED_ITER,
    COUPLED_NEAR,
    F_TOL,
    I_RTOL,
    LN10,
    MAX_I_ITER,
    MAX_ROOT_ITER,
    QUADRATIC_STEP,
    WIDEN_STEPS,
    X_TOL,
)
from carboy.model.solver.layout import (  # noqa: F401 (re-exported)
    ENTHALPY_DATA_MAX_C,
    R_J_MOL_K,
    T_REF_K,
    Layout,
    cached_layout,
    pka_at,
)
from carboy.model.solver.layout import compile_layout as _layout  # noqa: F401 (tests)
from carboy.model.solver.outer import table_of
from carboy.model.solver.problem import Problem, build_problem
from carboy.model.solver.single import solve_one
from carboy.model.speciation_models import (
    ModelPart,
    ModelPoint,
    needs_route,
    ph_scale_of,
    pitzer_one_fields,
    route,
)

__all__ = [
    "ACTIVITY_MODELS", "COUPLED_ITER", "COUPLED_NEAR", "DAVIES_LIMIT_MOLAR",
    "ENTHALPY_DATA_MAX_C", "F_TOL", "I_RTOL", "LN10", "MAX_I_ITER", "MAX_ROOT_ITER",
    "QUADRATIC_STEP", "R_J_MOL_K", "T_REF_K", "WIDEN_STEPS", "X_TOL",
    "BatchSpeciation", "Speciation", "StateAt", "pka_at", "speciate", "speciate_batch",
    "start_along", "state_at",
]


@dataclass(frozen=True, eq=False, repr=False)
class Speciation:
    """The solved state of one solution.  Concentrations in mol/L.

    ``species`` holds every species (H+, OH-, spectator ions and every protonation
    state of every system); ``fractions[system][label]`` is the share of the
    system's total in each state.  ``charge_residual_molar`` is f at the root;
    ``converged`` says whether the root find and the ionic-strength iteration both
    met their tolerances.
    """

    pH: float
    h_molar: float
    oh_molar: float
    pkw: float
    species: Mapping[str, float]
    fractions: Mapping[str, Mapping[str, float]]
    activity_coefficients: Mapping[str, float]
    ionic_strength_molar: float
    temperature_c: float
    activity: str
    warnings: tuple[str, ...]
    converged: bool
    iterations: int
    charge_residual_molar: float
    mixture: Mixture | None = None
    solids: Mapping[str, float] = field(default_factory=dict)
    """Every solid the metals present may form -> mol of formula units per L (0: absent)."""
    saturation_indices: Mapping[str, float] = field(default_factory=dict)
    """The same solids -> log10(IAP / K)."""
    dissolved_metals: Mapping[str, float] = field(default_factory=dict)
    """Each modelled metal ion -> its dissolved total (free ion and complexes), mol/L."""
    model_part: ModelPoint | None = None   # the model used, mol/kg (speciation_models)

    @property
    def ph_scale(self) -> str:
        """What the pH means: ``"macinnes"``, ``"davies"`` or ``"concentration"``."""
        return self.model_part.ph_scale if self.model_part else ph_scale_of(self.activity)

    @property
    def molality(self) -> Mapping[str, float]:
        """Species in mol/kg of water (empty where the result has no model part)."""
        w = self.model_part.water_kg_per_l if self.model_part else 0.0
        return {k: v / w for k, v in self.species.items()} if w else {}

    def mean_protons_bound(self, system: str) -> float:
        """Average number of dissociable protons still bound per unit of ``system``."""
        fr = self.fractions[system]
        labels = list(fr)
        n = len(labels) - 1
        return float(sum((n - j) * fr[lab] for j, lab in enumerate(labels)))


@dataclass(frozen=True, eq=False, repr=False)
class BatchSpeciation:
    """The solved state of N solutions (arrays indexed by point first)."""

    pH: np.ndarray
    log_h: np.ndarray
    ionic_strength_molar: np.ndarray
    charge_residual_molar: np.ndarray
    converged: np.ndarray
    iterations: int
    species_labels: tuple[str, ...]
    species_charges: tuple[int, ...]
    species_molar: np.ndarray
    """(N, S) concentrations of ``species_labels``."""
    system_keys: tuple[str, ...]
    system_labels: tuple[tuple[str, ...], ...]
    fractions: np.ndarray
    """(N, K, M) fraction of system k in state j (padded with 0)."""
    log_gamma_by_charge: np.ndarray
    """(N, zmax+1) log10 activity coefficient for |z| = 0..zmax."""
    system_totals_molar: np.ndarray
    """(N, K) total of each system (given, or solved where a species was held)."""
    pkw: float
    temperature_c: float
    activity: str
    warnings: tuple[tuple[str, ...], ...]
    batch: MixtureBatch = field(repr=False, default=None)
    metal_keys: tuple[str, ...] = ()
    """The modelled metal ions (their species are among ``species_labels``)."""
    dissolved_metal_molar: np.ndarray | None = None
    """(N, len(metal_keys)) dissolved total of each metal (free ion and complexes)."""
    metal_oh_molar: np.ndarray | None = None
    """(N,) hydroxide the metals hold (complexes, hydroxides, basic salts), mol/L."""
    solid_names: tuple[str, ...] = ()
    """Every solid the metals present may form (hydroxides, oxides, salts)."""
    solids_molar: np.ndarray | None = None
    """(N, len(solid_names)) precipitated, mol of formula units per L (0: absent)."""
    saturation_indices: np.ndarray | None = None
    """(N, len(solid_names)) log10(IAP / K): 0 where present, < 0 where absent."""
    model_part: ModelPart | None = None

    def __len__(self) -> int:
        return self.pH.shape[0]

    def rows(self, idx) -> BatchSpeciation:
        """The points ``idx`` (a slice, indices or a mask) as a batch of their own."""
        def cut(a):
            return None if a is None else a[idx]

        return dataclasses.replace(
            self, pH=self.pH[idx], log_h=self.log_h[idx],
            dissolved_metal_molar=cut(self.dissolved_metal_molar),
            metal_oh_molar=cut(self.metal_oh_molar), solids_molar=cut(self.solids_molar),
            saturation_indices=cut(self.saturation_indices),
            ionic_strength_molar=self.ionic_strength_molar[idx],
            charge_residual_molar=self.charge_residual_molar[idx],
            converged=self.converged[idx], species_molar=self.species_molar[idx],
            fractions=self.fractions[idx], log_gamma_by_charge=self.log_gamma_by_charge[idx],
            system_totals_molar=self.system_totals_molar[idx],
            model_part=None if self.model_part is None else self.model_part.rows(idx),
            warnings=tuple(self.warnings[i] for i in np.arange(len(self))[idx].tolist()),
            batch=None if self.batch is None else MixtureBatch(
                self.batch.keys, self.batch.totals[idx], self.batch.temperature_c))

    def point(self, n: int) -> Speciation:
        """The result for point ``n`` as a :class:`Speciation`."""
        species = {lab: float(c) for lab, c in zip(self.species_labels, self.species_molar[n])}
        fr = {
            key: MappingProxyType({lab: float(self.fractions[n, k, j]) for j, lab in enumerate(labs)})
            for k, (key, labs) in enumerate(zip(self.system_keys, self.system_labels))
        }
        lg = self.log_gamma_by_charge[n]
        gam = {lab: float(10 ** lg[abs(z)])
               for lab, z in zip(self.species_labels, self.species_charges)}
        if self.model_part is not None:   # one coefficient per species
            gam = dict(zip(self.species_labels, (10.0 ** self.model_part.log_gamma[n]).tolist()))
        h = 10.0 ** float(self.log_h[n])
        return Speciation(
            pH=float(self.pH[n]),
            h_molar=h,
            oh_molar=species["OH-"],
            pkw=self.pkw,
            species=MappingProxyType(species),
            fractions=MappingProxyType(fr),
            activity_coefficients=MappingProxyType(gam),
            ionic_strength_molar=float(self.ionic_strength_molar[n]),
            temperature_c=self.temperature_c,
            activity=self.activity,
            warnings=self.warnings[n],
            converged=bool(self.converged[n]),
            iterations=self.iterations,
            charge_residual_molar=float(self.charge_residual_molar[n]),
            mixture=self.batch.mixture(n) if self.batch is not None else None,
            **self._metals_of(n),
            model_part=None if self.model_part is None else self.model_part.point(n),
        )

    def _metals_of(self, n: int) -> dict:
        """Point ``n``'s solids and dissolved metals as :class:`Speciation` holds them."""
        if not self.metal_keys:
            return {}
        return {"solids": MappingProxyType(dict(zip(self.solid_names,
                                                    self.solids_molar[n].tolist()))),
                "saturation_indices": MappingProxyType(dict(zip(
                    self.solid_names, self.saturation_indices[n].tolist()))),
                "dissolved_metals": MappingProxyType(dict(zip(
                    self.metal_keys, self.dissolved_metal_molar[n].tolist())))}


@dataclass(frozen=True, eq=False, repr=False)
class StateAt:
    """Fractions of every system at a given log10[H+] and ionic strength (no solve)."""

    system_keys: tuple[str, ...]
    system_labels: tuple[tuple[str, ...], ...]
    fractions: np.ndarray
    """(N, K, M) fraction of system k in state j."""
    charges: np.ndarray
    """(K, M) charge of each state (0 where padded)."""
    log_h: np.ndarray
    """(N,) log10 of the concentration of H+."""
    log_kw_conditional: np.ndarray
    """(N,) log10([H+][OH-]) at that ionic strength."""

    @property
    def mean_charge(self) -> np.ndarray:
        """(N, K) mean charge of each system."""
        return (self.fractions * self.charges[None]).sum(axis=2)


# --------------------------------------------------------------------------- entry points

def _catalog_or_default(catalog):
    """``catalog``, or the built-in one (imported here: it is slow to load)."""
    if catalog is None:
        from carboy.model.catalog import default_catalog

        catalog = default_catalog()
    return catalog


def speciate(mixture: Mixture, *, activity: str = "davies", catalog=None,
             held: Mapping[str, tuple[str, float]] | None = None) -> Speciation:
    """Solve one mixture; see :func:`speciate_batch` (same arithmetic, one solution)."""
    check_model(activity)
    catalog = _catalog_or_default(catalog)
    t_c = water.check_temperature(mixture.temperature_c)
    keys = tuple(mixture.totals)
    row = list(mixture.totals.values())
    if held:
        batch = MixtureBatch(keys, np.array([row]).reshape(1, len(keys)), t_c)
        res = speciate_batch(batch, activity=activity, catalog=catalog, held=held).point(0)
        return Speciation(**{**res.__dict__, "mixture": mixture})
    lay = cached_layout(catalog, keys, t_c)
    if needs_route(lay, activity, t_c):
        if activity == "davies":   # ion pairs form: first the plain-Python outer loop
            got = _pairs_one(lay, row, t_c)
        else:   # the Pitzer model on floats, without the batch result around it
            got = pitzer_one_fields(catalog, lay, keys, [float(v) for v in row], t_c) \
                if activity == "pitzer" else None
        if got is not None:
            return Speciation(**got, mixture=mixture)
        batch = MixtureBatch(keys, np.array([row]).reshape(1, len(keys)), t_c)
        res = route(batch, lay, activity, catalog, None, None, _solve, _frame).point(0)
        return Speciation(**{**res.__dict__, "mixture": mixture})
    pkw = water.pkw(t_c)
    a_dh = debye_huckel_scale(activity, t_c)
    if lay.metals is not None:   # the plain-Python path where no solid forms
        from carboy.model.solver.single_metals import solve_unsaturated  # with the metals

        fast = solve_unsaturated(lay, row, pkw, a_dh, max_iter=COUPLED_ITER)
    else:
        fast = solve_one(lay, row, pkw, a_dh, max_iter=COUPLED_ITER) if lay.python_path else None
    if fast is None:
        batch = MixtureBatch(keys, np.array([row]).reshape(1, len(keys)), t_c)
        res = _solve(batch, lay, activity, t_c).point(0)
        return Speciation(**{**res.__dict__, "mixture": mixture})
    from carboy.model.speciation_one import one_fields  # the float paths' (not Pitzer's)

    return Speciation(**one_fields(lay, row, *fast[:3], pkw, a_dh, t_c, activity, *fast[3:]),
                      mixture=mixture)


def _pairs_one(lay: Layout, row: list, t_c: float) -> dict | None:
    """The fields of one solution solved with its ion pairs in plain Python, or None."""
    from carboy.model.solver.single_pairs import solve_pairs_one
    from carboy.model.speciation_one import pairs_fields

    pkw = water.pkw(t_c)
    tab = table_of(lay, "davies", t_c)
    got = solve_pairs_one(lay, tab, row, pkw, debye_huckel_scale("davies", t_c),
                          max_iter=COUPLED_ITER)
    return None if got is None else pairs_fields(lay, tab, got, pkw, t_c, "davies")


def speciate_batch(batch: MixtureBatch, *, activity: str = "davies", catalog=None,
                   held: Mapping[str, tuple[str, object]] | None = None,
                   start: BatchSpeciation | tuple | None = None) -> BatchSpeciation:
    """Solve every mixture of ``batch`` at once.

    Parameters
    ----------
    batch : mixtures sharing keys and temperature (0–100 °C); totals in mol/L.
    activity : ``"davies"`` (default), ``"ideal"``, ``"pitzer"`` or ``"auto"`` (see
        :mod:`carboy.model.speciation_models`).
    catalog : where the keys are looked up; the built-in catalog by default.
    held : open systems: ``{system key: (species label, mol/L)}`` holds that species at
        that concentration (a number or one per point) instead of fixing the system's
        total, e.g. ``{"carbonate": ("CO2", 1.4e-5)}`` for a solution in equilibrium
        with air.  The system's solved total is in ``system_totals_molar``.
    start : a solved batch of the same length whose roots (log10[H+] and ionic
        strength) each point starts from (a nearby state: the same batch open to air,
        say), or those two arrays themselves.  It saves steps only: the results are
        the same within the tolerances.
        Without it, a long batch is warm-started along its points (neighbours alike).

    Returns
    -------
    BatchSpeciation, with ``converged`` True where the root find met ``X_TOL`` or
    ``F_TOL`` and the ionic strength agreed to ``I_RTOL`` between iterations.
    """
    check_model(activity)
    catalog = _catalog_or_default(catalog)
    t_c = water.check_temperature(batch.temperature_c)
    if held:
        missing = tuple(k for k in held if k not in batch.keys)
        if missing:  # a held system need not be in the batch: it gets a zero column
            batch = MixtureBatch(batch.keys + missing, np.hstack(
                [batch.totals, np.zeros((len(batch), len(missing)))]), batch.temperature_c)
    lay = cached_layout(catalog, batch.keys, t_c)
    guess = None
    if start is not None:
        guess = ((start.log_h, start.ionic_strength_molar)
                 if isinstance(start, BatchSpeciation) else start)
        guess = tuple(np.asarray(g, dtype=float).reshape(-1) for g in guess)
        if len(guess) != 2 or any(g.shape[0] != len(batch) for g in guess):
            raise InvalidInput("start", f"{len(guess)} arrays",
                               f"expected log10[H+] and ionic strength for {len(batch)} points")
    if needs_route(lay, activity, t_c):
        return route(batch, lay, activity, catalog, held, guess, _solve, _frame)
    return _solve(batch, lay, activity, t_c, held, guess)


def start_along(at, nodes, result: BatchSpeciation) -> tuple[np.ndarray, np.ndarray]:
    """Starts for :func:`speciate_batch` (``start=``) at the positions ``at`` (amounts
    of reagent, say) from a solved curve ``result`` at the increasing positions
    ``nodes``: the roots between its points, a cubic where the curve is smooth and the
    straight line in the excess of H+ over OH- across a jump
    (see :mod:`carboy.model.solver.starts`)."""
    from carboy.model.solver.starts import start_between

    return start_between(np.asarray(at, dtype=float), np.asarray(nodes, dtype=float),
                         result.log_h, result.ionic_strength_molar, result.pkw)


def state_at(keys: tuple[str, ...], ph, ionic_strength, *, temperature_c: float = 25.0,
             activity: str = "davies", catalog=None) -> StateAt:
    """The speciation's building block for inverse problems (the dose that reaches a pH).

    ``ph`` is -log10 a(H+) as the solver reports it; ``ionic_strength`` in mol/L (one
    per point, or one for all).  Same constants and activity model as the solver.
    ``log_h`` of the result is log10 of the concentration of H+.
    """
    check_model(activity)
    catalog = _catalog_or_default(catalog)
    t_c = water.check_temperature(temperature_c)
    lay = cached_layout(catalog, tuple(keys), t_c)
    ph = np.atleast_1d(np.asarray(ph, dtype=float))
    ionic = np.broadcast_to(np.asarray(ionic_strength, dtype=float), ph.shape)
    a_dh = debye_huckel_scale(activity, t_c)
    ad = a_dh * davies_d(ionic)
    x = ad - ph  # pH = -(x + log10 gamma_H) with log10 gamma_H = -ad
    alpha = padded_fractions(fractions_at(x, ad if a_dh != 0.0 else None, lay), lay)
    return StateAt(lay.sys_keys, lay.sys_labels, alpha, lay.z, x, 2.0 * ad - water.pkw(t_c))


# --------------------------------------------------------------------------- the solve

def _solve(batch: MixtureBatch, lay: Layout, activity: str, t_c: float,
           held=None, start=None, *, root_only: bool = False) -> BatchSpeciation:
    """Solve every point of ``batch`` (laid out by ``lay``) and assemble the result.
    ``root_only`` (the Davies equation, no metals): the result holds the root, the
    ionic strength, ``converged``, the iterations and the warnings (as
    :func:`_batch_result`'s) in an empty result (:func:`_frame`), for a path that only
    starts from it and replaces the rest (the ion pairs' loop)."""
    pkw = water.pkw(t_c)
    a_dh = debye_huckel_scale(activity, t_c)
    pr = build_problem(lay, batch.totals, held, pkw, a_dh)
    x, ionic, converged, iterations = _solve_points(pr, start)
    if root_only and a_dh != 0.0 and lay.metals is None:
        return dataclasses.replace(
            _frame(batch, lay, activity, t_c), pH=a_dh * davies_d(ionic) - x, log_h=x,
            ionic_strength_molar=ionic, converged=converged, iterations=iterations,
            warnings=point_warnings(ionic, converged, t_c, activity, False))
    return _batch_result(pr, batch, x, ionic, converged, iterations, activity, t_c)


def _frame(batch: MixtureBatch, lay: Layout, activity: str, t_c: float) -> BatchSpeciation:
    """An empty result of ``batch`` that another path fills (``speciation_models``):
    the systems, temperature, pKw and the temperature's warnings."""
    n = len(batch)
    zero = np.zeros(n)
    warn = _warning_texts(False, False, t_c > ENTHALPY_DATA_MAX_C, activity)
    return BatchSpeciation(
        pH=zero, log_h=zero, ionic_strength_molar=zero, charge_residual_molar=zero,
        converged=np.ones(n, dtype=bool), iterations=0, species_labels=(),
        species_charges=(), species_molar=np.zeros((n, 0)), system_keys=lay.sys_keys,
        system_labels=lay.sys_labels, fractions=np.zeros((n, 0, 0)),
        log_gamma_by_charge=np.zeros((n, 1)), system_totals_molar=np.zeros((n, 0)),
        pkw=water.pkw(t_c), temperature_c=t_c, activity=activity, warnings=(warn,) * n,
        batch=batch)


def _solve_points(pr: Problem, start=None):
    """``(x, ionic, converged, iterations)`` for every point of ``pr``.

    One solution (with an unshifted layout) goes through the plain-Python fast path,
    several through the vectorized one, warm-started along the batch (or from
    ``start``, a pair of arrays (log10[H+], I)); points the fast paths leave unsettled
    go to the guaranteed path.  The fast paths get ``COUPLED_ITER`` from this module.
    With metals, see :func:`~carboy.model.solver.bracketed.solve_with_metals`.  (The
    vectorized and guaranteed paths' modules load when a batch first needs them: one
    solution on the plain-Python path, as `carboy ph` solves, never does.)
    """
    n = pr.ispec.shape[0]
    if pr.lay.metals is not None:   # kinks where solids appear: see solve_with_metals
        from carboy.model.solver.bracketed import solve_with_metals

        return solve_with_metals(pr, start, max_iter=COUPLED_ITER)
    fast = None
    if n == 1 and start is None and pr.lay.python_path:  # the plain-Python path
        fast = solve_one(pr.lay, pr.totals[0].tolist(), pr.pkw, pr.a_dh, pr.held_of(0),
                         max_iter=COUPLED_ITER)
    if fast is not None:
        x, ionic = np.array([fast[0]]), np.array([fast[1]])
        ok, iterations = np.array([True]), fast[2]
    else:
        from carboy.model.solver.coupled import solve_warm

        x0, i0 = (None, None) if start is None else start
        x, ionic, ok, iterations = solve_warm(pr, max_iter=COUPLED_ITER, x0=x0, i0=i0)
    converged = ok.copy()
    outer = 0
    for a in range(0, n, pr.lay.chunk):
        bad = a + np.flatnonzero(~ok[a:a + pr.lay.chunk])
        if bad.size:
            from carboy.model.solver.bracketed import solve_nested

            x[bad], ionic[bad], converged[bad], it = solve_nested(pr[bad], x[bad], ionic[bad])
            outer = max(outer, it)
    return x, ionic, converged, iterations + outer


def _batch_result(pr: Problem, batch: MixtureBatch, x, ionic, converged, iterations,
                  activity: str, t_c: float) -> BatchSpeciation:
    """Species, fractions, coefficients and warnings of the solved points (worked out
    block by block, see ``Layout.chunk``)."""
    lay, n = pr.lay, x.shape[0]
    ad = pr.a_dh * davies_d(ionic)
    log_kw = -pr.pkw + 2.0 * ad
    h = np.exp(LN10 * x)             # exp: a vector loop, where ** takes pow point by point
    oh = np.exp(LN10 * (log_kw - x))
    k, m = lay.z.shape
    labels = _species_labels(lay)
    n_metal = 0 if lay.metals is None else len(lay.metals.labels)
    # points last, as the solver works (row writes); the result holds their transposes
    # (the metals' species in the last rows)
    table = np.empty((len(labels) + n_metal, n))
    fractions = np.zeros((k * m, n))
    c_sys = np.empty((k, n))
    sums = np.empty((3, n))
    first = 2 + len(lay.ion_labels)
    table[0], table[1] = h, oh
    table[2:first] = batch.totals[:, lay.ion_cols].T
    metal_states = []
    for a in range(0, n, lay.chunk):
        b = min(n, a + lay.chunk)
        st = species_at(x[a:b], ad[a:b] if pr.a_dh != 0.0 else None, log_kw[a:b], lay,
                        pr.am[a:b])
        table[first:len(labels), a:b] = st["conc"]
        fractions[lay.flat_index, a:b] = st["alpha"]
        c_sys[:, a:b] = st["ceff"]
        sums[:, a:b] = st["sums"]
        metal_states.append(st["metal"])
    residual = (pr.zs_pos + sums[0]) - (pr.zs_neg + sums[1])
    # with activity, report the ionic strength the coefficients were computed with
    ionic_out = ionic if pr.a_dh != 0.0 else pr.ispec + 0.5 * sums[2]
    metal_part = {}
    if lay.metals is not None and n:
        from carboy.model.solver.metal_terms import columns as metal_columns  # with them

        cols = metal_columns(lay.metals, metal_states)
        table[len(labels):] = cols.species.T
        labels = labels + lay.metals.labels
        metal_part = {"metal_keys": lay.metals.keys, "dissolved_metal_molar": cols.dissolved,
                      "metal_oh_molar": cols.oh_bound, "solid_names": lay.metals.solids,
                      "solids_molar": cols.solids, "saturation_indices": cols.saturation}
    species_labels, species = _merge_labels(labels, table[:len(labels)].T)
    warm = lay.metals is not None and abs(t_c - 25.0) > METAL_T_SPAN_C
    warnings = point_warnings(ionic_out, converged, t_c, activity, warm)
    return BatchSpeciation(
        pH=ad - x,  # -log10 a(H+) = -(x + log10 gamma_H), with log10 gamma_H = -ad
        log_h=x, ionic_strength_molar=ionic_out, charge_residual_molar=residual,
        converged=converged, iterations=iterations, species_labels=species_labels,
        species_charges=tuple(lay.charge_map[lab] for lab in species_labels),
        species_molar=species, system_keys=lay.sys_keys, system_labels=lay.sys_labels,
        fractions=fractions.T.reshape(n, k, m),
        log_gamma_by_charge=log_gamma_by_charge(ad, lay.zmax), pkw=pr.pkw,
        temperature_c=t_c, activity=activity, warnings=warnings,
        system_totals_molar=c_sys.T, batch=batch, **metal_part,
    )


def _species_labels(lay: Layout) -> tuple[str, ...]:
    """H+, OH-, the spectator ions, then every state of every system (flat order)."""
    return ("H+", "OH-", *lay.ion_labels, *(lab for labs in lay.sys_labels for lab in labs))


def _merge_labels(labels: tuple[str, ...], table: np.ndarray):
    """A label that two components share (Na+ from two salts, say) summed into one
    column: ``(labels, (N, columns) concentrations)``."""
    if len(set(labels)) == len(labels):
        return labels, table
    merged: dict[str, int] = {}
    for lab in labels:
        merged.setdefault(lab, len(merged))
    out = np.zeros((table.shape[0], len(merged)))
    for col, lab in enumerate(labels):
        out[:, merged[lab]] += table[:, col]
    return tuple(merged), out
