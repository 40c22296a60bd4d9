"""Reagent parsing, strengths and amounts."""

import pytest

from carboy.errors import InvalidInput, UnknownCompound
from carboy.model.reagents import parse_reagent


def test_solution():
    r = parse_reagent("NaOH=2M")
    assert r.form == "solution" and r.conc_molar == 2.0
    assert r.volume_l(1.0) == pytest.approx(0.5)
    assert r.base_capacity == 1 and r.acid_capacity == 0
    assert "2 M solution" in r.describe()


def test_concentrate_from_density_table():
    # shared/reference-data.md §4f: 50 % NaOH at 1.5253 g/mL -> 19.068 M (DERIVED)
    r = parse_reagent("NaOH=50%")
    assert r.form == "concentrate"
    assert r.density_g_ml == pytest.approx(1.5253)
    assert r.conc_molar == pytest.approx(19.068, rel=1e-3)
    assert r.mass_g(19.068) == pytest.approx(1525.3, rel=1e-3)


def test_solid_with_assay():
    r = parse_reagent("NaOH@97%")
    assert r.form == "solid" and r.assay_percent == 97.0
    assert r.volume_l(1.0) is None
    assert r.mass_g(1.0) == pytest.approx(r.compound.molar_mass_g_mol / 0.97)


@pytest.mark.parametrize("text,beta,alpha", [
    ("Na2CO3", 2, 0), ("NaHCO3", 1, 1), ("Ca(OH)2", 2, 0), ("HCl=1M", 0, 1),
    ("H2SO4=1M", 0, 2), ("C6H8O7", 0, 3),
])
def test_capacities(text, beta, alpha):
    r = parse_reagent(text)
    assert (r.base_capacity, r.acid_capacity) == (beta, alpha)


def test_slurry_flag():
    assert parse_reagent("Ca(OH)2").is_slurry
    assert not parse_reagent("NaOH").is_slurry


@pytest.mark.parametrize("text", ["NaOH=120%", "NaOH=0M", "NaOH=-1M", "HCl", "NaOH@0%", "=2M", ""])
def test_bad_input(text):
    with pytest.raises(InvalidInput):
        parse_reagent(text)


def test_outside_density_table():
    with pytest.raises(InvalidInput, match="outside the density table"):
        parse_reagent("NaOH=80%")


def test_unknown():
    with pytest.raises(UnknownCompound):
        parse_reagent("Foo=1M")
