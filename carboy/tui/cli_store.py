"""``carboy stock``, ``carboy waste`` and ``carboy journal``: the storeroom database headless.

Every subcommand takes ``--db PATH`` (else ``$CARBOY_DB``, else the user data
directory; ``carboy --demo …`` uses a throwaway demo database) and ``--json``.
Bad input ends with one line on stderr and exit status 2; nothing is written then.
"""

from __future__ import annotations

import argparse
import csv
import json
import sys

from carboy.tui.clikit import EXIT_OK, emit_json, open_store

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


def _common() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(add_help=False)
    p.add_argument("--db", metavar="PATH", default=argparse.SUPPRESS,
                   help="database file (default: $CARBOY_DB, else the user data directory)")
    p.add_argument("--json", action="store_true", help="print JSON instead of text")
    return p


def register(sub) -> None:
    common = _common()
    fmt = argparse.RawDescriptionHelpFormatter

    # -- stock ------------------------------------------------------------------------
    stock_p = sub.add_parser("stock", help="stock bottles: list, add, show, check, import, export",
                             description="The stock bottles on the shelves.")
    stock_sub = stock_p.add_subparsers(dest="stock_command", metavar="ACTION",
                                       parser_class=type(stock_p))
    stock_p.set_defaults(func=lambda args: _help(stock_p))

    p = stock_sub.add_parser("list", parents=[common], help="list bottles (50 per page)",
                             description="List bottles in id order, optionally searching "
                             "compound, name, location and lot (each word a prefix).")
    p.add_argument("--search", metavar="TEXT", help="words to look for, e.g. 'HCl cab'")
    p.add_argument("--status", choices=("in-use", "empty", "disposed"))
    p.add_argument("--after", type=int, metavar="ID", help="start after this bottle id")
    p.add_argument("--limit", type=int, default=50, metavar="N", help="page size (default 50)")
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
    p.set_defaults(func=stock_check)

    # -- rules ------------------------------------------------------------------------
    p = sub.add_parser(
        "rules", parents=[common], formatter_class=fmt,
        help="the storeroom's re-check intervals and acceptance rule",
        description="Show the rules in force, or set the storeroom's own. Every change is "
                    "journaled. Without options, shows them.",
        epilog="examples:\n  carboy rules --recheck NaOH=7 --recheck HCl=never\n"
               "  carboy rules --recheck NaOH=default\n"
               "  carboy rules --max-rsd 0.3 --min-replicates 3\n"
               "  carboy rules --acceptance-default")
    p.add_argument("--recheck", action="append", default=[], metavar="COMPOUND=DAYS",
                   help="re-check interval of a molar solution: days, 'never' or 'default' "
                        "(repeatable)")
    p.add_argument("--max-rsd", metavar="PERCENT",
                   help="largest accepted RSD of standardization replicates (default 0.2)")
    p.add_argument("--min-replicates", metavar="N", help="fewest replicates (default 3)")
    p.add_argument("--acceptance-default", action="store_true",
                   help="return to carboy's default acceptance rule")
    p.set_defaults(func=rules_cmd)

    # -- waste ------------------------------------------------------------------------
    waste_p = sub.add_parser("waste", help="waste containers: new, add, show, list",
                             description="Waste containers and what went into them.")
    waste_sub = waste_p.add_subparsers(dest="waste_command", metavar="ACTION",
                                       parser_class=type(waste_p))
    waste_p.set_defaults(func=lambda args: _help(waste_p))

    p = waste_sub.add_parser("new", parents=[common], help="open a new container")
    p.add_argument("label")
    p.add_argument("--location", default="", metavar="TEXT")
    p.add_argument("--capacity", metavar="VOLUME", help="e.g. 20 L (default 20 L)")
    p.add_argument("--notes", default="", metavar="TEXT")
    p.set_defaults(func=waste_new)

    p = waste_sub.add_parser(
        "add", parents=[common], help="log what went into a container", formatter_class=fmt,
        description="Log one addition to a collecting container.",
        epilog="examples:\n  carboy waste add MA-01 HCl=1M --volume 2L --note 'titration rinse'\n"
               "  carboy waste add MA-01 'H2SO4=10 %w/w' --volume '250 mL'\n"
               "  carboy waste add HF-04 NaF=2g        (a solid: mass, no volume needed)")
    p.add_argument("label")
    p.add_argument("component", metavar="COMPONENT=CONC",
                   help="catalog name and concentration (1M, 10 mM, 10 %%w/w) or a mass")
    p.add_argument("--volume", metavar="VOLUME", help="volume added, e.g. 250 mL")
    p.add_argument("--note", default="", metavar="TEXT")
    p.set_defaults(func=waste_add)

    p = waste_sub.add_parser("show", parents=[common], help="a container, its composition "
                             "and additions")
    p.add_argument("label")
    p.set_defaults(func=waste_show)

    p = waste_sub.add_parser("list", parents=[common], help="every container")
    p.add_argument("--status", choices=("collecting", "planned", "neutralized", "disposed",
                                        "licensed-disposal"))
    p.set_defaults(func=waste_list)

    # -- journal ----------------------------------------------------------------------
    journal_p = sub.add_parser("journal", help="the journal: list, show, export",
                               description="The append-only journal.")
    journal_sub = journal_p.add_subparsers(dest="journal_command", metavar="ACTION",
                                           parser_class=type(journal_p))
    journal_p.set_defaults(func=lambda args: _help(journal_p))
    from carboy.store.migrations import JOURNAL_KINDS

    p = journal_sub.add_parser("list", parents=[common], help="entries, newest first")
    p.add_argument("--kind", choices=JOURNAL_KINDS)
    p.add_argument("--since", metavar="YYYY-MM-DD")
    p.add_argument("--limit", type=int, default=50, metavar="N", help="default 50")
    p.set_defaults(func=journal_list)

    p = journal_sub.add_parser("show", parents=[common], help="one entry with its snapshot")
    p.add_argument("id", metavar="ID")
    p.set_defaults(func=journal_show)

    p = journal_sub.add_parser("export", parents=[common], help="every entry as CSV or JSON")
    p.add_argument("--format", choices=("csv", "json"), required=True)
    p.add_argument("--kind", choices=JOURNAL_KINDS)
    p.add_argument("--since", metavar="YYYY-MM-DD")
    p.set_defaults(func=journal_export)


