"""The one-solution (plain float) Pitzer equations give the vectorized model's numbers."""

from __future__ import annotations

import re

import numpy as np
import pytest

from carboy.model.etheta import j_function
from carboy.model.pitzer import pitzer_model
from carboy.model.pitzer_scalar import j_scalar, scalar_model

SETS = [
    ("H+", "OH-", "Na+", "K+", "Cl-", "HSO4-", "SO4-2", "CO2", "HCO3-", "CO3-2"),
    ("H+", "OH-", "Ca+2", "Mg+2", "MgOH+", "Cl-", "SO4-2", "HSO4-"),
    ("H+", "OH-", "Na+", "NH4+", "NO3-", "H2PO4-", "HPO4-2", "F-"),   # fallback species
    ("Na+", "SO4-2"),                                                 # no Cl-: carried at 0
]


@pytest.mark.parametrize("species", SETS, ids=lambda s: "-".join(s[:4]))
@pytest.mark.parametrize("t", [25.0, 60.0])
def test_scalar_equals_vectorized(species, t):
    rng = np.random.default_rng(7)
    model = pitzer_model(species, t, charges={"H2PO4-": -1, "HPO4-2": -2, "F-": -1})
    one = scalar_model(model)
    for scale in (0.001, 0.3, 2.0):
        m = rng.uniform(0.0, scale, size=(5, len(species)))
        m[0, 0] = 0.0   # one species absent
        ref = model.evaluate(m)
        for n in range(m.shape[0]):
            ln, phi, aw, ionic = one.evaluate(m[n].tolist())
            np.testing.assert_allclose(ln, ref.ln_gamma[n], rtol=1e-11, atol=1e-12)
            assert phi == pytest.approx(ref.osmotic[n], rel=1e-12)
            assert aw == pytest.approx(ref.water_activity[n], rel=1e-12)
            assert ionic == pytest.approx(ref.ionic_strength_molal[n], rel=1e-13)


@pytest.mark.parametrize("x", [1e-7, 1e-3, 0.05, 0.7, 3.0, 40.0, 999.0, 2000.0])
def test_j_scalar_is_the_table(x):
    j, jp = j_function(np.array([x]))
    assert j_scalar(x) == pytest.approx((float(j[0]), float(jp[0])), rel=1e-12, abs=1e-300)


# ------------------------------------------------------------------ the one-solution path

from carboy.model.catalog import default_catalog  # noqa: E402
from carboy.model.mixture import Mixture, MixtureBatch  # noqa: E402
from carboy.model.speciation import speciate, speciate_batch  # noqa: E402

CAT = default_catalog()
MIXES = [
    {"HCl": 1.0, "H2SO4": 0.2, "NaCl": 1.0, "KCl": 0.3, "NaHSO4": 0.1, "Na2SO4": 0.2,
     "K2SO4": 0.05, "NaHCO3": 0.01, "KHCO3": 0.01, "CO2": 0.005},
    {"NaOH": 2.0, "Na2CO3": 0.3, "NaCl": 0.5},
    {"CaCl2": 1.0, "HCl": 0.1},
    {"H3PO4": 0.3, "NaOH": 0.5, "NaCl": 1.0},          # phosphate: Davies fallback
    {"NH4Cl": 1.0, "HNO3": 0.05},
    {"CaCl2": 1.0, "H2SO4": 0.3},                       # gypsum, then portlandite too
]


@pytest.mark.parametrize("comp", MIXES, ids=lambda c: "-".join(c))
def test_one_solution_path_equals_the_batch_path(comp):
    mix = Mixture.from_compounds([(CAT.compound(k), v) for k, v in comp.items()],
                                 volume_l=1.0)
    one = speciate(mix, activity="pitzer", catalog=CAT)        # floats (pitzer_one)
    keys = tuple(mix.totals)
    row = [mix.totals[k] for k in keys]
    two = speciate_batch(MixtureBatch(keys, np.array([row, row]), 25.0),
                         activity="pitzer", catalog=CAT)        # vectorized (outer)
    assert one.converged and two.converged.all()
    assert one.pH == pytest.approx(float(two.pH[0]), abs=1e-8)
    ref = two.point(0)
    for lab, c in ref.species.items():
        assert one.species[lab] == pytest.approx(c, rel=1e-7, abs=1e-14), lab
    assert one.model_part.water_activity == pytest.approx(ref.model_part.water_activity,
                                                          rel=1e-10)
    def counted(ws):   # "at 1 of 1 points" and "at 2 of 2 points" say the same here
        return [re.sub(r"\d+ of \d+ points", "all points", w) for w in ws]

    assert counted(one.warnings) == counted(ref.warnings)
    assert set(one.fractions) == set(ref.fractions)


