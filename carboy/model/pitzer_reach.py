"""A solution the specific-interaction (Pitzer) model cannot be evaluated for at all.

Its parameters were fitted to about 6 mol/kg (``pitzer.I_MAX_MOLAL``); past that a result
says it is outside their range.  Far past it, in a concentrate with little water left
(96 % sulfuric acid holds about 0.07 kg of water a litre: some 250 mol/kg of acid), the
model's sums overflow or leave the domain of the logarithm.  Such a solve is not an
error of the input: ``activity="auto"`` then shows the Davies figures and says why, and
``activity="pitzer"`` is refused with the solution's molality named
(``speciation_models.route``).  A concentrate's acidity is not described by a pH in any
case: the figures are indicative, and the cautions say to dilute it first.
"""

from __future__ import annotations

from collections.abc import Iterator
from contextlib import contextmanager

import numpy as np

from carboy.errors import CarboyError, InvalidInput
from carboy.model.molality import water_kg_per_litre

NUMERIC_FAILURES = (OverflowError, ZeroDivisionError, FloatingPointError, ValueError)
"""What the model's float sums raise past its reach (``math.exp`` overflowing, ``math.log``
of a number that is not positive); carboy's own errors (``InvalidInput`` is a
ValueError) are not among them: see :func:`beyond_reach`."""


def beyond_reach(exc: BaseException) -> bool:
    """True where ``exc`` is the model's sums failing (not an error carboy raised)."""
    return isinstance(exc, NUMERIC_FAILURES) and not isinstance(exc, CarboyError)


AUTO_NOTE_START = "the specific-interaction (Pitzer) model cannot be evaluated"
"""How :func:`auto_note` begins (the planner looks for it among a batch's warnings)."""


def auto_note(molal_ionic) -> str:
    """The warning of an ``auto`` result that fell back to the Davies equation."""
    top = float(np.max(molal_ionic, initial=0.0))
    return (f"{AUTO_NOTE_START} at an ionic strength of about {top:.3g} mol/kg (its parameters were fitted to about "
            "6 mol/kg): the Davies figures are shown, indicative only; a concentrate's "
            "acidity is not described by a pH, so dilute it first")


@contextmanager
def refused_past_reach(catalog, batch) -> Iterator[None]:
    """Around a solve with ``activity="pitzer"``: the model's sums failing become
    :func:`refusal`."""
    try:
        yield
    except NUMERIC_FAILURES as exc:
        if beyond_reach(exc):
            raise refusal(catalog, batch) from exc
        raise


def refusal(catalog, batch) -> InvalidInput:
    """The error of ``activity="pitzer"`` asked of such a solution."""
    w, _ = water_kg_per_litre(catalog, batch.keys, batch.totals, batch.temperature_c)
    with np.errstate(divide="ignore", invalid="ignore"):
        molal = np.asarray(batch.totals).sum(axis=1) / np.asarray(w, dtype=float).ravel()
    top = float(np.nanmax(molal, initial=0.0))
    return InvalidInput(
        "activity", "pitzer",
        f"the specific-interaction model cannot be evaluated for this solution (about "
        f"{top:.3g} mol of solutes per kg of water, where its parameters were fitted to "
        "about 6 mol/kg): dilute it, or choose 'auto' or 'davies' for an indicative figure",
        field="activity")
