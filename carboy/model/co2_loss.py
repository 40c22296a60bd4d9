"""The CO2 a carbonate dose loses right after the addition: L(n), from a coarse grid.

CO2(aq) beyond its solubility at 1 atm (``s_sat``) leaves as it forms, and lost CO2
never returns: the loss at n is the largest loss needed anywhere along the addition up
to n.  On the curve grid that is the running maximum of the saturation loss
(:meth:`~carboy.model.gas.TitrationModel.saturation_loss_mol`, one open solve at 1 atm
per amount); between grid amounts, the larger of the running maximum below and the
loss at n itself.

The saturation loss along a titration rises while the acid turns each carbonate into
CO2 and falls once the carbonate takes the CO2 up again (as bicarbonate): it is
monotone between the few turns.  So it is solved at every ``LOSS_STRIDE``-th grid
amount that needs it, and then around each turn of those (each coarse local maximum,
the ends included when they rise): first at the amounts about the vertex of the
parabola through the turn and its coarse neighbours (every turn in one solve; the
demo containers' turns are settled there), else by halving the spacing about the
largest amount solved there, until both neighbours on the grid of the largest are
solved: the grid's running maximum is then the one solving every amount gives (its
largest value is solved), provided the loss is monotone on either side of its turns.  Between the solved amounts of a monotone stretch it is only bounded
(:attr:`FreshLoss.run_hi`), which is enough to tell where the batch vents to the state
open to air (there the loss does not enter the batch); an amount whose loss is needed
there is solved then.  A loss that turns more often than the coarse amounts can show
(more than ``MAX_TURNS`` turns) is solved at every amount.
"""

from __future__ import annotations

import math

import numpy as np

LOSS_STRIDE = 8
"""The coarse grid of the saturation loss: every this-many-th amount that needs it."""
MAX_TURNS = 4
"""More turns of the coarse loss than this: every amount is solved."""


class FreshLoss:
    """L(n): CO2 lost (mol) right after adding n (see the module docstring), from the
    saturation loss solved on the coarse grid and around its turns.

    ``run_lo`` is the running maximum of the solved amounts (the loss's running maximum
    on the grid wherever ``run_lo == run_hi``), ``run_hi`` a bound above it at every
    grid amount.  Calling it gives the loss at any amounts; :meth:`upper` a bound above
    it that takes no solve."""

    def __init__(self, model, grid: np.ndarray, s_sat: float, run_lo: np.ndarray,
                 run_hi: np.ndarray) -> None:
        self.model, self.grid, self.s_sat = model, grid, s_sat
        self.run_lo, self.run_hi = run_lo, run_hi

    def __call__(self, n, saturated=None) -> np.ndarray:
        """The loss at ``n``; ``saturated``: the open state at 1 atm of the amounts of
        ``n`` that need it (``model.saturation_need``), when already solved."""
        n = np.atleast_1d(np.asarray(n, dtype=float))
        model, grid = self.model, self.grid
        if n.shape == grid.shape and np.array_equal(n, grid) and saturated is None:
            out = self.run_lo.copy()   # on the grid the running maximum is the loss itself
            unsure = np.flatnonzero(self.run_hi > self.run_lo)
            if unsure.size:   # a monotone stretch: the larger of its own and those below
                out[unsure] = np.maximum(out[unsure],
                                         model.saturation_loss_mol(grid[unsure], self.s_sat))
            return out
        idx = np.clip(np.searchsorted(grid, n, side="right") - 1, 0, len(grid) - 1)
        if saturated is not None:
            return np.maximum(self.run_lo[idx], model.loss_from(n, saturated, self.s_sat))
        out = self.run_lo[idx]
        # a grid amount whose running maximum is settled is its loss; the others solved
        rest = np.flatnonzero((grid[idx] != n) | (self.run_hi[idx] > self.run_lo[idx]))
        if rest.size:
            out[rest] = np.maximum(out[rest], model.saturation_loss_mol(n[rest], self.s_sat))
        return out

    def upper(self, n) -> np.ndarray:
        """A bound above the loss at ``n`` (mol), without a solve: the bound on the grid
        at or below n, or the loss that would leave CO2(aq) alone at ``s_sat`` (the
        state at 1 atm holds at least its CO2(aq)), whichever is larger."""
        n = np.atleast_1d(np.asarray(n, dtype=float))
        grid, model = self.grid, self.model
        if n.shape == grid.shape and np.array_equal(n, grid):
            return self.run_hi.copy()
        idx = np.clip(np.searchsorted(grid, n, side="right") - 1, 0, len(grid) - 1)
        alone = model.carbonate_total_mol(n) - self.s_sat * (model.v0 + n * model.lpm)
        return np.maximum(self.run_hi[idx], np.maximum(alone, 0.0))


def loss_amounts(need: np.ndarray) -> np.ndarray:
    """The grid indices solved first: every ``LOSS_STRIDE``-th that needs the loss, and
    the last that does."""
    at = np.flatnonzero(need)
    if at.size <= 3 * LOSS_STRIDE:
        return at
    return np.unique(np.r_[at[::LOSS_STRIDE], at[-1]])


