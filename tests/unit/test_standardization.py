"""Unit tests of the standardization model: data, lookup, refusals, arithmetic, acceptance."""

from __future__ import annotations

import json
import math
import statistics
import subprocess
import sys
from dataclasses import FrozenInstanceError

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

from carboy.errors import InvalidInput
from carboy.model.catalog import default_catalog, molar_mass_of
from carboy.model.provenance import REQUIRED_WORDING
from carboy.model.standardization import (
    STATUSES,
    AcceptanceRule,
    PrimaryStandard,
    Replicate,
    Standardization,
    _data,
    grubbs_critical,
    grubbs_test,
    primary_standard,
    primary_standards,
    replicate_molar,
    standard_mass_g,
    standardize,
    t_critical,
    titrant,
    titrants,
)

# Three KHP titrations of a roughly 0.1 M NaOH (invented numbers); RSD about 0.05 %.
KHP_SET = [Replicate(0.5105, 25.02), Replicate(0.5098, 24.97), Replicate(0.5120, 25.10)]


def by_hand(mass_g, volume_ml, blank_ml, molar_mass, eq_std, eq_tit, purity=100.0):
    """The molarity formula written out independently of the module."""
    return (mass_g * purity / 100 / molar_mass) * eq_std / eq_tit / ((volume_ml - blank_ml) / 1000)


# ----------------------------------------------------------------------------- data


def test_four_standards_and_five_titrants():
    assert set(primary_standards()) == {"KHC8H4O4", "Na2CO3", "Tris", "H3NSO3"}
    assert set(titrants()) == {"NaOH", "KOH", "HCl", "HNO3", "H2SO4"}


@pytest.mark.parametrize(
    ("key", "reacts_with", "equivalents"),
    [("KHC8H4O4", "base", 1), ("H3NSO3", "base", 1), ("Tris", "acid", 1), ("Na2CO3", "acid", 2)],
)
def test_standard_chemistry(key, reacts_with, equivalents):
    std = primary_standards()[key]
    assert (std.reacts_with, std.equivalents) == (reacts_with, equivalents)


@pytest.mark.parametrize(
    ("key", "kind", "equivalents"),
    [("NaOH", "base", 1), ("KOH", "base", 1), ("HCl", "acid", 1), ("HNO3", "acid", 1),
     ("H2SO4", "acid", 2)],
)
def test_titrant_chemistry(key, kind, equivalents):
    tit = titrants()[key]
    assert (tit.kind, tit.equivalents) == (kind, equivalents)


def test_molar_mass_is_computed_from_the_formula_and_matches_the_catalog():
    cat = default_catalog()
    for std in primary_standards().values():
        assert std.molar_mass_g_mol == molar_mass_of(std.formula)
        assert std.molar_mass_g_mol == cat.compounds[std.compound_key].molar_mass_g_mol


def test_every_number_and_note_has_a_source_and_a_status():
    for std in primary_standards().values():
        assert std.status in STATUSES and std.source.strip()
        assert {"equivalents", "assay_percent"} <= set(std.provenance)
        for prov in std.provenance.values():
            assert prov.status in STATUSES and prov.source.strip()
        for note in (*std.drying, std.end_point):
            assert note.status in STATUSES and note.source.strip() and note.text.strip()
            for word in REQUIRED_WORDING.get(note.status, ()):
                assert word in note.source.casefold(), (std.key, note)
    for tit in titrants().values():
        assert tit.provenance["equivalents"].source.strip()
    for prov in _data().acceptance.values():
        assert prov.status in STATUSES and prov.source.strip()


def test_rule_defaults_equal_the_data_file():
    rule = AcceptanceRule()
    values = _data().acceptance_values
    assert values == {
        "max_rsd_percent": rule.max_rsd_percent,
        "min_replicates": rule.min_replicates,
        "alpha": rule.alpha,
        "nominal_tolerance_percent": rule.nominal_tolerance_percent,
        "warn_rsd_percent": rule.warn_rsd_percent,
    }
    assert (rule.max_rsd_percent, rule.min_replicates, rule.alpha,
            rule.nominal_tolerance_percent) == (0.2, 3, 0.05, 10.0)


