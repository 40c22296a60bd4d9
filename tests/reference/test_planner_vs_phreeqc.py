"""Doses to a target pH against phreeqpython (phreeqc.dat), I <= 0.05, away from steep end
points.  phreeqc is an independent code with its own ion pairs, so 1 % of dose is allowed.

Where carbonate is present carboy doses the batch *after it has vented to air*; the
phreeqc side then equilibrates each trial solution with CO2(g) at the same partial
pressure (``saturate``), which is the same state wherever CO2 leaves (pH <= 8 here)."""

import math

import pytest

phreeqpython = pytest.importorskip("phreeqpython")

from carboy.model.mixture import Mixture  # noqa: E402
from carboy.model.planner import plan_neutralization  # noqa: E402
from carboy.model.reagents import parse_reagent  # noqa: E402

CASES = [
    # (id, carboy totals mol/L, phreeqc solution, reagent, target pH, CO2 vents to air)
    ("phosphoric-to-7", {"phosphate": 0.01}, {"P": 10.0}, "NaOH", 7.0, False),
    ("phosphoric-to-6.5", {"phosphate": 0.01, "Cl-": 0.002}, {"P": 10.0, "Cl": 2.0}, "NaOH",
     6.5, False),
    ("ammonium-hcl-to-9", {"ammonium": 0.01, "Cl-": 0.012}, {"N(-3)": 10.0, "Cl": 12.0}, "NaOH",
     9.0, False),
    ("phosphate-carbonate-vented-to-7", {"phosphate": 0.005, "carbonate": 0.002},
     {"P": 5.0, "C(4)": 2.0}, "NaOH", 7.0, True),
    ("hcl-bicarbonate-vented-to-6.5", {"Cl-": 0.01}, {"Cl": 10.0}, "NaHCO3", 6.5, True),
]
# CO2 partial pressure the plan assumes for air (planning.toml), as log10 atm
LOG_PCO2_AIR = math.log10(4.2e-4)


def phreeqc_dose(solution, reagent, target, vent):
    pp = phreeqpython.PhreeqPython(database="phreeqc.dat")
    lo, hi = 0.0, 100.0  # mmol of reagent into 1 L
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        sol = pp.add_solution({"units": "mmol/kgw", "pH": "7 charge", **solution})
        sol.add(reagent, mid, "mmol")
        if vent:
            sol.saturate("CO2(g)", LOG_PCO2_AIR)
        ph = sol.pH
        sol.forget()
        lo, hi = (mid, hi) if ph < target else (lo, mid)
    return 0.5 * (lo + hi) / 1000.0


@pytest.mark.parametrize("case", CASES, ids=[c[0] for c in CASES])
def test_dose_against_phreeqc(case):
    _, totals, solution, reagent, target, vent = case
    # a solid reagent (no volume added), as phreeqc's add() does
    plan = plan_neutralization(Mixture(totals, volume_l=1.0), parse_reagent(reagent),
                               target_pH=target, window=(target - 0.5, target + 0.5))
    # the plan vents exactly when carbonate is present, to the air's pCO2 (planning.toml)
    assert (plan.vented_pH is not None) == vent
    assert plan.vent_pco2_atm == (pytest.approx(4.2e-4) if vent else None)
    expected = phreeqc_dose(solution, reagent, target, vent=vent)
    assert plan.to_target.reagent_mol == pytest.approx(expected, rel=0.01)
