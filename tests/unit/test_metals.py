"""carboy.model.metals: the properties a charge-balance solver relies on."""

from __future__ import annotations

import numpy as np
import pytest

from carboy.errors import InvalidInput
from carboy.model import metals as M

X = np.linspace(-14.5, 1.0, 3101)  # log10[H+]: pH about -1 to 14.5
METALS = sorted(M.metal_data().metals)


def _net(st: M.MetalState) -> np.ndarray:
    return st.pos + st.ligand_pos - st.neg - st.ligand_neg


@pytest.mark.parametrize("key", METALS)
@pytest.mark.parametrize("total", [1e-6, 1e-3, 0.5])
def test_metal_charge_never_falls_as_the_solution_gets_more_acidic(key, total):
    for ad in (0.0, 0.12):
        net = _net(M.metal_state({key: total}, X, ad=ad))
        # with water's own terms the solver's f = [H+] - [OH-] + net must rise strictly
        assert np.all(np.diff(net) >= -1e-12 * total)


@pytest.mark.parametrize("key", METALS)
def test_mass_balance_and_saturation(key):
    total = 0.02
    st = M.metal_state({key: total}, X)
    solid = st.precipitated[M.metal(key).solid.name]
    assert np.allclose(st.dissolved[key] + solid, total, rtol=1e-9, atol=0)
    si = st.saturation_index[M.metal(key).solid.name]
    assert np.all(si <= 1e-9)                       # never supersaturated
    assert np.all(np.abs(si[solid > 1e-12 * total]) < 1e-9)  # present only at saturation
    none = M.metal_state({key: total}, X, precipitate=False)
    assert np.allclose(none.dissolved[key], total)


@pytest.mark.parametrize("key", METALS)
def test_derivatives_are_those_of_the_charges(key):
    x = np.linspace(-13.0, -1.0, 97) + 0.003
    st = M.metal_state({key: 0.01}, x, ad=0.08)
    h = 1e-6
    up, dn = M.metal_state({key: 0.01}, x + h, ad=0.08), M.metal_state({key: 0.01}, x - h,
                                                                          ad=0.08)
    scale = 0.01 * M.metal(key).charge
    assert np.allclose(st.dpos, (up.pos - dn.pos) / (2 * h), rtol=1e-4, atol=1e-7 * scale)
    assert np.allclose(st.dneg, (up.neg - dn.neg) / (2 * h), rtol=1e-4, atol=1e-7 * scale)


def test_hydroxide_bound_is_the_solid_stoichiometry_where_all_has_settled():
    st = M.metal_state({"Zn+2": 0.05, "Fe+3": 0.01}, np.array([-9.0]))
    assert st.oh_bound[0] == pytest.approx(2 * 0.05 + 3 * 0.01, rel=1e-3)
    assert st.species["Zn+2"]["Zn+2"][0] < 1e-6  # *Ks {H+}^2 = 10**(11.38 - 18)


def test_amphoteric_metal_redissolves_at_high_pH():
    low, mid, high = M.solubility("Zn+2", [7.0, 9.5, 13.0])
    assert mid < low and mid < high
    st = M.metal_state({"Zn+2": 1e-3}, np.array([-13.5]))  # pH about 13.5
    assert st.dissolved["Zn+2"][0] == pytest.approx(1e-3)
    assert st.species["Zn+2"]["Zn(OH)4-2"][0] > 0.5e-3


def test_unknown_metal_is_an_error_that_names_it():
    with pytest.raises(InvalidInput) as err:
        M.metal_state({"Ag+": 0.01, "Hg+2": 0.01}, X)
    assert "Ag+" in str(err.value) and "Hg+2" in str(err.value)
    with pytest.raises(InvalidInput, match="Co"):
        M.metal("Co+2")


def test_bad_totals_and_points_are_errors():
    with pytest.raises(InvalidInput):
        M.metal_state({"Zn+2": -1.0}, X)
    with pytest.raises(InvalidInput):
        M.metal_state({"Zn+2": 0.1}, np.array([np.nan]))


def test_unmodelled_cations_lists_the_cations_without_data():
    charges = {"Ag+": 1, "Na+": 1, "K+": 1, "Zn+2": 2, "Cl-": -1, "Hg+2": 2}
    assert M.unmodelled_cations(charges) == ("Ag+", "Hg+2")