def test_rule_source_cites_ph_eur_and_marks_user_changes():
    assert "Ph. Eur. 4.2.2" in AcceptanceRule().source
    changed = AcceptanceRule(max_rsd_percent=1.0).source
    assert "max RSD 1 %: set by the user" in changed


def test_records_are_frozen():
    std = primary_standard("KHP")
    with pytest.raises(FrozenInstanceError):
        std.equivalents = 2  # type: ignore[misc]
    with pytest.raises(FrozenInstanceError):
        AcceptanceRule().max_rsd_percent = 5  # type: ignore[misc]


# ----------------------------------------------------------------------------- lookup


@pytest.mark.parametrize(
    ("name", "key"),
    [
        ("KHP", "KHC8H4O4"), ("khp", "KHC8H4O4"), ("potassium hydrogen phthalate", "KHC8H4O4"),
        ("Potassium  Hydrogen-Phthalate", "KHC8H4O4"), ("KHC8H4O4", "KHC8H4O4"),
        ("C8H5KO4", "KHC8H4O4"), ("Na2CO3", "Na2CO3"), ("sodium carbonate", "Na2CO3"),
        ("na2co3", "Na2CO3"), ("Tris", "Tris"), ("THAM", "Tris"), ("tromethamine", "Tris"),
        ("sulfamic acid", "H3NSO3"), ("Sulphamic acid", "H3NSO3"), ("H3NSO3", "H3NSO3"),
        ("NH2SO3H", "H3NSO3"), ("  KHP  ", "KHC8H4O4"),
    ],
)
def test_primary_standard_lookup(name, key):
    assert primary_standard(name).key == key


@pytest.mark.parametrize("name", ["borax", "benzoic acid", "NaHCO3", "", "   ", None, 3])
def test_unknown_standard_lists_the_known_ones(name):
    with pytest.raises(InvalidInput) as err:
        primary_standard(name)
    assert err.value.value == name
    for label in ("KHP", "Na2CO3", "Tris", "sulfamic acid"):
        assert label in str(err.value)


@pytest.mark.parametrize(
    ("name", "key"),
    [("NaOH", "NaOH"), ("naoh", "NaOH"), ("sodium hydroxide", "NaOH"), ("caustic soda", "NaOH"),
     ("KOH", "KOH"), ("potassium hydroxide", "KOH"), ("HCl", "HCl"), ("hydrochloric acid", "HCl"),
     ("hcl", "HCl"), ("HNO3", "HNO3"), ("nitric acid", "HNO3"), ("H2SO4", "H2SO4"),
     ("sulfuric acid", "H2SO4"), ("Sulphuric Acid", "H2SO4")],
)
def test_titrant_lookup(name, key):
    assert titrant(name).key == key


def test_unknown_titrant_lists_the_known_ones():
    with pytest.raises(InvalidInput) as err:
        titrant("acetic acid")
    assert err.value.value == "acetic acid"
    assert all(k in str(err.value) for k in ("NaOH", "KOH", "HCl", "HNO3", "H2SO4"))


# ----------------------------------------------------------------------------- refusals

BAD_REPLICATES = [
    (Replicate(float("nan"), 25.0), "nan", "mass"),
    (Replicate(float("inf"), 25.0), "inf", "mass"),
    (Replicate(0.0, 25.0), "0.0", "mass"),
    (Replicate(-0.5, 25.0), "-0.5", "mass"),
    (Replicate(150.0, 25.0), "150.0", "mass"),
    (Replicate("0.5", 25.0), "'0.5'", "mass"),
    (Replicate(True, 25.0), "True", "mass"),
    (Replicate(0.5, float("nan")), "nan", "volume"),
    (Replicate(0.5, 0.0), "0.0", "volume"),
    (Replicate(0.5, -3.0), "-3.0", "volume"),
    (Replicate(0.5, 1500.0), "1500.0", "volume"),
    (Replicate(0.5, 25.0, -0.1), "-0.1", "blank"),
    (Replicate(0.5, 25.0, 25.0), "25.0", "blank"),
    (Replicate(0.5, 25.0, 30.0), "30.0", "blank"),
    (Replicate(0.5, 25.0, float("inf")), "inf", "blank"),
]


