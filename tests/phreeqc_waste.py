"""phreeqpython's side of the metal-waste checks (tests/reference): 1 kgw of a waste given
in mmol/kgw, NaOH added, one solid allowed to precipitate where saturated."""

from __future__ import annotations

from scipy.optimize import brentq


def ph_with_naoh(pp, solution: dict, phase: str, naoh_mol: float) -> float:
    """pH of the waste ``solution`` with ``naoh_mol`` NaOH, the solid ``phase`` allowed."""
    sol = pp.add_solution({"units": "mmol/kgw", "pH": "7 charge", **solution})
    sol.add("NaOH", naoh_mol * 1000.0, "mmol")
    sol.desaturate(phase)
    ph = sol.pH
    sol.forget()
    return ph


def dose_to_ph(pp, solution: dict, phase: str, target: float) -> float:
    """The NaOH (mol per kgw, up to 1) that brings the waste to pH ``target``."""
    return brentq(lambda d: ph_with_naoh(pp, solution, phase, d) - target, 0.0, 1.0,
                  xtol=1e-9)