def turns(coarse: np.ndarray, loss: np.ndarray) -> np.ndarray | None:
    """Where the loss at the solved grid indices ``coarse`` (ascending) turns: the
    positions in ``coarse`` of its local maxima (an end counts where it is not below
    its neighbour; a zero loss never does), or None for more than ``MAX_TURNS``."""
    if coarse.size < 2:
        return np.zeros(0, dtype=int)
    left = np.r_[True, loss[1:] >= loss[:-1]]      # not below its left neighbour
    right = np.r_[loss[:-1] >= loss[1:], True]     # nor its right one
    found = np.flatnonzero(left & right & (loss > 0))
    return None if found.size > MAX_TURNS else found


def settle_turns(solve, here: np.ndarray, solved: np.ndarray, coarse: np.ndarray) -> bool:
    """Solve the grid amounts that settle the running maximum at each turn of the loss
    solved at ``coarse``: halving the spacing around the largest solved amount near the
    turn until its neighbours on the grid are solved (``solve(indices)`` gives their
    loss; ``here`` and ``solved`` are updated in place).  False where the loss turns
    more than ``MAX_TURNS`` times (nothing is solved then)."""
    found = turns(coarse, here[coarse])
    if found is None:
        return False
    last = coarse.size - 1
    # each turn: its grid index and the half-width of the window the maximum lies in
    wide = [max(coarse[min(t + 1, last)] - coarse[t], coarse[t] - coarse[max(t - 1, 0)])
            for t in found.tolist()]
    live = [(int(coarse[t]), 1 << (int(w) - 1).bit_length())   # a power of two
            for t, w in zip(found.tolist(), wide)]
    # first the amount the parabola through the coarse neighbours puts the maximum at,
    # with its neighbours (every turn in one solve): where it is the maximum there,
    # that turn is settled; else the halving below finds it
    near = [_parabola(coarse, here, t) for t in found.tolist()]
    ask = sorted({i for g in near for i in g if i < here.size and not solved[i]})
    if ask:
        at = np.array(ask)
        here[at] = solve(at)
        solved[at] = True
    live = [cw for cw, g in zip(live, near) if not _peak(here, solved, g, cw[0])]
    while live:
        step = [(c, max(w // 2, 1)) for c, w in live]
        ask = sorted({i for c, h in step for i in (c - h, c + h)
                      if 0 <= i < here.size and not solved[i]})
        if ask:
            at = np.array(ask)
            here[at] = solve(at)
            solved[at] = True
        nxt = []
        for c, h in step:
            near = [i for i in (c - h, c, c + h) if 0 <= i < here.size and solved[i]]
            best = max(near, key=lambda i: here[i])
            if h > 1:
                nxt.append((best, h))
        live = nxt
    return True


def _parabola(coarse: np.ndarray, here: np.ndarray, t: int) -> range:
    """The grid indices about the vertex of the parabola through the loss at the
    coarse turn ``t`` (a position in ``coarse``) and its two coarse neighbours: the two
    either side of it and their outer neighbours, strictly between those coarse
    neighbours; none at an end of the coarse grid or where the three are no peak."""
    if not 0 < t < coarse.size - 1:
        return range(0)
    lo, c, hi = (int(i) for i in coarse[t - 1:t + 2])
    y0, y1, y2 = float(here[lo]), float(here[c]), float(here[hi])
    if hi - c != c - lo or not y0 - 2.0 * y1 + y2 < 0.0:
        return range(0)
    vertex = c + 0.5 * (c - lo) * (y0 - y2) / (y0 - 2.0 * y1 + y2)
    return range(max(math.floor(vertex) - 1, lo + 1), min(math.ceil(vertex) + 1, hi - 1) + 1)


def _peak(here: np.ndarray, solved: np.ndarray, near: range, c: int) -> bool:
    """True where the largest loss solved among the grid indices ``near`` is not below
    the coarse turn ``c``'s, and both its neighbours on the grid are solved and not
    above it: the maximum about that turn (the loss is monotone on either side)."""
    got = [i for i in near if solved[i]]
    if not got:
        return False
    g = max(got, key=lambda i: here[i])
    if here[g] < here[c]:
        return False
    return all(solved[i] and here[i] <= here[g] for i in (g - 1, g + 1)
               if 0 <= i < here.size)


def bounds(here: np.ndarray, solved: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(run_lo, run_hi) on the grid from the loss ``here`` at the ``solved`` amounts
    (0 elsewhere): the running maximum of the solved, and above it the next solved
    amount's loss (monotone between solved amounts)."""
    run_lo = np.maximum.accumulate(np.where(solved, here, 0.0))
    at = np.flatnonzero(solved)
    nxt = np.clip(np.searchsorted(at, np.arange(here.size)), 0, max(at.size - 1, 0))
    ahead = here[at[nxt]] if at.size else np.zeros(here.size)
    return run_lo, np.maximum(run_lo, np.where(solved, run_lo, ahead))