@pytest.mark.parametrize(("bad", "shown", "what"), BAD_REPLICATES)
def test_bad_replicate_is_refused_naming_value_and_replicate(bad, shown, what):
    reps = [Replicate(0.51, 25.0), bad, Replicate(0.52, 25.4)]
    with pytest.raises(InvalidInput) as err:
        standardize("NaOH", "KHP", reps)
    message = str(err.value)
    assert "replicate 2" in message and what in message and shown in message
    with pytest.raises(InvalidInput):
        replicate_molar("NaOH", "KHP", bad)


@pytest.mark.parametrize("purity", [0.0, -1.0, 100.2, 150.0, float("nan"), float("inf"), "99.9"])
def test_bad_purity_is_refused(purity):
    with pytest.raises(InvalidInput) as err:
        standardize("NaOH", "KHP", KHP_SET, purity_percent=purity)
    assert err.value.value is purity or err.value.value == purity or math.isnan(err.value.value)
    assert "purity" in str(err.value)


@pytest.mark.parametrize("purity", [100.0, 100.05, 100.1, 99.97, 50.0])
def test_purity_up_to_the_certified_margin_is_accepted(purity):
    assert standardize("NaOH", "KHP", KHP_SET, purity_percent=purity).purity_percent == purity


@pytest.mark.parametrize("nominal", [0.0, -0.1, float("inf"), 50.0, "0.1"])
def test_bad_nominal_is_refused(nominal):
    with pytest.raises(InvalidInput) as err:
        standardize("NaOH", "KHP", KHP_SET, nominal_molar=nominal)
    assert "nominal" in str(err.value) and repr(nominal) in str(err.value)


@pytest.mark.parametrize("reps", [[], (), None, "0.5,25", 7])
def test_no_replicates_is_refused(reps):
    with pytest.raises(InvalidInput) as err:
        standardize("NaOH", "KHP", reps)
    assert "replicates" in str(err.value)


def test_a_replicate_of_the_wrong_shape_is_refused():
    with pytest.raises(InvalidInput) as err:
        standardize("NaOH", "KHP", [Replicate(0.5, 25.0), {"mass_g": 0.5}])
    assert "replicate 2" in str(err.value) and "mass_g" in str(err.value)


def test_tuples_are_read_as_replicates():
    a = standardize("NaOH", "KHP", [(0.5105, 25.02), (0.5098, 24.97, 0.0), (0.5120, 25.10)])
    b = standardize("NaOH", "KHP", KHP_SET)
    assert a.mean_molar == b.mean_molar


@pytest.mark.parametrize(
    ("tit", "std", "suggested"),
    [("HCl", "KHP", ("Na2CO3", "Tris")), ("H2SO4", "sulfamic acid", ("Na2CO3", "Tris")),
     ("NaOH", "Na2CO3", ("KHP", "sulfamic acid")), ("KOH", "Tris", ("KHP", "sulfamic acid"))],
)
def test_a_standard_that_cannot_titrate_the_titrant_is_refused_with_the_right_ones(
    tit, std, suggested
):
    with pytest.raises(InvalidInput) as err:
        standardize(tit, std, KHP_SET)
    message = str(err.value)
    assert primary_standard(std).label in message and tit in message
    assert all(s in message for s in suggested)
    with pytest.raises(InvalidInput):
        replicate_molar(tit, std, KHP_SET[0])


