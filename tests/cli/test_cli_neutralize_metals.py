"""``carboy neutralize`` with metal-bearing wastes: the report and the JSON carry the sludge,
the metal left dissolved and the metals' share of the dose; cyanide is never acidified."""

import json

import pytest

from carboy.tui.launch import main

ZINC = ("HCl=0.1M", "ZnCl2=0.05M", "--volume", "1L", "--reagent", "NaOH=1M",
        "--target", "9", "--window", "8:10")


def run(capsys, *argv):
    rc = main(["neutralize", *argv])
    out = capsys.readouterr()
    return rc, out.out, out.err


def test_json_names_the_sludge_and_the_zinc_left_dissolved(capsys):
    rc, out, _ = run(capsys, *ZINC, "--json")
    assert rc == 0
    d = json.loads(out)
    # the case: 0.200 mol NaOH (phreeqpython 0.2000 with Zn(OH)2(e), see
    # tests/reference/test_planner_metals_vs_phreeqc.py), not the acid's 0.100
    assert d["to_target"]["reagent_mol"] == pytest.approx(0.200, rel=0.01)
    (sludge,) = d["sludge"]
    assert sludge["formula"] == "Zn(OH)2" and sludge["mol"] == pytest.approx(0.05, rel=1e-3)
    assert sludge["dry_mass_g"] == pytest.approx(0.05 * 99.40, rel=2e-3)  # molmass of Zn(OH)2
    assert 0.0 < d["dissolved_metals_mg_l"]["Zn+2"] < 1.0
    assert d["metal_hydroxide_mol"] == pytest.approx(0.100, rel=0.01)
    assert d["unmodelled_metals"] == [] and d["drain_plan"] is False
    assert any(p["expected"] and p["solid"] == sludge["solid"] for p in d["precipitates"])


def test_report_shows_the_sludge_and_the_dissolved_metals(capsys):
    rc, out, _ = run(capsys, "HNO3=0.1M", "Pb(NO3)2=0.01M", "CuSO4=0.02M", "--volume", "2L",
                     "--reagent", "NaOH=2M", "--target", "9", "--window", "8:10")
    assert rc == 0
    assert out.startswith("THIS IS NOT A DRAIN-DISPOSAL PLAN")
    lines = out.splitlines()
    sludge = [line for line in lines if line.startswith("sludge ")]
    assert any("Cu(OH)2: 0.04 mol" in line for line in sludge)  # 0.02 M in 2 L
    assert any(line.startswith("sludge") and "PbO" in line for line in sludge)
    (dissolved,) = [line for line in lines if line.startswith("dissolved ")]
    assert "at pH 9.00" in dissolved and "Cu " in dissolved and "Pb " in dissolved
    assert any(line.startswith("metals' OH-") for line in lines)


def test_a_metal_without_data_is_named(capsys):
    rc, out, _ = run(capsys, "HNO3=0.1M", "AgNO3=0.01M", "--volume", "1L", "--reagent",
                     "NaOH=1M", "--json")
    assert rc == 0
    d = json.loads(out)
    assert d["unmodelled_metals"] == ["Ag+"]
    assert any("Ag+" in w for w in d["warnings"])


def test_a_cyanide_waste_is_never_given_an_acid_plan(capsys):
    rc, out, err = run(capsys, "NaCN=0.1M", "--volume", "1L", "--reagent", "HCl=1M",
                       "--json")
    assert rc == 1
    d = json.loads(out)
    assert d["plan"] is None and "cyanide" in d["refused"].lower()
    assert "carboy:" in err
