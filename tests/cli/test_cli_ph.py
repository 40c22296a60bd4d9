"""``carboy ph`` from the outside: output forms, exit status, bad input."""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

from carboy.tui.launch import main


def run(capsys, *argv):
    code = main(list(argv))
    out = capsys.readouterr()
    return code, out.out, out.err


def test_json_has_the_promised_keys(capsys):
    code, out, err = run(capsys, "ph", "H2SO4=0.05M", "NaH2PO4=10mM", "--temperature", "35",
                         "--json")
    assert code == 0, err
    data = json.loads(out)
    for key in ("pH", "ionic_strength_molar", "temperature_c", "activity", "species", "warnings"):
        assert key in data
    assert data["temperature_c"] == 35.0
    assert data["activity"] == "auto"                 # the default
    assert data["activity_model"] == "davies" and data["ph_scale"] == "davies"
    assert 1.0 < data["pH"] < 1.7
    assert data["species"]["HSO4-"] > 0


def test_activity_choices(capsys):
    code, out, err = run(capsys, "ph", "HCl=2M", "NaCl=1M", "--activity", "pitzer", "--json")
    assert code == 0, err
    data = json.loads(out)
    assert (data["activity"], data["activity_model"], data["ph_scale"]) == (
        "pitzer", "pitzer", "macinnes")
    assert data["molality"]["Na+"] > data["species"]["Na+"]
    assert data["ionic_strength_molal"] > data["ionic_strength_molar"]
    code, out, _ = run(capsys, "ph", "HCl=2M", "NaCl=1M")
    assert code == 0
    assert "auto: specific-interaction (Pitzer) activity (MacInnes pH scale" in out
    assert "mol/kg" in out
    code, out, _ = run(capsys, "ph", "HCl=0.01M", "--activity", "davies")
    assert code == 0 and "(Davies activity (pH from Davies activity, mol/L))" in out
    code, out, _ = run(capsys, "ph", "HCl=0.01M", "--activity", "ideal", "--json")
    assert json.loads(out)["ph_scale"] == "concentration"


def test_ideal_contradicting_activity_is_refused(capsys):
    code, _, err = run(capsys, "ph", "HCl=0.01M", "--ideal", "--activity", "pitzer")
    assert code == 2
    assert "--ideal" in err


def test_ideal_switch_and_names(capsys):
    code, out, _ = run(capsys, "ph", "acetic acid=0.1", "--ideal", "--json")
    assert code == 0
    data = json.loads(out)
    assert data["activity"] == "ideal"
    # 0.10 M acetic acid, pKa 4.756, exact ideal solve: pH 2.881 (reference-data §8, DERIVED)
    assert data["pH"] == pytest.approx(2.881, abs=0.003)


def test_readable_table(capsys):
    code, out, _ = run(capsys, "ph", "NaHCO3=0.1M")
    assert code == 0
    assert "pH" in out and "HCO3-" in out and "ionic strength" in out


def test_high_ionic_strength_warns(capsys):
    code, out, _ = run(capsys, "ph", "HCl=2M", "--activity", "davies", "--json")
    assert code == 0
    data = json.loads(out)
    assert data["pH"] < 0
    assert any("0.5 M" in w for w in data["warnings"])
    # the default (auto) takes the specific-interaction model there, without that warning
    code, out, _ = run(capsys, "ph", "HCl=2M", "--json")
    data = json.loads(out)
    assert data["activity_model"] == "pitzer"
    assert not any("0.5 M" in w for w in data["warnings"])


@pytest.mark.parametrize(
    "argv, fragment",
    [
        (["ph", "acetik=0.1"], "closest matches"),
        (["ph", "HCl=-1M"], "must not be negative"),
        (["ph", "HCl=0.1 mL"], "not a concentration"),
        (["ph", "HCl"], "NAME=CONC"),
        (["ph", "HCl=0.1", "--temperature", "150"], "150"),
        (["ph", "HCl=0.1", "--temperature", "warm"], "warm"),
        (["ph", "naoh=0.1"], "naoh"),
    ],
)
def test_bad_input_exits_2_with_one_clear_line(capsys, argv, fragment):
    code, out, err = run(capsys, *argv)
    assert code == 2
    assert out == ""
    assert fragment in err
    assert "Traceback" not in err
    assert len(err.strip().splitlines()) == 1


def test_installed_command_runs():
    proc = subprocess.run([sys.executable, "-m", "carboy", "ph", "HCl=0.01", "--json"],
                          capture_output=True, text=True)
    assert proc.returncode == 0, proc.stderr
    assert json.loads(proc.stdout)["pH"] == pytest.approx(2.04, abs=0.02)


def test_solids_that_form_are_reported_and_balance_the_metal(capsys):
    """CaCl2 and Na2SO4 at 50 mM each are past gypsum's solubility (about 15 mM of
    calcium in gypsum-saturated water: phreeqc.dat 15.09 mmol/kgw; CRC, 0.205 % at
    25 °C, from memory): the solid is listed, at saturation index 0, and solid plus
    dissolved calcium is the 50 mM put in."""
    code, out, err = run(capsys, "ph", "CaCl2=0.05M", "Na2SO4=0.05M", "--json")
    assert code == 0, err
    data = json.loads(out)
    gypsum = data["solids_molar"]["CaSO4·2H2O (gypsum)"]
    assert 0.025 < gypsum < 0.035
    assert abs(data["saturation_indices"]["CaSO4·2H2O (gypsum)"]) < 1e-6
    assert gypsum + data["dissolved_metals_molar"]["Ca+2"] == pytest.approx(0.05, rel=1e-9)
    code, out, err = run(capsys, "ph", "CaCl2=0.05M", "Na2SO4=0.05M")
    assert "solids formed" in out and "gypsum" in out
    code, out, err = run(capsys, "ph", "CaCl2=0.001M", "Na2SO4=0.001M")
    assert code == 0 and "solids formed" not in out


def test_a_concentrate_past_the_pitzer_models_reach(capsys):
    """96 % sulfuric acid (about 250 mol/kg of water): auto shows the Davies figures and
    says why; the Pitzer model asked by name is refused, the value named."""
    code, out, err = run(capsys, "ph", "H2SO4=96%", "--json")
    assert code == 0, err
    data = json.loads(out)
    assert data["activity_model"] == "davies" and -3.0 < data["pH"] < 0.0
    assert any("cannot be evaluated" in w and "dilute it first" in w for w in data["warnings"])
    code, out, err = run(capsys, "ph", "H2SO4=96%", "--activity", "pitzer")
    assert code == 2 and out == ""
    assert "activity 'pitzer'" in err and "mol of solutes per kg of water" in err
