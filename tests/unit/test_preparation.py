"""Unit and property tests of sources, recipes and serial dilutions."""

import json
import math
import re
import tomllib
from importlib import resources

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from carboy.errors import CarboyError, InvalidInput, UnknownCompound
from carboy.model import thermo, water
from carboy.model.catalog import default_catalog, molar_mass_of
from carboy.model.heat_capacity import solute_for_formula, solution_cp
from carboy.model.preparation import (
    MAX_FINAL_VOLUME_L,
    WATER_FIRST_FRACTION,
    heat_released_kj,
    parse_source,
    plan_recipe,
    plan_series,
    solid_source,
    solution_source,
)
from carboy.model.solutions import strength_of

CAT = default_catalog()
REQUIRED_KEYS = {"stock_molar", "stock_volume_ml", "stock_mass_g", "water_ml", "heat_released_kj",
                 "temperature_rise_c", "steps", "cautions"}


def codes(recipe):
    return {c.code for c in recipe.cautions}


# ----------------------------------------------------------------------------- sources


@pytest.mark.parametrize("text,key,kind,percent,molar", [
    ("H2SO4=96%", "H2SO4", "solution", 96.0, None),
    ("H2SO4=96 %w/w", "H2SO4", "solution", 96.0, None),
    ("H2SO4=96% w/w", "H2SO4", "solution", 96.0, None),
    ("HCl=12.1M", "HCl", "solution", None, 12.1),
    ("HCl=12,1 M", "HCl", "solution", None, 12.1),
    ("HCl = 500 mM", "HCl", "solution", None, 0.5),
    ("NaOH=50%", "NaOH", "solution", 50.0, None),
    ("NaOH", "NaOH", "solid", None, None),
    ("sodium hydroxide", "NaOH", "solid", None, None),
])
def test_parse_source_forms(text, key, kind, percent, molar):
    s = parse_source(text)
    assert s.compound.key == key and s.kind == kind
    if percent is not None:
        assert s.mass_percent == percent
        assert s.conc_molar == pytest.approx(strength_of(key, mass_percent=percent).conc_molar)
    if molar is not None:
        assert s.conc_molar == pytest.approx(molar)
    if kind == "solid":
        assert s.conc_molar is None and s.purity_percent == 100.0


def test_hydrate_spellings_are_the_same_compound():
    a, b = parse_source("CuSO4·5H2O"), parse_source("CuSO4.5H2O")
    assert a.compound is b.compound is CAT.compound("CuSO4.5H2O")
    assert a.molar_mass_g_mol == b.molar_mass_g_mol == pytest.approx(
        molar_mass_of("CuSO4.5H2O"))
    assert a.anhydrous is CAT.compound("CuSO4")


def test_a_hydrate_missing_from_the_catalog_is_built_from_its_base():
    assert "MgSO4.7H2O" not in CAT
    s = parse_source("MgSO4·7H2O")
    assert s.kind == "solid" and s.compound.key == "MgSO4.7H2O"
    # molmass mass of the weighed form, hydrate water included
    assert s.molar_mass_g_mol == pytest.approx(molar_mass_of("MgSO4") + 7 * molar_mass_of("H2O"))
    assert s.compound.hazards == CAT.compound("MgSO4").hazards
    assert s.anhydrous is CAT.compound("MgSO4")
    assert any("not in the catalog" in n for n in s.notes)
    with pytest.raises(UnknownCompound):
        parse_source("Qq2SO4·7H2O")


@pytest.mark.parametrize("text", ["H2SO4", "HCl", "NH3", "CH3COOH"])
def test_a_liquid_without_strength_is_refused(text):
    with pytest.raises(InvalidInput) as exc:
        parse_source(text)
    assert "give its strength, e.g." in exc.value.reason
    assert f"{text}=" in exc.value.reason
    assert exc.value.value == text


def test_the_h2so4_hint_is_the_usual_label():
    with pytest.raises(InvalidInput) as exc:
        parse_source("H2SO4")
    assert "give its strength, e.g. H2SO4=96%" in str(exc.value)


