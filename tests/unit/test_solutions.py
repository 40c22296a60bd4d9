"""Unit and property tests of the strength conversions (%w/w, molarity, molality, density)."""

import math

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from carboy.errors import InvalidInput, UnknownCompound
from carboy.model import solutions
from carboy.model.catalog import default_catalog, density_at
from carboy.model.solutions import (
    DILUTE_LIMIT_PERCENT,
    density_of,
    molal_from_percent,
    molar_from_percent,
    percent_from_molal,
    percent_from_molar,
    strength_of,
)

CAT = default_catalog()
TABLED = sorted(k for k, c in CAT.compounds.items() if c.density is not None)
UNTABLED = sorted(k for k, c in CAT.compounds.items() if c.density is None)


def test_there_are_tables_to_test():
    assert {"H2SO4", "HCl", "HNO3", "H3PO4", "CH3COOH", "NaOH", "KOH", "NH3"} <= set(TABLED)


@pytest.mark.parametrize("key", TABLED)
def test_molarity_rises_strictly_over_every_table(key):
    # c(w) = w·ρ(w)·10/M with ρ linear on each segment: dc/dw ∝ ρ(w) + w·ρ'(w), which is
    # linear in w on a segment, so positive at both ends means positive throughout.
    compound = CAT.compound(key)
    table = compound.density
    ws, rs = table.mass_percent, table.density_g_ml
    for (w0, r0), (w1, r1) in zip(zip(ws, rs), zip(ws[1:], rs[1:])):
        slope = (r1 - r0) / (w1 - w0)
        assert r0 + w0 * slope > 0, (key, w0)
        assert r1 + w1 * slope > 0, (key, w1)
    rows = [molar_from_percent(compound, w) for w in ws]
    assert all(b > a for a, b in zip(rows, rows[1:]))


@pytest.mark.parametrize("key", TABLED)
def test_inverse_hits_rows_exactly_and_matches_a_numeric_solve(key):
    from scipy.optimize import brentq

    compound = CAT.compound(key)
    ws = compound.density.mass_percent
    for w in ws:
        assert percent_from_molar(compound, molar_from_percent(compound, w)) == pytest.approx(
            w, abs=1e-12)
    for w0, w1 in zip(ws, ws[1:]):
        mid = 0.37 * w0 + 0.63 * w1
        c = molar_from_percent(compound, mid)
        numeric = brentq(lambda w, c=c: molar_from_percent(compound, w) - c, w0, w1, xtol=1e-13)
        assert percent_from_molar(compound, c) == pytest.approx(numeric, abs=1e-9)


@settings(max_examples=150, deadline=None)
@given(key=st.sampled_from(TABLED), frac=st.floats(0.0, 1.0))
def test_round_trip_percent_molar_percent(key, frac):
    compound = CAT.compound(key)
    lo, hi = compound.density.mass_percent[0], compound.density.mass_percent[-1]
    w = lo + frac * (hi - lo)
    c = molar_from_percent(compound, w)
    assert percent_from_molar(compound, c) == pytest.approx(w, rel=1e-10, abs=1e-10)
    assert c == pytest.approx(w * density_at(compound, w) * 10 / compound.molar_mass_g_mol)


@settings(max_examples=150, deadline=None)
@given(key=st.sampled_from(TABLED), frac=st.floats(0.0, 1.0))
def test_round_trip_molar_percent_molar(key, frac):
    compound = CAT.compound(key)
    lo, hi = solutions.table_molar_range(compound)
    c = lo + frac * (hi - lo)
    w = percent_from_molar(compound, c)
    assert molar_from_percent(compound, w) == pytest.approx(c, rel=1e-10, abs=1e-12)


@settings(max_examples=150, deadline=None)
@given(key=st.sampled_from(sorted(CAT.compounds)), w=st.floats(0.0, 99.9))
def test_round_trip_percent_molal(key, w):
    b = molal_from_percent(key, w)
    assert percent_from_molal(key, b) == pytest.approx(w, rel=1e-12, abs=1e-12)
    # definition: mol of solute per kg of water
    m = CAT.compound(key).molar_mass_g_mol
    assert b == pytest.approx((w / m) / ((100 - w) / 1000), rel=1e-12, abs=1e-15)


