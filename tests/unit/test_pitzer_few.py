"""A few points on the Pitzer path are solved one by one on floats and stacked
(``pitzer_batch.few_outcome``): the same result, field by field, as the array path."""

from __future__ import annotations

import numpy as np
import pytest

from carboy.model.catalog import default_catalog
from carboy.model.mixture import Mixture, MixtureBatch, titration_batch
from carboy.model.solver import pitzer_batch
from carboy.model.speciation import speciate_batch

CAT = default_catalog()


def _batch(components, amounts):
    sample = Mixture.from_compounds([(CAT.compound(k), c) for k, c in components.items()],
                                    volume_l=1.0)
    batch, _ = titration_batch(sample, dict(CAT.compound("NaOH").composition),
                               np.asarray(amounts, dtype=float), 0.2)
    return batch


@pytest.mark.parametrize("components, amounts", [
    ({"HCl": 2.0, "NaCl": 1.0}, [0.0, 1.0, 1.99]),                  # acid, I 1-3 mol/kg
    ({"H2SO4": 1.0, "Na2SO4": 0.5}, [0.5, 1.9, 2.1]),               # bisulfate, both sides
    ({"HCl": 1.0, "CaCl2": 1.0}, [0.5, 0.99]),                      # calcium on the path
])
def test_a_few_points_give_the_array_paths_result(components, amounts, monkeypatch):
    batch = _batch(components, amounts)
    few = speciate_batch(batch, activity="pitzer", catalog=CAT)
    monkeypatch.setattr(pitzer_batch, "FEW_POINTS", 0)   # the array path
    arrays = speciate_batch(batch, activity="pitzer", catalog=CAT)
    assert few.pH == pytest.approx(arrays.pH, abs=1e-7)
    assert few.species_molar == pytest.approx(arrays.species_molar, rel=1e-6, abs=1e-14)
    assert few.ionic_strength_molar == pytest.approx(arrays.ionic_strength_molar, rel=1e-6)
    assert few.model_part.water_activity == pytest.approx(arrays.model_part.water_activity,
                                                          rel=1e-8)
    assert [set(w) for w in few.warnings] == [set(w) for w in arrays.warnings]


@pytest.mark.parametrize("few", [True, False])
def test_a_points_warnings_are_its_own_whatever_its_batch(few, monkeypatch):
    """The Davies fallback's range warning names a point only where that point is past
    0.5 mol/kg (pitzer.DAVIES_LIMIT_MOLAL), and a point's warnings are those it has
    solved alone: not the batch's count ("at 3 of 5 points" once said every point)."""
    if not few:
        monkeypatch.setattr(pitzer_batch, "FEW_POINTS", 0)   # the array path
    batch = _batch({"HF": 0.3, "NaCl": 0.2}, [0.0, 0.1, 0.3, 0.6, 0.9])
    res = speciate_batch(batch, activity="pitzer", catalog=CAT)
    past = res.model_part.ionic_strength_molal > 0.5
    assert past.any() and not past.all()
    for k in range(len(res)):
        texts = res.warnings[k]
        assert any("HF" in w and "Davies" in w for w in texts)       # the fallback itself
        assert any("outside its own range" in w for w in texts) == past[k]
        assert not any(" of 5 points" in w for w in texts)
        one = MixtureBatch(batch.keys, batch.totals[[k]], batch.temperature_c)
        alone = speciate_batch(one, activity="pitzer", catalog=CAT)
        assert set(alone.warnings[0]) == set(texts)
