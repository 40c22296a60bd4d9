"""``carboy journal``: the append-only journal headless (list, show, export)."""

from __future__ import annotations

import csv
import json
import sys

from carboy.store.statuses import JOURNAL_KINDS
from carboy.tui.cli.kit import EXIT_OK, common_options, emit_json, group, open_store


def register(sub) -> None:
    common = common_options()
    journal_sub = group(sub, "journal", help="the journal: list, show, export",
                        description="The append-only journal.")

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
