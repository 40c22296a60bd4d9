"""The titration's inverse on floats (``inverse_floats``) against its arrays' form.

``TitrationModel.amount_at_pH`` takes the float rounds for a few pHs without metals;
these tests send the same questions down both ways (the arrays' by making the float path
decline) and ask for the same amounts, the same unreachable pHs and the same ionic
strengths kept as later starts.
"""

from __future__ import annotations

import numpy as np
import pytest

from carboy.model import gas, inverse_floats
from carboy.model.mixture import Mixture

CASES = {
    "strong and polyprotic acid, NaOH": ({"Cl-": 0.05, "phosphate": 0.02}, "NaOH", 1.0),
    "acetic acid, NaOH": ({"acetate": 0.1}, "NaOH", 0.5),
    "sulfuric acid, Na2CO3 (carbonate from the reagent)": ({"sulfate": 0.1}, "Na2CO3", 0.0),
    "bicarbonate waste, HCl": ({"carbonate": 0.05, "Na+": 0.08}, "HCl", 1.0),
}
PHS = [0.5, 4.5, 6.0, 7.0, 8.3, 9.0, 11.0, 13.9]


def _model(catalog, case, *, activity="davies", temperature_c=25.0):
    totals, reagent, l_per_mol = CASES[case]
    comp = dict(catalog.compound(reagent).composition)
    return gas.TitrationModel(Mixture(totals, volume_l=2.0, temperature_c=temperature_c),
                              comp, l_per_mol, activity=activity, catalog=catalog)


def _on_arrays(monkeypatch, make, *args, **kwargs):
    """The same question of a fresh model with the float path declined."""
    with monkeypatch.context() as m:
        m.setattr(gas, "amounts_on_floats", lambda *a, **k: None)
        return make().amount_at_pH(*args, **kwargs)


@pytest.mark.parametrize("case", list(CASES))
@pytest.mark.parametrize(("activity", "temperature_c"), [("davies", 25.0), ("ideal", 25.0),
                                                         ("davies", 45.0)])
def test_the_floats_give_the_arrays_amounts(catalog, monkeypatch, case, activity,
                                            temperature_c):
    def make():
        return _model(catalog, case, activity=activity, temperature_c=temperature_c)

    used = []
    real = gas.amounts_on_floats

    def spy(*a, **k):
        out = real(*a, **k)
        used.append(out is not None)
        return out

    monkeypatch.setattr(gas, "amounts_on_floats", spy)
    for phs in (PHS[:3], PHS[3:6], PHS[6:], [7.0]):
        floats = make().amount_at_pH(phs)
        arrays = _on_arrays(monkeypatch, make, phs)
        np.testing.assert_array_equal(np.isnan(floats), np.isnan(arrays))
        np.testing.assert_allclose(floats, arrays, rtol=1e-11, atol=0.0)
    assert used and all(used)
    # at least one pH of every case is reachable, and one is not (the wrong side)
    every = make().amount_at_pH(PHS)
    assert np.isfinite(every).any() and np.isnan(every).any()


@pytest.mark.parametrize("case", ["sulfuric acid, Na2CO3 (carbonate from the reagent)",
                                  "bicarbonate waste, HCl"])
def test_carbonate_lost_or_held_open(catalog, monkeypatch, case):
    """With some CO2 already lost, and with CO2(aq) held at the air's level."""
    def make():
        return _model(catalog, case)

    phs = [5.0, 6.0, 7.0]
    for kwargs in ({"carbonate_loss_mol": np.array([0.01, 0.02, 0.005])},
                   {"co2_molar": 1.3e-5}):
        floats = make().amount_at_pH(phs, **kwargs)
        arrays = _on_arrays(monkeypatch, make, phs, **kwargs)
        assert np.isfinite(floats).any()
        np.testing.assert_array_equal(np.isnan(floats), np.isnan(arrays))
        np.testing.assert_allclose(floats, arrays, rtol=1e-11)


def test_the_dose_found_reaches_its_pH(catalog):  # noqa: N802
    """The forward solve (the Davies equation, no pairs here) at each amount found gives
    back its pH."""
    model = _model(catalog, "acetic acid, NaOH")
    phs = np.array([4.0, 4.76, 6.0, 8.5])
    n = model.amount_at_pH(phs)
    assert np.all(np.isfinite(n))
    np.testing.assert_allclose(model.forward(n).pH, phs, atol=1e-8)


def test_the_settled_ionic_strengths_are_kept_as_starts(catalog, monkeypatch):
    """Both ways keep what they settled for the next question's start (``_settled``)."""
    a = _model(catalog, "strong and polyprotic acid, NaOH")
    a.amount_at_pH([6.0, 7.0])
    with monkeypatch.context() as m:
        m.setattr(gas, "amounts_on_floats", lambda *x, **k: None)
        b = _model(catalog, "strong and polyprotic acid, NaOH")
        b.amount_at_pH([6.0, 7.0])
    np.testing.assert_array_equal(a._settled[0], b._settled[0])
    np.testing.assert_allclose(a._settled[1], b._settled[1], rtol=1e-12)


def test_where_the_floats_decline(catalog):
    """Metals (their charge comes from ``metal_doses``) and more pHs than ``FLOAT_MAX``
    go to the arrays; the answer is the same either way."""
    comp = dict(catalog.compound("NaOH").composition)
    zinc = gas.TitrationModel(Mixture({"Cl-": 0.2, "Zn+2": 0.05}, volume_l=1.0), comp, 1.0,
                              activity="davies", catalog=catalog)
    lay = gas.cached_layout(catalog, zinc.keys, 25.0)
    args = dict(a_dh=0.5, pkw=14.0, i_rtol=1e-11, max_iter=40)
    assert inverse_floats.amounts_on_floats(zinc, lay, [7.0], [0.0], None, [0.1],
                                            **args) is None
    plain = _model(catalog, "acetic acid, NaOH")
    lay = gas.cached_layout(catalog, plain.keys, 25.0)
    many = inverse_floats.FLOAT_MAX + 1
    assert inverse_floats.amounts_on_floats(plain, lay, [7.0] * many, [0.0] * many, None,
                                            [0.1] * many, **args) is None
    phs = np.linspace(4.0, 9.0, many)
    few = np.concatenate([_model(catalog, "acetic acid, NaOH").amount_at_pH(phs[:8]),
                          _model(catalog, "acetic acid, NaOH").amount_at_pH(phs[8:])])
    np.testing.assert_allclose(_model(catalog, "acetic acid, NaOH").amount_at_pH(phs), few,
                               rtol=1e-11)
