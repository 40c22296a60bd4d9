"""A stock acid's curve starts where PHREEQC puts the acid alone (phreeqpython with
pitzer.dat, at the molality carboy's density table gives): the first point of a large
batch takes the table's water as the one-solution path does (tests/unit/test_concentrates.py
checks the paths against each other)."""

from __future__ import annotations

import numpy as np
import pytest

from carboy.model.catalog import default_catalog
from carboy.model.mixture import Mixture, titration_batch
from carboy.model.molality import water_kg_per_litre
from carboy.model.reagents import parse_reagent
from carboy.model.speciation import speciate_batch

phreeqpython = pytest.importorskip("phreeqpython")

CAT = default_catalog()
PH_TOL = 0.01
"""As tests/reference/test_activity_models_reference.py (the same model, the same data)."""


@pytest.mark.parametrize(("name", "molar", "peer"), [("H2SO4", 3.0, "S(6)"),
                                                      ("HCl", 6.0, "Cl")])
def test_a_400_point_curve_starts_at_phreeqcs_ph_of_the_acid_alone(name, molar, peer):
    mix = Mixture.from_compounds([(CAT.compound(name), molar)], volume_l=0.1)
    w = water_kg_per_litre(CAT, tuple(mix.totals), [list(mix.totals.values())], 25.0)[0][0]
    pp = phreeqpython.PhreeqPython(database="pitzer.dat")
    sol = pp.add_solution({"units": "mol/kgw", "temp": 25.0, "pH": "0 charge",
                           peer: molar / w})
    expected = sol.pH
    sol.forget()
    reagent = parse_reagent("NaOH=6M", CAT)
    batch, _ = titration_batch(mix, dict(reagent.compound.composition),
                               np.linspace(0.0, 0.1 * molar * 2.6, 400), reagent.l_per_mol)
    res = speciate_batch(batch, activity="pitzer", catalog=CAT)
    assert res.converged[0]
    assert res.pH[0] == pytest.approx(expected, abs=PH_TOL)
