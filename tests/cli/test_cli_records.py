"""From plan to record through the command line: a new acid container, additions, the plan,
a treatment with a stock bottle and the yearly report give the right volumes, bottle
drawdown and totals; bad input is one line and exit status 2, a rule refusal exit 1, and
nothing is written either way."""

from __future__ import annotations

import csv
import io
import json
from datetime import UTC, datetime

import pytest

from carboy.store import journal
from carboy.store.db import open_database
from carboy.tui.launch import main


@pytest.fixture
def db(tmp_path):
    path = tmp_path / "records.db"
    open_database(path).close()
    return str(path)


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def ok(capsys, *argv):
    code, out, err = run(capsys, *argv, "--json")
    assert code == 0, err
    return json.loads(out)


def state(db) -> tuple:
    """What a refused command must leave unchanged."""
    with open_database(db) as s:
        return (journal.count(s), s.scalar("SELECT count(*) FROM waste_additions"),
                s.scalar("SELECT group_concat(amount_left) FROM stock_bottles"),
                s.scalar("SELECT group_concat(status) FROM waste_containers"),
                s.scalar("SELECT count(*) FROM disposal_rules"))


def one_line(code, out, err, status):
    assert code == status and out == "", (code, out, err)
    assert len(err.strip().splitlines()) == 1 and "Traceback" not in err
    return err


@pytest.fixture
def filled(capsys, db):
    """ACID-07 (20 L) holding 6 L of 1 M HCl and 4 L of 0.5 M H2SO4; bottle 1: 10 L of
    2 M NaOH."""
    ok(capsys, "waste", "new", "ACID-07", "--stream", "acid", "--capacity", "20 L",
       "--db", db)
    ok(capsys, "waste", "add", "ACID-07", "HCl=1M", "--volume", "6 L", "--db", db)
    ok(capsys, "waste", "add", "ACID-07", "H2SO4=0.5M", "--volume", "4 L", "--db", db)
    code, _, err = run(capsys, "stock", "add", "NaOH", "2 M", "--size", "10 L", "--db", db)
    assert code == 0, err
    return db


def test_end_to_end_plan_treat_report(capsys, filled):
    db = filled
    plan = ok(capsys, "--db", db, "neutralize", "--waste", "ACID-07", "--reagent", "NaOH=2M")
    # stoichiometry: 6 mol HCl + 2 x 2 mol H2SO4 = 10 mol OH- = 5 L of 2 M NaOH
    assert plan["full"]["reagent_volume_l"] == pytest.approx(5.0, rel=1e-3)
    rules = plan["disposal"]
    assert rules["may_treat"] and rules["n_batches"] == 10  # 10 L, 1 L a batch
    assert rules["window"] == {"low_pH": 6.0, "high_pH": 9.0}
    done = ok(capsys, "waste", "treat", "ACID-07", "--bottle", "1", "--added", "5 L",
              "--stage-added", "4 L", "1 L", "--stage-ph", "2.1", "6.8", "--vented-ph", "7.0",
              "--ph", "7.2", "--final-volume", "15 L", "--temperature", "31", "--db", db)
    assert done["in_window"] and done["status"] == "neutralized"
    assert done["disposal"]["n_batches"] == 10 and done["plan_error"] is None
    assert ok(capsys, "stock", "show", "1", "--db", db)["amount_left"] == pytest.approx(5.0)
    box = ok(capsys, "waste", "show", "ACID-07", "--db", db)
    assert box["volume_l"] == pytest.approx(15.0) and box["status"] == "neutralized"
    assert [a["compound_key"] for a in box["additions"]] == ["HCl", "H2SO4", "NaOH"]
    year = datetime.now(UTC).year
    report = ok(capsys, "report", "treatments", "--year", str(year), "--db", db)
    (row,) = report["treatments"]
    assert row["container"] == "ACID-07" and row["final_ph"] == 7.2
    assert row["treated"] == {"HCl": pytest.approx(6.0), "H2SO4": pytest.approx(2.0)}
    totals = report["totals"]
    assert totals["count"] == 1 and totals["waste_l"] == pytest.approx(10.0)
    assert totals["reagent"] == {"NaOH=2M": {"L": pytest.approx(5.0)}}
    assert totals["per_stream"]["acid"]["waste_l"] == pytest.approx(10.0)
    assert sum(m["count"] for m in totals["per_month"].values()) == 1
    ok(capsys, "waste", "dispose", "ACID-07", "--db", db)
    code, out, _ = run(capsys, "report", "treatments", "--year", str(year), "--csv",
                       "--db", db)
    rows = list(csv.DictReader(io.StringIO(out)))
    assert code == 0 and rows[0]["reagent_amount"] == "5.0"
    code, out, _ = run(capsys, "journal", "verify", "--db", db)
    assert code == 0


@pytest.mark.parametrize(("argv", "needle"), [
    (["--ph", "15"], "--ph: final pH '15'"),
    (["--ph", "7", "--stage-ph", "3", "-1"], "pH after stage 2"),
    (["--ph", "7", "--added", "12 L"], "only 10 L is left in bottle 1"),
    (["--ph", "7", "--added", "800 g"], "kept in L"),
    (["--ph", "7", "--stage-added", "1 L"], "add up to"),
    (["--ph", "7", "--bottle", "9"], "no stock bottle 9"),
])
def test_bad_treatment_input_is_exit_2_and_writes_nothing(capsys, filled, argv, needle):
    base = ["waste", "treat", "ACID-07", "--bottle", "1", "--added", "5 L", "--db", filled]
    before = state(filled)
    err = one_line(*run(capsys, *base, *argv), 2)
    assert needle in err and state(filled) == before


