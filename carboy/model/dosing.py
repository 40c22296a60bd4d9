"""Where a dose lands: the doses that reach given pHs, and the batch after any dose.

The doses are exact inverses of the titration (see
:meth:`~carboy.model.gas.TitrationModel.amount_at_pH`).  When carbonate is present,
CO2(aq) beyond its solubility at 1 atm leaves as it forms and lost CO2 never returns:
the carbonate kept after adding n is the total added minus the running maximum of the
loss needed to bring CO2(aq) down to saturation along the addition.  Once the batch
has vented to air, CO2(aq) falls further, to K_H·pCO2(air) (none is taken up from the
air).  Doses, stages and the curve are for the vented batch; :meth:`Dosing.batch_at`
also gives the state right after the addition.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, NamedTuple

import numpy as np

from carboy.model import gas, numbers
from carboy.model.mixture import MixtureBatch, titration_batch
from carboy.model.speciation import BatchSpeciation, speciate_batch
from carboy.model.speciation_models import coefficients_of, settles_forward, start_coefficients

if TYPE_CHECKING:  # co2_loss loads with carbonate (grid_losses): most plans have none
    from carboy.model.co2_loss import FreshLoss

CURVE_SPAN = 1.3
"""The pH curve runs from 0 to this times the largest dose of interest."""

REFINE_PH_TOL = 1e-6
"""A dose refined on the forward solve reaches its pH to this."""
REFINE_ROUNDS = 40
"""Forward solves (each of every dose at once) allowed to refine the doses."""

LossFunction = Callable[[np.ndarray], np.ndarray]
"""n (mol reagent) -> CO2 lost (mol) right after adding n."""


@dataclass(frozen=True, eq=False, repr=False)
class Dosing:
    """The doses of a plan and the batch each amount of reagent leaves.

    ``doses`` holds the amounts (mol) that reach the target pH and the two window edges,
    in the order asked: 0 where the sample is already past that pH, NaN where the
    reagent cannot reach it.  ``grid`` is the curve's amounts.  ``fresh_loss`` (None
    without carbonate) gives the CO2 lost right after an addition; ``s_air`` is the
    CO2(aq) of a batch vented to air (mol/L) and ``pco2_atm`` the air's CO2 pressure.
    """

    model: gas.TitrationModel
    composition: Mapping[str, float]
    l_per_mol: float
    doses: np.ndarray
    grid: np.ndarray
    fresh_loss: LossFunction | None
    s_air: float | None
    pco2_atm: float | None
    grid_air: gas.State | None = field(default=None, repr=False, compare=False)
    """The state open to air at every amount of ``grid`` (None without carbonate)."""
    seen: dict = field(default_factory=dict, repr=False, compare=False)
    """amount (mol) -> (CO2 lost right after adding it, carbonate kept once vented), as
    worked out for a batch (``co2_lost_mol`` reads it back)."""

    @property
    def carbonate(self) -> bool:
        """True when CO2 can leave the batch (carbonate is present)."""
        return self.fresh_loss is not None

    @property
    def target_reached(self) -> bool:
        """True when the first dose asked for (the target) is reachable."""
        return bool(np.isfinite(self.doses[0]))

    @property
    def target_mol(self) -> float:
        """The dose to the target, or 0 where it cannot be reached."""
        return self.doses[0] if self.target_reached else 0.0

    def batch_at(self, n, *, vented=True) -> tuple[MixtureBatch, np.ndarray]:
        """The batch after adding each amount ``n`` (mol) and its volumes (L): once vented
        to air (default), or right after the addition (``vented=False``; or one flag per
        amount)."""
        got = self._batch_and_air(np.asarray(n, dtype=float), vented)
        return got.batch, got.volume_l

    def solve(self, n, *, vented=True, start=None, curve=None
              ) -> tuple[BatchSpeciation, np.ndarray]:
        """:meth:`batch_at`, solved: the states and their volumes (L).  Each point starts
        from ``start`` where given (see :func:`~carboy.model.speciation.speciate_batch`),
        else from the same batch in equilibrium with air (which it equals wherever the
        air's level of CO2 is the lower; with the Pitzer model its coefficients too).
        ``curve``: the vented batch solved at every grid amount; a vented point's Pitzer
        coefficients then start from it (:meth:`_along_curve`)."""
        n = np.asarray(n, dtype=float)
        got = self._batch_and_air(n, vented, start)
        coefficients = got.coefficients
        if curve is not None:
            coefficients = self._along_curve(n, vented, coefficients, curve)
        with start_coefficients(coefficients):
            res = speciate_batch(got.batch, activity=self.model.activity,
                                 catalog=self.model.catalog,
                                 start=got.start if start is None else start)
        return res, got.volume_l

    def _along_curve(self, n: np.ndarray, vented, air, curve):
        """Starts of the Pitzer coefficients of the points ``n`` from the vented ``curve``
        (straight between grid amounts): a point whose vented state is the one open to
        air (``air``: its coefficients there, NaN elsewhere) from those (its own state,
        settled), another vented point from the curve's own, a point right after the
        addition from none.  ``air`` itself where there is no curve of coefficients."""
        on_curve = coefficients_of(curve)
        if on_curve is None or air is None:
            return air
        k = np.clip(np.searchsorted(self.grid, n), 1, self.grid.size - 1)
        t = ((n - self.grid[k - 1]) / (self.grid[k] - self.grid[k - 1]))[:, None]

        def straight(v):
            return v[k - 1] + t * (v[k] - v[k - 1])

        out = np.where(np.isfinite(air), air, straight(on_curve))
        out[~np.broadcast_to(np.asarray(vented, dtype=bool), n.shape)] = np.nan
        return out

    def vented_pH(self, n) -> np.ndarray:  # noqa: N802
        """The pH once vented after adding each amount ``n`` (mol): :meth:`solve`'s,
        without the second solve where the vented batch is the one open to air (its
        state is then that solve's, to the solver's tolerance; on the Pitzer model too,
        whose open solve takes its water per litre from the carbonate it holds)."""
        if self.fresh_loss is None:   # (no carbonate)
            return self.solve(n)[0].pH
        got = self._batch_and_air(np.asarray(n, dtype=float), True)
        ph = got.air_pH.copy()
        rest = np.flatnonzero(np.isnan(ph))
        if rest.size:
            b = got.batch
            with start_coefficients(None if got.coefficients is None
                                    else got.coefficients[rest]):
                ph[rest] = speciate_batch(MixtureBatch(b.keys, b.totals[rest], b.temperature_c),
                                          activity=self.model.activity,
                                          catalog=self.model.catalog).pH
        return ph

    def _batch_and_air(self, n: np.ndarray, vented, air_start=None):
        """The batch and its volumes (see :meth:`batch_at`), and a vented point whose
        state is the one open to air starts from its root (and, on the Pitzer model, its
        coefficients: ``coefficients_of``), the others from none (:class:`_Vented`).
        The loss right after the addition is solved only where it enters the batch (a
        vented amount whose loss could not bring its carbonate below the air's level
        vents to the state open to air whatever the loss: ``open_to_air``)."""
        b, vol = titration_batch(self.model.sample, self.composition, n, self.l_per_mol)
        if self.fresh_loss is None:
            return _Vented(b, vol)
        vented = np.broadcast_to(np.asarray(vented, dtype=bool), n.shape)
        on_grid = (self.grid_air is not None and n.shape == self.grid.shape
                   and np.array_equal(n, self.grid))
        air = self.grid_air if on_grid else None
        if vented.any() and air is None:
            air = self.model.forward(n, co2_molar=self.s_air, start=air_start)
        at_air = None if air is None else air.carbonate_molar() * air.volume_l
        sure = open_to_air(self.fresh_loss, n, at_air, vented)
        # the loss of every amount not sure (and of a sure one also asked unvented)
        solve = ~sure | np.isin(n, n[~sure])
        loss = np.full(n.shape, np.nan)
        if solve.any():
            once, back = np.unique(n[solve], return_inverse=True)
            loss[solve] = self.fresh_loss(once)[back]
        total = self.model.carbonate_total_mol(n)
        kept = np.where(np.isnan(loss), np.inf, np.maximum(total - loss, 0.0))
        start = coefficients = air_ph = None
        if vented.any():
            exact = vented & (at_air <= kept)   # these points are the state open to air
            kept = np.where(vented, np.minimum(kept, at_air), kept)
            for a, lost, k, v in zip(n.tolist(), loss.tolist(), kept.tolist(), vented.tolist()):
                if v:
                    self.seen[a] = (None if lost != lost else lost, k)
            if exact.any():
                start = (np.where(exact, air.result.log_h, np.nan),
                         np.where(exact, air.result.ionic_strength_molar, np.nan))
                air_ph = np.where(exact, air.result.pH, np.nan)
                coefficients = coefficients_of(air.result)
                if coefficients is not None:
                    coefficients = np.where(exact[:, None], coefficients, np.nan)
        tot = b.totals.copy()
        tot[:, b.keys.index(gas.CARBONATE)] = kept / vol
        return _Vented(MixtureBatch(b.keys, tot, b.temperature_c), vol, start, coefficients,
                       np.full(n.shape, np.nan) if air_ph is None else air_ph)

    def co2_lost_mol(self, n_end: float) -> tuple[float, float]:
        """CO2 given off (mol) by adding ``n_end``: right after the addition, and in all
        once the batch has vented to air (0, 0 without carbonate)."""
        if self.fresh_loss is None:
            return 0.0, 0.0
        if float(n_end) in self.seen:   # worked out already, for a batch that held it
            fresh, kept = self.seen[float(n_end)]
            if fresh is None:   # its loss did not enter that batch: not solved there
                fresh = float(self.fresh_loss(np.array([n_end]))[0])
            return fresh, float(self.model.carbonate_total_mol([n_end])[0]) - kept
        fresh = float(self.fresh_loss(np.array([n_end]))[0])
        vented = float(self.model.carbonate_total_mol([n_end])[0]
                       - kept_carbonate_mol(self.model, np.array([n_end]), self.fresh_loss,
                                            self.s_air)[0])
        return fresh, vented


class _Vented(NamedTuple):
    """A batch after additions (``Dosing._batch_and_air``): its totals and volumes, the
    solver's starts (None, or log10[H+] and I of the points whose state is the one open
    to air, NaN elsewhere), the Pitzer coefficients' starts there (or None) and that
    state's pH (NaN elsewhere; None without carbonate)."""

    batch: MixtureBatch
    volume_l: np.ndarray
    start: tuple | None = None
    coefficients: np.ndarray | None = None
    air_pH: np.ndarray | None = None  # noqa: N815


