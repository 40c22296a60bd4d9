"""Activity coefficients for the speciation solver: the Davies equation, or ideal.

The interface the solver relies on
----------------------------------
Every model here gives each species the coefficient

    log10 gamma_i = -ad * z_i²,        ad = A · D(I)

with one number ``ad`` per solution: ``A`` from :func:`debye_huckel_scale` (the
Debye–Hückel A at the temperature for ``"davies"``, 0 for ``"ideal"``) and ``D`` from
:func:`davies_d` (its slope :func:`davies_dprime` for Newton steps on the ionic
strength; :func:`davies_d_and_slope` gives both at once; the ``_float`` twins serve
the one-solution path, which works in plain Python floats).  Because the coefficients depend on the charge alone, a conditional
constant needs only ``ad`` (``log10 K' = log10 K - 2 ad (z_acid - 1)``), the solver's
result keeps them as :func:`log_gamma_by_charge`, and the ionic strength is the one
extra unknown.  Where the solver uses them: the vectorized paths build each state's
weight as 10**(log beta0 - 2·ad·cmat - j·x) in ``solver.charge_balance.state_weights``
(H+ and OH- as two more rows, OH- through log10 Kw' = 2·ad - pKw), and take the
derivatives with respect to ``ad`` for the Newton step in (x, I) through the rows'
``cmat`` (``row_c``); the one-solution path does the same in floats
(``solver.single``).  Models not of this form (the specific-interaction model, and
ion pairs) are solved by the outer loops of ``solver.outer``: a per-state term
(``problem.Amounts.shift``, an (S, N) array) and a per-point effective pKw held around
the guaranteed path; ``speciation_models`` routes ``"pitzer"``, ``"auto"`` and
``"davies"`` where ion pairs form there.

References
----------
C. W. Davies, Ion Association, Butterworths, London (1962), p. 41.
"""

from __future__ import annotations

import math

import numpy as np

from carboy.errors import InvalidInput
from carboy.model import water

ACTIVITY_MODELS = ("auto", "pitzer", "davies", "ideal")
"""Names accepted by ``activity=`` everywhere in the model: ``"pitzer"`` and ``"auto"``
are solved through ``speciation_models`` (the specific-interaction model); where a
Davies-form coefficient is needed for them (a start, an inverse), Davies stands in."""

DAVIES_LIMIT_MOLAR = 0.5
"""Above this ionic strength the Davies equation is outside its range."""


def check_model(activity: str) -> str:
    """``activity`` if it names a model of ``ACTIVITY_MODELS``; InvalidInput otherwise."""
    if activity not in ACTIVITY_MODELS:
        raise InvalidInput("activity model", activity,
                           f"choose one of {', '.join(ACTIVITY_MODELS)}")
    return activity


def debye_huckel_scale(activity: str, temperature_c: float) -> float:
    """``A`` of ``log10 gamma = -A D(I) z²``: Debye–Hückel A, 0 when ideal (Davies
    stands in for ``"pitzer"`` and ``"auto"`` where a charge-only form is needed)."""
    return water.debye_huckel_a(temperature_c) if activity != "ideal" else 0.0


def davies_d(ionic):
    """D(I) = sqrt(I)/(1 + sqrt(I)) - 0.3 I, with I held at DAVIES_LIMIT_MOLAR above it.

    D peaks (and the coefficients bottom out) near I = 0.52 M, right at the edge of the
    equation's range; beyond it the formula climbs to absurd coefficients (10**7 at
    50 M), so above the limit the coefficients keep their value at the limit and the
    result carries the validity warning (:func:`outside_range_warning`).
    """
    ionic = np.minimum(ionic, DAVIES_LIMIT_MOLAR)
    sq = np.sqrt(ionic)
    return sq / (1.0 + sq) - 0.3 * ionic


def davies_dprime(ionic):
    """dD/dI (0 above DAVIES_LIMIT_MOLAR, where D is held)."""
    sq = np.sqrt(ionic)
    with np.errstate(divide="ignore"):
        slope = np.where(sq > 0, 0.5 / (sq * (1.0 + sq) ** 2), 0.0) - 0.3
    return np.where(ionic < DAVIES_LIMIT_MOLAR, slope, 0.0)


def davies_d_and_slope(ionic):
    """(:func:`davies_d`, :func:`davies_dprime`) of positive ionic strengths, together
    (one square root; the solver's Newton steps need both)."""
    held = np.minimum(ionic, DAVIES_LIMIT_MOLAR)
    sq = np.sqrt(held)
    one = 1.0 + sq
    d = sq / one - 0.3 * held
    slope = 0.5 / (sq * one * one) - 0.3
    slope[ionic >= DAVIES_LIMIT_MOLAR] = 0.0
    return d, slope


def davies_d_float(ionic: float) -> float:
    """:func:`davies_d` of one ionic strength, in plain Python floats (same arithmetic)."""
    i_act = min(ionic, DAVIES_LIMIT_MOLAR)
    sq = math.sqrt(i_act)
    return sq / (1.0 + sq) - 0.3 * i_act


def davies_dprime_float(ionic: float) -> float:
    """:func:`davies_dprime` of one ionic strength, in plain Python floats."""
    if not ionic < DAVIES_LIMIT_MOLAR:
        return 0.0
    sq = math.sqrt(ionic)
    return (0.5 / (sq * (1.0 + sq) ** 2) if sq > 0 else 0.0) - 0.3


def log_gamma_by_charge(ad: np.ndarray, zmax: int) -> np.ndarray:
    """(N, zmax+1) log10 gamma of a species of charge ±z, z = 0..zmax, for each ``ad``."""
    zs = np.arange(zmax + 1, dtype=float)
    return -(zs[None, :] ** 2) * ad[:, None]


def outside_range_warning(activity: str) -> str:
    """The warning a result carries when its ionic strength is above DAVIES_LIMIT_MOLAR."""
    ideal = activity == "ideal"
    model = "ideal-solution" if ideal else "Davies"
    return (
        f"ionic strength is above {DAVIES_LIMIT_MOLAR:g} M, outside the validity of the "
        f"{model} activity model: treat the pH as indicative only"
        + ("" if ideal else f" (activity coefficients held at their "
           f"{DAVIES_LIMIT_MOLAR:g} M values)")
    )