@pytest.mark.parametrize("comp, t", [(MIXES[0], 25.0), (MIXES[1], 25.0), (MIXES[3], 25.0),
                                     (MIXES[4], 90.0), ({"H2SO4": 2.0}, 25.0),
                                     ({"HCl": 7.0, "NaCl": 1.5}, 25.0)],
                         ids=["acid-waste", "naoh-carbonate", "phosphate", "nh4cl-90C",
                              "h2so4-density-table", "beyond-6-molal"])
def test_one_solution_fields_equal_a_batch_of_one(comp, t):
    # speciate builds the result in floats (speciation_models.pitzer_one_fields); a batch
    # of one goes through the batch result's assembly: every field must agree
    mix = Mixture.from_compounds([(CAT.compound(k), v) for k, v in comp.items()],
                                 volume_l=1.0, temperature_c=t)
    one = speciate(mix, activity="pitzer", catalog=CAT)
    keys = tuple(mix.totals)
    ref = speciate_batch(MixtureBatch(keys, np.array([[mix.totals[k] for k in keys]]), t),
                         activity="pitzer", catalog=CAT).point(0)
    assert one.warnings == ref.warnings
    assert (one.converged, one.iterations, one.activity, one.pkw) == \
        (ref.converged, ref.iterations, ref.activity, ref.pkw)
    assert (one.model_part.model, one.model_part.ph_scale) == ("pitzer", "macinnes")
    assert ref.model_part.model == "pitzer"
    for name in ("water_kg_per_l", "ionic_strength_molal", "water_activity"):
        assert getattr(one.model_part, name) == pytest.approx(
            getattr(ref.model_part, name), rel=1e-13), name
    for name in ("pH", "h_molar", "oh_molar", "ionic_strength_molar"):
        assert getattr(one, name) == pytest.approx(getattr(ref, name), rel=1e-12), name
    assert one.charge_residual_molar == pytest.approx(ref.charge_residual_molar, abs=1e-14)
    for name in ("species", "activity_coefficients"):
        got, want = getattr(one, name), getattr(ref, name)
        assert list(got) == list(want), name
        assert list(got.values()) == pytest.approx(list(want.values()), rel=1e-12), name
    assert list(one.fractions) == list(ref.fractions)
    for key, fr in ref.fractions.items():
        assert dict(one.fractions[key]) == pytest.approx(dict(fr), rel=1e-12, abs=1e-300), key


@pytest.mark.parametrize("comp, naoh", [(MIXES[0], 2.5), (MIXES[2], 0.0999), (MIXES[4], 1.2),
                                        (MIXES[2], 1.5), (MIXES[5], 1.5)],
                         ids=["acid-waste", "cacl2-below-portlandite", "nh4cl",
                              "cacl2-through-portlandite", "gypsum-and-portlandite"])
def test_a_curve_coarse_to_fine_equals_its_points_one_by_one(comp, naoh):
    from carboy.model.mixture import titration_batch

    mix = Mixture.from_compounds([(CAT.compound(k), v) for k, v in comp.items()],
                                 volume_l=1.0)
    n = np.linspace(0.0, naoh, 61)      # through the equivalence point(s)
    batch, _ = titration_batch(mix, {"Na+": 1.0}, n, reagent_l_per_mol=0.0)
    curve = speciate_batch(batch, activity="pitzer", catalog=CAT)
    assert curve.model_part.model == "pitzer"
    assert curve.converged.all()
    for i in range(0, 61, 5):
        one = speciate(batch.mixture(i), activity="pitzer", catalog=CAT)
        assert float(curve.pH[i]) == pytest.approx(one.pH, abs=1e-8), i