def test_purity_and_label_density():
    s = parse_source("NaOH@98%")
    assert s.kind == "solid" and s.purity_percent == 98.0
    hf = parse_source("HF=48% d=1,16")
    assert hf.density_g_ml == 1.16
    assert hf.conc_molar == pytest.approx(48 * 1.16 * 10 / CAT.compound("HF").molar_mass_g_mol)


@pytest.mark.parametrize("text,value", [
    ("", ""), ("   ", "   "), ("HBr=48%", 48.0), ("HCl=45%", 45.0), ("HCl=0M", "HCl=0M"),
    ("HCl=-2M", "-2M"), ("HCl=", "HCl="), ("NaOH@0%", 0.0),
])
def test_bad_sources_are_refused_naming_the_value(text, value):
    with pytest.raises(InvalidInput) as exc:
        parse_source(text)
    assert exc.value.value == value


def test_source_argument_checks():
    with pytest.raises(InvalidInput):
        solution_source("HCl")
    with pytest.raises(InvalidInput):
        solution_source("HCl", conc_molar=1.0, mass_percent=3.6)
    with pytest.raises(InvalidInput) as exc:
        solution_source("HCl", conc_molar=1.0, basis="guess")
    assert exc.value.value == "guess"
    with pytest.raises(InvalidInput) as exc:
        solid_source("NaOH", purity_percent=101)
    assert exc.value.value == 101
    with pytest.raises(InvalidInput):
        solid_source("CO2")
    with pytest.raises(InvalidInput) as exc:
        solution_source("HF", mass_percent=48, density_g_ml=7.0)
    assert exc.value.value == 7.0


# ----------------------------------------------------------------------------- recipes

SOLUTION_SOURCES = ["H2SO4=96%", "H2SO4=70%", "HCl=37%", "HCl=12.1M", "HNO3=70%",
                    "H3PO4=85%", "NaOH=50%", "NH3=28%", "CH3COOH=100%", "KOH=45%",
                    "HF=48% d=1.16", "HBr=8.9M", "HClO4=70% d=1.67"]
SOLID_SOURCES = ["NaOH", "KOH", "CuSO4·5H2O", "NaCl", "KHC8H4O4", "Na2CO3@99.5%",
                 "MgSO4·7H2O"]


@settings(max_examples=120, deadline=None)
@given(text=st.sampled_from(SOLUTION_SOURCES), frac=st.floats(0.001, 0.9),
       volume_l=st.floats(0.01, 5.0))
def test_dilution_numbers_are_consistent(text, frac, volume_l):
    src = parse_source(text)
    target = frac * src.conc_molar
    r = plan_recipe(src, target, volume_l)
    assert r.stock_molar == src.conc_molar
    assert r.stock_volume_ml * r.stock_molar == pytest.approx(target * r.final_volume_ml,
                                                              rel=1e-12)
    assert r.final_volume_ml == pytest.approx(volume_l * 1000)
    assert r.dilution_factor == pytest.approx(src.conc_molar / target)
    assert r.amount_mol == pytest.approx(target * volume_l)
    if src.density_g_ml is not None:
        assert r.stock_mass_g == pytest.approx(r.stock_volume_ml * src.density_g_ml, rel=1e-12)
    else:
        assert r.stock_mass_g is None
    rho_w = water.density_g_cm3(20.0)
    if r.final_density_g_ml is not None and r.stock_mass_g is not None:
        final_mass = r.final_volume_ml * r.final_density_g_ml
        # water first: two thirds of (final mass - concentrate mass) / rho(water)
        assert r.water_ml == pytest.approx(
            WATER_FIRST_FRACTION * (final_mass - r.stock_mass_g) / rho_w, rel=1e-12)
        # the solute balance closes: what the concentrate brings is what the product holds
        if src.mass_percent is not None and r.final_mass_percent is not None and \
                src.compound.density is not None:
            assert r.stock_mass_g * src.mass_percent == pytest.approx(
                final_mass * r.final_mass_percent, rel=1e-9)
    assert 0 < r.water_ml < r.final_volume_ml
    if r.heat_released_kj is not None:
        mass = r.final_volume_ml * (r.final_density_g_ml or rho_w)
        # the product's own heat capacity where a table holds its solute, else water's
        solute = (src.anhydrous or src.compound).formula
        name = solute_for_formula(solute)
        cp = (solution_cp({name: r.final_mass_percent / 100}, 20.0).cp_j_gk
              if name and r.final_mass_percent is not None
              else water.specific_heat_j_gk(20.0))
        assert r.temperature_rise_c == pytest.approx(
            r.heat_released_kj * 1000 / (mass * cp), rel=1e-12)
    else:
        assert r.temperature_rise_c is None


