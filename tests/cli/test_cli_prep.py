"""``carboy prep`` from the command line: JSON keys, serial steps, recording, bad input."""

from __future__ import annotations

import json

import pytest

from carboy.model import preparation
from carboy.store import journal, stock
from carboy.store.db import open_database
from carboy.tui.launch import main


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_json_keys_and_model_numbers(capsys):
    code, out, err = run(capsys, "prep", "--from", "H2SO4=96%", "--target", "1M", "--volume",
                         "1L", "--json")
    assert code == 0, err
    got = json.loads(out)
    assert {"stock_molar", "stock_volume_ml", "stock_mass_g", "water_ml", "heat_released_kj",
            "temperature_rise_c", "steps", "cautions", "label"} <= set(got)
    want = preparation.plan_recipe(preparation.parse_source("H2SO4=96%"), 1.0, 1.0)
    assert got["stock_volume_ml"] == pytest.approx(want.stock_volume_ml)
    # 96 % H2SO4 is about 18.0 M (buffer-preparation guide, reference-data §4a)
    assert got["stock_molar"] == pytest.approx(18.0, abs=0.1)
    assert got["heat_released_kj"] > 0 and all(isinstance(s, str) for s in got["steps"])
    assert any("never water" in c["text"] for c in got["cautions"])
    assert got["label"]["lines"][0].startswith("Sulfuric acid")


def test_serial_dilution_gives_one_recipe_per_step(capsys):
    code, out, err = run(capsys, "prep", "--from", "HCl=12.1M", "--target", "1M", "--target",
                         "0.1M", "--volume", "100mL", "--json")
    assert code == 0, err
    series = json.loads(out)["series"]
    assert [s["target_molar"] for s in series] == [1.0, 0.1]
    assert series[1]["stock_molar"] == pytest.approx(1.0)
    assert series[1]["stock_volume_ml"] == pytest.approx(10.0)


@pytest.mark.parametrize("argv, named", [
    (["--from", "H2SO4", "--target", "1M", "--volume", "1L"], "'H2SO4'"),
    (["--from", "HCl=12.1M", "--target", "20M", "--volume", "1L"], "20"),
    (["--from", "HCl=12.1M", "--target", "1M", "--volume", "1q"], "'1q'"),
    (["--from", "HCl=12.1M", "--target", "1M", "--target", "0.1M", "--volume", "1L",
      "--volume", "1L", "--volume", "1L"], "--volume"),
    (["--from", "HCl=12.1M", "--target", "1M", "--volume", "1L", "--purity", "99"],
     "--purity"),
])
def test_bad_input_exit_2(capsys, argv, named):
    code, out, err = run(capsys, "prep", *argv)
    assert code == 2 and out == "" and named in err


@pytest.mark.parametrize("argv, option, named", [
    (["--volume", "0L"], "--volume", "final volume 0.0"),
    (["--volume", "60L"], "--volume", "at most 50 L"),
    (["--volume", "1L", "--temperature", "5000"], "--temperature", "5000"),
    (["--volume", "1L", "--target", "30M"], "--target", "30"),
    (["--target", "0.1M", "--volume", "1mL", "--volume", "100mL"], "--volume", "step 2"),
])
def test_a_value_the_recipe_refuses_is_named_by_its_option(capsys, argv, option, named):
    """The form reads each value; what only the recipe can judge (a volume above what
    carboy plans, a temperature out of range, a step that needs more than the one before
    makes) is named by the option it came from, not by --target."""
    code, out, err = run(capsys, "prep", "--from", "HCl=12.1M", "--target", "1M", *argv)
    assert code == 2 and out == ""
    assert err.startswith(f"carboy: {option}: ") and named in err, err


def test_record_draws_from_the_bottle_and_adds_the_new_one(capsys, tmp_path):
    db = str(tmp_path / "p.db")
    s = open_database(db)
    src = stock.add(s, {"compound": "HCl", "label_strength": "37 %", "container_size": "2.5 L",
                        "amount_left": "1 L"})
    before = journal.count(s)
    s.close()
    code, out, err = run(capsys, "prep", "--from", str(src), "--target", "1M", "--volume",
                         "1L", "--record", "--location", "Bench 2", "--db", db, "--json")
    assert code == 0, err
    got = json.loads(out)
    s = open_database(db)
    try:
        left = stock.get(s, src).amount_left
        assert left == pytest.approx(1.0 - got["stock_volume_ml"] / 1000)
        new = stock.get(s, got["recorded"]["new_bottle_id"])
        assert (new.compound_key, new.label_strength, new.strength_unit) == ("HCl", 1.0, "M")
        assert new.location == "Bench 2" and new.expires_on
        assert journal.count(s) == before + 2  # the preparation, and the new bottle's own
        first = journal.entries(s, bottle_id=new.id)[0]
        assert first.snapshot["made_from_bottle"] == src
        assert f"made from bottle {src}" in first.summary
        # asking for more than is left writes nothing
        count_before = (stock.count(s), journal.count(s))
    finally:
        s.close()
    code, out, err = run(capsys, "prep", "--from", str(src), "--target", "6M", "--volume",
                         "5L", "--record", "--db", db)
    assert code == 2 and "left in bottle" in err
    s = open_database(db)
    try:
        assert (stock.count(s), journal.count(s)) == count_before
        assert stock.get(s, src).amount_left == pytest.approx(left)
    finally:
        s.close()
