"""The yearly treatment log: every treatment of a year, with totals per stream and per
month, as plain data and as a document (read only: nothing is written).

In-lab treatment of corrosive waste is logged and reported yearly to the safety office.
Each treatment (:mod:`carboy.store.treatment_records`, its readings as corrected) gives
one row: date, who did it, the container and its stream, what was treated (mol of each
compound logged, and the waste's volume), the reagent used (and the bottle), the final
pH and whether it lay in the window, and the route.  An older entry that kept only a
measured pH is listed with the reagent it planned.  ``group`` (``person`` or
``stream``) splits the rows into groups, each with its totals.
"""

from __future__ import annotations

from collections import defaultdict
from collections.abc import Iterable
from dataclasses import asdict, dataclass, field
from datetime import date

from carboy.errors import InvalidInput
from carboy.model import numbers
from carboy.model.documents import (
    PAGE_A4,
    Block,
    Column,
    Document,
    Fields,
    Heading,
    Paragraph,
    Table,
    Title,
    formula_text,
)
from carboy.store import journal, treatment_records
from carboy.store.db import Store
from carboy.store.documents import storeroom_name
from carboy.store.readers import parse_whole
from carboy.store.waste_streams import stream_name

GROUPS = ("person", "stream")
MONTHS = ("January", "February", "March", "April", "May", "June", "July", "August",
          "September", "October", "November", "December")
CSV_COLUMNS = ("entry", "date", "who", "container", "stream", "treated", "waste_l",
               "reagent", "reagent_amount", "reagent_unit", "bottle", "final_ph", "in_window",
               "route", "corrected")


@dataclass(frozen=True)
class TreatmentRow:
    """One treatment as the report lists it."""

    entry: int
    date: str
    month: int
    who: str
    container: str
    stream: str
    treated: dict
    """Compound key -> mol."""
    waste_l: float
    reagent: str
    reagent_amount: float | None
    reagent_unit: str | None
    bottle: int | None
    final_ph: float | None
    in_window: bool | None
    route: str
    corrected: bool

    def csv_row(self) -> list:
        treated = "; ".join(f"{k} {v:.4g} mol" for k, v in sorted(self.treated.items()))
        return [self.entry, self.date, self.who, self.container, self.stream, treated,
                round(self.waste_l, 6), self.reagent, self.reagent_amount, self.reagent_unit,
                self.bottle, self.final_ph, self.in_window, self.route, self.corrected]


@dataclass
class Totals:
    """Counts and amounts over some treatments."""

    count: int = 0
    waste_l: float = 0.0
    out_of_window: int = 0
    reagent: dict = field(default_factory=dict)
    """Reagent text -> {unit: amount}."""

    def add(self, row: TreatmentRow) -> None:
        self.count += 1
        self.waste_l += row.waste_l
        self.out_of_window += row.in_window is False
        if row.reagent_amount is not None:
            by_unit = self.reagent.setdefault(row.reagent, {})
            by_unit[row.reagent_unit] = by_unit.get(row.reagent_unit, 0.0) + row.reagent_amount

    def reagent_text(self) -> str:
        return "; ".join(f"{name} {numbers.amount(v, u)}" for name, units in
                         sorted(self.reagent.items()) for u, v in units.items()) or "-"


@dataclass(frozen=True)
class Report:
    year: int
    group_by: str | None
    rows: tuple[TreatmentRow, ...]

    def totals(self, rows: Iterable[TreatmentRow] | None = None) -> Totals:
        out = Totals()
        for row in self.rows if rows is None else rows:
            out.add(row)
        return out

    def by(self, key) -> dict[str, Totals]:
        out: dict = defaultdict(Totals)
        for row in self.rows:
            out[key(row)].add(row)
        return dict(sorted(out.items()))

    def groups(self) -> list[tuple[str, list[TreatmentRow]]]:
        if self.group_by is None:
            return [("", list(self.rows))]
        attr = "who" if self.group_by == "person" else "stream"
        found: dict[str, list[TreatmentRow]] = defaultdict(list)
        for row in self.rows:
            found[getattr(row, attr)].append(row)
        return sorted(found.items())

    def to_dict(self) -> dict:
        def plain(t: Totals) -> dict:
            return asdict(t)

        out = {"year": self.year, "group_by": self.group_by,
               "treatments": [asdict(r) for r in self.rows],
               "totals": {**plain(self.totals()),
                          "per_stream": {k: plain(v) for k, v in
                                         self.by(lambda r: r.stream).items()},
                          "per_month": {MONTHS[m - 1]: plain(v) for m, v in
                                        self.by(lambda r: r.month).items()}}}
        if self.group_by is not None:
            out["groups"] = [{"key": key, "treatments": [r.entry for r in rows],
                              "totals": plain(self.totals(rows))}
                             for key, rows in self.groups()]
        return out


def _row(store: Store, entry: journal.Entry) -> TreatmentRow:
    rec = treatment_records.readings_of(store, entry)
    snap = entry.snapshot
    box = snap.get("container") or {}
    readings = rec.readings
    if snap.get("event") == treatment_records.EVENT:
        added = readings.get("added") or {}
        reagent = (snap.get("reagent") or {}).get("text") or "?"
        amount, unit = added.get("value"), added.get("unit")
        bottle = (snap.get("reagent") or {}).get("bottle_id")
        route = snap.get("route") or "drain"
    else:
        inputs = (snap.get("plan") or {}).get("inputs") or {}
        reagent = f"{inputs.get('reagent') or '?'} (planned)"
        amount = unit = bottle = None
        route = "drain"
    performed = readings.get("performed_by") or (snap.get("plan") or {}).get("performed_by")
    return TreatmentRow(entry.id, entry.recorded_at[:10], int(entry.recorded_at[5:7]),
                        performed or entry.recorded_by, entry.container_label or "?",
                        box.get("stream") or "?", dict(box.get("contents") or {}),
                        float(box.get("volume_l") or 0.0), reagent, amount, unit, bottle,
                        rec.final_ph, rec.in_window, route, bool(rec.corrections))