def _help(parser: argparse.ArgumentParser) -> int:
    parser.print_help()
    return EXIT_OK


# -- stock ----------------------------------------------------------------------------

def _bottle_line(b) -> str:
    from carboy.store.stock import format_amount

    return (f"{b.id:>6}  {b.compound_key:<10} {b.strength_text:<12} "
            f"{format_amount(b.amount_left, b.amount_unit):>9}  {b.strength_status:<9} "
            f"{b.status:<8} {b.location}  {b.lot}")


def stock_list(args) -> int:
    from carboy.store import stock

    with open_store(args) as store:
        got = stock.page(store, args.search, after_id=args.after, limit=args.limit,
                         status=args.status)
        total = stock.count(store, args.search, status=args.status)
    if args.json:
        emit_json({"total": total, "next_after": got.next_after,
                   "bottles": [b.as_dict() for b in got.bottles]})
        return EXIT_OK
    print(f"{'id':>6}  {'compound':<10} {'strength':<12} {'left':>9}  {'strength?':<9} "
          f"{'status':<8} location  lot")
    for b in got.bottles:
        print(_bottle_line(b))
    more = f"; next page: --after {got.next_after}" if got.next_after else ""
    print(f"{len(got.bottles)} of {total} bottles{more}")
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
        print(f"imported {len(ids)} bottles (ids {ids[0]}–{ids[-1]})")
    return EXIT_OK


