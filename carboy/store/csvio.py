"""Stock bottles to and from CSV, in carboy's own column layout.

Layout: UTF-8 (a leading byte-order mark is accepted), comma-separated, one header
row naming columns, then one bottle per row.  Columns, in export order:

=====================  ========================================================
``compound``           catalog key, formula or name (required), e.g. ``HCl``
``label_strength``     as on the label (required): ``1 M``, ``0.1 M``, ``37 %w/w``
``current_strength``   last measured strength, same unit as the label; may be empty
``measured_on``        date of that measurement, ``YYYY-MM-DD``
``measured_how``       how it was measured, free text
``restandardize_days`` re-standardization interval in days; empty for none
``amount_left``        ``1.2 L``, ``250 mL`` or ``400 g``; empty means full
``container_size``     ``2.5 L`` or ``500 g`` (required)
``location``           free text, e.g. ``Cabinet A / shelf 2``
``lot``                the supplier's lot code
``received_on``        ``YYYY-MM-DD``
``opened_on``          ``YYYY-MM-DD``
``expires_on``         ``YYYY-MM-DD``
``status``             ``in-use`` (default), ``empty`` or ``disposed``
``notes``              free text
=====================  ========================================================

Only ``compound``, ``label_strength`` and ``container_size`` must be present as
columns; any order is accepted; an unknown column is an error.  An import is one
transaction: every row is checked first, and if any row is unusable nothing is
written and the error lists the bad rows by their line number in the file (the
header is line 1).  :func:`export_csv` writes the same layout, so an export
imports back unchanged.

Spreadsheet formulas: a cell that begins with ``=``, ``+``, ``-``, ``@``, a tab or a
carriage return would run as a formula when the file is opened in a spreadsheet.  On
export such a cell is written with a leading apostrophe (``'=1+1``), which spreadsheets
show as text (a plain number such as ``-5`` is left alone); on import the apostrophe of
such a cell is taken off again, and a cell that begins like a formula *without* it is
refused, naming its row and column.  carboy's own CSV files therefore round-trip, and
a file made to carry a formula is not imported.
"""

from __future__ import annotations

import csv
import io
import os
import re
from datetime import date, datetime
from pathlib import Path
from typing import TextIO

from carboy.errors import CarboyError, InvalidInput
from carboy.store import journal, stock
from carboy.store.compounds import catalog_for
from carboy.store.db import Store
from carboy.store.errors import CsvRowError

FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")
"""What a spreadsheet reads as the start of a formula."""
_PLAIN_NUMBER = re.compile(r"[+-]?(?:[0-9]+(?:[.,][0-9]*)?|[.,][0-9]+)", re.ASCII)


def _formula_like(cell: str) -> bool:
    return cell.lstrip(" ").startswith(FORMULA_STARTS) and not _PLAIN_NUMBER.fullmatch(cell)


def spreadsheet_safe(value: object) -> str:
    """A cell for a CSV file: text that a spreadsheet shows as text, never as a formula."""
    text = "" if value is None else str(value)
    return "'" + text if _formula_like(text) else text


def from_spreadsheet(cell: str, column: str) -> str:
    """An imported cell: the apostrophe :func:`spreadsheet_safe` added is taken off; a
    cell that begins like a formula without one is refused."""
    if cell.startswith("'") and _formula_like(cell[1:]):
        return cell[1:]
    if _formula_like(cell):
        raise InvalidInput(column, cell, "begins like a spreadsheet formula "
                           f"({cell.lstrip(' ')[:1]!r}); carboy does not import formulas: "
                           "write the value as text, starting with an apostrophe",
                           field=column)
    return cell


REQUIRED_COLUMNS = ("compound", "label_strength", "container_size")
MAX_FILE_BYTES = 50_000_000
"""Largest CSV file read (about 200,000 bottles)."""
MAX_PROBLEMS = 50
"""Stop checking after this many bad rows (the error lists the first ten)."""


