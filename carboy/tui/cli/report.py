"""``carboy report treatments``: the yearly treatment log, as text, JSON, CSV or PDF."""

from __future__ import annotations

import argparse
import csv
import sys

from carboy.tui.cli.kit import EXIT_OK, common_options, emit_json, group, open_store
from carboy.tui.wording import count, volume

EPILOG = """examples:
  carboy report treatments --year 2026
  carboy report treatments --year 2026 --by-stream --json
  carboy report treatments --year 2026 --csv > treatments-2026.csv
  carboy report treatments --year 2026 --by-person --pdf treatments-2026.pdf

Every treatment recorded in the year (UTC dates) with date, who, container, what was
treated, reagent, final pH and route; totals per stream and per month.  Nothing in
the database changes."""


def register(sub) -> None:
    common = common_options()
    report_sub = group(sub, "report", help="reports: the yearly treatment log",
                       description="Reports for the safety office.")
    p = report_sub.add_parser("treatments", parents=[common], epilog=EPILOG,
                              formatter_class=argparse.RawDescriptionHelpFormatter,
                              help="every treatment of a year, with totals",
                              description="The yearly log of in-lab treatments of waste.")
    p.add_argument("--year", required=True, metavar="YYYY")
    by = p.add_mutually_exclusive_group()
    by.add_argument("--by-person", action="store_true", help="grouped by who did the work")
    by.add_argument("--by-stream", action="store_true", help="grouped by waste stream")
    out = p.add_mutually_exclusive_group()
    out.add_argument("--csv", action="store_true", help="one CSV row per treatment")
    out.add_argument("--pdf", metavar="PATH", help="write the report as a PDF (A4)")
    p.add_argument("--storeroom", metavar="NAME", help="storeroom name printed on the PDF")
    p.set_defaults(func=report_treatments)


def _text(report) -> list[str]:
    from carboy.store.treatment_report import MONTHS, cells

    whole = report.totals()
    lines = [f"treatment log {report.year}: {count(whole.count, 'treatment')}, "
             f"{volume(whole.waste_l)} of waste treated, {whole.out_of_window} with a final "
             "pH outside the window"]
    for key, rows in report.groups():
        if key:
            lines.append(f"\n{key}:")
        for row in rows:
            date, entry, who, box, stream, treated, waste, reagent, ph, route = cells(row)
            lines.append(f"  {date} #{entry:<5} {who:<12} {box:<10} {stream:<10} {waste:>8}  "
                         f"{reagent}  pH {ph}  {route}")
            lines.append(f"{'':22}treated: {treated}")
        if key:
            t = report.totals(rows)
            lines.append(f"  total: {t.count}, {volume(t.waste_l)}; {t.reagent_text()}")
    lines.append("\ntotals per stream:")
    lines += [f"  {k:<16} {t.count:>4}  {volume(t.waste_l):>8}  {t.reagent_text()}"
              for k, t in report.by(lambda r: r.stream).items()]
    lines.append("totals per month:")
    lines += [f"  {MONTHS[m - 1]:<16} {t.count:>4}  {volume(t.waste_l):>8}  {t.reagent_text()}"
              for m, t in report.by(lambda r: r.month).items()]
    return lines


def report_treatments(args) -> int:
    from carboy.store import treatment_report as tr
    from carboy.store.csvio import spreadsheet_safe

    group_by = "person" if args.by_person else "stream" if args.by_stream else None
    with open_store(args) as store:
        report = tr.treatments(store, args.year, group_by=group_by)
        doc = tr.report_document(store, report, storeroom=args.storeroom) if args.pdf else None
    if args.pdf:
        from carboy.tui.paper import render as paper

        path = str(paper.write_pdf([doc], args.pdf))
        if args.json:
            emit_json({"pdf": path, **report.to_dict()})
        else:
            print(f"wrote the treatment log {report.year} "
                  f"({count(len(report.rows), 'treatment')}) to {path}")
    elif args.csv:
        writer = csv.writer(sys.stdout, lineterminator="\n")
        writer.writerow(tr.CSV_COLUMNS)
        for row in report.rows:
            writer.writerow([spreadsheet_safe(v) for v in row.csv_row()])
    elif args.json:
        emit_json(report.to_dict())
    else:
        print("\n".join(_text(report)))
    return EXIT_OK
