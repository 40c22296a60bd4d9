"""``carboy stock``: the stock bottles headless (list, add, show, check, import, export)."""

from __future__ import annotations

import argparse
import sys

from carboy.model.forms import MAX_ID
from carboy.store.statuses import BOTTLE_STATUSES, BottleStatus
from carboy.tui.cli.kit import EXIT_OK, common_options, emit_json, group, open_store, whole
from carboy.tui.wording import amount, count, strength, tally

STOCK_IMPORT_HELP = """CSV column layout (header row required; any column order):
  compound            catalog key, formula or name (required), e.g. HCl
  label_strength      as on the label (required): 1 M, 0.1 M, 37 %w/w
  current_strength    last measured strength, same unit as the label (optional)
  measured_on         date of that measurement, YYYY-MM-DD
  measured_how        how it was measured
  restandardize_days  re-standardization interval in days (optional)
  amount_left         1.2 L, 250 mL or 400 g; empty means a full bottle
  container_size      2.5 L or 500 g (required)
  location            free text
  lot                 the supplier's lot code
  received_on, opened_on, expires_on   YYYY-MM-DD
  status              in-use (default), empty or disposed
  notes               free text

The import is all or nothing: if any row is unusable, nothing is written and the
error names each bad row by its line number (the header is line 1).
`carboy stock export` writes this same layout.
"""


def register(sub) -> None:
    common = common_options()
    fmt = argparse.RawDescriptionHelpFormatter
    stock_sub = group(sub, "stock", help="stock bottles: list, add, show, check, import, export",
                      description="The stock bottles on the shelves.")

    p = stock_sub.add_parser("list", parents=[common], help="list bottles (50 per page)",
                             description="List bottles in id order, optionally searching "
                             "compound, name (or any other name of the compound), location "
                             "and lot (each word a prefix), or #ID for one bottle. A search "
                             "counts its matches up to 10,000 (then: more than 10,000; in "
                             "--json, total_exact is false).")
    p.add_argument("--search", metavar="TEXT", help="words to look for, e.g. 'HCl cab', "
                   "'caustic soda', '#17'")
    p.add_argument("--status", choices=BOTTLE_STATUSES)
    p.add_argument("--after", type=whole(0, MAX_ID, "bottle id"), metavar="ID",
                   help="start after this bottle id")
    p.add_argument("--limit", type=whole(1, 10_000, "page size"), default=50, metavar="N",
                   help="page size (default 50)")
    p.set_defaults(func=stock_list)

    p = stock_sub.add_parser(
        "add", parents=[common], help="add one bottle", formatter_class=fmt,
        description="Add one stock bottle.",
        epilog="examples:\n  carboy stock add HCl '37 %w/w' --size '2.5 L' --lot FW-24-117\n"
               "  carboy stock add NaOH 0.1M --size 1L --every 14 --location 'Titration bench'")
    p.add_argument("compound", help="catalog key, formula or name")
    p.add_argument("strength", help="label strength: 1 M, 0.1 M, 37 %%w/w")
    p.add_argument("--size", required=True, metavar="AMOUNT",
                   help="container size: 2.5 L, 500 mL, 1 kg")
    p.add_argument("--left", metavar="AMOUNT", help="amount left (default: full)")
    p.add_argument("--location", default="", metavar="TEXT")
    p.add_argument("--lot", default="", metavar="CODE")
    p.add_argument("--received", metavar="YYYY-MM-DD")
    p.add_argument("--opened", metavar="YYYY-MM-DD")
    p.add_argument("--expires", metavar="YYYY-MM-DD")
    p.add_argument("--every", metavar="DAYS", help="re-standardize every DAYS days")
    p.add_argument("--notes", default="", metavar="TEXT")
    p.set_defaults(func=stock_add)
    _register_more(stock_sub, common, fmt)


