"""Records people can trust, from the command line: no silent new database, no traceback,
hostile files and names, identity, output hygiene, verify and the chain head."""

from __future__ import annotations

import csv
import io
import json
import os
import sqlite3
import stat

import pytest

from carboy.store import db as dbmod
from carboy.store import demo, journal
from carboy.store.db import open_database
from carboy.tui import edge
from carboy.tui.launch import main

ESC = "\x1b"


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture
def demo_db(copy_demo):
    return str(copy_demo())


@pytest.fixture(autouse=True)
def _state_dir(tmp_path, monkeypatch):
    """Keep the error log of these tests out of the real user state directory."""
    monkeypatch.setenv("XDG_STATE_HOME", str(tmp_path / "state"))


# -- no silent new database ---------------------------------------------------------------------

DB_COMMANDS = [
    ("stock", "list"), ("stock", "show", "1"), ("stock", "check"), ("stock", "export"),
    ("waste", "list"), ("waste", "show", "MA-01"), ("waste", "new", "X1", "--stream", "acid"),
    ("journal", "list"), ("journal", "verify"), ("journal", "export", "--format", "csv"),
    ("rules",), ("neutralize", "--waste", "MA-01", "--reagent", "NaOH=1M"),
    ("standardize", "--bottle", "1", "--standard", "KHP", "--mass", "0.5", "--volume", "25"),
    ("prep", "--from", "HCl=1M", "--target", "0.1M", "--volume", "1L", "--record"),
]


@pytest.mark.parametrize("argv", DB_COMMANDS, ids=lambda a: " ".join(a[:2]))
def test_a_missing_database_is_an_error_and_nothing_is_created(capsys, tmp_path, argv):
    path = tmp_path / "mistyped.db"
    code, _, err = run(capsys, "--db", str(path), *argv)
    assert code == 2 and "no carboy database" in err and "carboy init" in err
    assert list(tmp_path.glob("mistyped.db*")) == []


def test_init_creates_a_group_only_database_and_refuses_twice(capsys, tmp_path):
    path = tmp_path / "new" / "store.db"
    code, out, _ = run(capsys, "init", str(path))
    assert code == 0 and "created" in out
    assert stat.S_IMODE(path.stat().st_mode) == 0o660
    assert run(capsys, "waste", "new", "W1", "--stream", "acid", "--db", str(path))[0] == 0
    store = open_database(path, create=False)  # the -wal and -shm exist while it is open
    for suffix in ("-wal", "-shm", ".lock"):
        assert stat.S_IMODE(os.stat(f"{path}{suffix}").st_mode) == 0o660
    store.close()
    code, _, err = run(capsys, "init", str(path))
    assert code == 1 and "exists already" in err


def test_the_demo_still_works(capsys):
    code, out, _ = run(capsys, "--demo", "waste", "list")
    assert code == 0 and "MA-01" in out


@pytest.mark.parametrize("bad, needle", [
    ("", "empty"),
    ("/dev/null", "not a regular file"),
    ("x" * 300 + ".db", "too long"),
    (".", "directory"),
])
def test_paths_no_database_can_have(capsys, bad, needle):
    code, _, err = run(capsys, "journal", "list", "--db", bad)
    assert code == 2 and needle in err and len(err) < 500


@pytest.mark.parametrize("content, needle", [
    (b"", "empty"),
    (b"shopping list\n" * 50, "not an SQLite database"),
])
def test_empty_or_foreign_files_are_refused_untouched(capsys, tmp_path, content, needle):
    path = tmp_path / "odd.db"
    path.write_bytes(content)
    code, _, err = run(capsys, "stock", "list", "--db", str(path))
    assert code == 2 and needle in err
    assert path.read_bytes() == content