@settings(max_examples=80, deadline=None)
@given(text=st.sampled_from(SOLID_SOURCES), target=st.floats(0.001, 0.5),
       volume_l=st.floats(0.01, 5.0))
def test_solid_numbers_are_consistent(text, target, volume_l):
    src = parse_source(text)
    r = plan_recipe(src, target, volume_l)
    assert r.stock_volume_ml is None and r.stock_molar is None and r.dilution_factor is None
    assert r.stock_mass_g == pytest.approx(
        target * volume_l * src.molar_mass_g_mol / (src.purity_percent / 100), rel=1e-12)
    weigh = next(s for s in r.steps if s.startswith("Weigh"))
    shown = float(re.match(r"Weigh ([0-9.]+) g", weigh).group(1))
    assert shown == pytest.approx(r.stock_mass_g, rel=6e-4)   # four significant figures


def test_purity_raises_the_mass():
    pure = plan_recipe(parse_source("Na2CO3"), 0.05, 1.0)
    impure = plan_recipe(parse_source("Na2CO3@95%"), 0.05, 1.0)
    assert impure.stock_mass_g == pytest.approx(pure.stock_mass_g / 0.95)


def test_steps_carry_the_numbers_and_the_order_of_addition():
    r = plan_recipe(parse_source("HCl=37%"), 1.0, 0.5)
    text = " ".join(r.steps)
    assert f"{r.stock_volume_ml:.3g}" in text
    assert "never pour water into the concentrate" in text
    i_water = next(i for i, s in enumerate(r.steps) if s.startswith("Put about"))
    i_add = next(i for i, s in enumerate(r.steps) if s.startswith("Add the"))
    i_mark = next(i for i, s in enumerate(r.steps) if "mark" in s)
    assert i_water < i_add < i_mark
    assert f"{r.water_ml:.0f}"[:2] in r.steps[i_water]


def test_viscous_concentrates_are_weighed_with_both_figures():
    r = plan_recipe(parse_source("H2SO4=96%"), 1.0, 1.0)
    assert "weigh-viscous" in codes(r)
    weigh = next(s for s in r.steps if s.startswith("Weigh"))
    assert f"{r.stock_mass_g:.1f}" in weigh and f"{r.stock_volume_ml:.1f}" in weigh
    assert "weigh-viscous" not in codes(plan_recipe(parse_source("H2SO4=85%"), 1.0, 1.0))
    assert "weigh-viscous" in codes(plan_recipe(parse_source("H3PO4=75%"), 1.0, 1.0))
    assert "weigh-viscous" not in codes(plan_recipe(parse_source("H3PO4=70%"), 1.0, 1.0))


@pytest.mark.parametrize("source,hood", [
    ("HCl=20%", False), ("HCl=25%", True), ("HCl=37%", True),
    ("HNO3=40%", False), ("HNO3=50%", True), ("NH3=5%", False), ("NH3=10%", True),
    ("CH3COOH=70%", False), ("CH3COOH=80%", True), ("H2SO4=96%", False),
    ("HF=48% d=1.16", True),
])
def test_fume_hood_thresholds(source, hood):
    src = parse_source(source)
    r = plan_recipe(src, min(0.1, src.conc_molar / 2), 0.5)
    assert ("fume-hood" in codes(r)) is hood
    assert ("fume hood" in r.steps[0]) is hood