@pytest.mark.parametrize(
    "kwargs",
    [{"max_rsd_percent": 0}, {"max_rsd_percent": -0.2}, {"max_rsd_percent": float("nan")},
     {"min_replicates": 1}, {"min_replicates": 2.5}, {"min_replicates": True},
     {"alpha": 0}, {"alpha": 0.6}, {"nominal_tolerance_percent": 0},
     {"warn_rsd_percent": float("inf")}],
)
def test_bad_rule_is_refused_naming_the_value(kwargs):
    (value,) = kwargs.values()
    with pytest.raises(InvalidInput) as err:
        AcceptanceRule(**kwargs)
    assert repr(value) in str(err.value)


@pytest.mark.parametrize(("dof", "conf"), [(0, 0.95), (-1, 0.95), (2.5, 0.95), (True, 0.95),
                                            (3, 0.0), (3, 1.0), (3, float("nan"))])
def test_t_critical_refuses_bad_input(dof, conf):
    with pytest.raises(InvalidInput):
        t_critical(dof, conf)


@pytest.mark.parametrize(("n", "alpha"), [(2, 0.05), (0, 0.05), (3.0, 0.05), (5, 0.0), (5, 1.5)])
def test_grubbs_critical_refuses_bad_input(n, alpha):
    with pytest.raises(InvalidInput):
        grubbs_critical(n, alpha)


def test_grubbs_test_refuses_short_or_bad_data():
    with pytest.raises(InvalidInput):
        grubbs_test([0.1, 0.1001])
    with pytest.raises(InvalidInput) as err:
        grubbs_test([0.1, float("nan"), 0.1002])
    assert "value 2" in str(err.value)


# ----------------------------------------------------------------------------- chemistry


def test_replicate_molar_matches_the_formula_written_out():
    std = primary_standard("Na2CO3")
    got = replicate_molar("HCl", "Na2CO3", Replicate(0.2650, 24.80, 0.05), purity_percent=99.95)
    assert got == pytest.approx(by_hand(0.2650, 24.80, 0.05, std.molar_mass_g_mol, 2, 1, 99.95),
                                rel=1e-13)


def test_blank_is_subtracted_from_every_titre():
    with_blank = standardize("NaOH", "KHP", [Replicate(r.mass_g, r.volume_ml + 0.04, 0.04)
                                             for r in KHP_SET])
    without = standardize("NaOH", "KHP", KHP_SET)
    for a, b in zip(with_blank.replicates, without.replicates):
        assert a.net_volume_ml == pytest.approx(b.volume_ml, abs=1e-12)
        assert a.molar == pytest.approx(b.molar, rel=1e-12)
        assert a.blank_ml == 0.04 and a.volume_ml == pytest.approx(b.volume_ml + 0.04)
    ignored = standardize("NaOH", "KHP", [Replicate(r.mass_g, r.volume_ml + 0.04) for r in KHP_SET])
    assert ignored.mean_molar < without.mean_molar


def test_sulfuric_acid_counts_two_protons():
    rep = Replicate(0.2650, 24.80)
    hcl = replicate_molar("HCl", "Na2CO3", rep)
    h2so4 = replicate_molar("H2SO4", "Na2CO3", rep)
    assert h2so4 == pytest.approx(hcl / 2, rel=1e-14)
    assert replicate_molar("HNO3", "Na2CO3", rep) == pytest.approx(hcl, rel=1e-14)
    tris = primary_standard("Tris")
    assert replicate_molar("H2SO4", "Tris", Replicate(0.3000, 24.0)) == pytest.approx(
        by_hand(0.3000, 24.0, 0.0, tris.molar_mass_g_mol, 1, 2), rel=1e-13
    )


def test_potassium_hydroxide_is_one_to_one_like_sodium_hydroxide():
    rep = Replicate(0.51, 25.0)
    assert replicate_molar("KOH", "KHP", rep) == replicate_molar("NaOH", "KHP", rep)


