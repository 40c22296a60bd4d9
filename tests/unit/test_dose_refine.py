"""Doses settled on the model's own forward curve (``dosing.refine_doses``): with the
``auto`` and ``pitzer`` activity models the exact inverse takes Davies coefficients, so
each dose is settled by forward solves: a secant on the Davies-dose scale first, the
bracketing search for what it leaves."""

from __future__ import annotations

import numpy as np
import pytest

from carboy.model import dosing
from carboy.model.catalog import default_catalog
from carboy.model.mixture import Mixture
from carboy.model.planner import plan_neutralization
from carboy.model.reagents import parse_reagent

CAT = default_catalog()


def _plan(components, reagent, activity, target=7.5, window=(6.0, 9.0)):
    sample = Mixture.from_compounds([(CAT.compound(k), c) for k, c in components.items()],
                                    volume_l=2.0)
    return plan_neutralization(sample, parse_reagent(reagent), target_pH=target,
                               window=window, activity=activity, catalog=CAT,
                               curve_points=60)


def _counting(monkeypatch):
    calls = []
    real = dosing.Dosing.solve

    def counted(self, n, **kw):
        calls.append(np.atleast_1d(n).size)
        return real(self, n, **kw)

    monkeypatch.setattr(dosing.Dosing, "solve", counted)
    return calls


@pytest.mark.parametrize("activity", ["auto", "pitzer"])
@pytest.mark.parametrize("components, reagent", [
    ({"H2SO4": 0.3, "HCl": 0.2, "NaCl": 0.5}, "NaOH=1M"),     # sulfate pairs, I > 0.5
    ({"NaOH": 0.4, "Na2SO4": 0.2}, "HCl=1M"),                 # alkaline, sulfate pairs
    ({"HCl": 0.5, "KCl": 0.5}, "KOH=2M"),                     # a steep strong-acid end point
])
def test_every_dose_reaches_its_ph_on_the_models_own_curve(components, reagent, activity):
    plan = _plan(components, reagent, activity)
    doses = [(plan.to_target, 7.5), *zip(plan.window_doses, plan.window)]
    for dose, ph in doses:
        assert dose.reachable
        assert dose.pH == pytest.approx(ph, abs=2 * dosing.REFINE_PH_TOL)


def test_a_steep_end_point_settles_in_a_few_forward_solves(monkeypatch):
    """Near an equivalence point the pH jumps by pH units per 0.1 % of dose: false
    position on the pH itself needed about thirty forward solves here (every dose at
    once); on the Davies-dose scale it needs a handful.  A count of solves, not a time."""
    calls = _counting(monkeypatch)
    _plan({"H2SO4": 0.3, "HCl": 0.2, "NaCl": 0.5}, "NaOH=1M", "auto")
    refine = [c for c in calls if c <= 6]          # the curve is one solve of 60 points
    assert len(refine) <= 8, calls


def test_an_end_off_the_davies_scale_still_brackets_the_dose():
    """g takes the sign of the pH's miss where the closed Davies batch cannot reach the
    pH (the inverse is NaN): the bracketing still closes on the dose."""
    def g(n, which):
        ph = 7.0 + 2000.0 * (n - 1.0)                 # a steep line through pH 7 at n = 1
        miss = ph - 7.0
        scale = np.where(ph < 9.0, n - 1.0, np.nan)    # undefined above pH 9
        return np.where(np.isfinite(scale), scale, np.inf), miss   # undefined only above

    found = dosing._false_position(g, np.array([0.9995, 1.0004]))
    assert found == pytest.approx([1.0, 1.0], abs=1e-9)


def test_an_auto_plan_on_the_davies_branch_is_the_davies_plan_in_every_batch():
    """An alkaline carbonate waste (Na2CO3 0.05 M, NaOH 0.3 M) taken down with HCl: the
    states that work out the CO2 lost at 1 atm hold much more carbonate than the waste
    itself, and on their own would have judged their ionic strength above auto's limit;
    the plan settles auto once, so every batch of it takes the same model."""
    comps = {"NaOH": 0.3, "Na2CO3": 0.05}
    auto = _plan(comps, "HCl=1M", "auto", target=7.5)
    davies = _plan(comps, "HCl=1M", "davies", target=7.5)
    assert auto.activity_model == "davies"
    assert np.array_equal(auto.curve, davies.curve)
    assert auto.to_target.reagent_mol == davies.to_target.reagent_mol


def test_false_position_halves_an_end_only_when_it_is_kept_twice():
    """Illinois: on a curved g the plain method keeps one end for ever; halving that
    end's value whenever it is kept a second time in a row restores a fast approach.
    Halving it on every step instead (alternate sides) slowed the search to one bit per
    forward solve: some twenty solves for a dose here, now under ten."""
    calls = []

    def g(n, which):
        calls.append(n.size)
        d = n - 2.0
        return d + 40.0 * d * d, 1e3 * (d + 40.0 * d * d)   # the miss is 1000 times g

    found = dosing._false_position(g, np.array([2.0006]))
    assert abs(found[0] - 2.0) * 1e3 <= dosing.REFINE_PH_TOL * 1.01
    assert len(calls) <= 9, calls
