"""``carboy stock check`` and ``carboy rules`` from the command line."""

from __future__ import annotations

import json

import pytest

from carboy.store import journal, stock
from carboy.store.db import open_database
from carboy.tui.launch import main


@pytest.fixture
def db(tmp_path):
    return str(tmp_path / "cli.db")


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def _bottles(db):
    s = open_database(db)
    try:
        never = stock.add(s, {"compound": "NaOH", "label_strength": "0.1 M",
                              "container_size": "1 L"})
        fine = stock.add(s, {"compound": "HCl", "label_strength": "37 %",
                             "container_size": "2.5 L", "expires_on": "2099-01-01"})
    finally:
        s.close()
    return never, fine


def test_check_lists_the_never_standardized_naoh(capsys, db):
    never, fine = _bottles(db)
    code, out, err = run(capsys, "stock", "check", "--db", db, "--json")
    assert code == 0, err
    got = json.loads(out)
    assert got["flagged"] == 1
    (row,) = got["bottles"]
    assert row["bottle_id"] == never and row["flags"] == ["never-standardized"]
    assert row["recheck_days"] == 14
    code, out, _ = run(capsys, "stock", "check", "--all", "--db", db, "--json")
    assert {r["bottle_id"] for r in json.loads(out)["bottles"]} == {never, fine}
    code, out, _ = run(capsys, "stock", "check", "--db", db)
    assert "never standardized" in out and "1 bottle needs attention" in out


def test_rules_set_show_and_refuse(capsys, db):
    _bottles(db)
    code, out, err = run(capsys, "rules", "--recheck", "NaOH=never", "--max-rsd", "0.3",
                         "--db", db, "--json")
    assert code == 0, err
    shown = json.loads(out)
    assert "NaOH" not in {r["compound"] for r in shown["recheck_days"]}
    assert shown["max_rsd_percent"] == 0.3 and shown["acceptance_origin"] == "storeroom"
    code, out, _ = run(capsys, "stock", "check", "--db", db, "--json")
    assert json.loads(out)["flagged"] == 0
    s = open_database(db)
    entries_before = journal.count(s)
    s.close()
    for bad, named in ((["--recheck", "NaOH"], "NaOH"), (["--recheck", "NaOH=soon"], "soon"),
                       (["--max-rsd", "9"], "9"), (["--recheck", "unobtainium=7"],
                                                    "unobtainium")):
        code, out, err = run(capsys, "rules", *bad, "--db", db)
        assert code == 2 and err.startswith("carboy: "), (bad, err)
        assert repr(named) in err
    s = open_database(db)
    assert journal.count(s) == entries_before
    s.close()
    code, out, _ = run(capsys, "rules", "--db", db)
    assert "0.3 %" in out and "Ph. Eur." in out


def test_every_help_text_reads_without_escapes():
    import argparse

    from carboy.tui.cli.main import build_parser

    def walk(parser):
        yield parser
        for action in parser._actions:
            if isinstance(action, argparse._SubParsersAction):
                for sub in action.choices.values():
                    yield from walk(sub)

    parsers = list(walk(build_parser()))
    assert len(parsers) > 20
    for parser in parsers:
        text = parser.format_help()
        assert "%%" not in text and "%(" not in text, parser.prog