def test_a_truncated_database_says_how_to_restore(capsys, tmp_path, demo_db):
    data = open(demo_db, "rb").read()
    path = tmp_path / "cut.db"
    path.write_bytes(data[: len(data) // 3])
    code, _, err = run(capsys, "waste", "list", "--db", str(path))
    assert code == 2 and "backup" in err and "Traceback" not in err


def test_a_directory_that_cannot_be_written(capsys):
    code, _, err = run(capsys, "init", "/proc/carboy-test.db")
    assert code == 2 and "/proc/carboy-test.db" in err and "Traceback" not in err


def _read_only(monkeypatch):
    """Open every database read-only, as a user outside its group would (tests run as
    root here, which file modes do not stop)."""
    def connect(path):
        conn = sqlite3.connect(f"file:{path}?mode=ro", uri=True, isolation_level=None)
        conn.execute("PRAGMA recursive_triggers = ON")
        return conn

    monkeypatch.setattr(dbmod, "_connect", connect)


def test_read_only_database_reads_and_refuses_writes_clearly(capsys, demo_db, monkeypatch):
    _read_only(monkeypatch)
    assert run(capsys, "waste", "list", "--db", demo_db)[0] == 0
    code, _, err = run(capsys, "waste", "new", "RO-1", "--stream", "acid", "--db", demo_db)
    assert code == 2 and "read-only" in err and "group" in err


def test_full_disk_is_one_line(capsys, demo_db, monkeypatch):
    real = dbmod._connect

    def connect(path):
        conn = real(path)
        pages = conn.execute("PRAGMA page_count").fetchone()[0]
        conn.execute(f"PRAGMA max_page_count = {pages}")
        return conn

    monkeypatch.setattr(dbmod, "_connect", connect)
    code, _, err = run(capsys, "journal", "list", "--db", demo_db)
    assert code == 0
    for n in range(120):  # fill the free pages, then the next write finds the disk full
        code, _, err = run(capsys, "waste", "new", f"FULL-{n}", "--stream", "acid", "--notes", "x" * 2000,
                           "--db", demo_db)
        if code:
            break
    assert code == 2 and "disk is full" in err and err.count("\n") == 1


def test_a_file_error_names_the_file_and_what_to_do(capsys, tmp_path, monkeypatch):
    import errno

    from carboy.tui.paper import render

    def no_space(*a, **k):
        raise OSError(errno.ENOSPC, "No space left on device", str(tmp_path / "out.pdf"))

    monkeypatch.setattr(render, "write_pdf", no_space)
    path = demo.create_demo_database(tmp_path / "d.db")
    code, _, err = run(capsys, "stock", "label", "1", "--pdf", str(tmp_path / "out.pdf"),
                       "--db", str(path))
    assert code == 2 and "out.pdf" in err and "disk is full" in err


def test_an_unexpected_error_is_logged_not_shown(capsys, tmp_path, monkeypatch):
    from carboy.tui.cli import ph

    def boom(args):
        raise RuntimeError("a bug")

    monkeypatch.setattr(ph, "build_result", boom)
    code, _, err = run(capsys, "ph", "HCl=0.1M")
    assert code == 2 and "Traceback" not in err and "please report it" in err
    log = tmp_path / "state" / "carboy" / edge.LOG_NAME
    assert str(log) in err
    assert "RuntimeError: a bug" in log.read_text() and "Traceback" in log.read_text()


# -- values that must not get through --------------------------------------------------------------

@pytest.mark.parametrize("argv, needle", [
    (("journal", "show", "99999999999999999999"), "larger than any id"),
    (("stock", "show", "99999999999999999999"), "larger than any id"),
    (("stock", "list", "--after", "99999999999999999999"), "larger than any id"),
    (("journal", "list", "--limit", "99999999999999999999"), "larger than any id"),
    (("stock", "show", "١٢"), "digits 0-9"),
    (("waste", "new", "X2", "--stream", "acid", "--capacity", "1 L**0"), "unknown unit"),
    (("waste", "new", "X3", "--stream", "acid", "--capacity", "1 pi*L"), "unknown unit"),
    (("waste", "new", "MA\u200b-01", "--stream", "acid"), "U+200B"),
    (("waste", "new", "MA\u202e-01", "--stream", "acid"), "RIGHT-TO-LEFT OVERRIDE"),
    (("stock", "add", "HCl", "1 M", "--size", "1 L", "--lot", "L\u2066OT"), "invisible"),
])
def test_bad_values_are_refused_with_a_short_message(capsys, demo_db, argv, needle):
    code, _, err = run(capsys, *argv, "--db", demo_db)
    assert code == 2 and needle in err and "Traceback" not in err


def test_look_alike_labels_are_one_label(capsys, demo_db):
    assert run(capsys, "waste", "new", "NB\u00a0BAY", "--stream", "acid", "--db", demo_db)[0] == 0
    code, _, err = run(capsys, "waste", "new", "NB BAY", "--stream", "acid", "--db", demo_db)
    assert code in (1, 2) and "exists already" in err


def test_a_huge_argument_is_quoted_short(capsys, demo_db):
    code, _, err = run(capsys, "waste", "show", "Q" * 100_000, "--db", demo_db)
    assert code == 2 and len(err) < 400 and "100000 characters" in err


@pytest.mark.parametrize("text", ["HCl=1 mol/L*10**10**10", "HCl=1 mol/L/0", "HCl=1 ((M)"])
def test_unit_arithmetic_is_never_evaluated(capsys, text):
    code, _, err = run(capsys, "ph", text)
    assert code == 2 and "unknown unit" in err


# -- identity ------------------------------------------------------------------------------------

def test_the_recorded_user_comes_from_the_password_database(capsys, demo_db, monkeypatch):
    import pwd

    for var in ("LOGNAME", "USER", "LNAME", "USERNAME"):
        monkeypatch.setenv(var, "alice")
    monkeypatch.setenv("SSH_CLIENT", "203.0.113.9 5555 22")
    code, out, _ = run(capsys, "prep", "--from", "HCl=1M", "--target", "0.1M", "--volume",
                       "100 mL", "--record", "--by", "alice", "--json", "--db", demo_db)
    assert code == 0
    entry_id = json.loads(out)["recorded"]["entry_id"]
    store = open_database(demo_db, create=False)
    entry = journal.get(store, entry_id)
    store.close()
    assert entry.recorded_by == pwd.getpwuid(os.getuid()).pw_name != "alice"
    assert entry.origin == "203.0.113.9 (as reported by SSH_CLIENT)"
    assert "alice" in json.dumps(json.loads(out)["label"])  # --by is printed on the label


# -- output hygiene ------------------------------------------------------------------------------

def test_stored_escape_sequences_are_shown_escaped(capsys, demo_db):
    osc52 = f"{ESC}]52;c;ZWNobyBwd25lZA=={ESC}\\"
    code, out, _ = run(capsys, "stock", "add", "HCl", "1 M", "--size", "1 L", "--notes",
                       f"see {osc52} and \x9b31m", "--json", "--db", demo_db)
    assert code == 0 and ESC not in out and "\x9b" not in out
    bottle = json.loads(out)  # the JSON way: \u001b, and it reads back as it was stored
    assert bottle["notes"] == f"see {osc52} and \x9b31m"
    code, out, _ = run(capsys, "stock", "show", str(bottle["id"]), "--db", demo_db)
    assert code == 0 and ESC not in out and "\\x1b]52;c;" in out and "\\x9b31m" in out
    code, out, _ = run(capsys, "stock", "export", "--db", demo_db)
    assert ESC not in out


def test_csv_export_neutralizes_formulas_and_import_refuses_them(capsys, demo_db, tmp_path):
    assert run(capsys, "stock", "add", "HCl", "1 M", "--size", "1 L", "--notes", "=1+1",
               "--lot", "@SUM(A1)", "--db", demo_db)[0] == 0
    code, out, _ = run(capsys, "stock", "export", "--db", demo_db)
    rows = list(csv.DictReader(io.StringIO(out)))
    assert rows[-1]["notes"] == "'=1+1" and rows[-1]["lot"] == "'@SUM(A1)"
    assert all(not v.startswith(("=", "+", "@", "\t", "\r"))
               for r in rows for v in r.values())
    exported = tmp_path / "back.csv"
    exported.write_text(out, encoding="utf-8")
    fresh = tmp_path / "fresh.db"
    assert run(capsys, "init", str(fresh))[0] == 0
    assert run(capsys, "stock", "import", str(exported), "--db", str(fresh))[0] == 0
    assert run(capsys, "stock", "export", "--db", str(fresh))[1] == out  # round trip
    hostile = tmp_path / "hostile.csv"
    hostile.write_text("compound,label_strength,container_size,notes\n"
                       "HCl,1 M,1 L,\t=HYPERLINK(\"http://x\")\n", encoding="utf-8")
    code, _, err = run(capsys, "stock", "import", str(hostile), "--db", str(fresh))
    assert code == 2 and "formula" in err and "row 2" in err


def test_journal_csv_export_cells_are_text(capsys, demo_db):
    store = open_database(demo_db, create=False)
    journal.append(store, "note", summary="=cmd|' /C calc'!A0", who="t")
    store.close()
    code, out, err = run(capsys, "journal", "export", "--format", "csv", "--db", demo_db)
    rows = list(csv.DictReader(io.StringIO(out)))
    assert rows[-1]["summary"] == "'=cmd|' /C calc'!A0"
    assert rows[-1]["link_sha256"] and "chain head" in err


# -- verify and the chain head ---------------------------------------------------------------------

def _tamper(path, sql):
    conn = sqlite3.connect(path, isolation_level=None)
    conn.execute("DROP TRIGGER journal_entries_no_update")
    conn.execute(sql)
    conn.close()


def test_verify_passes_then_names_the_changed_entry(capsys, demo_db):
    code, out, _ = run(capsys, "journal", "verify", "--db", demo_db)
    assert code == 0 and out.rstrip().endswith("the guards are carboy's own")
    _tamper(demo_db, "UPDATE journal_entries SET recorded_by = 'nobody' WHERE id = 7")
    code, out, err = run(capsys, "journal", "verify", "--db", demo_db)
    assert code == 1 and "journal_entries_no_update is missing" in out
    assert "journal entry 7" in out and "warning" in err
    found = json.loads(run(capsys, "journal", "verify", "--json", "--db", demo_db)[1])
    assert found["ok"] is False and any(p["record_id"] == 7 for p in found["problems"])
    code, _, err = run(capsys, "waste", "new", "AFTER", "--stream", "acid", "--db", demo_db)
    assert code == 1 and "lost its protection" in err
    code, out, _ = run(capsys, "journal", "verify", "--restore-guards", "--db", demo_db)
    assert code == 1 and "restored guard triggers: journal_entries_no_update" in out
    assert "journal entry 7" in out  # the change stays visible after the guard is back
    assert run(capsys, "waste", "new", "AFTER", "--stream", "acid", "--db", demo_db)[0] == 0


def test_export_head_checks_the_file_later(capsys, demo_db):
    _, _, err = run(capsys, "journal", "export", "--format", "json", "--db", demo_db)
    kept = err.split("--head ")[1].split()[0]
    assert run(capsys, "journal", "verify", "--head", kept, "--db", demo_db)[0] == 0
    code, out, _ = run(capsys, "journal", "verify", "--head", "0" * 64, "--db", demo_db)
    assert code == 1 and "kept chain head" in out
    code, _, err = run(capsys, "journal", "verify", "--head", "xyz", "--db", demo_db)
    assert code == 2 and "64 hexadecimal" in err
