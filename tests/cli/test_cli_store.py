"""``carboy stock``, ``carboy waste`` and ``carboy journal`` from the command line."""

from __future__ import annotations

import csv
import io
import json

import pytest

from carboy.store.db import open_database
from carboy.tui.launch import main


@pytest.fixture
def db(tmp_path):
    """A new, empty database (only ``carboy init`` and the library create one)."""
    path = tmp_path / "cli.db"
    open_database(path).close()
    return str(path)


@pytest.fixture
def demo_db(copy_demo):
    return str(copy_demo())


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def run_json(capsys, *argv):
    code, out, err = run(capsys, *argv, "--json")
    assert code == 0, err
    return json.loads(out)


def test_waste_round_trip(capsys, db):
    c = run_json(capsys, "waste", "new", "MA-01", "--location", "Bay 1", "--capacity", "10 L",
                 "--stream", "acid", "--db", db)
    assert c["label"] == "MA-01" and c["capacity_l"] == 10.0 and c["stream"] == "acid"
    run_json(capsys, "waste", "add", "MA-01", "HCl=1M", "--volume", "2 L", "--note", "rinse",
             "--db", db)
    run_json(capsys, "waste", "add", "MA-01", "H2SO4=0.5M", "--volume", "500 mL", "--db", db)
    info = run_json(capsys, "waste", "show", "MA-01", "--db", db)
    assert {"label", "status", "volume_l", "capacity_l", "composition", "additions"} <= set(info)
    assert info["status"] == "collecting" and info["volume_l"] == pytest.approx(2.5)
    assert info["composition"] == {"Cl-": pytest.approx(2.0), "sulfate": pytest.approx(0.25)}
    assert [a["note"] for a in info["additions"]] == ["rinse", ""]
    listed = run_json(capsys, "waste", "list", "--db", db)
    assert [(c["label"], c["stream"]) for c in listed] == [("MA-01", "acid")]
    assert info["stream"] == "acid" and info["warnings"] == []


def test_top_level_db_option_works_too(capsys, db):
    code, out, _ = run(capsys, "--db", db, "waste", "new", "X1", "--stream", "alkaline")
    assert code == 0 and "X1" in out
    assert run_json(capsys, "--db", db, "waste", "list")[0]["label"] == "X1"


@pytest.mark.parametrize("argv, needle, status", [
    (["waste", "add", "MA-01", "Unobtainium=1M", "--volume", "1 L"], "unknown compound", 2),
    (["waste", "add", "MA-01", "HCl=1M", "--volume", "-1 L"], "'-1 L'", 2),
    (["waste", "add", "MA-01", "HCl=1M", "--volume", "2 kg"], "'2 kg'", 2),
    (["waste", "add", "NOPE", "HCl=1M", "--volume", "1 L"], "no waste container 'NOPE'", 2),
    (["waste", "add", "MA-01", "HCl", "--volume", "1 L"], "NAME=CONC", 2),
    (["waste", "new", "Z", "--capacity", "20 kg", "--stream", "acid"], "'20 kg'", 2),
    # refused by a rule of the store, not unreadable: status 1
    (["waste", "add", "MA-01", "HCl=1M", "--volume", "50 L"], "9 L free", 1),
    (["waste", "new", "MA-01", "--stream", "acid"], "exists already", 1),
])
def test_bad_waste_input_exits_2_and_a_rule_refusal_1(capsys, db, argv, needle, status):
    run_json(capsys, "waste", "new", "MA-01", "--capacity", "10 L", "--stream", "acid",
             "--db", db)
    code, out, err = run(capsys, *argv, "--db", db)
    assert code == status and out == ""
    assert needle in err and "Traceback" not in err
    assert len(err.strip().splitlines()) == 1
    info = run_json(capsys, "waste", "show", "MA-01", "--db", db)
    assert info["additions"] == []


def test_adding_to_a_disposed_container(capsys, demo_db):
    code, _, err = run(capsys, "waste", "add", "HF-04", "HCl=1M", "--volume", "1 L",
                       "--db", demo_db)
    assert code == 1 and "licensed disposal" in err


def test_stock_add_list_show(capsys, db):
    b = run_json(capsys, "stock", "add", "NaOH", "0.1M", "--size", "1 L", "--lot", "FW-77",
                 "--location", "Titration bench", "--every", "14", "--db", db)
    assert b["compound_key"] == "NaOH" and b["strength_status"] == "overdue"
    page = run_json(capsys, "stock", "list", "--search", "titr", "--db", db)
    assert page["total"] == 1 and page["bottles"][0]["lot"] == "FW-77"
    shown = run_json(capsys, "stock", "show", str(b["id"]), "--db", db)
    assert shown["journal"][0]["kind"] == "receipt"
    code, out, _ = run(capsys, "stock", "list", "--db", db)
    assert code == 0 and "FW-77" in out and "1 of 1 bottle" in out