def test_purity_scales_the_molarity():
    full = replicate_molar("NaOH", "KHP", KHP_SET[0], 100.0)
    assert replicate_molar("NaOH", "KHP", KHP_SET[0], 99.5) == pytest.approx(full * 0.995)
    assert replicate_molar("NaOH", "KHP", KHP_SET[0]) == full  # default assay 100 %


def test_standard_mass_inverts_replicate_molar():
    for tit, std in (("NaOH", "KHP"), ("HCl", "Na2CO3"), ("H2SO4", "Tris"), ("KOH", "H3NSO3")):
        mass = standard_mass_g(tit, std, 0.1, 25.0, purity_percent=99.9)
        assert replicate_molar(tit, std, Replicate(mass, 25.0), 99.9) == pytest.approx(0.1)


def test_standard_mass_refuses_bad_input():
    with pytest.raises(InvalidInput):
        standard_mass_g("NaOH", "KHP", 0.0, 25.0)
    with pytest.raises(InvalidInput):
        standard_mass_g("NaOH", "KHP", 0.1, float("nan"))
    with pytest.raises(InvalidInput):
        standard_mass_g("HCl", "KHP", 0.1, 25.0)


# ----------------------------------------------------------------------------- statistics


def test_mean_sd_rsd_and_ci_against_an_independent_calculation():
    res = standardize("NaOH", "KHP", KHP_SET, purity_percent=99.97)
    molars = [r.molar for r in res.replicates]
    m = statistics.fmean(molars)
    s = statistics.stdev(molars)
    assert res.mean_molar == pytest.approx(m, rel=1e-14)
    assert res.sd_molar == pytest.approx(s, rel=1e-10)
    assert res.sd_molar == pytest.approx(float(np.std(molars, ddof=1)), rel=1e-10)
    assert res.rsd_percent == pytest.approx(100 * s / m, rel=1e-10)
    low, high = stats.t.interval(0.95, len(molars) - 1, loc=m, scale=stats.sem(molars))
    assert res.ci95_molar == pytest.approx((high - low) / 2, rel=1e-9)
    assert res.t_critical == pytest.approx(4.302652729749464, rel=1e-12)


def test_hand_calculation_of_a_small_set():
    # Replicates chosen so that the molarities are exactly 0.1000, 0.1002, 0.1004 M:
    # mean 0.1002, s = 0.0002, RSD = 0.1996 %, CI half-width 4.303 * 0.0002 / sqrt(3).
    std = primary_standard("KHP")
    reps = [Replicate(c * 0.025 * std.molar_mass_g_mol, 25.0) for c in (0.1000, 0.1002, 0.1004)]
    res = standardize("NaOH", std, reps)
    assert res.mean_molar == pytest.approx(0.1002, rel=1e-12)
    assert res.sd_molar == pytest.approx(0.0002, rel=1e-9)
    assert res.rsd_percent == pytest.approx(0.0002 / 0.1002 * 100, rel=1e-9)
    assert res.ci95_molar == pytest.approx(4.302653 * 0.0002 / math.sqrt(3), rel=1e-6)
    assert res.accepted


def test_single_replicate_gives_the_mean_only_and_is_not_accepted():
    res = standardize("NaOH", "KHP", KHP_SET[:1])
    assert res.mean_molar == res.replicates[0].molar
    assert res.sd_molar is None and res.rsd_percent is None
    assert res.ci95_molar is None and res.t_critical is None
    assert not res.accepted
    assert any("min replicates" in r and "3" in r for r in res.reasons)
    assert res.outlier_test["applicable"] is False and res.outliers == ()


def test_two_replicates_can_pass_a_rule_of_two():
    res = standardize("NaOH", "KHP", KHP_SET[:2], rule=AcceptanceRule(min_replicates=2))
    assert res.accepted and res.outlier_test["applicable"] is False
    assert res.t_critical == pytest.approx(12.706, abs=5e-4)
    assert any("no outlier test" in w for w in res.warnings)
    assert not standardize("NaOH", "KHP", KHP_SET[:2]).accepted


