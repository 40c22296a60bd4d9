"""Mixtures: validation, mixing, titration batches."""

from __future__ import annotations

import math

import numpy as np
import pytest

from carboy.errors import InvalidInput, TemperatureOutOfRange
from carboy.model.mixture import Mixture, MixtureBatch, titration_batch
from carboy.model.speciation import speciate, speciate_batch


def test_from_compounds_sums_composition(catalog):
    mix = Mixture.from_compounds([(catalog.compound("NaH2PO4"), 0.01),
                                  (catalog.compound("Na2HPO4"), 0.02)])
    assert mix.totals["phosphate"] == pytest.approx(0.03)
    assert mix.totals["Na+"] == pytest.approx(0.05)


@pytest.mark.parametrize("bad", [-1.0, math.nan, math.inf, "x"])
def test_bad_concentration_is_named(catalog, bad):
    with pytest.raises(InvalidInput) as info:
        Mixture.from_compounds([(catalog.compound("HCl"), bad)])
    assert "HCl" in str(info.value)


def test_unknown_key_is_an_error(catalog):
    with pytest.raises(InvalidInput) as info:
        speciate(Mixture({"unobtainium": 0.1}), catalog=catalog)
    assert "unobtainium" in str(info.value)


def test_temperature_out_of_range(catalog):
    with pytest.raises(TemperatureOutOfRange):
        speciate(Mixture({"Na+": 0.1}, temperature_c=120), catalog=catalog)


def test_unknown_activity_model(catalog):
    with pytest.raises(InvalidInput) as info:
        speciate(Mixture({"Na+": 0.1}), activity="debye-huckel", catalog=catalog)
    assert "debye-huckel" in str(info.value)


def test_combine_adds_volumes_and_moles():
    a = Mixture({"Na+": 0.1}, volume_l=1.0, temperature_c=20)
    b = Mixture({"Cl-": 0.2}, volume_l=1.0, temperature_c=30)
    c = a.combine(b)
    assert c.volume_l == 2.0
    assert c.totals == {"Na+": 0.05, "Cl-": 0.1}
    assert c.temperature_c == 25


def test_titration_batch_dilutes(catalog):
    sample = Mixture({"Cl-": 0.1}, volume_l=0.05)
    batch, vol = titration_batch(sample, {"Na+": 1.0}, np.array([0.0, 0.005]), 10.0)
    assert vol.tolist() == [0.05, 0.1]
    i_cl = batch.keys.index("Cl-")
    assert batch.totals[:, i_cl].tolist() == pytest.approx([0.1, 0.05])
    # equivalence of strong acid with strong base: pH = pKw/2 (ideal)
    res = speciate_batch(batch, activity="ideal", catalog=catalog)
    assert res.pH[1] == pytest.approx(res.pkw / 2, abs=1e-6)


def test_batch_rejects_bad_shapes_and_values():
    with pytest.raises(InvalidInput):
        MixtureBatch(("Na+",), np.zeros((3, 2)))
    with pytest.raises(InvalidInput):
        MixtureBatch(("Na+",), np.array([[-1.0]]))