@pytest.mark.parametrize("argv, needle", [
    (["stock", "add", "unobtainium", "1 M", "--size", "1 L"], "unknown compound"),
    (["stock", "add", "HCl", "1 M", "--size", "-1 L"], "'-1 L'"),
    (["stock", "add", "HCl", "1 kg", "--size", "1 L"], "'1 kg'"),
    (["stock", "add", "HCl", "1 M", "--size", "1 L", "--expires", "soon"], "'soon'"),
    (["stock", "show", "999"], "no stock bottle 999"),
    (["stock", "show", "abc"], "'abc'"),
])
def test_bad_stock_input_exit_2(capsys, db, argv, needle):
    code, out, err = run(capsys, *argv, "--db", db)
    assert code == 2 and needle in err and "Traceback" not in err
    assert run_json(capsys, "stock", "list", "--db", db)["total"] == 0


def test_stock_export_import_round_trip(capsys, demo_db, tmp_path):
    code, exported, _ = run(capsys, "stock", "export", "--db", demo_db)
    assert code == 0
    rows = list(csv.DictReader(io.StringIO(exported)))
    assert len(rows) == 40
    path = tmp_path / "stock.csv"
    path.write_text(exported, encoding="utf-8")
    other = str(tmp_path / "other.db")
    assert run(capsys, "init", other)[0] == 0
    result = run_json(capsys, "stock", "import", str(path), "--db", other)
    assert result["imported"] == 40
    _, again, _ = run(capsys, "stock", "export", "--db", other)
    assert again == exported


def test_stock_import_bad_rows(capsys, db, tmp_path):
    path = tmp_path / "bad.csv"
    path.write_text("compound,label_strength,container_size\nHCl,1 M,1 L\nHCl,1 M,lots\n",
                    encoding="utf-8")
    code, _, err = run(capsys, "stock", "import", str(path), "--db", db)
    assert code == 2 and "row 3" in err and "'lots'" in err and "nothing imported" in err
    assert run_json(capsys, "stock", "list", "--db", db)["total"] == 0


def test_stock_import_help_documents_layout(capsys):
    assert main(["stock", "import", "--help"]) == 0
    out = capsys.readouterr().out
    for column in ("compound", "label_strength", "container_size", "amount_left", "expires_on",
                   "restandardize_days", "all or nothing"):
        assert column in out


def test_journal_list_show_export(capsys, demo_db):
    entries = run_json(capsys, "journal", "list", "--kind", "standardization", "--db", demo_db)
    assert entries and {e["kind"] for e in entries} == {"standardization"}
    since = run_json(capsys, "journal", "list", "--since", "2025-03-10", "--db", demo_db)
    assert all(e["recorded_at"] >= "2025-03-10" for e in since)
    corr = run_json(capsys, "journal", "list", "--kind", "correction", "--db", demo_db)[0]
    target = run_json(capsys, "journal", "show", str(corr["corrects_id"]), "--db", demo_db)
    assert target["corrected_by"] == [corr["id"]]
    code, out, _ = run(capsys, "journal", "export", "--format", "csv", "--db", demo_db)
    rows = list(csv.DictReader(io.StringIO(out)))
    assert code == 0 and len(rows) == len(run_json(
        capsys, "journal", "export", "--format", "json", "--db", demo_db))
    assert json.loads(rows[0]["snapshot"])
    code, _, err = run(capsys, "journal", "show", "424242", "--db", demo_db)
    assert code == 2 and "no journal entry" in err
    code, _, err = run(capsys, "journal", "list", "--since", "yesterday", "--db", demo_db)
    assert code == 2 and "'yesterday'" in err


def test_damaged_database_is_a_clear_error(capsys, tmp_path):
    path = tmp_path / "junk.db"
    path.write_text("not a database at all" * 10)
    code, _, err = run(capsys, "waste", "list", "--db", str(path))
    assert code == 2 and "not an SQLite database" in err


def test_env_var_database(capsys, db, monkeypatch):
    monkeypatch.setenv("CARBOY_DB", db)
    run_json(capsys, "waste", "new", "ENV-1", "--stream", "mixed")
    s = open_database(db)
    assert s.scalar("SELECT label FROM waste_containers") == "ENV-1"
    s.close()


def test_demo_flag(capsys):
    listed = run_json(capsys, "--demo", "waste", "list")
    assert len(listed) == 4


