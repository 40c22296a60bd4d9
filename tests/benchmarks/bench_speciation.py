"""Speed of the speciation solver against PHREEQC (phreeqpython, database phreeqc.dat).

Run by hand:  python tests/benchmarks/bench_speciation.py   (or run_all.py for every figure)
Options: ``--parts abc`` (only those figures), ``--without-calcium`` ((a)-(c) on the
solution less its CaCl2, see ``WITHOUT_CALCIUM``).

Three figures, each the median of interleaved runs with a second process keeping one
core busy, setup outside the timed region on both sides, peak memory beside time:

(a) one 10-component solution with activity (Davies here; phreeqc.dat's own activity
    model there): carboy's ``speciate`` against phreeqpython's ``add_solution`` and its
    pH, per solution.  Target: at least 5x faster.
(b) a 1000-point and (c) a 10,000-point titration curve of the same solution with NaOH:
    carboy's ``speciate_batch`` against PHREEQC's fastest way to make the same curve, one
    run with a REACTION in N-1 steps (INCREMENTAL_REACTIONS true) and the pH of every
    step read back.  Targets: at least 30x and 50x faster per point.

(d) and (e): the same two comparisons with the specific-interaction model, against
    phreeqpython with pitzer.dat: one 10-component concentrated acid waste (about
    3 mol/kg) with ``activity="pitzer"`` (target: at least 3x faster), and its
    1000-point curve with NaOH against one PHREEQC run with a REACTION in steps
    (target: at least 10x faster per point).  PHREEQC gets carboy's own molalities.

Both sides see the same analytical totals: ten components phreeqc.dat knows (it has no
acetate or citrate).  The pH differ by the activity models (phreeqc.dat adds ion pairs
and its own ion-size terms); the largest difference along the curve is printed.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

from _bench import Row, busy_core, interleaved, peak_rss_mb, print_table  # noqa: E402

COMPONENTS = [("HCl", 0.010), ("H2SO4", 0.005), ("H3PO4", 0.003), ("HNO3", 0.004),
              ("HF", 0.001), ("NH4Cl", 0.002), ("H3BO3", 0.002), ("CaCl2", 0.001),
              ("NaHCO3", 0.001), ("KCl", 0.005)]
TO_PHREEQC = {"phosphate": "P", "carbonate": "C(4)", "sulfate": "S(6)", "fluoride": "F",
              "borate": "B", "ammonium": "Amm", "Na+": "Na", "K+": "K", "Cl-": "Cl",
              "NO3-": "N(5)", "Ca+2": "Ca"}
PEER_MMOL = {"Cl": 19.0, "S(6)": 5.0, "P": 3.0, "N(5)": 4.0, "F": 1.0, "Amm": 2.0, "B": 2.0,
             "Ca": 1.0, "Na": 1.0, "C(4)": 1.0, "K": 5.0}
"""COMPONENTS as PHREEQC's totals (mmol/kgw), written out so that PHREEQC's side needs no
carboy import (its memory figure is its own); checked against carboy's mixture."""
DATABASE = "phreeqc.dat"
NAOH_MAX_MOL = 0.08   # per litre of sample, added over the curve
ONE_REPEAT = 200      # solutions per timed run of (a)
TARGETS = {"one": 5.0, 1000: 30.0, 10000: 50.0}
WITHOUT_CALCIUM = "CARBOY_BENCH_WITHOUT_CALCIUM"
"""Set (by ``--without-calcium``, inherited by the memory runs): (a)-(c) on the same
solution less its CaCl2 (nine components).  Calcium is a modelled metal (its hydrolysis
and solids; a layout with metals forms no ion pairs): without it the Davies path forms
NaSO4- and KSO4- (as PHREEQC does) and no solid can form."""
if os.environ.get(WITHOUT_CALCIUM):
    COMPONENTS = [c for c in COMPONENTS if c[0] != "CaCl2"]
    PEER_MMOL = {**{k: v for k, v in PEER_MMOL.items() if k != "Ca"}, "Cl": 17.0}