def stock_export(args) -> int:
    from carboy.store import csvio, stock

    with open_store(args) as store:
        if args.json:
            emit_json([stock.to_fields(b) for b in stock.all_bottles(store)])
        else:
            csvio.export_csv(store, sys.stdout)
    return EXIT_OK


def stock_check(args) -> int:
    from carboy.store import stock

    with open_store(args) as store:
        rows = stock.check(store, everything=args.everything)
    flagged = sum(1 for r in rows if r.flags)
    if args.json:
        emit_json({"flagged": flagged, "bottles": [r.to_dict() for r in rows]})
        return EXIT_OK
    if not rows:
        print("every bottle in use is within its re-check interval, on label and unexpired")
        return EXIT_OK
    print(f"{'id':>6}  {'compound':<10} {'label':<11} {'measured':<11} {'dev %':>6}  "
          f"{'last':<10} {'every':>5}  {'expires':<10} flags")
    for r in rows:
        b = r.bottle
        measured = stock.format_strength(b.current_strength, b.strength_unit) \
            if b.current_strength is not None else "-"
        dev = f"{r.deviation_percent:+.1f}" if r.deviation_percent is not None else "-"
        print(f"{b.id:>6}  {b.compound_key:<10} "
              f"{stock.format_strength(b.label_strength, b.strength_unit):<11} {measured:<11} "
              f"{dev:>6}  {(b.measured_at or '-')[:10]:<10} "
              f"{(str(b.recheck_days) + ' d') if b.recheck_days else '-':>5}  "
              f"{b.expires_on or '-':<10} {', '.join(r.flags) or 'ok'}")
        for reason in r.reasons:
            print(f"{'':8}{reason}")
    print(f"{flagged} of {len(rows)} listed bottles need attention" if args.everything
          else f"{flagged} bottles need attention")
    return EXIT_OK


def rules_cmd(args) -> int:
    from carboy.errors import InvalidInput
    from carboy.store import rules

    with open_store(args) as store:
        for item in args.recheck:
            compound, sep, days = item.partition("=")
            if not sep or not compound.strip():
                raise InvalidInput("--recheck", item, "expected COMPOUND=DAYS, e.g. NaOH=7")
            rules.set_recheck(store, compound.strip(), days.strip())
        if args.acceptance_default:
            rules.reset_acceptance(store)
        if args.max_rsd is not None or args.min_replicates is not None:
            rules.set_acceptance(store, max_rsd_percent=args.max_rsd,
                                 min_replicates=args.min_replicates)
        in_force = rules.load(store)
    if args.json:
        emit_json(in_force.to_dict())
        return EXIT_OK
    rule = in_force.acceptance()
    print("re-check intervals of molar solutions (a bottle's own interval wins):")
    for key, days in sorted(in_force.recheck_days.items()):
        print(f"  {key:<10} every {days:>4} days  ({in_force.recheck_origin[key]})")
    print(f"standardization accepted when RSD <= {rule.max_rsd_percent:g} % over at least "
          f"{rule.min_replicates} replicates and no replicate is an outlier")
    print(f"  (default 0.2 %: {rule.source})")
    return EXIT_OK


# -- waste ----------------------------------------------------------------------------

def waste_new(args) -> int:
    from carboy.store import waste

    with open_store(args) as store:
        c = waste.new_container(store, args.label, location=args.location,
                                capacity=args.capacity, notes=args.notes)
    if args.json:
        emit_json(c.as_dict())
    else:
        print(f"opened waste container {c.label} ({c.capacity_l:g} L) at {c.location or '-'}")
    return EXIT_OK


def waste_add(args) -> int:
    from carboy.store import waste

    with open_store(args) as store:
        addition_id = waste.add(store, args.label, args.component, args.volume, note=args.note)
        c = waste.container(store, args.label)
    if args.json:
        emit_json({"addition_id": addition_id, **c.as_dict()})
    else:
        print(f"logged addition {addition_id} to {c.label}: now {c.volume_l:g} of "
              f"{c.capacity_l:g} L")
    return EXIT_OK