def test_modelled_keys_are_the_keys_of_the_metal_records():
    from carboy.model.metal_data import modelled_keys

    assert modelled_keys() == frozenset(M.metal_data().metals)


def test_a_plan_with_only_inert_cations_never_reads_the_metal_records(monkeypatch):
    import carboy.model.metal_data as md
    from carboy.model import metal_doses
    from carboy.model.solver import metal_terms

    def refuse():
        raise AssertionError("metal records read for a solution without a modelled metal")

    for module in (md, metal_doses, metal_terms):
        monkeypatch.setattr(module, "metal_data", refuse)
    from carboy.model.catalog import default_catalog
    from carboy.model.mixture import Mixture
    from carboy.model.planner import plan_neutralization
    from carboy.model.reagents import parse_reagent

    cat = default_catalog()
    waste = Mixture.from_compounds([(cat.compound("H2SO4"), 0.5)], volume_l=0.25)
    plan = plan_neutralization(waste, parse_reagent("NaOH=2M"))
    assert plan.to_target.reagent_mol > 0 and not plan.precipitates


def test_charge_bounds_hold_every_charge_the_metals_can_carry():
    totals = {"Zn+2": 0.05, "Al+3": 0.01}
    p, q = M.charge_bounds(totals)
    st = M.metal_state(totals, X)
    assert np.all(st.pos <= p + 1e-15) and np.all(st.neg <= q + 1e-15)
    assert q == pytest.approx(0.05 * 2 + 0.01 * 1)


def test_sludge_has_the_dry_mass_of_the_solid():
    st = M.metal_state({"Zn+2": 0.05}, np.array([-9.0]))
    (zn,) = M.sludge(st)
    assert zn.formula == "Zn(OH)2"
    assert zn.dry_g_per_l == pytest.approx(zn.mol_per_l * 99.40, rel=1e-3)  # molmass
    assert zn.mol_per_l == pytest.approx(0.05, rel=1e-4)


def _fluoride(total, x, ad=0.0):
    """HF/F- fractions at x = log10[H+] and A·D: K' = K 10**(2 ad) for HF = H+ + F-."""
    from carboy.model.catalog import default_catalog

    pka = default_catalog().systems["fluoride"].pka25[0]
    a_f = 1.0 / (1.0 + 10.0 ** (x + pka - 2.0 * ad))
    alpha = np.stack([1 - a_f, a_f], axis=1)
    return M.LigandAtX(np.full(x.shape, total), alpha, (0, -1))


def test_calcium_fluoride_keeps_the_balance_monotone_and_the_masses():
    lig = {"fluoride": _fluoride(0.02, X)}
    st = M.metal_state({"Ca+2": 0.01}, X, ligands=lig)
    f_neg = 0.02 * lig["fluoride"].alpha[:, 1]
    net = _net(st) - f_neg
    assert np.all(np.diff(net) >= -1e-12)
    caf2 = st.precipitated["CaF2 (fluorite)"]
    assert caf2.max() > 0.009  # near-complete at neutral pH
    assert np.allclose(st.dissolved["Ca+2"] + caf2
                       + st.precipitated["Ca(OH)2 (portlandite)"], 0.01, rtol=1e-6)
    assert np.allclose(st.ligand_removed["fluoride"], 2 * caf2)
    # F- and HF leave in proportion: charge -1 per F-, z² 1 per F-
    assert np.allclose(st.ligand_iz2, -2 * caf2 * lig["fluoride"].alpha[:, 1])
    assert np.allclose(st.ligand_neg, st.ligand_iz2)
    assert np.all(st.saturation_index["CaF2 (fluorite)"] <= 1e-6)