def _register_more(stock_sub, common, fmt) -> None:
    """show, import, export, check and label."""
    p = stock_sub.add_parser("show", parents=[common], help="one bottle and its journal")
    p.add_argument("id", metavar="ID", help="bottle id")
    p.set_defaults(func=stock_show)

    p = stock_sub.add_parser("import", parents=[common], help="add bottles from a CSV file",
                             description="Add bottles from a CSV file, all or nothing.",
                             epilog=STOCK_IMPORT_HELP, formatter_class=fmt)
    p.add_argument("file", metavar="FILE.csv")
    p.set_defaults(func=stock_import)

    p = stock_sub.add_parser("export", parents=[common], help="every bottle as CSV on stdout",
                             description="Write every bottle as CSV to stdout, in the layout "
                             "`carboy stock import` reads (see its --help).")
    p.set_defaults(func=stock_export)

    p = stock_sub.add_parser(
        "check", parents=[common], help="strengths that can no longer be trusted",
        formatter_class=fmt,
        description="The strength check of every bottle in use: label against measured "
                    "strength, days since the last standardization against the re-check "
                    "interval (the bottle's own, else the storeroom's rule for its compound; "
                    "see `carboy rules`), and expiry. Lists what is expired, off-label, "
                    "overdue, never standardized or expiring within 30 days.")
    p.add_argument("--all", action="store_true", dest="everything",
                   help="list every bottle in use, flagged or not")
    p.add_argument("--pdf", metavar="PATH", help="also write the list as a PDF (A4, with "
                   "totals, page numbers and the date of printing)")
    p.add_argument("--storeroom", metavar="NAME", help="storeroom name printed on the PDF")
    p.set_defaults(func=stock_check)

    p = stock_sub.add_parser(
        "label", parents=[common], help="print bottle labels to a PDF", formatter_class=fmt,
        description="Write the labels of the named bottles to a PDF: name and formula, "
                    "strength as labelled and as measured, where the bottle came from, expiry "
                    "and re-check date, the GHS signal word, hazard statements and pictograms "
                    "for its concentration, the storeroom's name and a QR code of its id. "
                    "Nothing in the database changes.",
        epilog="examples:\n  carboy stock label 17 --pdf bottle-17.pdf\n"
               "  carboy stock label 17 18 23 --pdf labels.pdf --size A4-sheet")
    p.add_argument("ids", nargs="+", metavar="ID", help="bottle ids")
    p.add_argument("--pdf", required=True, metavar="PATH", help="the PDF file to write")
    p.add_argument("--size", choices=("70x37mm", "A4-sheet"), default="70x37mm",
                   help="one 70 x 37 mm label to a page (default), or 24 to an A4 sheet")
    p.add_argument("--storeroom", metavar="NAME",
                   help="storeroom name on the label (default: the storeroom's own, if set)")
    p.set_defaults(func=stock_label)


def _bottle_line(b) -> str:
    return (f"{b.id:>6}  {b.compound_key:<10} {strength(b.label_strength, b.strength_unit):<12} "
            f"{amount(b.amount_left, b.amount_unit):>9}  {b.strength_status:<9} "
            f"{BottleStatus(b.status).words:<8} {b.location}  {b.lot}")


def stock_list(args) -> int:
    from carboy.store import stock

    with open_store(args) as store:
        if args.after is None:
            got, total = stock.listing(store, args.search, limit=args.limit,
                                       status=args.status)
        else:
            got = stock.page(store, args.search, after_id=args.after, limit=args.limit,
                             status=args.status)
            total = stock.count_upto(store, args.search, status=args.status)
    if args.json:
        emit_json({"total": total.n, "total_exact": total.exact, "next_after": got.next_after,
                   "bottles": [b.as_dict() for b in got.bottles]})
        return EXIT_OK
    print(f"{'id':>6}  {'compound':<10} {'strength':<12} {'left':>9}  {'strength?':<9} "
          f"{'status':<8} location  lot")
    for b in got.bottles:
        print(_bottle_line(b))
    more = f"; next page: --after {got.next_after}" if got.next_after else ""
    print(f"{len(got.bottles)} of {tally(total, 'bottle')}{more}")
    return EXIT_OK


def stock_add(args) -> int:
    from carboy.store import stock

    fields = {"compound": args.compound, "label_strength": args.strength,
              "container_size": args.size, "amount_left": args.left or "",
              "location": args.location, "lot": args.lot, "received_on": args.received,
              "opened_on": args.opened, "expires_on": args.expires,
              "restandardize_days": args.every or "", "notes": args.notes}
    with open_store(args) as store:
        bottle = stock.get(store, stock.add(store, fields))
    if args.json:
        emit_json(bottle.as_dict())
    else:
        print(f"added bottle {bottle.id}: {bottle.compound_key} ({bottle.compound_name}) "
              f"{bottle.strength_text}")
    return EXIT_OK