def test_heat_thresholds_follow_planning_toml():
    th = thermo.planning_constants()["thresholds"]
    src = parse_source("H2SO4=96%")
    small = plan_recipe(src, 0.05, 1.0)
    assert small.mixing_rise_c < th["rise_warn_k"]
    assert not codes(small) & {"heat-warning", "heat-danger"}
    medium = plan_recipe(src, 1.0, 1.0)
    assert th["rise_warn_k"] <= medium.mixing_rise_c < th["rise_danger_k"]
    assert "heat-warning" in codes(medium) and "heat-danger" not in codes(medium)
    assert "ice/water bath" in " ".join(medium.steps)
    big = plan_recipe(src, 6.0, 1.0)
    assert max(big.mixing_rise_c, big.temperature_rise_c) >= th["rise_danger_k"]
    assert "heat-danger" in codes(big)
    assert big.cautions[0].severity == "danger"


def test_heat_is_the_table_difference():
    src = parse_source("H2SO4=96%")
    r = plan_recipe(src, 1.0, 1.0)
    per_mol, _ = heat_released_kj("H2SO4", 96.0, r.final_mass_percent)
    assert r.heat_released_kj == pytest.approx(1.0 * per_mol)
    assert r.heat_released_kj > 0
    # the beaker holds less liquid: the mixing rise is the larger figure here
    assert r.mixing_rise_c > r.temperature_rise_c > 0


@pytest.mark.parametrize("source", ["KOH=45%", "NaOH=50%", "HClO4=70% d=1.67"])
def test_no_published_heat_data_gives_none_and_says_so(source):
    # no KOH table; 50 % NaOH (n = 2.2) lies above the first row (n = 3) of its table
    r = plan_recipe(parse_source(source), 1.0, 1.0)
    assert r.heat_released_kj is None and r.temperature_rise_c is None
    assert "heat-unknown" in codes(r)
    assert any("not estimated" in n for n in r.notes)


def test_dissolving_solid_bases():
    r = plan_recipe(parse_source("NaOH"), 1.0, 1.0)
    assert r.heat_released_kj == pytest.approx(-thermo.heat_of_solution_kj("NaOH")[0])
    assert {"standardize-base", "add-to-water", "heat-warning"} <= codes(r)
    salt = plan_recipe(parse_source("NaCl"), 1.0, 1.0)
    assert salt.heat_released_kj < 0 and salt.temperature_rise_c < 0  # dissolving NaCl cools
    assert not codes(salt) & {"heat-warning", "heat-danger", "standardize-base"}


def test_special_hazards():
    hf = plan_recipe(parse_source("HF=48% d=1.16"), 1.0, 0.5)
    c = next(x for x in hf.cautions if x.code == "hf-danger")
    assert c.severity == "danger"
    for word in ("calcium gluconate", "never glass", "trained", "plastic"):
        assert word in c.text
    assert "never glass" in " ".join(hf.steps) and "glass beaker" not in " ".join(hf.steps)
    assert "borosilicate" not in " ".join(hf.steps)
    hclo4 = plan_recipe(parse_source("HClO4=70% d=1.67"), 0.1, 1.0)
    assert next(x for x in hclo4.cautions if x.code == "perchloric-danger").severity == "danger"
    nacn = plan_recipe(parse_source("NaCN"), 0.1, 0.1)
    assert "never-acidify" in codes(nacn) and "HCN" in " ".join(c.text for c in nacn.cautions)
    cu = plan_recipe(parse_source("CuSO4.5H2O"), 0.1, 1.0)
    assert "collect-residues" in codes(cu)


