"""Time a whole neutralization plan for a 10-component waste, and similar work in phreeqpython.

Run by hand:  python tests/benchmarks/bench_planner.py   (not collected by pytest)
"""

from __future__ import annotations

import statistics
import time

from carboy.model.mixture import Mixture
from carboy.model.planner import plan_neutralization
from carboy.model.reagents import parse_reagent

WASTE = {"sulfate": 0.005, "phosphate": 0.002, "acetate": 0.003, "citrate": 0.001,
         "Cl-": 0.005, "NO3-": 0.002, "Na+": 0.001, "carbonate": 0.0005, "ammonium": 0.001,
         "formate": 0.001}


def best_ms(fn, repeat=15):
    fn()
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        times.append((time.perf_counter() - t) * 1000)
    return min(times), statistics.median(times)


def main() -> None:
    sample = Mixture(WASTE, volume_l=1.0)
    for text in ("NaOH=1M", "NaOH", "Na2CO3"):
        reagent = parse_reagent(text)
        lo, med = best_ms(lambda r=reagent: plan_neutralization(sample, r))
        print(f"carboy plan, 10 components, {text:<8} best {lo:7.1f} ms  median {med:7.1f} ms"
              f"  (budget 20 ms)")
    try:
        import phreeqpython
    except ImportError:
        print("phreeqpython not installed: no comparison")
        return
    # phreeqc.dat has no acetate/citrate/formate: the comparison waste keeps the rest
    sol_def = {"units": "mmol/kgw", "pH": "7 charge", "S(6)": 5.0, "P": 2.0, "Cl": 5.0,
               "N(5)": 2.0, "Na": 1.0, "C(4)": 0.5, "Amm": 1.0}

    def phreeqc_work():
        pp = phreeqpython.PhreeqPython()
        base = pp.add_solution(sol_def)
        for k in range(400):  # the curve: 400 additions
            s = base.copy()
            s.add("NaOH", 0.03 * k / 400 * 1000, "mmol")
            s.forget()
        for target in (7.0, 6.0, 9.0):  # three doses by bisection
            lo, hi = 0.0, 30.0
            for _ in range(30):
                mid = 0.5 * (lo + hi)
                s = base.copy()
                s.add("NaOH", mid, "mmol")
                lo, hi = (mid, hi) if s.pH < target else (lo, mid)
                s.forget()

    lo, med = best_ms(phreeqc_work, repeat=3)
    print(f"phreeqpython, same curve + 3 doses (7 components)  best {lo:7.1f} ms  median {med:7.1f} ms")


if __name__ == "__main__":
    main()