def test_three_replicates_warn_that_the_outlier_test_is_weak():
    res = standardize("NaOH", "KHP", KHP_SET)
    (warning,) = [w for w in res.warnings if "Grubbs" in w]
    assert "1.1547" in warning and "(n-1)/sqrt(n)" in warning
    assert res.outlier_test["max_possible"] == pytest.approx(2 / math.sqrt(3))


def test_accepted_set_has_no_reasons():
    res = standardize("NaOH", "KHP", KHP_SET, purity_percent=99.97)
    assert res.accepted and res.reasons == ()
    assert res.rsd_percent < 0.2


@pytest.mark.parametrize("n", [3, 4, 6])
def test_acceptance_switches_exactly_at_the_configured_rsd(n):
    masses = [0.5000, 0.5013, 0.4992, 0.5021, 0.5006, 0.4987][:n]
    reps = [Replicate(m, 24.5) for m in masses]
    rsd = standardize("NaOH", "KHP", reps).rsd_percent
    at = standardize("NaOH", "KHP", reps, rule=AcceptanceRule(max_rsd_percent=rsd))
    below = standardize("NaOH", "KHP", reps,
                        rule=AcceptanceRule(max_rsd_percent=math.nextafter(rsd, 0.0)))
    assert at.outliers == () and at.accepted
    assert not below.accepted
    assert any("max RSD" in r and f"{rsd:.3f}" in r for r in below.reasons)


def test_rsd_in_the_warning_band_is_rejected_with_advice():
    std = primary_standard("KHP")
    reps = [Replicate(c * 0.025 * std.molar_mass_g_mol, 25.0) for c in (0.1000, 0.1003, 0.1006)]
    res = standardize("NaOH", std, reps)
    assert 0.2 < res.rsd_percent <= 0.5
    assert not res.accepted and any("0.2 %" in r for r in res.reasons)
    assert any("warning band" in w for w in res.warnings)
    loose = standardize("NaOH", std, reps, rule=AcceptanceRule(max_rsd_percent=1.0))
    assert loose.accepted and any("Ph. Eur. 4.2.2" in w for w in loose.warnings)


def test_large_rsd_is_a_reason_without_the_band_warning():
    reps = [Replicate(0.50, 25.0), Replicate(0.51, 25.0), Replicate(0.52, 25.0)]
    res = standardize("NaOH", "KHP", reps)
    assert res.rsd_percent > 0.5 and not res.accepted
    assert not any("warning band" in w for w in res.warnings)


def test_an_outlier_is_flagged_kept_in_the_statistics_and_blocks_acceptance():
    masses = [0.5000, 0.5004, 0.4998, 0.5002, 0.5001, 0.5120]
    reps = [Replicate(m, 25.0) for m in masses]
    res = standardize("NaOH", "KHP", reps, rule=AcceptanceRule(max_rsd_percent=5.0))
    assert res.outliers == (6,)
    assert [r.outlier for r in res.replicates] == [False] * 5 + [True]
    assert res.mean_molar == pytest.approx(statistics.fmean(r.molar for r in res.replicates))
    assert res.n == 6 and not res.accepted
    (reason,) = res.reasons
    assert "Replicate 6" in reason and "repeat that titration" in reason
    assert res.outlier_test["suspect"] == 6
    assert res.outlier_test["statistic"] > res.outlier_test["critical"]


def test_grubbs_test_on_equal_values_flags_nothing():
    assert grubbs_test([0.1, 0.1, 0.1, 0.1]) == (None, 0.0, grubbs_critical(4))


def test_grubbs_critical_keeps_its_false_alarm_rate():
    # Monte Carlo check independent of any table: normal samples exceed G_crit with
    # probability alpha (the t formula is exact for these n and alpha).
    rng = np.random.default_rng(20240611)
    for n, alpha in ((5, 0.05), (10, 0.05), (8, 0.01)):
        x = rng.standard_normal((200_000, n))
        g = np.abs(x - x.mean(axis=1, keepdims=True)).max(axis=1) / x.std(axis=1, ddof=1)
        rate = float(np.mean(g > grubbs_critical(n, alpha)))
        assert rate == pytest.approx(alpha, abs=4 * math.sqrt(alpha / 200_000) + 1e-3)