SAFE_TO_DISCARD = re.compile(r"safe to (pour|discard|dispose|drain)|can go (down|to) the drain"
                             r"|may be poured|pour (it )?away", re.IGNORECASE)


@settings(max_examples=60, deadline=None)
@given(text=st.sampled_from(SOLUTION_SOURCES + SOLID_SOURCES + ["NaCN", "K2Cr2O7", "NaF"]),
       frac=st.floats(0.01, 0.9))
def test_every_recipe_carries_the_usual_cautions(text, frac):
    src = parse_source(text)
    target = frac * (src.conc_molar if src.kind == "solution" else 1.0)
    r = plan_recipe(src, target, 0.25)
    cs = codes(r)
    assert {"ppe", "label-bottle"} <= cs
    if src.is_concentrate and "corrosive" in src.compound.hazards:
        assert "add-to-water" in cs
    severities = [c.severity for c in r.cautions]
    order = {"danger": 0, "warning": 1, "notice": 2}
    assert severities == sorted(severities, key=order.get)
    for c in r.cautions:
        assert re.fullmatch(r"[a-z]+(-[a-z]+)*", c.code)
        assert not SAFE_TO_DISCARD.search(c.text), c.text
        if re.search(r"\bdrain\b", c.text):
            assert "do not" in c.text or "never" in c.text


@pytest.mark.parametrize("target,volume,what,fragment", [
    (18.0, 1.0, "target concentration", "17.97 M"),
    (17.966053286689238, 1.0, "target concentration", "below the strength"),
    (0.0, 1.0, "target concentration", "above 0"),
    (-1.0, 1.0, "target concentration", "above 0"),
    (float("inf"), 1.0, "target concentration", "finite"),
    (1.0, 0.0, "final volume", "above 0"),
    (1.0, float("nan"), "final volume", "finite"),
    (1.0, MAX_FINAL_VOLUME_L * 1.01, "final volume", "at most"),
])
def test_recipe_refusals_name_the_value(target, volume, what, fragment):
    with pytest.raises(InvalidInput) as exc:
        plan_recipe(parse_source("H2SO4=96%"), target, volume)
    assert exc.value.what == what
    assert fragment in str(exc.value)
    if what == "target concentration" and target == 18.0:
        assert "18.0" in str(exc.value) and "H2SO4 96 % w/w" in str(exc.value)


def test_temperature_and_solid_targets_are_checked():
    with pytest.raises(CarboyError):
        plan_recipe(parse_source("HCl=37%"), 1.0, 1.0, temperature_c=120.0)
    with pytest.raises(InvalidInput) as exc:   # above the NaOH density table
        plan_recipe(parse_source("NaOH"), 25.0, 1.0)
    assert exc.value.value == 25.0


@pytest.mark.parametrize("key", sorted(CAT.compounds))
def test_every_compound_makes_a_dilute_solution(key):
    compound = CAT.compound(key)
    src = solid_source(key) if compound.form == "solid" else solution_source(key, conc_molar=1.0)
    r = plan_recipe(src, 0.1, 0.1)
    assert r.final_density_g_ml is not None and r.final_mass_percent is not None
    assert r.water_ml > 0 and r.stock_mass_g is not None or src.density_g_ml is None
    json.dumps(r.to_dict())


def test_to_dict_is_json_ready():
    d = plan_recipe(parse_source("HCl=37%"), 0.1, 1.0).to_dict()
    assert REQUIRED_KEYS <= set(d)
    assert isinstance(d["steps"], list) and all(isinstance(s, str) for s in d["steps"])
    assert all(set(c) == {"code", "severity", "text"} for c in d["cautions"])
    back = json.loads(json.dumps(d))
    assert back["stock_volume_ml"] == pytest.approx(8.3250, abs=1e-3)
    solid = plan_recipe(parse_source("NaOH"), 0.1, 1.0).to_dict()
    assert solid["stock_molar"] is None and solid["stock_volume_ml"] is None
    json.dumps(solid)


# ----------------------------------------------------------------------------- series