def waste_show(args) -> int:
    from carboy.store import waste

    with open_store(args) as store:
        info = waste.show(store, args.label)
    if args.json:
        emit_json(info)
        return EXIT_OK
    print(f"{info['label']}  {info['status']}  {info['volume_l']:g} of {info['capacity_l']:g} L"
          f"  {info['location']}")
    if info["notes"]:
        print(f"  {info['notes']}")
    print("  composition (mol):")
    for key, mol in info["composition"].items():
        print(f"    {key:<12} {mol:.4g}")
    print("  additions:")
    for a in info["additions"]:
        vol = f"{a['volume_l']:g} L" if a["volume_l"] else ""
        gone = "  [superseded]" if a["superseded"] else ""
        print(f"    #{a['id']} {a['added_at'][:16]} {a['added_by']:<12} {a['entered']:<18} "
              f"{vol:<8} {a['note']}{gone}")
    return EXIT_OK


def waste_list(args) -> int:
    from carboy.store import waste

    with open_store(args) as store:
        found = waste.containers(store, status=args.status)
    if args.json:
        emit_json([c.as_dict() for c in found])
        return EXIT_OK
    for c in found:
        print(f"{c.label:<12} {c.status:<18} {c.volume_l:>7g} / {c.capacity_l:<5g} L  "
              f"{c.n_additions:>3} additions  {c.location}")
    return EXIT_OK


# -- journal --------------------------------------------------------------------------

def journal_list(args) -> int:
    from carboy.store import journal

    with open_store(args) as store:
        found = journal.entries(store, kind=args.kind, since=args.since, limit=args.limit)
    if args.json:
        emit_json([e.as_dict() for e in found])
        return EXIT_OK
    for e in found:
        print(f"#{e.id:<6} {journal.local_time(e.recorded_at)}  {e.kind:<15} "
              f"{e.recorded_by:<12} {e.summary}")
    return EXIT_OK


def journal_show(args) -> int:
    from carboy.store import journal

    with open_store(args) as store:
        entry = journal.get(store, args.id)
        later = journal.corrections_of(store, entry.id)
    if args.json:
        emit_json({**entry.as_dict(), "corrected_by": [e.id for e in later]})
        return EXIT_OK
    print(f"entry #{entry.id}  {entry.kind}")
    print(f"  when    {journal.local_time(entry.recorded_at)} (UTC {entry.recorded_at})")
    print(f"  who     {entry.recorded_by} from {entry.origin}")
    if entry.bottle_id is not None:
        print(f"  bottle  {entry.bottle_id}")
    if entry.container_label is not None:
        print(f"  waste   {entry.container_label}")
    if entry.corrects_id is not None:
        print(f"  corrects entry #{entry.corrects_id}")
    for e in later:
        print(f"  corrected by entry #{e.id}: {e.summary}")
    print(f"  {entry.summary}")
    print("  snapshot:")
    for line in json.dumps(entry.snapshot, indent=2, ensure_ascii=False).splitlines():
        print("    " + line)
    return EXIT_OK


EXPORT_COLUMNS = ("id", "kind", "recorded_at", "recorded_by", "origin", "bottle_id",
                  "container_id", "container_label", "corrects_id", "summary", "snapshot")


def journal_export(args) -> int:
    from carboy.store import journal

    with open_store(args) as store:
        found = journal.iter_all(store, kind=args.kind, since=args.since)
        if args.format == "json":
            emit_json([e.as_dict() for e in found])
            return EXIT_OK
        writer = csv.writer(sys.stdout, lineterminator="\n")
        writer.writerow(EXPORT_COLUMNS)
        for e in found:
            d = e.as_dict()
            d["snapshot"] = json.dumps(e.snapshot, ensure_ascii=False, sort_keys=True)
            writer.writerow(["" if d[c] is None else d[c] for c in EXPORT_COLUMNS])
    return EXIT_OK