def test_stock_import_names_one_id_and_file_level_problems_without_a_row(capsys, db, tmp_path):
    one = tmp_path / "one.csv"
    one.write_text("compound,label_strength,container_size\nHCl,1 M,1 L\n", encoding="utf-8")
    code, out, _ = run(capsys, "stock", "import", str(one), "--db", db)
    assert code == 0 and out.strip() == "imported 1 bottle (id 1)"
    code, _, err = run(capsys, "stock", "import", str(tmp_path / "absent.csv"), "--db", db)
    assert code == 2 and "nothing imported: file not found" in err and "row 0" not in err
    binary = tmp_path / "binary.csv"
    binary.write_bytes(b"\xff\xfe\x00garbage")
    code, _, err = run(capsys, "stock", "import", str(binary), "--db", db)
    assert code == 2 and "nothing imported: not UTF-8 text" in err and "row 0" not in err


def test_an_empty_listing_says_so_with_what_was_asked(capsys, demo_db):
    code, out, _ = run(capsys, "journal", "list", "--kind", "disposal", "--since", "2099-01-01",
                       "--db", demo_db)
    assert code == 0 and out.strip() == "no journal entries (kind disposal, since 2099-01-01)"
    code, out, _ = run(capsys, "waste", "list", "--status", "disposed", "--db", demo_db)
    assert code == 0 and out.strip() == "no waste containers (status disposed)"
    assert run_json(capsys, "waste", "list", "--status", "disposed", "--db", demo_db) == []
    code, _, err = run(capsys, "journal", "list", "--since", "2026-02-30", "--db", demo_db)
    assert code == 2 and "'2026-02-30': is not a real date" in err


@pytest.mark.parametrize(("argv", "said"), [
    (["journal", "correct", "0", "--reason", "x", "--ph", "7"], "'0': expected 1 or more"),
    (["stock", "list", "--after=-1"], "'-1': expected 0 or more"),
    (["journal", "correct", "addition:9", "--reason", "x", "--component", "NaOH=1M"],
     "volume '': is required for a solution"),
    (["prep", "--from", "HCl=12.1M", "--target", "1M", "--volume", "100mL", "--record",
      "--expires", "2020-01-01"], "--expires: expiry date '2020-01-01': is before"),
])
def test_messages_name_the_value_and_the_option_as_typed(capsys, demo_db, argv, said):
    code, _, err = run(capsys, *argv, "--db", demo_db)
    assert code == 2 and said in err, err
    assert "None" not in err and "4611686018427387904" not in err


def test_a_plan_the_disposal_rules_send_to_licensed_disposal_says_so_first(capsys, demo_db):
    """OA-02 (formic acid: organic and acutely toxic) is not treated here under the
    storeroom's rules: the verdict is the plan's first line, not its last section."""
    code, out, _ = run(capsys, "--db", demo_db, "neutralize", "--waste", "OA-02",
                       "--reagent", "NaOH=1M")
    assert code == 0
    assert out.startswith("NOT TO BE TREATED HERE under the storeroom's disposal rules")
    code, out, _ = run(capsys, "--db", demo_db, "neutralize", "--waste", "MA-01",
                       "--reagent", "NaOH=1M")
    assert code == 0 and out.startswith("cautions") and "NOT TO BE TREATED" not in out


def test_a_move_toward_disposal_ends_with_the_standing_note(capsys, demo_db):
    """Every command that leads toward disposal says to follow local rules and the
    safety office, as the app's screens do."""
    code, out, err = run(capsys, "--db", demo_db, "waste", "licensed", "AL-03", "--note", "x")
    assert code == 0, err
    assert out.splitlines()[-1].startswith("⚠ Advice only: carboy never calls anything safe")
    assert "safety office" in out


@pytest.mark.parametrize("argv", [
    ["waste", "new", "X9", "--stream", "acid", "--location", "Shelf \u202e1"],
    ["waste", "new", "X9", "--stream", "acid", "--notes", "a\u200bb"],
    ["waste", "add", "OA-02", "HCl=1M", "--volume", "10mL", "--note", "a\u202eb"],
    ["journal", "note", "--waste", "OA-02", "x\u200by"],
    ["waste", "licensed", "AL-03", "--note", "q\u202e"],
])
def test_free_text_refuses_what_a_label_refuses(capsys, demo_db, argv):
    """Right-to-left overrides and zero-width characters are refused in notes and
    locations as they are in labels; nothing is written."""
    before = run_json(capsys, "journal", "list", "--limit", "1", "--db", demo_db)[0]["id"]
    code, _, err = run(capsys, "--db", demo_db, *argv)
    assert code == 2 and "invisible or control character" in err, err
    assert run_json(capsys, "journal", "list", "--limit", "1", "--db", demo_db)[0]["id"] == before


def test_a_new_containers_notes_have_the_free_text_limit(capsys, demo_db):
    code, _, err = run(capsys, "--db", demo_db, "waste", "new", "X9", "--stream", "acid",
                       "--notes", "x" * 2001)
    assert code == 2 and "too long (2000 characters at most)" in err