@settings(max_examples=40, deadline=None)
@given(steps=st.integers(1, 5), ratio=st.floats(2.0, 20.0), volume=st.floats(0.05, 1.0))
def test_serial_dilution_chains_products(steps, ratio, volume):
    src = parse_source("HCl=37%")
    targets = [src.conc_molar / ratio ** (k + 1) for k in range(steps)]
    rs = plan_series(src, targets, volume)
    assert len(rs) == steps
    assert rs[0].source is src
    for k in range(1, steps):
        prev, cur = rs[k - 1], rs[k]
        assert cur.source.kind == "solution" and cur.source.basis == "prepared"
        assert cur.source.compound.key == "HCl"
        assert cur.source.conc_molar == prev.target_molar
        assert cur.dilution_factor == pytest.approx(ratio)
        # the aliquot comes out of the previous product; what is left and taken add up
        left = prev.final_volume_ml - cur.stock_volume_ml
        assert left >= 0
        assert cur.stock_volume_ml + left == pytest.approx(prev.final_volume_ml)
        assert cur.stock_volume_ml * prev.target_molar == pytest.approx(
            cur.final_volume_ml * cur.target_molar)
        assert any("serial dilution" in n for n in cur.notes)


def test_serial_dilution_refusals():
    src = parse_source("HCl=37%")
    with pytest.raises(InvalidInput) as exc:
        plan_series(src, [1.0, 1.0], 0.1)
    assert exc.value.what.startswith("step 2") and exc.value.value == 1.0
    with pytest.raises(InvalidInput) as exc:
        plan_series(src, [1.0, 0.5], [0.01, 1.0])  # step 2 needs 500 mL of 10 mL
    assert exc.value.what == "step 2: final volume"
    with pytest.raises(InvalidInput):
        plan_series(src, [1.0, 0.1], [0.1])
    with pytest.raises(InvalidInput):
        plan_series(src, [], 0.1)


def test_series_from_a_solid():
    rs = plan_series(parse_source("CuSO4·5H2O"), [0.1, 0.01], [1.0, 0.1])
    assert rs[0].source.kind == "solid"
    assert rs[1].source.compound.key == "CuSO4" and rs[1].stock_volume_ml == pytest.approx(10.0)


# ----------------------------------------------------------------------------- heat data


def _planning():
    text = (resources.files("carboy.model.data") / "planning.toml").read_text(encoding="utf-8")
    return tomllib.loads(text)


@pytest.mark.parametrize("key", sorted(_planning()["dilution"]))
def test_dilution_tables_are_well_formed(key):
    rec = _planning()["dilution"][key]
    assert rec["status"] in {"FOUND", "DERIVED", "MEMORY"} and rec["source"].strip()
    xs = rec["n"] if rec["basis"] == "n_water" else rec["m"]
    ys = rec["dh_kj"] if rec["basis"] == "n_water" else rec["released_kj"]
    assert len(xs) == len(ys) and all(b > a for a, b in zip(xs, xs[1:]))
    assert key in CAT.compounds


@pytest.mark.parametrize("key", sorted(_planning()["heat_of_solution"]))
def test_heat_of_solution_rows_are_sourced(key):
    rec = _planning()["heat_of_solution"][key]
    assert rec["status"] in {"FOUND", "DERIVED", "MEMORY"} and rec["source"].strip()
    assert CAT.compound(key).form == "solid"


def _percent_at_molality(key, m):
    mm = CAT.compound(key).molar_mass_g_mol
    return 100 * m * mm / (1000 + m * mm)


@pytest.mark.parametrize("key", ["HCl", "HF", "HClO4", "HBr", "HI", "HNO3", "HCOOH",
                                 "CH3COOH"])
