"""A recorded treatment's dose against the dose the model needs for the pH measured."""

from __future__ import annotations

import pytest

from carboy.model.catalog import default_catalog
from carboy.model.mixture import Mixture
from carboy.model.reagents import parse_reagent
from carboy.model.treatment_check import DOSE_RATIO, dose_contradiction

CAT = default_catalog()
WASTE = Mixture({"Cl-": 1.0}, volume_l=2.0)   # 2 L of 1 M HCl: 2 mol of protons


@pytest.mark.parametrize("logged", [2.0, 1.5, 2.0 * DOSE_RATIO * 0.99])
def test_a_dose_near_the_models_is_not_questioned(logged):
    """About 2 mol of NaOH brings it to pH 7 (a strong acid: the equivalence point)."""
    assert dose_contradiction(WASTE, parse_reagent("NaOH=1M", CAT), logged, 7.0, CAT) is None


def test_a_dose_far_below_the_models_is_questioned_with_both_figures():
    said = dose_contradiction(WASTE, parse_reagent("NaOH=1M", CAT), 0.3, 7.0, CAT)
    assert said is not None and "0.3 mol of NaOH" in said and "2 mol" in said
    assert "15 %" in said and "before anything is disposed" in said


def test_a_reagent_that_cannot_reach_the_ph_is_questioned():
    said = dose_contradiction(WASTE, parse_reagent("HCl=1M", CAT), 0.5, 7.0, CAT)
    assert said is not None and "no amount of HCl brings this waste to pH 7" in said


def test_nothing_to_compare_says_nothing():
    empty = Mixture({}, volume_l=1.0)
    assert dose_contradiction(empty, parse_reagent("NaOH=1M", CAT), 1.0, 7.0, CAT) is None
    assert dose_contradiction(WASTE, parse_reagent("NaOH=1M", CAT), 0.0, 7.0, CAT) is None
