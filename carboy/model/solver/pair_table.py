"""The species table of a layout with its ion pairs, and the outer loops' tolerances.

Shared by the vectorized outer loops (:mod:`carboy.model.solver.outer`) and the
plain-Python one of one solution (:mod:`carboy.model.solver.single_pairs`), which the
former also takes for a few points: kept apart so that neither imports the other's
module for them.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

OUTER_TOL = 1e-9
"""The outer loop has settled a point when no term moved more than this (log10)."""
MAX_OUTER = 60
"""Rounds of the outer loop before a point is reported unsettled."""
LAGGED_ROUNDS = 12
"""Rounds of the Davies pairs' outer loops (``outer``, ``single_pairs``) that take one
Newton step of the inner problem each (its root and the pairs' terms settle together:
each round's step is taken with the last round's terms); later rounds solve the inner
problem in full.  A point settles on the same test either way: its Newton step accepted
at terms that then moved no more than ``OUTER_TOL``."""
SPLIT_ROUNDS = 200
"""Alternating mass-balance rounds that split a lumped row into free ions and pairs."""


@dataclass(frozen=True, eq=False, repr=False)
class Pair:
    """One ion pair in a layout: cation M (a spectator ion), ligand L (a state or OH-)."""

    label: str
    charge: int
    ion: int            # index of M among the layout's spectator ions
    state: int          # flat state of L, or -1 for OH-
    log_k: float        # log10 K of M + L = P at the temperature (I = 0)
    dz2: float          # z_M² + z_L² - z_P²


@dataclass(frozen=True, eq=False, repr=False)
class Table:
    """The species of a layout (and its pairs) as the columns of one table."""

    labels: tuple[str, ...]     # unique: H+, OH-, the ions, the states, the pairs
    charges: np.ndarray         # (U,)
    ion_cols: np.ndarray        # (J,) column of each spectator ion
    state_cols: np.ndarray      # (S,) column of each flat state
    pair_cols: np.ndarray       # (P,) column of each pair
    pairs: tuple[Pair, ...]
    state_j: np.ndarray         # (S,) protons each state lost from its top state
    state_water: np.ndarray     # (S,) water each state's formation from the top takes


__all__ = ["LAGGED_ROUNDS", "MAX_OUTER", "OUTER_TOL", "SPLIT_ROUNDS", "Pair", "Table"]