def open_to_air(fresh_loss, n: np.ndarray, at_air, vented) -> np.ndarray:
    """Where the vented batch after each amount ``n`` is surely the state open to air
    (holding ``at_air`` mol of carbonate), whatever its loss right after the addition:
    even the largest loss :meth:`FreshLoss.upper` allows leaves more carbonate.  False
    where that takes a solve (a loss function without the bound, or unvented)."""
    upper = getattr(fresh_loss, "upper", None)
    if at_air is None or upper is None or not np.any(vented):
        return np.zeros(n.shape, dtype=bool)
    least = fresh_loss.model.carbonate_total_mol(n) - upper(n)
    with np.errstate(invalid="ignore"):
        return vented & (at_air * (1.0 + 1e-9) <= least)


def find_doses(model: gas.TitrationModel, composition: Mapping[str, float], l_per_mol: float,
               targets: np.ndarray, n_full: float, *, initial_pH: float,  # noqa: N803
               direction: str, points: int) -> Dosing:
    """The doses that reach each pH of ``targets`` and the curve grid of ``points`` amounts.

    ``model`` is the sample with the reagent of ``composition`` (``l_per_mol`` litres of
    it per mol); ``n_full`` (mol) the dose that neutralizes every dissociable proton, which
    the curve also covers; ``direction`` ``"base"`` or ``"acid"`` from ``initial_pH``.
    """
    t_c = model.temperature_c
    carbonate = model.carb is not None
    s_sat = gas.henry_co2_molar_per_atm(t_c) * 1.0
    pco2 = gas.air_pco2_atm() if carbonate else None
    s_air = gas.henry_co2_molar_per_atm(t_c) * pco2 if carbonate else None
    if not carbonate:
        doses = model.amount_at_pH(targets)
        span = CURVE_SPAN * max(n_full, np.nanmax(np.r_[doses, 0.0]))
        span = span if span > 0 else 1e-6
        grid = np.linspace(0.0, span, points)
        fresh_loss = grid_air = None
    else:
        doses, grid, fresh_loss, grid_air = _vented_doses(model, targets, n_full, s_sat,
                                                          s_air, points, direction)
    # doses on the wrong side of the start are unreachable in this direction
    for i, ph_i in enumerate(targets):
        if (direction == "base" and ph_i <= initial_pH) or (
                direction == "acid" and ph_i >= initial_pH):
            doses[i] = 0.0
    found = Dosing(model, composition, l_per_mol, doses, grid, fresh_loss, s_air, pco2,
                   grid_air=grid_air)
    if settles_forward(model.activity, model.keys, model.catalog, t_c):
        # the inverse took charge-only Davies coefficients: settle on the forward solve
        return refine_doses(found, targets, direction)
    return found


