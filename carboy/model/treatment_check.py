"""A recorded treatment checked against the model: does the dose logged fit the pH read?

A person records what was added and the pH measured; both are facts carboy keeps as
given.  But a pH meter misread (or not calibrated), a dose logged in the wrong unit, or
the wrong reagent would let a waste that is still strongly acidic be recorded "in the
window" and then disposed.  So the dose the model needs to bring the waste (as logged)
to the pH measured is worked out (the exact inverse, Davies activity, closed batch), and
a dose logged far from it, or a reagent that cannot reach that pH at all, gives a warning
that the record keeps.  Doses, not pH, are compared: near an equivalence point a 1 %
difference in the amounts moves the pH by several units, where the doses agree.

The bounds are wide (``DOSE_RATIO``: half to twice the model's dose) because the
waste's contents are what was logged, the pH is read after venting and at the bench's
temperature, and a carbonate reagent loses CO2: the check is for a gross contradiction
only (common practice: a treatment log is reviewed when dose and reading disagree).
"""

from __future__ import annotations

import math

from carboy.errors import CarboyError
from carboy.model import numbers
from carboy.model.gas import TitrationModel
from carboy.model.mixture import Mixture
from carboy.model.reagents import Reagent

DOSE_RATIO = 2.0
"""A dose logged within this factor of the model's dose (either way) is not questioned."""


def dose_contradiction(sample: Mixture, reagent: Reagent, logged_mol: float,
                       final_ph: float, catalog) -> str | None:
    """A warning where ``logged_mol`` of ``reagent`` cannot have brought ``sample`` (the
    waste as logged before the treatment) to ``final_ph`` by the model; None where it
    fits, or where the model cannot say (an empty container, a model error)."""
    if not sample.totals or sample.volume_l <= 0 or not logged_mol > 0:
        return None
    try:
        model = TitrationModel(sample, dict(reagent.compound.composition), reagent.l_per_mol,
                               activity="davies", catalog=catalog)
        need = float(model.amount_at_pH([final_ph])[0])
    except CarboyError:
        return None
    check = "check the pH reading, the amount and the reagent before anything is disposed"
    if not math.isfinite(need):
        return (f"by carboy's model no amount of {reagent.key} brings this waste to pH "
                f"{final_ph:g}: {check}")
    if need <= 0:
        return None   # already there before any reagent: nothing to compare
    ratio = logged_mol / need
    if 1.0 / DOSE_RATIO <= ratio <= DOSE_RATIO:
        return None
    return (f"the dose logged ({numbers.moles(logged_mol)} of {reagent.key}) is "
            f"{numbers.figures(100.0 * ratio, 2)} % of the {numbers.moles(need)} carboy's "
            f"model needs to bring this waste to pH {final_ph:g}: {check}")