def ours(points: int = 0):
    """carboy's setup: the catalog, the mixture and (points > 0) the curve's batch."""
    from carboy.model.catalog import default_catalog
    from carboy.model.mixture import Mixture, titration_batch

    cat = default_catalog()
    mix = Mixture.from_compounds([(cat.compound(n), c) for n, c in COMPONENTS], volume_l=1.0)
    batch = None
    if points:
        n = np.linspace(0.0, NAOH_MAX_MOL, points)
        batch, _ = titration_batch(mix, {"Na+": 1.0}, n, reagent_l_per_mol=0.0)
    return cat, mix, batch


def peer(points: int = 0):
    """PHREEQC's setup: phreeqpython on phreeqc.dat, the solution (mmol/kgw) and (points
    > 0) the input of one run with a REACTION in points - 1 steps."""
    from phreeqpython import PhreeqPython

    pp = PhreeqPython(database=DATABASE)
    sol = {"units": "mmol/kgw", "pH": "7 charge", "temp": 25.0, **PEER_MMOL}
    text = ("SOLUTION 1\n" + "".join(f"  {k} {v}\n" for k, v in sol.items())
            + f"REACTION 1\n  NaOH 1\n  {NAOH_MAX_MOL} mol in {points - 1} steps\n"
            "INCREMENTAL_REACTIONS true\nSELECTED_OUTPUT 1\n  -reset false\n  -pH true\nEND\n")
    return pp, sol, text


def run_ours(kind, points: int = 0) -> None:
    """Setup and one run of carboy's side (for the peak-memory figure)."""
    from carboy.model.speciation import speciate, speciate_batch

    cat, mix, batch = ours(points)
    if kind == "one":
        for _ in range(ONE_REPEAT):
            speciate(mix, catalog=cat)
    else:
        speciate_batch(batch, catalog=cat)


def run_peer(kind, points: int = 0) -> None:
    """Setup and one run of PHREEQC's side (for the peak-memory figure)."""
    pp, sol, text = peer(points)
    if kind == "one":
        for _ in range(ONE_REPEAT):
            _one_peer(pp, sol)
    else:
        pp.ip.run_string(text)
        pp.ip.get_selected_output_array()


def _one_peer(pp, sol) -> float:
    s = pp.add_solution(sol)
    ph = s.pH
    s.forget()
    return ph


def _one_solution() -> Row:
    from carboy.model.speciation import speciate

    cat, mix, _ = ours()
    pp, sol, _ = peer(2)
    same = {}
    for key, c in mix.totals.items():
        same[TO_PHREEQC[key]] = same.get(TO_PHREEQC[key], 0.0) + c * 1000.0
    assert all(abs(same[k] - v) < 1e-9 for k, v in PEER_MMOL.items()) and same.keys() == \
        PEER_MMOL.keys(), "PEER_MMOL does not match COMPONENTS"
    med = interleaved({
        "carboy": lambda: [speciate(mix, catalog=cat) for _ in range(ONE_REPEAT)],
        "peer": lambda: [_one_peer(pp, sol) for _ in range(ONE_REPEAT)],
    }, rounds=15)
    a, b = med["carboy"] / ONE_REPEAT, med["peer"] / ONE_REPEAT
    rss = peak_rss_mb("bench_speciation", "run_ours", "one"), \
        peak_rss_mb("bench_speciation", "run_peer", "one")
    ph = (speciate(mix, catalog=cat).pH, _one_peer(pp, sol))
    return Row(f"speciation: one {len(COMPONENTS)}-component solution", f"{b / a:.1f}x",
               f">= {TARGETS['one']:g}x", b / a >= TARGETS["one"],
               f"carboy {a * 1e6:.1f} us, PHREEQC {b * 1e6:.1f} us; peak RSS "
               f"{rss[0]:.0f} / {rss[1]:.0f} MB; pH {ph[0]:.3f} / {ph[1]:.3f}")