def fresh_loss_function(model: gas.TitrationModel, grid: np.ndarray,
                        s_sat: float) -> LossFunction:
    """L(n): CO2 lost (mol) right after adding n, with saturation at 1 atm.

    CO2(aq) beyond ``s_sat`` leaves as it forms, and lost CO2 never returns: the loss
    at n is the largest loss needed anywhere along the addition up to n.
    """
    return grid_losses(model, grid, s_sat)[0]


def grid_losses(model: gas.TitrationModel, grid: np.ndarray, s_sat: float,
                s_air: float | None = None, *, every: bool = False
                ) -> tuple[FreshLoss, gas.State | None]:
    """:func:`fresh_loss_function` and (given ``s_air``) the state open to air at every
    amount of the grid: the loss at 1 atm on the coarse grid (:mod:`~carboy.model.co2_loss`)
    and the state open to air in one solve, then the amounts around the loss's turns;
    ``every``: at every amount of the grid in that one solve (a batch made acid starts
    alkaline, where it keeps less carbonate than the air would leave it: the loss enters
    its vented states along much of the curve)."""
    from carboy.model.co2_loss import FreshLoss, bounds, loss_amounts, settle_turns

    need = model.saturation_need(grid, s_sat)
    coarse = np.flatnonzero(need) if every else loss_amounts(need)
    levels = [(grid[coarse], s_sat)] if coarse.size else []
    if s_air is not None:
        levels.append((grid, s_air))
    states = model.open_states(levels) if levels else []
    here = np.zeros(grid.size)
    solved = ~need

    def solve(at):
        return model.saturation_loss_mol(grid[at], s_sat)

    if coarse.size:
        here[coarse] = model.loss_from(grid[coarse], states[0], s_sat)
        solved[coarse] = True
        if not settle_turns(solve, here, solved, coarse):   # every amount, then
            rest = np.flatnonzero(~solved)
            here[rest], solved[rest] = solve(rest), True
    run_lo, run_hi = bounds(here, solved)
    return (FreshLoss(model, grid, s_sat, run_lo, run_hi),
            states[-1] if s_air is not None else None)


