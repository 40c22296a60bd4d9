"""``carboy neutralize`` end to end."""

import json

import pytest

from carboy.tui.launch import main


def run(capsys, *argv):
    rc = main(["neutralize", *argv])
    out = capsys.readouterr()
    return rc, out.out, out.err


def test_json(capsys):
    rc, out, _ = run(capsys, "H2SO4=0.5M", "--volume", "250mL", "--reagent", "NaOH=2M", "--json")
    assert rc == 0
    d = json.loads(out)
    for key in ("initial_pH", "proton_equivalents_mol", "full", "to_target", "window", "heat_released_kj",
                "temperature_rise_c", "gas_l", "vented_pH", "stages", "curve",
                "equivalence_points", "precipitates", "cautions"):
        assert key in d
    assert d["proton_equivalents_mol"] == pytest.approx(0.25)
    assert d["cautions"][-1]["code"] == "local-rules"


def test_report_puts_cautions_first(capsys):
    rc, out, _ = run(capsys, "HCl=0.1M", "--volume", "1L", "--reagent", "NaHCO3")
    assert rc == 0
    assert out.splitlines()[0].startswith("cautions")
    assert "local disposal rules" in out
    assert "CO2" in out


def test_hf_report_says_not_for_drain(capsys):
    rc, out, _ = run(capsys, "HF=0.1M", "--volume", "1L", "--reagent", "NaOH=1M")
    assert rc == 0
    assert out.startswith("THIS IS NOT A DRAIN-DISPOSAL PLAN")


def test_alkaline_with_acid(capsys):
    rc, out, _ = run(capsys, "Na2CO3=0.1M", "--volume", "500mL", "--reagent", "HCl=1M",
                     "--json", "--target", "7", "--window", "6:8")
    assert rc == 0
    d = json.loads(out)
    assert d["direction"] == "acid" and d["vented_pH"] is not None


@pytest.mark.parametrize("argv", [
    ["HCl=1M", "--volume", "abc", "--reagent", "NaOH=1M"],
    ["HCl=1M", "--volume", "0 mL", "--reagent", "NaOH=1M"],
    ["HCl=1M", "--reagent", "NaOH=1M"],
    ["HCl=1M", "--volume", "1L", "--reagent", "Foo=1M"],
    ["HCl=1M", "--volume", "1L", "--reagent", "NaOH=1M", "--target", "15"],
    ["HCl=1M", "--volume", "1L", "--reagent", "NaOH=1M", "--target", "x"],
    ["HCl=1M", "--volume", "1L", "--reagent", "NaOH=1M", "--window", "9:6"],
    ["HCl=1M", "--volume", "1L", "--reagent", "NaOH=1M", "--window", "6"],
    ["HCl=1M", "--volume", "1L", "--reagent", "HCl=1M"],
    ["HCl=1M", "--volume", "1L", "--reagent", "NaOH=90%"],
    ["--reagent", "NaOH=1M"],
])
def test_bad_input_exit_2(capsys, argv):
    rc, out, err = run(capsys, *argv)
    assert rc == 2
    assert err.startswith("carboy: ") and "Traceback" not in err
    assert len(err.strip().splitlines()) == 1


@pytest.mark.parametrize("window", ["6:9", "6-9", "6–9", " 6 - 9 "])
def test_the_window_as_carboy_writes_it_is_read_back(capsys, window):
    """A plan prints its window as "6-9": typed back, it is the same window."""
    rc, out, err = run(capsys, "HCl=0.1M", "--volume", "1L", "--reagent", "NaOH=1M",
                       f"--window={window}", "--json")
    assert rc == 0, err
    window_out = json.loads(out)["window"]
    assert (window_out["low_pH"], window_out["high_pH"]) == (6.0, 9.0)


def test_a_bad_ph_names_an_example_with_its_decimal_comma(capsys):
    rc, _, err = run(capsys, "HCl=1M", "--volume", "1L", "--reagent", "NaOH=1M",
                     "--target", "x")
    assert rc == 2 and "e.g. 6.5 or 6,5" in err


def test_a_sample_with_nothing_to_neutralize_needs_0_mol_not_minus_0(capsys):
    rc, out, err = run(capsys, "NaCl=1M", "--volume", "1L", "--reagent", "NaOH=1M")
    assert rc == 0, err
    full = next(line for line in out.splitlines() if line.startswith("full dose"))
    assert full.split()[2:4] == ["0", "mol,"] and "-0" not in full, full
    rc, out, _ = run(capsys, "NaCl=1M", "--volume", "1L", "--reagent", "NaOH=1M", "--json")
    d = json.loads(out)
    assert str(d["full"]["reagent_mol"]) == "0.0" and str(d["proton_equivalents_mol"]) == "0.0"


def test_plan_for_a_stored_container(tmp_path, capsys):
    import json as _json

    from carboy.store.demo import DEMO_TODAY, create_demo_database
    from carboy.tui.launch import main as cli_main

    db = create_demo_database(tmp_path / "demo.db", today=DEMO_TODAY)
    assert cli_main(["--db", str(db), "neutralize", "--waste", "HF-04", "--reagent", "NaOH=2M",
                     "--json"]) == 0
    plan = _json.loads(capsys.readouterr().out)
    assert plan["cautions"][0]["code"] == "not-a-drain-plan"
    assert cli_main(["--db", str(db), "neutralize", "--waste", "MA-01", "--reagent",
                     "NaOH=2M", "--json"]) == 0
    plan = _json.loads(capsys.readouterr().out)
    assert plan["to_target"]["reagent_mol"] > 0
    assert cli_main(["--db", str(db), "neutralize", "--waste", "NO-SUCH", "--reagent",
                     "NaOH=2M"]) == 2
    assert "NO-SUCH" in capsys.readouterr().err


def test_the_staged_table_carries_the_heats_limit_where_the_batch_would_pass_it(capsys):
    """96 % H2SO4 with 6 M NaOH: the pH stages put 80 % of the dose first, the heat allows
    a small part at a time; the table says so under it (and not for a mild batch)."""
    rc, out, _ = run(capsys, "H2SO4=96%", "--volume", "1L", "--reagent", "NaOH=6M", "--json")
    d = json.loads(out)
    stages_needed = d["heat"]["stages_to_stay_below_safe"]
    rc, out, _ = run(capsys, "H2SO4=96%", "--volume", "1L", "--reagent", "NaOH=6M")
    assert rc == 0 and stages_needed > 5
    note = next(line for line in out.splitlines() if "heat: add at most" in line)
    assert f"at least {stages_needed} equal portions" in note
    rc, out, _ = run(capsys, "HCl=0.1M", "--volume", "1L", "--reagent", "NaOH=1M")
    assert rc == 0 and "heat: add at most" not in out


def test_litres_are_written_in_litres(capsys):
    rc, out, _ = run(capsys, "HCl=0.5M", "--volume", "11L", "--reagent", "NaOH=1M")
    assert rc == 0 and "e+0" not in out
    assert out.splitlines()[[line.startswith("sample") for line in out.splitlines()].index(
        True)].startswith("sample         11 L at")
    full = next(line for line in out.splitlines() if line.startswith("full dose"))
    assert "5.5 L" in full