def test_rule_refusals_are_exit_1_and_write_nothing(capsys, filled):
    db = filled
    ok(capsys, "waste", "new", "HF-01", "--stream", "hf", "--db", db)
    ok(capsys, "waste", "add", "HF-01", "HF=1M", "--volume", "1 L", "--db", db)
    before = state(db)
    err = one_line(*run(capsys, "waste", "treat", "HF-01", "--bottle", "1", "--added", "1 L",
                        "--ph", "7", "--db", db), 1)
    assert "licensed disposal" in err and "stream:hf" in err and state(db) == before
    err = one_line(*run(capsys, "waste", "add", "ACID-07", "HCl=1M", "--volume", "9 L",
                        "--db", db), 1)
    assert "8 L free" in err and state(db) == before
    code, _, err = run(capsys, "waste", "treat", "ACID-07", "--bottle", "1", "--added", "4 L",
                       "--ph", "3.9", "--db", db)
    assert code == 0 and "outside the storeroom's window" in err
    before = state(db)
    err = one_line(*run(capsys, "waste", "dispose", "ACID-07", "--db", db), 1)
    assert "cannot mark it disposed" in err and state(db) == before
    ok(capsys, "waste", "licensed", "ACID-07", "--note", "to the contractor", "--db", db)


def test_corrections_and_notes(capsys, filled):
    db = filled
    done = ok(capsys, "waste", "treat", "ACID-07", "--bottle", "1", "--added", "5 L",
              "--ph", "5.2", "--db", db)
    entry = str(done["entry_id"])
    fixed = ok(capsys, "journal", "correct", entry, "--reason", "read too early", "--ph",
               "6.8", "--added", "5.5 L", "--db", db)
    assert fixed["corrects_id"] == done["entry_id"]
    assert set(fixed["changes"]) == {"final_ph", "added"}
    assert ok(capsys, "stock", "show", "1", "--db", db)["amount_left"] == pytest.approx(4.5)
    before = state(db)
    for argv, needle in ((["999"], "no journal entry 999"),
                         ([entry], "already corrected"),
                         ([str(fixed["entry_id"]), "--used", "5 mL"], "not a preparation"),
                         ([str(fixed["entry_id"]), "--ph", "16"], "--ph")):
        err = one_line(*run(capsys, "journal", "correct", *argv, "--reason", "x",
                            "--db", db), 2)
        assert needle in err and state(db) == before
    ok(capsys, "waste", "dispose", "ACID-07", "--db", db)  # the corrected pH is in
    added = ok(capsys, "waste", "new", "B-02", "--stream", "acid", "--db", db)
    assert added["label"] == "B-02"
    addition = ok(capsys, "waste", "add", "B-02", "HCl=1M", "--volume", "2 L", "--db", db)
    ok(capsys, "journal", "correct", f"addition:{addition['addition_id']}", "--reason",
       "was 1.5 L", "--volume", "1.5 L", "--db", db)
    assert ok(capsys, "waste", "show", "B-02", "--db", db)["volume_l"] == pytest.approx(1.5)
    note = ok(capsys, "journal", "note", "--bottle", "1", "cap cracked, replaced", "--db", db)
    with open_database(db) as s:
        assert journal.get(s, note["journal_entry"]).bottle_id == 1


def test_rules_set_the_disposal_profile_and_list_nearly_full(capsys, filled):
    db = filled
    shown = ok(capsys, "rules", "--db", db)["disposal"]
    assert shown["origin"]["window_low"] == "placeholder" and shown["note"]
    set_ = ok(capsys, "rules", "--window", "5.5:9.5", "--batch-max", "none", "--vessel",
              "20 L", "--never-treat", "HNO3>10%", "--treat-again", "HF", "--nearly-full",
              "50", "--db", db)["disposal"]
    assert (set_["window_low"], set_["window_high"], set_["batch_max_l"]) == (5.5, 9.5, None)
    items = [i["item"] for i in set_["never_treat"]]
    assert "HNO3>10%" in items and "HF" not in items and "HClO4" in items
    kept = next(i for i in set_["never_treat"] if i["item"] == "HClO4")
    assert "perchloric" in kept["why"]  # an item already listed keeps its reason
    listed = ok(capsys, "waste", "list", "--nearly-full", "--db", db)
    assert [c["label"] for c in listed] == ["ACID-07"] and listed[0]["nearly_full"]
    plan = ok(capsys, "--db", db, "neutralize", "--waste", "ACID-07", "--reagent", "NaOH=2M")
    assert plan["window"]["low_pH"] == 5.5 and plan["disposal"]["n_batches"] == 1
    before = state(db)
    for argv in (["--window", "9:5"], ["--batch-max", "lots"], ["--treat-again", "H2O2"],
                 ["--fill-limit", "40"]):
        code, out, err = run(capsys, "rules", *argv, "--db", db)
        assert code == 2 and "Traceback" not in err and state(db) == before, (argv, err)
    ok(capsys, "rules", "--disposal-default", "all", "--db", db)
    assert ok(capsys, "rules", "--db", db)["disposal"]["placeholders"] == \
        list(shown["origin"])


def test_the_report_as_pdf(capsys, filled, tmp_path):
    from pypdf import PdfReader

    ok(capsys, "waste", "treat", "ACID-07", "--bottle", "1", "--added", "5 L", "--ph", "7",
       "--db", filled)
    year = str(datetime.now(UTC).year)
    path = tmp_path / "log.pdf"
    code, out, err = run(capsys, "report", "treatments", "--year", year, "--by-stream",
                         "--pdf", str(path), "--storeroom", "Test Lab", "--db", filled)
    assert code == 0 and "1 treatment" in out, err
    text = "\n".join(page.extract_text() for page in PdfReader(path).pages)
    assert f"Treatment log {year}" in text and "ACID-07" in text and "Test Lab" in text