def stock_show(args) -> int:
    from carboy.store import journal, stock

    with open_store(args) as store:
        bottle = stock.get(store, args.id)
        entries = journal.entries(store, bottle_id=bottle.id, limit=20)
    if args.json:
        emit_json({**bottle.as_dict(), "journal": [e.as_dict() for e in entries]})
        return EXIT_OK
    fields = stock.to_fields(bottle)
    print(f"bottle {bottle.id}: {bottle.compound_key} ({bottle.compound_name})")
    for key, value in fields.items():
        if key != "compound" and value:
            print(f"  {key.replace('_', ' '):<20} {value}")
    print(f"  {'strength status':<20} {bottle.strength_status}")
    for e in entries:
        print(f"  #{e.id} {journal.local_time(e.recorded_at)} {e.kind}: {e.summary}")
    return EXIT_OK


def stock_import(args) -> int:
    from carboy.store import csvio

    with open_store(args) as store:
        ids = csvio.import_csv(store, args.file)
    if args.json:
        emit_json({"imported": len(ids), "ids": ids})
    else:
        which = f"id {ids[0]}" if len(ids) == 1 else f"ids {ids[0]}–{ids[-1]}"
        print(f"imported {count(len(ids), 'bottle')} ({which})")
    return EXIT_OK


def stock_export(args) -> int:
    from carboy.store import csvio, stock

    with open_store(args) as store:
        if args.json:
            emit_json([stock.to_fields(b) for b in stock.all_bottles(store)])
        else:
            csvio.export_csv(store, sys.stdout)
    return EXIT_OK


def _due_pdf(args, store, rows) -> str | None:
    """Write the due list's PDF when ``--pdf`` was given; returns the path written."""
    if not args.pdf:
        return None
    from datetime import date

    from carboy.store import documents
    from carboy.tui.paper import render as paper

    doc = documents.due_list_of(rows, everything=args.everything, today=date.today(),
                                storeroom=documents.storeroom_name(store, args.storeroom))
    return str(paper.write_pdf([doc], args.pdf))


def stock_check(args) -> int:
    from carboy.store import stock

    with open_store(args) as store:
        rows = stock.check(store, everything=args.everything)
        pdf = _due_pdf(args, store, rows)
    flagged = sum(1 for r in rows if r.flags)
    if args.json:
        emit_json({"flagged": flagged, "bottles": [r.to_dict() for r in rows]}
                  | ({"pdf": pdf} if pdf else {}))
        return EXIT_OK
    if pdf:
        print(f"wrote the due list ({count(len(rows), 'bottle')}) to {pdf}")
    if not rows:
        print("every bottle in use is within its re-check interval, on label and unexpired")
        return EXIT_OK
    print(f"{'id':>6}  {'compound':<10} {'label':<11} {'measured':<11} {'dev %':>6}  "
          f"{'last':<10} {'every':>5}  {'expires':<10} flags")
    for r in rows:
        b = r.bottle
        measured = strength(b.current_strength, b.strength_unit) \
            if b.current_strength is not None else "-"
        dev = f"{r.deviation_percent:+.1f}" if r.deviation_percent is not None else "-"
        print(f"{b.id:>6}  {b.compound_key:<10} "
              f"{strength(b.label_strength, b.strength_unit):<11} {measured:<11} "
              f"{dev:>6}  {(b.measured_at or '-')[:10]:<10} "
              f"{(str(b.recheck_days) + ' d') if b.recheck_days else '-':>5}  "
              f"{b.expires_on or '-':<10} {', '.join(r.flags) or 'ok'}")
        for reason in r.reasons:
            print(f"{'':8}{reason}")
    need = "needs" if flagged == 1 else "need"
    print(f"{flagged} of {count(len(rows), 'listed bottle')} {need} attention"
          if args.everything else f"{count(flagged, 'bottle')} {need} attention")
    return EXIT_OK


def stock_label(args) -> int:
    from carboy.store import documents
    from carboy.tui.paper import render as paper

    with open_store(args) as store:
        docs = documents.bottle_labels(store, args.ids, storeroom=args.storeroom)
    path = str(paper.write_pdf(docs, args.pdf, label_size=args.size))
    notices = [n for d in docs for n in d.notices]
    if args.json:
        emit_json({"pdf": path, "size": args.size, "notices": notices,
                   "labels": [d.to_dict() for d in docs]})
        return EXIT_OK
    print(f"wrote {len(docs)} label{'s' if len(docs) != 1 else ''} ({args.size}) to {path}")
    for notice in notices:
        print(f"note: {notice}")
    return EXIT_OK
