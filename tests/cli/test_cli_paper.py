"""``carboy stock label``, ``carboy stock check --pdf`` and ``carboy waste record``."""

from __future__ import annotations

import hashlib
import io
import json

import pytest
from pypdf import PdfReader

from carboy.store import demo, journal
from carboy.store.db import open_database
from carboy.tui.launch import main

LABEL_PT = (198.43, 104.88)   # 70 x 37 mm
A4_PT = (595.28, 841.89)


@pytest.fixture
def demo_db(tmp_path):
    return demo.create_demo_database(tmp_path / "demo.db")


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def pages(path):
    reader = PdfReader(io.BytesIO(path.read_bytes()))
    return [(round(float(p.mediabox.width), 2), round(float(p.mediabox.height), 2),
             p.extract_text()) for p in reader.pages]


def _state(db):
    """Every row of every table carboy writes, hashed (the file's bytes may change when
    carboy refreshes the planner's statistics as a connection closes)."""
    store = open_database(db)
    try:
        count = journal.count(store)
        digest = hashlib.sha256()
        for table in ("stock_bottles", "waste_containers", "waste_additions", "journal_entries",
                      "record_chain", "user_compounds", "storeroom_rules"):
            for row in store.rows(f"SELECT * FROM {table} ORDER BY rowid"):
                digest.update(repr(sorted(row.items())).encode())
    finally:
        store.conn.close()
    return digest.hexdigest(), count


def test_stock_label_writes_one_page_per_bottle(capsys, demo_db, tmp_path):
    pdf = tmp_path / "labels.pdf"
    before = _state(demo_db)
    code, out, err = run(capsys, "stock", "label", "1", "12", "--pdf", pdf, "--db", demo_db,
                         "--storeroom", "Fenwold Annex storeroom")
    assert code == 0, err
    assert f"wrote 2 labels (70x37mm) to {pdf}" in out
    got = pages(pdf)
    assert [(w, h) for w, h, _ in got] == [LABEL_PT, LABEL_PT]
    assert "bottle 1" in got[0][2] and "H314" in got[0][2]
    assert "bottle 12" in got[1][2] and "H300" in got[1][2]
    assert "Fenwold Annex storeroom" in got[0][2]
    assert _state(demo_db) == before   # printing changes nothing in the database


def test_stock_label_on_an_a4_sheet(capsys, demo_db, tmp_path):
    pdf = tmp_path / "sheet.pdf"
    code, _, err = run(capsys, "stock", "label", *range(1, 6), "--pdf", pdf, "--size",
                       "A4-sheet", "--db", demo_db)
    assert code == 0, err
    got = pages(pdf)
    assert len(got) == 1 and got[0][:2] == A4_PT and got[0][2].count("bottle ") == 5


def test_generic_label_is_said_in_the_output(capsys, demo_db, tmp_path):
    # bottle 30 is citric acid, for which carboy holds no GHS bands
    code, out, _ = run(capsys, "stock", "label", "30", "--pdf", tmp_path / "c.pdf",
                       "--db", demo_db)
    assert code == 0
    assert "note: bottle 30 (C6H8O7)" in out and "safety data sheet" in out
    code, out, _ = run(capsys, "stock", "label", "30", "--pdf", tmp_path / "c.pdf",
                       "--db", demo_db, "--json")
    data = json.loads(out)
    assert code == 0 and len(data["notices"]) == 1 and data["pdf"].endswith("c.pdf")
    blocks = {b["block"]: b for b in data["labels"][0]["blocks"]}
    assert blocks["HazardText"]["statements"][0][0] == "H314"


@pytest.mark.parametrize("argv", [
    ("stock", "label", "1", "--pdf", "{missing}/x.pdf"),
    ("stock", "label", "1", "--pdf", "{dir}"),
    ("stock", "check", "--pdf", "{missing}/due.pdf"),
    ("waste", "record", "MA-01", "--pdf", "{missing}/r.pdf"),
])
def test_a_path_that_cannot_be_written_is_one_line_and_status_2(capsys, demo_db, tmp_path,
                                                                 argv):
    before = _state(demo_db)
    args = [a.format(missing=tmp_path / "no-such-dir", dir=tmp_path) for a in argv]
    code, _, err = run(capsys, *args, "--db", demo_db)
    assert code == 2
    assert err.startswith("carboy: cannot write the PDF to ") and err.count("\n") == 1
    assert _state(demo_db) == before


