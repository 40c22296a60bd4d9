"""Open systems: a species held at a fixed concentration (CO2(aq) in equilibrium with air)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from carboy.errors import InvalidInput
from carboy.model.mixture import Mixture, MixtureBatch
from carboy.model.speciation import speciate, speciate_batch

# CO2 solubility 0.034 mol/(L atm) at 25 °C (Sander 2015, from memory) and air at
# pCO2 = 4.2e-4 atm (an assumption about today's air): CO2(aq) = 1.43e-5 M.
CO2_AIR = 0.034 * 4.2e-4
LOG_PCO2 = math.log10(4.2e-4)


def test_pure_water_under_air_is_about_ph_5_6(catalog):
    # Common textbook value: unpolluted rain in equilibrium with atmospheric CO2 has
    # pH about 5.6 (environmental-chemistry teaching; from memory).  Exact: 5.60.
    res = speciate(Mixture({}), held={"carbonate": ("CO2", CO2_AIR)}, catalog=catalog)
    assert res.pH == pytest.approx(5.6, abs=0.05)
    assert res.species["CO2"] == pytest.approx(CO2_AIR)


def test_open_solve_is_consistent_with_a_closed_solve(catalog):
    # The total carbonate the open solve finds, put back as a closed total, gives the
    # same pH: an exact self-check of the held-species arithmetic.
    base = Mixture.from_compounds([(catalog.compound("NaHCO3"), 0.01)])
    batch = MixtureBatch.of([base])
    res = speciate_batch(batch, held={"carbonate": ("CO2", CO2_AIR)}, catalog=catalog)
    k = res.system_keys.index("carbonate")
    total = float(res.system_totals_molar[0, k])
    closed = speciate(Mixture({"Na+": 0.01, "carbonate": total}), catalog=catalog)
    assert closed.pH == pytest.approx(float(res.pH[0]), abs=1e-9)
    assert total < 0.01  # CO2 left for the air


@pytest.mark.parametrize("nahco3", [0.001, 0.005, 0.01])
def test_vented_bicarbonate_against_phreeqc(catalog, nahco3):
    # phreeqpython (phreeqc.dat): the same solution saturated with CO2(g) at log pCO2.
    # phreeqc.dat's own CO2 constants and ion pairs differ from ours: within 0.05 pH.
    phreeqpython = pytest.importorskip("phreeqpython")
    pp = phreeqpython.PhreeqPython(database="phreeqc.dat")
    sol = pp.add_solution({"units": "mmol/kgw", "pH": "7 charge", "Na": nahco3 * 1e3,
                           "C(4)": nahco3 * 1e3})
    sol.saturate("CO2(g)", LOG_PCO2)
    ours = speciate(Mixture.from_compounds([(catalog.compound("NaHCO3"), nahco3)]),
                    held={"carbonate": ("CO2", CO2_AIR)}, catalog=catalog)
    assert ours.pH == pytest.approx(sol.pH, abs=0.05)
    sol.forget()


def test_held_values_per_point_and_bad_input(catalog):
    batch = MixtureBatch.of([Mixture({"Na+": 0.01, "carbonate": 0.01})] * 3)
    co2 = np.array([1e-6, 1e-5, 1e-4])
    res = speciate_batch(batch, held={"carbonate": ("CO2", co2)}, catalog=catalog)
    assert np.all(np.diff(res.pH) < 0)   # more CO2 held, more acid
    with pytest.raises(InvalidInput):
        speciate_batch(batch, held={"carbonate": ("CO3", 1e-5)}, catalog=catalog)
    with pytest.raises(InvalidInput):
        speciate_batch(batch, held={"Na+": ("Na+", 1e-5)}, catalog=catalog)
    with pytest.raises(InvalidInput):
        speciate_batch(batch, held={"carbonate": ("CO2", -1.0)}, catalog=catalog)


def test_one_solution_path_agrees_with_the_vectorized_one(catalog):
    # one point takes the plain-Python path, two points the vectorized one
    mixes = [Mixture({"Na+": 0.02, "carbonate": 0.01, "ammonium": 0.005, "Cl-": 0.005})] * 2
    one = speciate_batch(MixtureBatch.of(mixes[:1]), held={"carbonate": ("CO2", CO2_AIR)},
                         catalog=catalog)
    two = speciate_batch(MixtureBatch.of(mixes), held={"carbonate": ("CO2", CO2_AIR)},
                         catalog=catalog)
    assert one.pH[0] == pytest.approx(two.pH[0], abs=1e-9)
    np.testing.assert_allclose(one.system_totals_molar[0], two.system_totals_molar[0],
                               rtol=1e-8)