def _curve(points: int, rounds: int) -> Row:
    from carboy.model.speciation import speciate_batch

    cat, _, batch = ours(points)
    pp, _, text = peer(points)

    def phreeqc_curve():
        pp.ip.run_string(text)
        return pp.ip.get_selected_output_array()

    med = interleaved({"carboy": lambda: speciate_batch(batch, catalog=cat),
                       "peer": phreeqc_curve}, rounds=rounds)
    a, b = med["carboy"] / points, med["peer"] / points
    res = speciate_batch(batch, catalog=cat)
    theirs = np.array([row[0] for row in phreeqc_curve()[1:]], dtype=float)
    assert res.converged.all() and theirs.shape[0] == points
    rss = peak_rss_mb("bench_speciation", "run_ours", "curve", points), \
        peak_rss_mb("bench_speciation", "run_peer", "curve", points)
    target = TARGETS[points]
    return Row(f"speciation: {points}-point curve, per point", f"{b / a:.1f}x",
               f">= {target:g}x", b / a >= target,
               f"carboy {a * 1e6:.2f} us/pt, PHREEQC {b * 1e6:.1f} us/pt; peak RSS "
               f"{rss[0]:.0f} / {rss[1]:.0f} MB; pH difference median "
               f"{np.median(np.abs(res.pH - theirs)):.3f} (activity models differ)")


# ---------------------------------------------------------------- the Pitzer model

PITZER_COMPONENTS = [("HCl", 1.0), ("H2SO4", 0.2), ("NaCl", 1.0), ("KCl", 0.3),
                     ("NaHSO4", 0.1), ("Na2SO4", 0.2), ("K2SO4", 0.05), ("NaHCO3", 0.01),
                     ("KHCO3", 0.01), ("CO2", 0.005)]
"""A concentrated acid waste (I about 3 mol/kg) of ten compounds pitzer.dat knows (the
same ten since the figure was first taken, so that it compares across versions)."""
PITZER_TO_PHREEQC = {"Cl-": "Cl", "sulfate": "S(6)", "Na+": "Na", "K+": "K", "Ca+2": "Ca",
                     "Mg+2": "Mg", "carbonate": "C(4)"}
PITZER_NAOH_MOL = 2.0   # per litre, over the curve
PITZER_TARGETS = {"one": 3.0, 1000: 10.0}


def ours_pitzer(points: int = 0):
    """carboy's side: catalog, mixture, (points > 0) the NaOH curve's batch; and the
    same solution in mol/kg of water (carboy's own conversion) for PHREEQC."""
    from carboy.model.catalog import default_catalog
    from carboy.model.mixture import Mixture, titration_batch
    from carboy.model.molality import water_kg_per_litre

    cat = default_catalog()
    mix = Mixture.from_compounds([(cat.compound(n), c) for n, c in PITZER_COMPONENTS],
                                 volume_l=1.0)
    w = water_kg_per_litre(cat, tuple(mix.totals), [list(mix.totals.values())], 25.0)[0][0]
    molal = {}
    for key, c in mix.totals.items():
        molal[PITZER_TO_PHREEQC[key]] = molal.get(PITZER_TO_PHREEQC[key], 0.0) + c / w
    batch = None
    if points:
        n = np.linspace(0.0, PITZER_NAOH_MOL, points)
        batch, _ = titration_batch(mix, {"Na+": 1.0}, n, reagent_l_per_mol=0.0)
    return cat, mix, batch, molal, w


def _pitzer_peer(molal: dict, points: int, per_kg: float):
    from phreeqpython import PhreeqPython

    pp = PhreeqPython(database="pitzer.dat")
    sol = {"units": "mol/kgw", "pH": "1 charge", "temp": 25.0, **molal}
    text = ("SOLUTION 1\n" + "".join(f"  {k} {v}\n" for k, v in sol.items())
            + f"REACTION 1\n  NaOH 1\n  {PITZER_NAOH_MOL * per_kg} mol in {points - 1} steps\n"
            "INCREMENTAL_REACTIONS true\nSELECTED_OUTPUT 1\n  -reset false\n  -pH true\nEND\n")
    return pp, sol, text