def test_unknown_bottle_or_container(capsys, demo_db, tmp_path):
    code, _, err = run(capsys, "stock", "label", "1", "999", "--pdf", tmp_path / "x.pdf",
                       "--db", demo_db)
    assert code == 2 and "999" in err and not (tmp_path / "x.pdf").exists()
    code, _, err = run(capsys, "waste", "record", "NOPE", "--pdf", tmp_path / "r.pdf",
                       "--db", demo_db)
    assert code == 2 and "NOPE" in err


def test_stock_check_pdf(capsys, demo_db, tmp_path):
    pdf = tmp_path / "due.pdf"
    before = _state(demo_db)
    code, out, err = run(capsys, "stock", "check", "--pdf", pdf, "--db", demo_db, "--json")
    assert code == 0, err
    data = json.loads(out)
    assert data["pdf"] == str(pdf)
    text = "\n".join(t for _, _, t in pages(pdf))
    assert f"{len(data['bottles'])} listed" in text
    assert f"{data['flagged']} need attention" in text
    assert "Page 1 of" in text and "Printed " in text
    for bottle in data["bottles"]:
        assert bottle["compound"][:1] in text
    assert _state(demo_db) == before


def test_waste_record(capsys, demo_db, tmp_path):
    pdf = tmp_path / "record.pdf"
    before = _state(demo_db)
    code, out, err = run(capsys, "waste", "record", "HF-04", "--pdf", pdf, "--db", demo_db)
    assert code == 0, err
    assert f"wrote the disposal record of HF-04 to {pdf}" in out
    got = pages(pdf)
    assert all((w, h) == A4_PT for w, h, _ in got)
    text = "\n".join(t for _, _, t in got)
    assert "HF-04" in text and "licensed-disposal" in text and "Signature" in text
    assert f"Page 1 of {len(got)}" in text
    assert _state(demo_db) == before


def test_the_storeroom_name_set_once_is_on_every_label(capsys, demo_db, tmp_path):
    code, out, err = run(capsys, "rules", "--storeroom-name", "  Stores  Room 4, East Annex ",
                         "--db", demo_db)
    assert code == 0, err
    assert "storeroom name on paper: Stores Room 4, East Annex" in out
    store = open_database(demo_db)
    try:
        last = journal.entries(store, kind="note")[0]
    finally:
        store.close()
    assert "storeroom name 'Stores Room 4, East Annex'" in last.summary
    pdf = tmp_path / "label.pdf"
    code, _, err = run(capsys, "stock", "label", "1", "--pdf", pdf, "--db", demo_db)
    assert code == 0, err
    assert "Stores Room 4, East Annex" in pages(pdf)[0][2]
    # given on the command line, the name printed is that one for this print only
    code, _, err = run(capsys, "stock", "label", "1", "--pdf", pdf, "--db", demo_db,
                       "--storeroom", "Cold room")
    assert code == 0, err
    assert "Cold room" in pages(pdf)[0][2] and "East Annex" not in pages(pdf)[0][2]
    # removed with an empty name
    code, out, _ = run(capsys, "rules", "--storeroom-name", "", "--json", "--db", demo_db)
    assert code == 0 and json.loads(out)["storeroom_name"] == ""


@pytest.mark.parametrize("bad", ["Room\u202e4", "x" * 81, "tab\there"])
def test_a_bad_storeroom_name_is_refused_and_nothing_changes(capsys, demo_db, bad):
    before = _state(demo_db)
    code, _, err = run(capsys, "rules", "--storeroom-name", bad, "--db", demo_db)
    assert code == 2 and "storeroom name" in err
    assert _state(demo_db) == before