def test_the_outer_loop_with_a_held_species_agrees_with_the_float_path():
    # 1 M NaHCO3 + 0.5 M HCl in 3 M NaCl (a_w about 0.87): holding CO2 at the amount the
    # float path found must give the same solution through solver.outer (water term too)
    mix = Mixture({"carbonate": 1.0, "Na+": 4.0, "Cl-": 3.5}, 25.0)
    one = speciate(mix, activity="pitzer", catalog=CAT)
    held = speciate(mix, activity="pitzer", catalog=CAT,
                    held={"carbonate": ("CO2", one.species["CO2"])})
    assert one.model_part.water_activity < 0.9
    assert held.pH == pytest.approx(one.pH, abs=1e-7)
    assert held.species["HCO3-"] == pytest.approx(one.species["HCO3-"], rel=1e-6)


@pytest.mark.parametrize("na", [0.1, 0.25, 0.5])
def test_calcium_is_conserved_between_solution_and_solids(na):
    # CaCl2 1 M with phosphate and NaOH: brushite (in the dose), then portlandite too;
    # hydroxyapatite is reported by its saturation index only (metals.toml: in_dose false)
    mix = Mixture({"Ca+2": 1.0, "Cl-": 2.0, "Na+": na, "phosphate": 0.1}, 25.0)
    res = speciate(mix, activity="pitzer", catalog=CAT)
    assert res.model_part.model == "pitzer" and res.converged
    assert res.solids["Ca5(PO4)3OH (hydroxyapatite)"] == 0.0
    held = res.solids["CaHPO4·2H2O (brushite)"] + res.solids["Ca(OH)2 (portlandite)"]
    assert res.dissolved_metals["Ca+2"] + held == pytest.approx(1.0, rel=1e-9)
    dissolved_p = sum(res.species[lab] for lab in res.fractions["phosphate"])
    assert dissolved_p + res.solids["CaHPO4·2H2O (brushite)"] == pytest.approx(0.1, rel=1e-9)


def test_metals_away_from_25_c_say_their_constants_are_for_25_c():
    hot = speciate(Mixture({"Ca+2": 1.0, "Cl-": 2.1}, temperature_c=40.0),
                   activity="pitzer", catalog=CAT)
    cool = speciate(Mixture({"Ca+2": 1.0, "Cl-": 2.1}, temperature_c=25.0),
                    activity="pitzer", catalog=CAT)
    assert hot.model_part.model == cool.model_part.model == "pitzer"
    assert any("constants are for 25 °C" in w for w in hot.warnings)
    assert not any("constants are for 25 °C" in w for w in cool.warnings)


@pytest.mark.parametrize("comp", [MIXES[0], MIXES[1], MIXES[3], MIXES[4]],
                         ids=["acid-waste", "naoh-carbonate", "phosphate", "nh4cl"])
def test_the_compiled_charge_balance_step_equals_the_loops(comp):
    from carboy.model import water
    from carboy.model.solver import pitzer_one
    from carboy.model.solver.layout import cached_layout
    from carboy.model.solver.outer import table_of

    mix = Mixture.from_compounds([(CAT.compound(k), v) for k, v in comp.items()],
                                 volume_l=1.0)
    keys, row = tuple(mix.totals), list(mix.totals.values())
    lay = cached_layout(CAT, keys, 25.0)
    ot = pitzer_one.compile_one(lay, table_of(lay, "pitzer", 25.0), water.pkw(25.0))
    assert ot.step is not None
    ions = [0.0] * ot.n
    for c, b in ot.ions:
        ions[c] += row[b]
    sys_tot = [row[b] for b, _ in ot.systems]
    rng = np.random.default_rng(3)
    for x in (-1.0, 0.2, -7.0, -13.5):
        lg = rng.uniform(-1.0, 0.5, ot.n).tolist()
        lw = -0.05
        m, dm, g, dg = ot.step(x, lg, lw, ions, sys_tot)
        m_ref, dm_ref = pitzer_one._composition(ot, x, lg, lw, ions, sys_tot, True)
        assert m == pytest.approx(m_ref, rel=1e-14, abs=0.0)
        assert dm == pytest.approx(dm_ref, rel=1e-14, abs=0.0)
        assert (g, dg) == pytest.approx(pitzer_one._balance(ot, m_ref, dm_ref), rel=1e-13)