def kept_carbonate_mol(model: gas.TitrationModel, n: np.ndarray, fresh_loss: LossFunction,
                       s_air: float | None) -> np.ndarray:
    """Carbonate left (mol) after adding ``n``: right after the addition (``s_air``
    None), or once vented to air, where CO2(aq) falls to ``s_air`` if it was above it
    (carbonate only leaves; none is taken up from the air)."""
    kept = np.maximum(model.carbonate_total_mol(n) - fresh_loss(n), 0.0)
    if s_air is None:
        return kept
    air = model.forward(n, co2_molar=s_air)
    return np.minimum(kept, air.carbonate_molar() * air.volume_l)


def _fresh_state_doses(model: gas.TitrationModel, targets, doses, todo, loss_of) -> None:
    """Fill ``doses[todo]`` where the batch does not degas at the target, so the state
    right after the addition is the final one: the loss and the dose are iterated
    together (a few rounds; the loss moves little)."""
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


def _vented_doses(model: gas.TitrationModel, targets, n_full, s_sat, s_air, points,
                  direction: str):
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
    loss_of, grid_air = grid_losses(model, grid, s_sat, s_air, every=direction != "base")
    doses = np.full(len(targets), np.nan)
    ok = np.isfinite(n_air)
    if ok.any():
        na = n_air[ok]
        air = model.forward(na, co2_molar=s_air)
        at_air = air.carbonate_molar() * air.volume_l
        degassing = open_to_air(loss_of, na, at_air, True)   # these without their loss
        if not degassing.all():
            rest = np.flatnonzero(~degassing)
            fresh = model.carbonate_total_mol(na[rest]) - loss_of(na[rest])
            degassing[rest] = at_air[rest] <= fresh * (1 + 1e-9)
        doses[np.flatnonzero(ok)[degassing]] = na[degassing]
    todo = np.flatnonzero(np.isnan(doses))
    if todo.size:
        _fresh_state_doses(model, targets, doses, todo, loss_of)
    far = np.nanmax(np.r_[doses, 0.0])
    if CURVE_SPAN * far > span * 1.0001:
        grid = np.linspace(0.0, CURVE_SPAN * max(far, n_full), points)
        loss_of, grid_air = grid_losses(model, grid, s_sat, s_air, every=direction != "base")
    return doses, grid, loss_of, grid_air


