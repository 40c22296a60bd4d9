"""The Pitzer activity model: data checks, E-theta, consistency properties, fallback, flags."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import quad

from carboy.errors import CatalogError, InvalidInput, TemperatureOutOfRange
from carboy.model import water
from carboy.model.etheta import j_function, j_integral
from carboy.model.ion_pairs import formation_constants, ion_pair, load_ion_pairs, parse_ion_pairs
from carboy.model.pitzer import (
    I_MAX_MOLAL,
    activity_coefficients,
    charge_of_label,
    ionic_strength_molal,
    ph_from_activity,
    pitzer_model,
)
from carboy.model.pitzer_data import load_pitzer_data, parse_pitzer_data, temperature_value

SYSTEM = ("H+", "Na+", "K+", "NH4+", "Ca+2", "Mg+2", "Cl-", "SO4-2", "HSO4-", "OH-",
          "HCO3-", "CO3-2", "NO3-", "CO2")
CHARGES = np.array([charge_of_label(s) for s in SYSTEM])


# ----------------------------------------------------------------------------- data


def test_every_parameter_has_source_and_status():
    data = load_pitzer_data()
    assert len(data.parameters) > 100
    for p in data.parameters:
        assert p.source and p.status in {"FOUND", "MEMORY", "DERIVED", "NONE"}
        if p.status == "FOUND":
            assert p.seen_in, p
    assert set(SYSTEM) <= set(data.charges)


def _minimal(**extra):
    raw = {"sources": {"x": "a copy"},
           "species": [{"label": "Na+", "charge": 1}, {"label": "K+", "charge": 1},
                       {"label": "Cl-", "charge": -1}],
           "model": {"reference_electrolyte": ["K+", "Cl-"]}}
    raw.update(extra)
    return raw


@pytest.mark.parametrize("extra, message", [
    ({"binary": [{"ions": ["Na+", "K+"], "beta0": [0.1], "source": "s", "status": "FOUND",
                  "seen_in": ["x"]}]}, "one cation and one anion"),
    ({"binary": [{"ions": ["Na+", "Cl-"], "beta0": [0.1], "source": "s", "status": "MEMORY"}]},
     "from memory"),
    ({"binary": [{"ions": ["Na+", "Cl-"], "beta0": [0.1], "source": "s", "status": "FOUND"}]},
     "seen_in"),
    ({"theta": [{"ions": ["Na+", "Cl-"], "value": [0.1], "source": "s", "status": "DERIVED"}]},
     "same sign"),
    ({"psi": [{"ions": ["Na+", "K+", "Na+"], "value": [0.1], "source": "s",
               "status": "DERIVED"}]}, "like-charged"),
    ({"binary": [{"ions": ["Na+", "Cl-"], "beta0": [0.1, 1, 2, 3, 4, 5, 6], "source": "s",
                  "status": "DERIVED"}]}, "1 to 6"),
])
def test_parser_rejects_bad_records(extra, message):
    with pytest.raises(CatalogError, match=message):
        parse_pitzer_data(_minimal(**extra))


def test_temperature_form_is_the_pitzer_dat_form():
    # a0 + a1 (1/T - 1/Tr) + a2 ln(T/Tr) + a3 (T - Tr) + a4 (T² - Tr²) + a5 (1/T² - 1/Tr²)
    c = (0.1, 10.0, 0.5, 1e-3, 1e-6, 100.0)
    t, tr = 330.0, 298.15
    expect = (0.1 + 10 * (1 / t - 1 / tr) + 0.5 * math.log(t / tr) + 1e-3 * (t - tr)
              + 1e-6 * (t * t - tr * tr) + 100 * (1 / t**2 - 1 / tr**2))
    assert temperature_value(c, t) == pytest.approx(expect, rel=1e-12)
    assert temperature_value(c, tr) == pytest.approx(0.1, rel=1e-12)


# ----------------------------------------------------------------------------- E-theta


# the plain integrand loses digits to cancellation where q is small (large y, small x): the
# reference is looser there
@pytest.mark.parametrize("x, rel", [(0.05, 1e-6), (0.3, 1e-8), (1.0, 1e-8), (4.0, 1e-8),
                                    (20.0, 1e-8), (150.0, 1e-8)])
def test_j_quadrature_matches_scipy_quad(x, rel):
    def integrand(y):
        q = -(x / y) * math.exp(-y)
        return (1.0 + q + 0.5 * q * q - math.exp(q)) * y * y

    ref = (quad(integrand, 0, 1, epsrel=1e-12, limit=200)[0]
           + quad(integrand, 1, 60, epsrel=1e-12, limit=200)[0]) / x
    assert j_integral(np.array([x]))[0][0] == pytest.approx(ref, rel=rel)


def test_j_table_interpolation_matches_direct_quadrature():
    x = np.exp(np.random.default_rng(3).uniform(np.log(1e-5), np.log(900.0), 400))
    j, jp = j_function(x)
    jd, jpd, _ = j_integral(x)
    assert np.allclose(j, jd, rtol=1e-8, atol=1e-15)
    assert np.allclose(jp, jpd, rtol=1e-7, atol=1e-13)


def test_j_derivative_is_the_derivative():
    x = np.array([0.02, 0.7, 3.0, 40.0])
    h = 1e-6 * x
    numeric = (j_function(x + h)[0] - j_function(x - h)[0]) / (2 * h)
    assert np.allclose(j_function(x)[1], numeric, rtol=1e-5)


@pytest.mark.parametrize("x", [0.1, 1.0, 10.0, 100.0])
def test_j_near_pitzer_1975_approximation(x):
    # Pitzer, J. Solution Chem. 4, 249 (1975): J ≈ x / (4 + 4.581 x^-0.7237 exp(-0.0120 x^0.528))
    # (coefficients from memory; the approximation is good to about 1-2 %)
    approx = x / (4 + 4.581 * x**-0.7237 * math.exp(-0.0120 * x**0.528))
    assert j_function(np.array([x]))[0][0] == pytest.approx(approx, rel=0.02)


# ----------------------------------------------------------------------------- properties

molal = st.floats(min_value=0.0, max_value=3.0, allow_nan=False)
compositions = st.lists(molal, min_size=len(SYSTEM), max_size=len(SYSTEM))


@settings(max_examples=120, deadline=None)
@given(compositions, st.floats(min_value=0.0, max_value=100.0))
def test_finite_output_for_every_input_in_range(ms, t):
    res = activity_coefficients(np.array([ms]), SYSTEM, t)
    assert np.all(np.isfinite(res.ln_gamma))
    assert np.all(np.isfinite(res.osmotic)) and np.all(res.water_activity > 0)
    assert res.ionic_strength_molal[0] == pytest.approx(0.5 * np.dot(ms, CHARGES**2))
    assert res.valid[0] == (res.ionic_strength_molal[0] <= I_MAX_MOLAL)


@settings(max_examples=60, deadline=None)
@given(st.lists(st.floats(min_value=0.0, max_value=1.0), min_size=13, max_size=13),
       st.floats(min_value=1e-10, max_value=1e-8))
def test_limiting_law_at_low_ionic_strength(weights, ionic):
    # the first correction is of order √I times the largest β (β2(Na, HCO3) = 8.2): at
    # I <= 1e-8 it stays below 0.2 %
    w = np.array(weights + [0.0])
    if w.sum() < 1e-3:
        w[1] = w[6] = 1.0
    m = w / (0.5 * np.dot(w, CHARGES**2)) * ionic
    res = activity_coefficients(m[None, :], SYSTEM, 25.0, scale="none")
    slope = math.log(10) * water.debye_huckel_a(25.0)
    ions = CHARGES != 0
    limiting = -slope * CHARGES[ions] ** 2 * math.sqrt(ionic)
    assert np.allclose(res.ln_gamma[0, ions], limiting, rtol=2e-3)
    # φ - 1 = -2 Aφ I^3/2 / Σm, Aφ = slope / 3
    expect = 1 - 2 * slope / 3 * ionic**1.5 / m.sum()
    assert res.osmotic[0] == pytest.approx(expect, abs=2e-3 * (1 - expect))


def _ln_gamma(m, t=25.0):
    return activity_coefficients(m[None, :], SYSTEM, t, scale="none").ln_gamma[0]


@settings(max_examples=25, deadline=None)
@given(st.lists(st.floats(min_value=0.01, max_value=1.5), min_size=14, max_size=14),
       st.integers(0, 13), st.integers(0, 13))
def test_cross_derivatives_are_symmetric(ms, i, j):
    # d ln γ_i / d m_j = d ln γ_j / d m_i: the coefficients derive from one Gibbs energy
    m = np.array(ms)
    h = 1e-6

    def d(a, b):
        e = np.zeros_like(m)
        e[b] = h
        return (_ln_gamma(m + e)[a] - _ln_gamma(m - e)[a]) / (2 * h)

    assert d(i, j) == pytest.approx(d(j, i), rel=1e-5, abs=1e-7)


@settings(max_examples=25, deadline=None)
@given(st.lists(st.floats(min_value=0.01, max_value=1.5), min_size=14, max_size=14),
       st.lists(st.floats(min_value=-1.0, max_value=1.0), min_size=14, max_size=14))
def test_gibbs_duhem_links_osmotic_and_activity_coefficients(ms, direction):
    # d(φ Σm) = Σ dm_i + Σ m_i d ln γ_i along any direction of composition
    m, u = np.array(ms), np.array(direction) * 1e-6
    model = pitzer_model(SYSTEM, 25.0, scale="none")
    lo, hi = model.evaluate(m - u), model.evaluate(m + u)
    lhs = hi.osmotic[0] * (m + u).sum() - lo.osmotic[0] * (m - u).sum()
    rhs = 2 * u.sum() + np.dot(m, hi.ln_gamma[0] - lo.ln_gamma[0])
    assert lhs == pytest.approx(rhs, abs=1e-9)


def test_species_order_does_not_matter():
    rng = np.random.default_rng(7)
    m = rng.uniform(0, 1, (5, len(SYSTEM)))
    perm = rng.permutation(len(SYSTEM))
    a = activity_coefficients(m, SYSTEM)
    b = activity_coefficients(m[:, perm], tuple(SYSTEM[k] for k in perm))
    assert np.allclose(a.ln_gamma[:, perm], b.ln_gamma, rtol=1e-12, atol=1e-13)
    assert np.allclose(a.osmotic, b.osmotic, rtol=1e-12)


def test_points_are_independent():
    rng = np.random.default_rng(11)
    m = rng.uniform(0, 2, (6, len(SYSTEM)))
    batch = activity_coefficients(m, SYSTEM).ln_gamma
    for n in range(6):
        assert np.allclose(activity_coefficients(m[n], SYSTEM).ln_gamma[0], batch[n])


# ----------------------------------------------------------------------------- conventions


def test_macinnes_gives_chloride_the_kcl_mean_coefficient():
    m = np.array([[2.0, 2.0]])
    kcl = activity_coefficients(m, ("K+", "Cl-"))
    mixed = activity_coefficients(np.array([[1.0, 0.5, 2.0, 0.25]]), ("Na+", "Ca+2", "Cl-", "SO4-2"))
    ionic = mixed.ionic_strength_molal
    pure = activity_coefficients(np.column_stack([ionic, ionic]), ("K+", "Cl-"))
    assert kcl.ln_gamma_of("Cl-") == pytest.approx(kcl.mean_ln_gamma("K+", "Cl-"), rel=1e-12)
    assert mixed.ln_gamma_of("Cl-") == pytest.approx(pure.mean_ln_gamma("K+", "Cl-"), rel=1e-12)


def test_scale_leaves_neutral_combinations_alone_and_ph_converts():
    m = np.array([[1.5, 0.3, 1.0, 0.1, 0.4]])
    sp = ("H+", "Ca+2", "Cl-", "SO4-2", "HSO4-")
    mac = activity_coefficients(m, sp, scale="macinnes")
    raw = activity_coefficients(m, sp, scale="none")
    for c, a in (("H+", "Cl-"), ("Ca+2", "SO4-2"), ("H+", "SO4-2")):
        assert mac.mean_ln_gamma(c, a) == pytest.approx(raw.mean_ln_gamma(c, a), rel=1e-12)
    a_mac, a_raw = 1.5 * mac.gamma("H+"), 1.5 * raw.gamma("H+")
    assert ph_from_activity(a_mac) == pytest.approx(ph_from_activity(a_raw, raw.phimac))
    assert mac.phimac == pytest.approx(raw.phimac)


def test_ionic_strength_helper():
    assert ionic_strength_molal(np.array([[1.0, 0.5, 2.0]]), [1, 2, -1])[0] == pytest.approx(2.5)


@pytest.mark.parametrize("label, z", [("Na+", 1), ("SO4-2", -2), ("PO4-3", -3), ("CO2", 0),
                                      ("B(OH)4-", -1), ("Ca+2", 2), ("NH3", 0)])
def test_charge_of_label(label, z):
    assert charge_of_label(label) == z


# ----------------------------------------------------------------------------- flags


def test_species_outside_the_set_fall_back_explicitly():
    sp = ("Na+", "Cl-", "H2PO4-", "NH3")
    m = np.array([[1.0, 0.9, 0.1, 0.2], [1.0, 1.0, 0.0, 0.0]])
    res = activity_coefficients(m, sp)
    assert res.fallback == ("H2PO4-", "NH3")
    assert any("H2PO4-" in w and "Davies" in w for w in res.warnings)
    assert res.valid.tolist() == [False, True]
    ionic = res.ionic_strength_molal
    davies = -math.log(10) * water.debye_huckel_a(25.0) * (
        np.sqrt(ionic) / (1 + np.sqrt(ionic)) - 0.3 * ionic)
    assert res.ln_gamma_of("H2PO4-") == pytest.approx(davies - res.phimac)
    assert res.ln_gamma_of("NH3") == pytest.approx([0.0, 0.0])
    other = activity_coefficients(m, sp, fallback="pitzer-dh")
    assert other.ln_gamma_of("H2PO4-")[0] != pytest.approx(res.ln_gamma_of("H2PO4-")[0], rel=1e-3)
    assert any("outside its own range" in w for w in res.warnings)


def test_beyond_six_molal_is_flagged():
    res = activity_coefficients(np.array([[3.0, 3.0], [7.0, 7.0]]), ("Na+", "Cl-"))
    assert res.valid.tolist() == [True, False]
    assert any("above 6 mol/kg" in w for w in res.warnings)
    assert np.all(np.isfinite(res.ln_gamma))


def test_pairs_without_parameters_are_reported():
    res = activity_coefficients(np.array([[0.5, 0.5]]), ("NH4+", "HCO3-"))
    assert any("NH4+ HCO3-" in w for w in res.warnings)


def test_temperature_without_terms_is_reported():
    sp = ("Na+", "K+", "Cl-", "NO3-")
    assert not activity_coefficients(np.ones((1, 4)), sp, 27.0).warnings
    warm = activity_coefficients(np.ones((1, 4)), sp, 60.0)
    assert any("held at their 25 °C" in w and "theta(Cl-, NO3-)" in w for w in warm.warnings)


@pytest.mark.parametrize("m, message", [
    (np.array([[1.0, -0.1]]), "not negative"),
    (np.array([[1.0, np.nan]]), "finite"),
    (np.ones((2, 3)), "points, 2"),
])
def test_bad_molalities_are_refused(m, message):
    with pytest.raises(InvalidInput, match=message):
        activity_coefficients(m, ("Na+", "Cl-"))


def test_bad_options_are_refused():
    with pytest.raises(InvalidInput):
        pitzer_model(("Na+", "Cl-"), fallback="guess")
    with pytest.raises(InvalidInput):
        pitzer_model(("Na+", "Cl-"), scale="other")
    with pytest.raises(TemperatureOutOfRange):
        pitzer_model(("Na+", "Cl-"), 150.0)


# ----------------------------------------------------------------------------- ion pairs


def test_ion_pairs_load_with_sources():
    pairs = load_ion_pairs()
    names = {p.species for p in pairs}
    assert {"CaOH+", "MgOH+", "NaSO4-", "KSO4-", "CaSO4", "MgSO4"} <= names
    assert all(p.source and p.status == "FOUND" for p in pairs)


@pytest.mark.parametrize("pair", [p.species for p in load_ion_pairs() if p.analytic])
def test_analytic_expressions_agree_with_the_25c_constants(pair):
    # the compilation's analytic log K(T) and its tabulated log K are two independent numbers
    p = ion_pair(pair)
    assert p.log_k(25.0) == pytest.approx(p.log_k25, abs=0.01)


def test_van_t_hoff_direction_follows_the_enthalpy():
    k = formation_constants(50.0, ["MgSO4", "NaSO4-"])
    assert k["MgSO4"] > ion_pair("MgSO4").log_k25      # endothermic association
    assert formation_constants(60.0, ["CaOH+"])["CaOH+"] == ion_pair("CaOH+").log_k25


def test_caoh_association_constant():
    # Ca+2 + OH- = CaOH+: WATEQ4F hydrolysis -12.78 plus pKw 13.995 (IAPWS, reference-data §1)
    assert ion_pair("CaOH+").log_k25 + water.pkw(25.0) == pytest.approx(1.22, abs=0.01)


def test_ion_pair_parser_checks_charge():
    raw = {"sources": {"w": "x"}, "pairs": [{"species": "NaSO4-", "formed_from": {
        "Na+": 1, "SO4-2": 2}, "log_k": 0.7, "source": "s", "status": "FOUND", "seen_in": ["w"]}]}
    with pytest.raises(CatalogError, match="charge"):
        parse_ion_pairs(raw)
    with pytest.raises(InvalidInput):
        ion_pair("NaCl")