def test_salt_derivatives_follow_the_charges():
    # with the ligand's fractions moving with x as the ladder's do, the closed-form
    # derivatives are those of the charges (central differences, fractions recomputed)
    x = np.linspace(-10.0, -2.0, 41) + 0.0013
    st = M.metal_state({"Ca+2": 0.01}, x, ligands={"fluoride": _fluoride(0.02, x)})
    h = 1e-6
    up = M.metal_state({"Ca+2": 0.01}, x + h, ligands={"fluoride": _fluoride(0.02, x + h)})
    dn = M.metal_state({"Ca+2": 0.01}, x - h, ligands={"fluoride": _fluoride(0.02, x - h)})
    for d, part in ((st.dpos, lambda s: s.pos + s.ligand_pos),
                    (st.dneg, lambda s: s.neg + s.ligand_neg),
                    (st.diz2, lambda s: s.iz2 + s.ligand_iz2)):
        assert np.allclose(d, (part(up) - part(dn)) / (2 * h), rtol=1e-5, atol=1e-9)
    # the whole balance (fluoride's own charge with the correction) still rises with x
    net = _net(st) - 0.02 * _fluoride(0.02, x).alpha[:, 1]
    assert np.all(np.diff(net) > 0)


def test_derivatives_by_activity_are_those_of_the_charges():
    x = np.linspace(-12.0, -2.0, 37) + 0.0017
    ad, h = 0.09, 1e-6

    def at(a):
        return M.metal_state({"Zn+2": 0.01, "Ca+2": 0.01}, x, ad=a,
                             ligands={"fluoride": _fluoride(0.02, x, a)})

    st, up, dn = at(ad), at(ad + h), at(ad - h)
    for d, part in ((st.apos, lambda s: s.pos + s.ligand_pos),
                    (st.aneg, lambda s: s.neg + s.ligand_neg),
                    (st.aiz2, lambda s: s.iz2 + s.ligand_iz2)):
        assert np.allclose(d, (part(up) - part(dn)) / (2 * h), rtol=1e-5, atol=1e-9)


def test_non_dose_solid_is_reported_by_its_saturation_index_only():
    from carboy.model.catalog import default_catalog

    pkas = default_catalog().systems["phosphate"].pka25
    x = np.array([-9.0])
    logs = np.array([0.0, -pkas[0] + 9, -pkas[0] - pkas[1] + 18,
                     -pkas[0] - pkas[1] - pkas[2] + 27])
    alpha = 10.0 ** (logs - logs.max())
    alpha = (alpha / alpha.sum())[None, :]
    lig = {"phosphate": M.LigandAtX(np.array([0.01]), alpha, (0, -1, -2, -3))}
    st = M.metal_state({"Ca+2": 0.02}, x, ligands=lig)
    assert "Ca5(PO4)3OH (hydroxyapatite)" not in st.precipitated
    assert st.saturation_index["Ca5(PO4)3OH (hydroxyapatite)"][0] > 0
    assert st.precipitated["CaHPO4·2H2O (brushite)"][0] > 0


def test_every_constant_names_its_source():
    for m in M.metal_data().metals.values():
        assert m.solid.source and all(s.source for s in m.species)
        assert m.choice
    for s in M.metal_data().ligand_solids:
        assert s.source and s.why


def test_gypsum_from_equal_calcium_and_sulfate():
    # ideal solution at pH 7 (sulfate all SO4-2, CaOH+ negligible): [Ca] = [SO4] =
    # sqrt(Ksp), Ksp 10**-4.58, and CaSO4° = K Ksp, K 10**2.25 (both phreeqc.dat, via
    # planning.toml and ion_pairs.toml): 10**-2.29 + 10**-2.33 = 9.80e-3 M stay
    # dissolved, DERIVED
    alpha = np.array([[0.0, 1e-5, 1 - 1e-5]])
    lig = {"sulfate": M.LigandAtX(np.array([0.05]), alpha, (0, -1, -2))}
    st = M.metal_state({"Ca+2": 0.05}, np.array([-7.0]), ligands=lig)
    dissolved = 10 ** -2.29 + 10 ** (2.25 - 4.58)
    assert st.dissolved["Ca+2"][0] == pytest.approx(dissolved, rel=1e-4)
    assert st.species["Ca+2"]["CaSO4"][0] == pytest.approx(10 ** -2.33, rel=1e-4)
    assert st.precipitated["CaSO4·2H2O (gypsum)"][0] == pytest.approx(0.05 - dissolved,
                                                                       rel=1e-4)
    assert st.ligand_removed["sulfate"][0] == pytest.approx(0.05 - 10 ** -2.29, rel=1e-4)
    assert st.precipitated["Ca(OH)2 (portlandite)"][0] == 0.0
    assert [s.solid for s in M.sludge(st)] == ["CaSO4·2H2O (gypsum)"]