def refine_doses(dosing: Dosing, targets, direction: str) -> Dosing:
    """The doses settled on the forward solve: with ``activity="auto"`` or ``"pitzer"``
    the coefficients depend on the whole composition, and with ion pairs (``"davies"``
    too) the pairs take their share, so the exact inverse
    (:meth:`gas.TitrationModel.amount_at_pH`, which takes Davies coefficients) gives a
    start, and the dose that reaches each pH on the model's own curve is found from there.

    Both searches run on the Davies-dose scale: g(n) = D(pH(n)) - D(target), with pH(n)
    the model's forward pH and D that inverse.  D is monotone in the pH (rising with the
    dose either way), so g has the root the pH has; and D flattens the steep rise of the
    pH near an equivalence point (g is nearly n - n0 where the two models differ
    little).  The secant method on g settles most doses in a few forward solves (every
    dose at once); a dose it leaves is found by Illinois false position inside a bracket
    (:func:`_false_position`).  Where D is undefined (a pH the closed Davies batch cannot
    reach) g takes the sign of the pH's miss.  A dose is settled when its pH is within
    :data:`REFINE_PH_TOL` of the target."""
    doses = dosing.doses.copy()
    idx = np.flatnonzero(np.isfinite(doses) & (doses > 0))
    if idx.size == 0:
        return dosing
    sign = 1.0 if direction == "base" else -1.0
    want = np.asarray(targets, dtype=float)[idx]
    inverse = _dose_scale(dosing, want, doses[idx])
    aim = inverse(want, np.arange(idx.size))

    def g(n, which):
        """(g, pH - target) at doses ``n`` of the doses ``which`` (one forward solve)."""
        ph = dosing.vented_pH(n)
        miss = ph - want[which]
        with np.errstate(invalid="ignore"):
            on_scale = inverse(ph, which) - aim[which]
            steep = np.where(miss == 0.0, 0.0, np.sign(sign * miss) * np.inf)
        return np.where(np.isfinite(on_scale), on_scale, steep), miss

    n, miss = _secant(g, doses[idx], _first_slope(inverse, want))
    left = np.flatnonzero(~(np.abs(miss) <= REFINE_PH_TOL))
    if left.size:
        n[left] = _false_position(lambda m, which: g(m, left[which]), n[left])
    # to 12 significant digits: the pH is settled to REFINE_PH_TOL, and the last bits of a
    # root would differ between two runs whose sums round differently
    doses[idx] = [numbers.settled(v) for v in n.tolist()]
    return dataclasses.replace(dosing, doses=doses)