def test_molality_tables_interpolate_inside_and_fade_to_zero_below(key):
    rec = _planning()["dilution"][key]
    ms, rel = rec["m"], rec["released_kj"]
    # inside: plain linear interpolation of the table
    for a, b in zip(ms, ms[1:]):
        mid = 0.5 * (a + b)
        got = -thermo.dilution_heat_kj(key, _percent_at_molality(key, mid))[0]
        assert got == pytest.approx(float(np.interp(mid, ms, rel)), rel=1e-6, abs=1e-9)
    # below the first row: no clamping, continuous at the row, towards 0 at m = 0
    first = ms[0] if ms[0] > 0 else ms[1]
    at_first = -thermo.dilution_heat_kj(key, _percent_at_molality(key, first))[0]
    just_below = -thermo.dilution_heat_kj(key, _percent_at_molality(key, first * 0.999))[0]
    assert just_below == pytest.approx(at_first, rel=2e-3, abs=1e-6)
    tiny = -thermo.dilution_heat_kj(key, _percent_at_molality(key, first * 1e-6))[0]
    assert abs(tiny) < 0.01 * max(abs(at_first), 1e-3) + 1e-6
    assert thermo.dilution_heat_kj(key, 0.0)[0] == 0.0


def test_h2so4_dilute_end_is_continuous():
    mm = CAT.compound("H2SO4").molar_mass_g_mol

    def at_n(n):
        return thermo.dilution_heat_kj("H2SO4", 100 * mm / (mm + n * thermo.water_MW()))[0]

    assert at_n(100000.0) == pytest.approx(-95.3 + 93.3, abs=1e-6)
    assert at_n(100000.0 * 1.001) == pytest.approx(at_n(100000.0), rel=1e-3)
    assert abs(at_n(1e12)) < 0.01
    assert at_n(10.0) == pytest.approx(-95.3 + 66.5, abs=1e-6)


def test_pure_liquid_end_and_out_of_table():
    assert thermo.dilution_heat_kj("HNO3", 100.0)[0] == pytest.approx(-33.28)
    m_last = _percent_at_molality("HNO3", 55.506)
    assert thermo.dilution_heat_kj("HNO3", m_last)[0] == pytest.approx(-19.73, abs=1e-3)
    assert thermo.dilution_heat_kj("HCl", 70.0) is None      # above 55.506 mol/kg, no pure end
    assert thermo.dilution_heat_kj("HClO4", 70.0) is None    # above 20 mol/kg
    assert thermo.dilution_heat_kj("NaOH", 50.0) is None     # above its first row (n = 3)
    assert thermo.dilution_heat_kj("KOH", 45.0) is None      # no table held
    assert heat_released_kj("KOH", 45.0, 5.0) is None


def test_n_water_tables_extrapolate_only_just_above_their_first_row():
    # 85 % H3PO4 is n = 0.96 H2O per mol against a first row at n = 1: extrapolated from the
    # first two rows (at most 10 % in n); 90 % (n = 0.60) is beyond that and not estimated
    mm = CAT.compound("H3PO4").molar_mass_g_mol
    n85 = 15.0 / thermo.water_MW() / (85.0 / mm)
    first, second = (1.0, 2.51), (2.0, -0.837)   # Koretsky Table 6.1 rows, as in planning.toml
    h85 = first[1] + (second[1] - first[1]) / (second[0] - first[0]) * (n85 - first[0])
    last = -12.468                                # n = 100; no infinite-dilution row
    assert thermo.dilution_heat_kj("H3PO4", 85.0)[0] == pytest.approx(last - h85, abs=1e-9)
    assert thermo.dilution_heat_kj("H3PO4", 90.0) is None
    # beyond the last row nothing more is released without an infinite-dilution row
    assert thermo.dilution_heat_kj("H3PO4", 1.0)[0] == 0.0


def test_hypothetical_heat_direction():
    # further dilution of an already dilute solution releases little; a concentrate more
    assert heat_released_kj("HCl", 37.0, 1.0)[0] > heat_released_kj("HCl", 10.0, 1.0)[0] > 0
    assert math.isclose(heat_released_kj("HCl", 10.0, 10.0)[0], 0.0, abs_tol=1e-12)