def test_one_sided_critical_is_lower_than_two_sided():
    for n in (3, 5, 10, 25):
        assert grubbs_critical(n, 0.05, two_sided=False) < grubbs_critical(n, 0.05)
        assert grubbs_critical(n, 0.05) < (n - 1) / math.sqrt(n)


# ----------------------------------------------------------------------------- warnings, notes


def test_mean_far_from_nominal_gives_a_warning():
    far = standardize("NaOH", "KHP", KHP_SET, nominal_molar=0.12)
    assert far.deviation_percent == pytest.approx(100 * (far.mean_molar - 0.12) / 0.12)
    assert any("nominal" in w and "10 %" in w for w in far.warnings)
    near = standardize("NaOH", "KHP", KHP_SET, nominal_molar=0.1)
    assert abs(near.deviation_percent) < 1
    assert not any("nominal" in w for w in near.warnings)
    assert standardize("NaOH", "KHP", KHP_SET).deviation_percent is None


def test_default_purity_is_flagged():
    res = standardize("NaOH", "KHP", KHP_SET)
    assert res.purity_defaulted and res.purity_percent == 100.0
    assert any("Purity not entered" in w for w in res.warnings)
    given_ = standardize("NaOH", "KHP", KHP_SET, purity_percent=99.97)
    assert not given_.purity_defaulted
    assert not any("Purity" in w for w in given_.warnings)
    low = standardize("NaOH", "KHP", KHP_SET, purity_percent=95.0)
    assert any("low for a primary standard" in w for w in low.warnings)


def test_small_titre_small_sample_and_implausible_mean_give_warnings():
    res = standardize("NaOH", "KHP", [Replicate(0.150, 7.4), Replicate(0.152, 7.5),
                                      Replicate(0.151, 7.45)])
    assert any("titre below 10 mL" in w for w in res.warnings)
    assert any("175 mg" in w for w in res.warnings)
    odd = standardize("NaOH", "KHP", [Replicate(50.0, 20.0), Replicate(50.1, 20.0),
                                      Replicate(50.2, 20.1)])
    assert any("check the units" in w for w in odd.warnings)


def test_notes_carry_the_drying_end_point_and_titrant_cautions():
    res = standardize("HCl", "Na2CO3", [Replicate(0.2650, 24.80)] * 3)
    text = " ".join(res.notes)
    assert "270 °C" in text and "boil" in text and "acid to water" in text
    khp = standardize("NaOH", "KHP", KHP_SET)
    assert any("120 °C" in n for n in khp.notes) and any("CO2" in n for n in khp.notes)


def test_to_dict_is_json_ready_and_complete():
    res = standardize("NaOH", "KHP", KHP_SET, purity_percent=99.97, nominal_molar=0.1)
    data = json.loads(json.dumps(res.to_dict()))
    for key in ("replicates", "mean_molar", "sd_molar", "rsd_percent", "ci95_molar", "outliers",
                "accepted", "titrant", "standard", "purity_percent", "reasons", "warnings",
                "notes", "outlier_test", "rule"):
        assert key in data
    assert [r["molar"] for r in data["replicates"]] == [r.molar for r in res.replicates]
    assert data["titrant"]["key"] == "NaOH" and data["standard"]["key"] == "KHC8H4O4"
    assert data["rule"]["max_rsd_percent"] == 0.2 and "Ph. Eur." in data["rule"]["source"]
    assert data["outlier_test"]["n"] == 3 and data["accepted"] is True