def _dose_scale(dosing: Dosing, want: np.ndarray, found: np.ndarray):
    """D for each dose: ``D(pH, which)`` the Davies dose that reaches each pH, for the
    doses ``which`` (see :func:`refine_doses`).  Closed without carbonate.  With
    carbonate, the vented batch's own Davies inverse near each dose ``found``: open to
    air where that dose was the open-system root, else closed with the CO2 lost at that
    dose; the closed batch holding every carbonate is a different curve, whose slope sent
    the secant far off a steep end point (each D is monotone in the pH, so g's root is
    the pH's)."""
    model = dosing.model
    if not dosing.carbonate:
        return lambda ph, which: model.amount_at_pH(ph)
    on_air = model.amount_at_pH(want, co2_molar=dosing.s_air) == found
    loss = np.full(found.shape, np.nan)   # only the doses off the air's branch need it
    if (~on_air).any():
        loss[~on_air] = dosing.fresh_loss(found[~on_air])

    def inverse(ph, which):
        air = on_air[which]
        out = np.full(ph.shape, np.nan)
        if (~air).any():
            out[~air] = model.amount_at_pH(ph[~air], carbonate_loss_mol=loss[which][~air])
        if air.any():
            out[air] = model.amount_at_pH(ph[air], co2_molar=dosing.s_air)
        return out

    return inverse


SECANT_ROUNDS = 6
"""Forward solves the secant may take before the bracketing search takes over."""


SLOPE_STEP_PH = 1e-4
"""Half the pH step of the difference quotients of :func:`_first_slope`."""


def _first_slope(inverse, want: np.ndarray):
    """g's slope at the doses the exact inverse gave (``slope(miss, which)``, the pH's
    miss the first forward solve found there), on each dose's Davies dose scale D
    (``inverse(pH, which)``, see :func:`refine_doses` and :func:`_dose_scale`):
    g'(n) = D'(pH(n)) pH'(n), and the model's curve taken as steep as the Davies curve
    at the same dose, pH'(n0) = 1/D'(target) (n0 = D(target)): D'(pH(n0)) / D'(target),
    each a difference quotient of the inverse.  About an equivalence point, where the
    steepness changes fast, slope one sent the first step as far off as the first miss
    (a plan of HF 0.74 M with solid NaOH: 2e-3 pH after it, 8e-6 with this slope; the
    demo's carbonate plans take a forward solve fewer); NaN where D is undefined (slope
    one there)."""
    def slope(miss, which):
        ph = want[which] + miss
        at = np.concatenate([ph - SLOPE_STEP_PH, ph + SLOPE_STEP_PH,
                             want[which] - SLOPE_STEP_PH, want[which] + SLOPE_STEP_PH])
        d = inverse(at, np.tile(which, 4)).reshape(4, -1)
        with np.errstate(divide="ignore", invalid="ignore"):
            return (d[1] - d[0]) / (d[3] - d[2])
    return slope