def _read_rows(source: str | os.PathLike | TextIO, name: str) -> tuple[list[str], list]:
    try:
        if isinstance(source, (str, os.PathLike)):
            if Path(source).stat().st_size > MAX_FILE_BYTES:
                raise CsvRowError(name, [(0, f"the file is larger than "
                                             f"{MAX_FILE_BYTES // 1_000_000} MB")])
            text = Path(source).read_text(encoding="utf-8-sig")
        else:
            text = source.read()
            if text.startswith("\ufeff"):
                text = text[1:]
    except FileNotFoundError:
        raise CsvRowError(name, [(0, "file not found")]) from None
    except IsADirectoryError:
        raise CsvRowError(name, [(0, "is a directory")]) from None
    except UnicodeDecodeError as exc:
        raise CsvRowError(name, [(0, f"not UTF-8 text ({exc.reason} at byte "
                                     f"{exc.start})")]) from None
    reader = csv.reader(io.StringIO(text, newline=""), strict=True)
    try:
        header = next(reader, None)
        if header is None:
            raise CsvRowError(name, [(1, "the file is empty; expected a header row")])
        rows = [(reader.line_num, r) for r in reader]
    except csv.Error as exc:
        raise CsvRowError(name, [(reader.line_num, f"not valid CSV ({exc})")]) from None
    return [h.strip() for h in header], rows


def check_csv(source: str | os.PathLike | TextIO, store: Store,
              name: str | None = None) -> list[dict]:
    """Validate a whole file; returns database columns per row or raises CsvRowError."""
    name = name or (str(source) if isinstance(source, (str, os.PathLike)) else "<csv>")
    header, rows = _read_rows(source, name)
    problems: list[tuple[int, str]] = []
    unknown = [h for h in header if h not in stock.FIELDS]
    if unknown:
        problems.append((1, f"unknown column {unknown[0]!r}; columns are "
                            + ", ".join(stock.FIELDS)))
    missing = [c for c in REQUIRED_COLUMNS if c not in header]
    if missing:
        problems.append((1, f"missing column {missing[0]!r}"))
    dupes = sorted({h for h in header if header.count(h) > 1})
    if dupes:
        problems.append((1, f"column {dupes[0]!r} appears twice"))
    if problems:
        raise CsvRowError(name, problems)
    catalog = catalog_for(store)
    out: list[dict] = []
    for line, values in rows:
        if not any(v.strip() for v in values):
            continue  # blank line
        if len(values) != len(header):
            problems.append((line, f"has {len(values)} fields, the header has {len(header)}"))
        else:
            try:
                cells = {h: from_spreadsheet(v, h) for h, v in zip(header, values)}
                out.append(stock.validate(cells, catalog))
            except CarboyError as exc:
                problems.append((line, str(exc)))
        if len(problems) >= MAX_PROBLEMS:
            break
    if problems:
        raise CsvRowError(name, problems)
    if not out:
        raise CsvRowError(name, [(2, "no bottles in the file")])
    return out


def import_csv(store: Store, source: str | os.PathLike | TextIO, *, name: str | None = None,
               who: str | None = None, when: datetime | None = None) -> list[int]:
    """Import every row as a new bottle, all or nothing; returns the new bottle ids."""
    label = name or (str(source) if isinstance(source, (str, os.PathLike)) else "<csv>")
    columns = check_csv(source, store, label)

    def work(s: Store) -> list[int]:
        ids = [stock.insert_in(s, row, who=who, when=when) for row in columns]
        journal.append_in(s, "receipt", summary=f"{len(ids)} bottles imported from "
                          f"{Path(label).name}", who=who, when=when,
                          snapshot={"file": label, "count": len(ids), "first_id": ids[0],
                                    "last_id": ids[-1]})
        return ids

    return store.write(work)


def export_csv(store: Store, out: TextIO, *, today: date | None = None) -> int:
    """Write every bottle in the import layout; returns the number of rows."""
    writer = csv.DictWriter(out, fieldnames=list(stock.FIELDS), lineterminator="\n")
    writer.writeheader()
    n = 0
    for bottle in stock.all_bottles(store, today=today):
        writer.writerow({k: spreadsheet_safe(v) for k, v in stock.to_fields(bottle).items()})
        n += 1
    return n