def _pitzer_one() -> Row:
    from carboy.model.speciation import speciate

    cat, mix, _, molal, w = ours_pitzer()
    pp, sol, _ = _pitzer_peer(molal, 2, 1.0 / w)
    repeat = 100   # about 15 ms (carboy) and 45 ms (PHREEQC) a timed run: 20 gave runs
    #                of 3 ms, whose medians moved by a third from one run of the bench to the next
    med = interleaved({
        "carboy": lambda: [speciate(mix, activity="pitzer", catalog=cat) for _ in range(repeat)],
        "peer": lambda: [_one_peer(pp, sol) for _ in range(repeat)],
    }, rounds=15)
    a, b = med["carboy"] / repeat, med["peer"] / repeat
    ph = (speciate(mix, activity="pitzer", catalog=cat).pH, _one_peer(pp, sol))
    return Row("Pitzer: one 10-component solution", f"{b / a:.1f}x",
               f">= {PITZER_TARGETS['one']:g}x", b / a >= PITZER_TARGETS["one"],
               f"carboy {a * 1e3:.2f} ms, PHREEQC pitzer.dat {b * 1e3:.2f} ms; "
               f"pH {ph[0]:.3f} / {ph[1]:.3f} (MacInnes both)")


def _pitzer_curve(points: int) -> Row:
    from carboy.model.speciation import speciate_batch

    cat, _, batch, molal, w = ours_pitzer(points)
    pp, _, text = _pitzer_peer(molal, points, 1.0 / w)

    def phreeqc_curve():
        pp.ip.run_string(text)
        return pp.ip.get_selected_output_array()

    med = interleaved({"carboy": lambda: speciate_batch(batch, activity="pitzer", catalog=cat),
                       "peer": phreeqc_curve}, rounds=5)
    a, b = med["carboy"] / points, med["peer"] / points
    res = speciate_batch(batch, activity="pitzer", catalog=cat)
    theirs = np.array([row[0] for row in phreeqc_curve()[1:]], dtype=float)
    target = PITZER_TARGETS[points]
    return Row(f"Pitzer: {points}-point curve, per point", f"{b / a:.1f}x",
               f">= {target:g}x", b / a >= target,
               f"carboy {a * 1e6:.0f} us/pt, PHREEQC {b * 1e6:.0f} us/pt; converged "
               f"{int(res.converged.sum())}/{points}; pH difference median "
               f"{np.median(np.abs(res.pH - theirs)):.3f} (molal vs molar amounts of "
               "NaOH differ slightly)")


def figures(parts: str = "abcde") -> list[Row]:
    """The figures of this benchmark named in ``parts`` (a second core kept busy
    meanwhile)."""
    try:
        import phreeqpython  # noqa: F401
    except ImportError:  # pragma: no cover
        return [Row("speciation", "n/a", "phreeqpython", False, "pip install '.[test]'")]
    runs = {"a": _one_solution, "b": lambda: _curve(1000, 15), "c": lambda: _curve(10000, 7),
            "d": _pitzer_one, "e": lambda: _pitzer_curve(1000)}
    with busy_core():
        return [runs[p]() for p in parts]


def main() -> None:
    import argparse

    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--parts", default="abcde", help="which figures, e.g. abc")
    ap.add_argument("--without-calcium", action="store_true",
                    help=f"(a)-(c) without the CaCl2: see {WITHOUT_CALCIUM}")
    args = ap.parse_args()
    if args.without_calcium:
        os.environ[WITHOUT_CALCIUM] = "1"
        print("(a)-(c) without CaCl2: run again in this environment")
        raise SystemExit(subprocess.call([sys.executable, __file__, "--parts", args.parts]))
    print_table(figures(args.parts), "speciation against PHREEQC (medians, one core kept busy)")


if __name__ == "__main__":
    main()
