"""CSV import and export: our own layout, round trips, all-or-nothing imports."""

from __future__ import annotations

import io

import pytest

from carboy.store import csvio, journal, stock
from carboy.store.db import open_database
from carboy.store.errors import CsvRowError

GOOD = """compound,label_strength,container_size,amount_left,location,lot,expires_on
HCl,37 %w/w,2.5 L,2 L,Acid cabinet,FW-1,2026-01-01
sodium hydroxide,0.1 M,1 L,,Titration bench,FW-2,
KHC8H4O4,99.95 %,250 g,180 g,Standards,FW-3,2027-06-30
"""


def test_import_good_file(store, tmp_path):
    path = tmp_path / "in.csv"
    path.write_text(GOOD, encoding="utf-8")
    ids = csvio.import_csv(store, path, who="t")
    assert ids == [1, 2, 3]
    b = stock.get(store, 2)
    assert (b.compound_key, b.amount_left, b.lot) == ("NaOH", 1.0, "FW-2")
    assert journal.entries(store)[0].snapshot["count"] == 3


def test_bom_and_column_order(store):
    text = "\ufefflot,compound,container_size,label_strength\nFW-9,HNO3,1 L,65 %\n"
    assert csvio.import_csv(store, io.StringIO(text), who="t") == [1]


def test_export_round_trips(demo_store, tmp_path):
    first = io.StringIO()
    n = csvio.export_csv(demo_store, first)
    assert n == 40
    fresh = open_database(tmp_path / "copy.db")
    csvio.import_csv(fresh, io.StringIO(first.getvalue()), who="t")
    second = io.StringIO()
    csvio.export_csv(fresh, second)
    fresh.close()
    assert second.getvalue() == first.getvalue()
    assert first.getvalue().splitlines()[0] == ",".join(stock.FIELDS)


BAD = """compound,label_strength,container_size
HCl,1 M,1 L
unobtainium,1 M,1 L
NaOH,-2 M,1 L
HCl,1 M
HCl,1 M,1 L,extra
H2SO4,0.5 M,3 kPa
"""


def test_bad_rows_import_nothing_and_are_numbered(store):
    with pytest.raises(CsvRowError) as info:
        csvio.import_csv(store, io.StringIO(BAD), name="bad.csv")
    rows = [n for n, _ in info.value.problems]
    assert rows == [3, 4, 5, 6, 7]
    text = str(info.value)
    assert "nothing imported" in text and "row 3: unknown compound 'unobtainium'" in text
    assert "'-2 M'" in text and "has 2 fields" in text and "'3 kPa'" in text
    assert stock.count(store) == 0 and journal.count(store) == 0


@pytest.mark.parametrize("text, match", [
    ("", "empty"),
    ("compound,label_strength\nHCl,1 M\n", "missing column 'container_size'"),
    ("compound,label_strength,container_size,colour\n", "unknown column 'colour'"),
    ("compound,compound,label_strength,container_size\n", "appears twice"),
    ("compound,label_strength,container_size\n", "no bottles"),
    ('compound,label_strength,container_size\n"HCl,1 M,1 L\n', "CSV"),
])
def test_malformed_files(store, text, match):
    with pytest.raises(CsvRowError, match=match):
        csvio.import_csv(store, io.StringIO(text))
    assert stock.count(store) == 0


def test_not_utf8_and_missing_file(store, tmp_path):
    path = tmp_path / "latin.csv"
    path.write_bytes("compound,label_strength,container_size\nHCl,1 M,1 L,\xe9\n".encode("latin-1"))
    with pytest.raises(CsvRowError, match="UTF-8"):
        csvio.import_csv(store, path)
    with pytest.raises(CsvRowError, match="not found"):
        csvio.import_csv(store, tmp_path / "missing.csv")