@settings(max_examples=100, deadline=None)
@given(key=st.sampled_from(TABLED), frac=st.floats(0.001, 0.999))
def test_strength_is_one_consistent_state(key, frac):
    compound = CAT.compound(key)
    lo, hi = solutions.table_molar_range(compound)
    s = strength_of(compound, conc_molar=lo + frac * (hi - lo))
    assert s.in_table
    t = strength_of(compound, mass_percent=s.mass_percent)
    assert t.conc_molar == pytest.approx(s.conc_molar, rel=1e-10)
    assert t.density_g_ml == pytest.approx(s.density_g_ml, rel=1e-12)
    if s.mass_percent < 100:
        assert s.molal == pytest.approx(molal_from_percent(compound, s.mass_percent))
    # molarity from the state itself
    assert s.conc_molar == pytest.approx(
        s.mass_percent * s.density_g_ml * 10 / compound.molar_mass_g_mol, rel=1e-12)


@pytest.mark.parametrize("key", sorted(CAT.compounds))
def test_a_dilute_target_works_for_every_compound(key):
    s = strength_of(key, conc_molar=0.1)
    assert s.conc_molar == 0.1
    assert s.density_g_ml is not None and 0.95 < s.density_g_ml < 1.1
    assert s.mass_percent is not None and 0 < s.mass_percent <= DILUTE_LIMIT_PERCENT
    if key in UNTABLED:
        assert not s.in_table
        assert "water" in s.note
        m = CAT.compound(key).molar_mass_g_mol
        assert s.mass_percent == pytest.approx(0.1 * m / (10 * 0.99820), rel=1e-4)
    else:
        assert s.in_table


def test_water_fallback_stops_at_the_dilute_limit():
    m = CAT.compound("HBr").molar_mass_g_mol
    c_limit = DILUTE_LIMIT_PERCENT * 10 * 0.998204 / m
    assert strength_of("HBr", conc_molar=0.99 * c_limit).density_g_ml is not None
    far = strength_of("HBr", conc_molar=1.5 * c_limit)
    assert far.density_g_ml is None and far.mass_percent is None and far.molal is None
    assert not far.in_table and "unknown" in far.note
    with pytest.raises(InvalidInput) as exc:
        density_of("HBr", conc_molar=1.5 * c_limit)
    assert exc.value.value == pytest.approx(1.5 * c_limit)
    # a mass percentage without a table can only be used while dilute
    assert strength_of("HBr", mass_percent=2.0).conc_molar == pytest.approx(
        2.0 * 0.998204 * 10 / m, rel=1e-5)
    with pytest.raises(InvalidInput) as exc:
        strength_of("HBr", mass_percent=48)
    assert exc.value.value == 48 and "no density table" in exc.value.reason


@pytest.mark.parametrize("call,value,fragment", [
    (lambda: strength_of("HCl", conc_molar=14.0), 14.0, "0-40 % w/w"),
    (lambda: strength_of("HCl", mass_percent=45.0), 45.0, "0-13.14 M"),
    (lambda: molar_from_percent("NH3", 31.0), 31.0, "0-30 % w/w"),
    (lambda: percent_from_molar("H2SO4", 19.0), 19.0, "18.66 M"),
    (lambda: percent_from_molar("NaOH", -1.0), -1.0, "negative"),
    (lambda: molar_from_percent("HCl", float("nan")), "nan", "finite"),
    (lambda: molar_from_percent("HCl", 101.0), 101.0, "between 0 and 100"),
    (lambda: molal_from_percent("H2SO4", 100.0), 100.0, "no molality"),
    (lambda: percent_from_molal("NaCl", -0.5), -0.5, "negative"),
    (lambda: strength_of("HCl", conc_molar=True), True, "number"),
])
def test_refusals_name_the_value_and_the_range(call, value, fragment):
    with pytest.raises(InvalidInput) as exc:
        call()
    if value == "nan":
        assert math.isnan(exc.value.value)
    else:
        assert exc.value.value == value
    assert fragment in str(exc.value)


def test_exactly_one_strength():
    with pytest.raises(InvalidInput):
        strength_of("HCl")
    with pytest.raises(InvalidInput):
        strength_of("HCl", conc_molar=1.0, mass_percent=3.0)


def test_no_table_for_exact_conversions():
    with pytest.raises(InvalidInput) as exc:
        percent_from_molar("HBr", 1.0)
    assert exc.value.value == "HBr"


def test_unknown_compound():
    with pytest.raises(UnknownCompound):
        strength_of("unobtainium", conc_molar=0.1)


def test_density_of_agrees_with_the_table():
    assert density_of("H2SO4", mass_percent=96) == pytest.approx(1.8355)
    c = molar_from_percent("H2SO4", 55.0)
    assert density_of("H2SO4", conc_molar=c) == pytest.approx(density_at("H2SO4", 55.0))


def test_strength_note_names_the_rows_used():
    s = strength_of("HCl", mass_percent=37.0)
    assert "36 %" in s.note and "38 %" in s.note and "MEMORY" in s.note
    assert s.to_dict()["in_table"] is True
