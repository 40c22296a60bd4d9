"""``carboy waste`` and the compatibility rules: a refused addition is one line on stderr,
exit status 1, and nothing in the database; ``--accept`` passes only a lesser mismatch;
``--stream`` at creation and ``carboy waste stream`` to change it."""

from __future__ import annotations

import json

import pytest
from waste_cases import CASES, IDS, counts, prepare

from carboy.store import journal, waste
from carboy.store.db import init_database, open_database
from carboy.tui.launch import main


@pytest.fixture
def db(tmp_path):
    path = tmp_path / "cli.db"
    init_database(path)
    return str(path)


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def _prepared(db, case):
    with open_database(db) as s:
        return prepare(s, case)


def _state(db, label):
    with open_database(db) as s:
        return counts(s), waste.contents(s, label)


@pytest.mark.parametrize("case", CASES, ids=IDS)
def test_each_rule_refuses_with_one_line_and_exit_1(capsys, db, case):
    label = _prepared(db, case)
    before = _state(db, label)
    argv = ["waste", "add", label, case.component, "--db", db]
    argv += ["--volume", case.volume] if case.volume else []
    code, out, err = run(capsys, *argv)
    assert code == 1 and out == ""
    assert len(err.strip().splitlines()) == 1 and "Traceback" not in err
    if case.severity == "refuse":
        assert err.startswith("carboy: refused: ") and "--accept" not in err
        code, out, err = run(capsys, *argv, "--accept", "we know what we do")
        assert code == 1 and err.startswith("carboy: refused: ")
    else:
        assert err.startswith("carboy: needs a reason to go ahead: ")
        assert '--accept "REASON"' in err
    assert _state(db, label) == before


def test_accept_logs_a_lesser_mismatch_with_its_reason(capsys, db):
    case = next(c for c in CASES if c.rule == "base-into-acid-stream")
    label = _prepared(db, case)
    code, out, err = run(capsys, "waste", "add", label, case.component, "--volume",
                         case.volume, "--accept", "staged neutralization", "--db", db, "--json")
    assert code == 0, err
    logged = json.loads(out)
    with open_database(db) as s:
        (entry,) = journal.entries(s, limit=1)
    assert entry.snapshot["addition_id"] == logged["addition_id"]
    assert entry.snapshot["reason"] == "staged neutralization"


def test_json_refusal_lists_the_findings(capsys, db):
    case = CASES[0]
    label = _prepared(db, case)
    code, out, err = run(capsys, "waste", "add", label, case.component, "--volume",
                         case.volume, "--db", db, "--json")
    assert code == 1 and len(err.strip().splitlines()) == 1
    answer = json.loads(out)
    assert answer["logged"] is False and answer["overridable"] is False
    assert [f["rule"] for f in answer["findings"]] == [case.rule]
    assert answer["findings"][0]["gas"] == "HCN"


def test_stream_at_creation_in_list_and_show(capsys, db):
    code, out, _ = run(capsys, "waste", "new", "HF-1", "--stream", "hf", "--material", "plastic",
                       "--db", db)
    assert code == 0 and "HF/fluoride waste" in out
    code, out, _ = run(capsys, "waste", "list", "--db", db)
    assert code == 0 and "HF/fluoride" in out.split() and "hf" not in out.split()
    code, out, _ = run(capsys, "waste", "show", "HF-1", "--db", db)
    assert "stream: HF/fluoride waste, plastic" in out


@pytest.mark.parametrize("argv, needle", [
    (["waste", "new", "Z"], "--stream"),
    (["waste", "new", "Z", "--stream", "bucket"], "'bucket'"),
    (["waste", "stream", "Z", "acid"], "--reason"),
])
def test_a_missing_or_unknown_stream_is_a_usage_error(capsys, db, argv, needle):
    code, out, err = run(capsys, *argv, "--db", db)
    assert code == 2 and out == ""
    assert needle in err


def test_changing_the_stream_is_journaled_and_shown(capsys, db):
    run(capsys, "waste", "new", "C-1", "--stream", "acid", "--db", db)
    run(capsys, "waste", "add", "C-1", "HCl=0.1M", "--volume", "1 L", "--db", db)
    code, out, err = run(capsys, "waste", "stream", "C-1", "mixed", "--reason",
                         "collects mixed rinses", "--db", db)
    assert code == 0 and "mixed waste for licensed disposal" in out, err
    code, out, _ = run(capsys, "waste", "show", "C-1", "--db", db, "--json")
    info = json.loads(out)
    assert info["stream"] == "mixed" and "collects mixed rinses" in info["stream_note"]
    code, out, err = run(capsys, "waste", "stream", "C-1", "cyanide_sulfide", "--reason", "x",
                         "--db", db)
    assert code == 1 and err.startswith("carboy: refused: ") and out == ""
    with open_database(db) as s:
        assert waste.container(s, "C-1").stream == "mixed"


def test_show_prints_the_warning_of_a_container_that_disagrees(capsys, db):
    run(capsys, "waste", "new", "C-2", "--stream", "acid", "--db", db)
    run(capsys, "waste", "add", "C-2", "HCl=0.1M", "--volume", "1 L", "--db", db)
    run(capsys, "waste", "add", "C-2", "NaOH=0.1M", "--volume", "0.1 L", "--accept", "rinse",
        "--db", db)
    code, out, _ = run(capsys, "waste", "show", "C-2", "--db", db)
    assert code == 0
    assert "  ! already in the container: NaOH; a base in an acid-waste container" in out
    assert out.count("(logged with a reason: rinse)") == 1


def test_neutralize_refuses_to_acidify_a_cyanide_waste(capsys, db):
    with open_database(db) as s:
        waste.new_container(s, "CN-1", stream="cyanide_sulfide")
        waste.add(s, "CN-1", "NaCN=0.05M", "1 L")
        waste.add(s, "CN-1", "NaOH=0.1M", "1 L")
    for argv in (["NaCN=0.05M", "NaOH=0.01M", "--volume", "1 L"], ["--waste", "CN-1"]):
        code, out, err = run(capsys, "--db", db, "neutralize", *argv, "--reagent", "HCl=1M")
        assert code == 1 and out == ""
        assert len(err.strip().splitlines()) == 1
        assert err.startswith("carboy: refused: a neutralization plan: this waste holds cyanide")
        assert "no acidification dose" in err
