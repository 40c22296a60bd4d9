"""``carboy standardize`` from the command line: output, exit status, recording."""

from __future__ import annotations

import json

import pytest

from carboy.model import standardization as std
from carboy.store import journal, stock
from carboy.store.db import open_database
from carboy.tui.launch import main

# An invented triplicate: KHP portions of about 0.51 g against about 0.1 M NaOH.
REPLICATES = (("0.5106", "25.02"), ("0.5098", "24.97"), ("0.5112", "25.05"))


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def _args(replicates=REPLICATES):
    out = []
    for m, v in replicates:
        out += ["--mass", m, "--volume", v]
    return out


def _expected(replicates=REPLICATES, purity=None):
    reps = [std.Replicate(float(m), float(v)) for m, v in replicates]
    return std.standardize("NaOH", "KHP", reps, purity_percent=purity)


def test_json_has_the_documented_keys_and_the_model_numbers(capsys):
    code, out, err = run(capsys, "standardize", "--titrant", "NaOH", "--standard", "KHP",
                         *_args(), "--purity", "99.97", "--json")
    assert code == 0, err
    got = json.loads(out)
    assert {"replicates", "mean_molar", "sd_molar", "rsd_percent", "ci95_molar", "outliers",
            "accepted"} <= set(got)
    want = _expected(purity=99.97)
    assert [r["molar"] for r in got["replicates"]] == pytest.approx(
        [r.molar for r in want.replicates])
    assert got["mean_molar"] == pytest.approx(want.mean_molar)
    assert got["accepted"] is True and got["outliers"] == []


def test_units_and_decimal_commas_are_read(capsys):
    code, out, err = run(capsys, "standardize", "--titrant", "NaOH", "--standard", "KHP",
                         "--mass", "510,6 mg", "--volume", "0.02502 L", "--mass", "0.5098 g",
                         "--volume", "24,97", "--mass", "0.5112", "--volume", "25.05 mL",
                         "--json")
    assert code == 0, err
    assert json.loads(out)["mean_molar"] == pytest.approx(_expected().mean_molar)


def test_scattered_replicates_are_not_accepted_exit_1(capsys):
    scattered = (("0.5106", "25.02"), ("0.5098", "25.40"), ("0.5112", "24.70"))
    code, out, err = run(capsys, "standardize", "--titrant", "NaOH", "--standard", "KHP",
                         *_args(scattered))
    assert code == 1
    assert "NOT accepted" in out and "RSD" in out


@pytest.mark.parametrize("argv, named", [
    (["--titrant", "NaOH", "--standard", "KHP", "--mass", "0.5", "--volume", "x"], "'x'"),
    (["--titrant", "NaOH", "--standard", "KHP", "--mass", "0.5"], "--volume"),
    (["--titrant", "NaOH", "--standard", "unobtainium", "--mass", "0.5", "--volume", "25"],
     "'unobtainium'"),
    (["--titrant", "HCl", "--standard", "KHP", "--mass", "0.5", "--volume", "25"], "HCl"),
    (["--titrant", "NaOH", "--standard", "KHP", "--mass", "0.5", "--volume", "25",
      "--blank", "30"], "30"),
    (["--titrant", "NaOH", "--standard", "KHP", "--mass", "0.5", "--volume", "25",
      "--max-rsd", "50"], "'50'"),
])
def test_bad_input_exit_2_names_the_value(capsys, argv, named):
    code, out, err = run(capsys, "standardize", *argv)
    assert code == 2 and out == ""
    assert named in err


def test_bottle_takes_the_accepted_mean_with_a_journal_entry(capsys, tmp_path):
    db = str(tmp_path / "s.db")
    s = open_database(db)
    bid = stock.add(s, {"compound": "NaOH", "label_strength": "0.1 M", "container_size": "1 L"})
    s.close()
    code, out, err = run(capsys, "standardize", "--bottle", str(bid), "--standard", "KHP",
                         *_args(), "--db", db, "--json")
    assert code == 0, err
    got = json.loads(out)
    s = open_database(db)
    try:
        bottle = stock.get(s, bid)
        assert bottle.current_strength == pytest.approx(_expected().mean_molar)
        entry = journal.get(s, got["recorded_entry_id"])
        assert entry.kind == "standardization" and entry.bottle_id == bid
        assert entry.snapshot["standardization"]["accepted"] is True
        # a result that is not accepted leaves the bottle alone
        before = (bottle.current_strength, journal.count(s))
    finally:
        s.close()
    scattered = (("0.5106", "25.02"), ("0.5098", "25.40"), ("0.5112", "24.70"))
    code, out, err = run(capsys, "standardize", "--bottle", str(bid), "--standard", "KHP",
                         *_args(scattered), "--db", db)
    assert code == 1 and "not recorded" in out
    s = open_database(db)
    try:
        assert (stock.get(s, bid).current_strength, journal.count(s)) == before
    finally:
        s.close()
    code, out, err = run(capsys, "standardize", "--bottle", str(bid), "--titrant", "HCl",
                         "--standard", "Na2CO3", "--mass", "0.26", "--volume", "24.9",
                         "--db", db)
    assert code == 2 and "holds NaOH" in err