def read_year(value: object) -> int:
    return parse_whole(value, "year", field="year", low=1970, high=9999)


def treatments(store: Store, year: int | str, *, group_by: str | None = None) -> Report:
    """The treatments recorded in ``year`` (UTC dates), oldest first."""
    y = read_year(year)
    if group_by is not None and group_by not in GROUPS:
        raise InvalidInput("group", group_by, "expected person or stream", field="group")
    with store.reading():
        ids = [r["id"] for r in store.rows(
            "SELECT id FROM journal_entries WHERE kind = 'neutralization' AND recorded_at >= ? "
            "AND recorded_at < ? ORDER BY id", [f"{y:04d}-01-01", f"{y + 1:04d}-01-01"])]
        rows = []
        for eid in ids:
            entry = journal.get(store, eid)
            if treatment_records.is_treatment(entry):
                rows.append(_row(store, entry))
    return Report(y, group_by, tuple(rows))


# -- the document ---------------------------------------------------------------------------

COLUMNS = (Column("Date", weight=1.0), Column("#", "right", 0.45), Column("Who", weight=0.9),
           Column("Container", weight=0.9), Column("Stream", weight=0.8),
           Column("Treated", weight=1.7), Column("Waste", "right", 0.7),
           Column("Reagent", weight=1.6), Column("Final pH", "right", 0.7),
           Column("Route", weight=0.9))


def cells(row: TreatmentRow) -> tuple[str, ...]:
    treated = ", ".join(f"{formula_text(k)} {v:.3g} mol" for k, v in sorted(row.treated.items()))
    reagent = row.reagent if row.reagent_amount is None else \
        f"{numbers.amount(row.reagent_amount, row.reagent_unit)} {row.reagent}"
    if row.bottle is not None:
        reagent += f" (bottle {row.bottle})"
    ph = "-" if row.final_ph is None else f"{row.final_ph:.2f}" + \
        ("" if row.in_window is not False else " OUT")
    return (row.date, str(row.entry), row.who, row.container, row.stream, treated or "-",
            numbers.volume(row.waste_l), reagent, ph + (" (corr.)" if row.corrected else ""),
            row.route.replace("-", " "))


def _totals_cells(t: Totals, label: str) -> tuple[str, ...]:
    return (label, "", "", "", "", numbers.count(t.count, "treatment"), numbers.volume(t.waste_l),
            t.reagent_text(), f"{t.out_of_window} out" if t.out_of_window else "", "")


def _summary_table(heading: str, totals: dict[str, Totals]) -> list[Block]:
    columns = (Column(heading, weight=1.4), Column("Treatments", "right", 0.8),
               Column("Waste treated", "right", 1.0), Column("Reagent used", weight=2.6),
               Column("Final pH out of window", "right", 1.0))
    rows = tuple((k, str(t.count), numbers.volume(t.waste_l), t.reagent_text(),
                  str(t.out_of_window)) for k, t in totals.items())
    return [Heading(f"Totals per {heading.lower()}"),
            Table(columns, rows, empty_text="No treatments.")]


def document(report: Report, *, storeroom: str = "", today: date | None = None) -> Document:
    """The report as a document (A4): the treatments (by group), totals per stream and
    per month, and the note that carboy advises."""
    day = (today or date.today()).isoformat()
    whole = report.totals()
    blocks: list[Block] = [
        Title(f"Treatment log {report.year}", storeroom),
        Fields((("Year", str(report.year)), ("Treatments", str(whole.count)),
                ("Waste treated", numbers.volume(whole.waste_l)),
                ("Final pH outside the window", str(whole.out_of_window)),
                ("Listed", "by person" if report.group_by == "person" else "by stream"
                 if report.group_by == "stream" else "in the order recorded")))]
    for key, rows in report.groups():
        if key:
            blocks.append(Heading(key))
        blocks.append(Table(COLUMNS, tuple(cells(r) for r in rows),
                            _totals_cells(report.totals(rows), "Total"),
                            empty_text=f"No treatments recorded in {report.year}."))
    blocks += _summary_table("Stream", {stream_name(k): v for k, v in
                                        report.by(lambda r: r.stream).items()})
    blocks += _summary_table("Month", {MONTHS[m - 1]: v for m, v in
                                       report.by(lambda r: r.month).items()})
    blocks.append(Paragraph("Every treatment recorded in carboy's journal in the year (UTC "
                            "dates), its readings as corrected. carboy advises; local disposal "
                            "rules and the institution's safety office decide.", "note"))
    return Document("treatment-report", f"Treatment log {report.year}", tuple(blocks),
                    PAGE_A4, storeroom, day)


def report_document(store: Store, report: Report, *, storeroom: str | None = None,
                    today: date | None = None) -> Document:
    """:func:`document` with the storeroom's name from its rules when none is given."""
    return document(report, storeroom=storeroom_name(store, storeroom), today=today)