def _secant(g, start: np.ndarray, first_slope=None) -> tuple[np.ndarray, np.ndarray]:
    """The secant method on ``g`` from ``start`` (the first step takes slope one, or
    ``first_slope(miss, which)`` where that is finite and positive, ``miss`` the pH's
    miss at the first doses): (the best dose found for each, the pH's miss there)."""
    k = start.size
    best, best_miss = start.copy(), np.full(k, np.inf)
    prev_n = prev_g = None
    n = start.copy()
    for _ in range(SECANT_ROUNDS):
        live = np.flatnonzero(np.isfinite(n) & (n > 0) & ~(np.abs(best_miss) <= REFINE_PH_TOL))
        if live.size == 0:
            break
        gl, ml = g(n[live], live)
        here_g = np.full(k, np.nan)
        here_g[live] = gl
        better = np.abs(ml) < np.abs(best_miss[live])
        best[live[better]], best_miss[live[better]] = n[live[better]], ml[better]
        with np.errstate(divide="ignore", invalid="ignore"):
            step = here_g if prev_g is None else here_g * (n - prev_n) / (here_g - prev_g)
        if prev_g is None and first_slope is not None:
            slope = np.full(k, np.nan)
            slope[live] = first_slope(ml, live)
            sloped = np.isfinite(slope) & (slope > 0)
            step = np.where(sloped, here_g / np.where(sloped, slope, 1.0), step)
        prev_n, prev_g = n, here_g
        n = np.where(np.isfinite(step), n - step, np.nan)
    return best, best_miss


def _false_position(g, start: np.ndarray) -> np.ndarray:
    """Roots of ``g`` (rising with the dose; ``g(n, which)`` gives it and the pH's miss
    for the doses ``which``), bracketed from ``start`` and found by Illinois false
    position; each root is kept once its pH's miss is within :data:`REFINE_PH_TOL`.
    Both ends of the first bracket and every widening are one forward solve."""
    k = start.size
    every = np.arange(k)
    ends, miss = g(np.r_[start * 0.999, start * 1.001], np.r_[every, every])
    lo, hi = start * 0.999, start * 1.001
    g_lo, g_hi = ends[:k], ends[k:]
    best = np.where(np.abs(miss[:k]) <= np.abs(miss[k:]), lo, hi)
    done = np.minimum(np.abs(miss[:k]), np.abs(miss[k:])) <= REFINE_PH_TOL
    for _ in range(REFINE_ROUNDS):   # widen until each dose is bracketed
        low, high = ~done & (g_lo > 0), ~done & (g_hi < 0)
        if not (low.any() or high.any()):
            break
        lo, hi = np.where(low, lo * 0.9, lo), np.where(high, hi * 1.1 + 1e-12, hi)
        which = np.r_[np.flatnonzero(low), np.flatnonzero(high)]
        new, _ = g(np.r_[lo[low], hi[high]], which)
        g_lo[low], g_hi[high] = new[:low.sum()], new[low.sum():]
    n = best.copy()
    moved = np.zeros(k)     # the end the last step moved: -1 the low one, +1 the high one
    for _ in range(REFINE_ROUNDS):
        live = np.flatnonzero(~done)
        if live.size == 0:
            break
        a, b, ga, gb = lo[live], hi[live], g_lo[live], g_hi[live]
        with np.errstate(divide="ignore", invalid="ignore"):
            guess = (a * gb - b * ga) / (gb - ga)
        guess = np.where(np.isfinite(guess) & (guess > a) & (guess < b), guess, 0.5 * (a + b))
        gn, mn = g(guess, live)
        n[live] = guess
        done[live] = np.abs(mn) <= REFINE_PH_TOL
        left = gn < 0
        # Illinois: an end kept a second time in a row has its value halved
        g_hi[live] = np.where(left, np.where(moved[live] < 0, gb * 0.5, gb), gn)
        g_lo[live] = np.where(left, gn, np.where(moved[live] > 0, ga * 0.5, ga))
        moved[live] = np.where(left, -1.0, 1.0)
        lo[live], hi[live] = np.where(left, guess, a), np.where(left, b, guess)
    return n
