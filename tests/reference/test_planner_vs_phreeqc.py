"""Doses to a target pH against phreeqpython (phreeqc.dat), I <= 0.05, away from steep end
points.  phreeqc is an independent code with its own ion pairs, so 1 % of dose is allowed."""

import pytest

phreeqpython = pytest.importorskip("phreeqpython")

from carboy.model.mixture import Mixture  # noqa: E402
from carboy.model.planner import plan_neutralization  # noqa: E402
from carboy.model.reagents import parse_reagent  # noqa: E402

CASES = [
    # (id, carboy totals mol/L, phreeqc solution, target pH)
    ("phosphoric-to-7", {"phosphate": 0.01}, {"P": 10.0}, 7.0),
    ("phosphoric-to-6.5", {"phosphate": 0.01, "Cl-": 0.002}, {"P": 10.0, "Cl": 2.0}, 6.5),
    ("ammonium-hcl-to-9", {"ammonium": 0.01, "Cl-": 0.012}, {"Amm": 10.0, "Cl": 12.0}, 9.0),
    ("carbonic-closed-to-6.5", {"carbonate": 0.005}, {"C(4)": 5.0}, 6.5),
]


def phreeqc_dose(solution, target):
    pp = phreeqpython.PhreeqPython()
    lo, hi = 0.0, 100.0  # mmol of NaOH into 1 L
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        sol = pp.add_solution({"units": "mmol/kgw", "pH": "7 charge", **solution})
        sol.add("NaOH", mid, "mmol")
        ph = sol.pH
        sol.forget()
        lo, hi = (mid, hi) if ph < target else (lo, mid)
    return 0.5 * (lo + hi) / 1000.0


@pytest.mark.parametrize("case", CASES, ids=[c[0] for c in CASES])
def test_dose_against_phreeqc(case):
    _, totals, solution, target = case
    # solid NaOH (no volume added), as phreeqc's add() does
    plan = plan_neutralization(Mixture(totals, volume_l=1.0), parse_reagent("NaOH"),
                               target_pH=target, window=(target - 0.5, target + 0.5))
    assert plan.sample.totals
    expected = phreeqc_dose(solution, target)
    assert plan.to_target.reagent_mol == pytest.approx(expected, rel=0.01)