def test_a_standard_record_can_be_passed_directly():
    std = primary_standard("Tris")
    assert isinstance(std, PrimaryStandard)
    res = standardize(titrant("HCl"), std, [Replicate(0.3, 24.6)] * 3)
    assert isinstance(res, Standardization) and res.standard is std


# ----------------------------------------------------------------------------- properties

masses = st.floats(0.2, 2.0, allow_nan=False)
volumes = st.floats(15.0, 45.0, allow_nan=False)
replicate_sets = st.lists(st.builds(Replicate, masses, volumes), min_size=1, max_size=8)
pairs = st.sampled_from([("NaOH", "KHP"), ("KOH", "H3NSO3"), ("HCl", "Na2CO3"),
                         ("H2SO4", "Tris"), ("HNO3", "Na2CO3")])


@settings(max_examples=60, deadline=None)
@given(pair=pairs, reps=replicate_sets, k=st.floats(0.1, 10.0))
def test_scaling_every_mass_scales_the_molarity(pair, reps, k):
    base = standardize(*pair, reps)
    scaled = standardize(*pair, [Replicate(r.mass_g * k, r.volume_ml) for r in reps])
    assert scaled.mean_molar == pytest.approx(base.mean_molar * k, rel=1e-12)
    for a, b in zip(scaled.replicates, base.replicates):
        assert a.molar == pytest.approx(b.molar * k, rel=1e-12)
    if base.rsd_percent is not None:
        assert scaled.rsd_percent == pytest.approx(base.rsd_percent, rel=1e-8, abs=1e-12)
        assert scaled.accepted == base.accepted or math.isclose(
            base.rsd_percent, base.rule.max_rsd_percent, rel_tol=1e-8)


@settings(max_examples=60, deadline=None)
@given(pair=pairs, data=st.data())
def test_permuting_replicates_changes_nothing(pair, data):
    reps = data.draw(replicate_sets)
    shuffled = data.draw(st.permutations(reps))
    a, b = standardize(*pair, reps), standardize(*pair, shuffled)
    assert b.mean_molar == a.mean_molar  # fsum: exact whatever the order
    assert b.sd_molar == a.sd_molar
    assert b.accepted == a.accepted and len(b.outliers) == len(a.outliers)
    assert sorted(r.molar for r in b.replicates) == sorted(r.molar for r in a.replicates)
    if a.outliers:
        flagged_a = {a.replicates[i - 1].molar for i in a.outliers}
        flagged_b = {b.replicates[i - 1].molar for i in b.outliers}
        assert abs(flagged_a.pop() - a.mean_molar) == pytest.approx(
            abs(flagged_b.pop() - b.mean_molar))


@settings(max_examples=60, deadline=None)
@given(
    noise=st.lists(st.floats(-5e-4, 5e-4), min_size=5, max_size=15),
    data=st.data(),
    push=st.one_of(st.floats(0.03, 0.5), st.floats(-0.3, -0.03)),
)
def test_one_replicate_pushed_far_away_is_flagged(noise, data, push):
    n = len(noise)
    j = data.draw(st.integers(0, n - 1))
    factors = [1 + e for e in noise]
    factors[j] *= 1 + push
    reps = [Replicate(0.5 * f, 25.0) for f in factors]
    res = standardize("NaOH", "KHP", reps, rule=AcceptanceRule(max_rsd_percent=100.0))
    assert res.outliers == (j + 1,)
    assert not res.accepted


# ----------------------------------------------------------------------------- import weight


def test_importing_and_looking_up_loads_no_scipy_and_no_ui():
    probe = (
        "import sys, json\n"
        "import carboy.model.standardization as s\n"
        "s.primary_standard('KHP'); s.titrant('NaOH')\n"
        "print(json.dumps(sorted(sys.modules)))\n"
    )
    out = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, check=True)
    mods = set(json.loads(out.stdout))
    for root in ("scipy", "textual", "sqlite3", "sqlite_utils", "carboy.store", "carboy.tui"):
        assert not any(m == root or m.startswith(root + ".") for m in mods), root
