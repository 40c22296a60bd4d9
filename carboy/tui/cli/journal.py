"""``carboy journal``: the append-only journal headless (list, show, export, verify; correct
and note in :mod:`carboy.tui.cli.journal_edit`)."""

from __future__ import annotations

import argparse
import csv
import json
import re
import sys

from carboy.store.statuses import JOURNAL_KINDS
from carboy.tui.cli import journal_edit
from carboy.tui.cli.kit import (
    EXIT_OK,
    EXIT_REFUSED,
    common_options,
    emit_json,
    group,
    none_found,
    open_store,
    whole,
)

VERIFY_HELP = """Checks, in one read of the file: that carboy's guard triggers are there and
unchanged; that every journal entry and waste addition still matches the hash it was
written with; that each link follows from the one before; that no record lacks a link;
and, with --head, that a chain head kept from an earlier export is still in the chain
(the only way to notice a chain rebuilt by someone with write access to the file).

Exit status: 0 when everything matches, 1 when something does not (the first record
that does not match is named), 2 when the file cannot be read.

--restore-guards puts back missing or altered guard triggers and journals that it did;
use it only after looking at what verify reported (see docs/shared-server.md).
"""


def register(sub) -> None:
    common = common_options()
    journal_sub = group(sub, "journal", help="the journal: list, show, export, verify, "
                        "correct, note",
                        description="The append-only journal.")

    p = journal_sub.add_parser("list", parents=[common], help="entries, newest first")
    p.add_argument("--kind", choices=JOURNAL_KINDS)
    p.add_argument("--since", metavar="YYYY-MM-DD")
    p.add_argument("--limit", type=whole(1, 100_000, "limit"), default=50, metavar="N",
                   help="default 50")
    p.set_defaults(func=journal_list)

    p = journal_sub.add_parser("show", parents=[common], help="one entry with its snapshot")
    p.add_argument("id", metavar="ID")
    p.set_defaults(func=journal_show)

    p = journal_sub.add_parser("export", parents=[common], help="every entry as CSV or JSON")
    p.add_argument("--format", choices=("csv", "json"), required=True)
    p.add_argument("--kind", choices=JOURNAL_KINDS)
    p.add_argument("--since", metavar="YYYY-MM-DD")
    p.set_defaults(func=journal_export)

    p = journal_sub.add_parser("verify", parents=[common], help="check the record chain",
                               description="Check that the journal and the waste additions "
                               "are as they were written.", epilog=VERIFY_HELP,
                               formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("--head", metavar="SHA256", help="a link hash kept from an earlier export "
                   "(its link_sha256 column) that must still be in the chain")
    p.add_argument("--restore-guards", action="store_true",
                   help="put back missing or altered guard triggers (journaled)")
    p.set_defaults(func=journal_verify)
    journal_edit.register(journal_sub, common)


def journal_list(args) -> int:
    from carboy.store import journal

    with open_store(args) as store:
        found = journal.entries(store, kind=args.kind, since=args.since, limit=args.limit)
    if args.json:
        emit_json([e.as_dict() for e in found])
        return EXIT_OK
    if not found:
        print(none_found("journal entries", [f"kind {args.kind}"] * bool(args.kind)
                         + [f"since {args.since}"] * bool(args.since)))
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
                  "container_id", "container_label", "corrects_id", "summary", "snapshot",
                  "link_sha256")
"""Each row carries its entry's link in the record chain: keep the last row's (or the
head printed on stderr) to check the database against this export later."""


def journal_export(args) -> int:
    from carboy.store import journal
    from carboy.store.csvio import spreadsheet_safe

    with open_store(args) as store:
        with store.reading():
            found = list(journal.iter_all(store, kind=args.kind, since=args.since))
            head = journal.head(store)
        if args.format == "json":
            emit_json([e.as_dict() for e in found])
        else:
            writer = csv.writer(sys.stdout, lineterminator="\n")
            writer.writerow(EXPORT_COLUMNS)
            for e in found:
                d = e.as_dict()
                d["snapshot"] = json.dumps(e.snapshot, ensure_ascii=False, sort_keys=True)
                writer.writerow([spreadsheet_safe(d[c]) for c in EXPORT_COLUMNS])
    print(f"carboy: {head.text()}; check later with: carboy journal verify --head "
          f"{head.link_sha256}", file=sys.stderr)
    return EXIT_OK


_SHA256 = re.compile(r"[0-9a-f]{64}", re.ASCII)


def journal_verify(args) -> int:
    from carboy.errors import InvalidInput
    from carboy.store import journal

    expected = (args.head or "").strip().lower() or None
    if expected is not None and not _SHA256.fullmatch(expected):
        raise InvalidInput("--head", args.head, "expected a link hash: 64 hexadecimal digits "
                           "(the link_sha256 of an export)")
    with open_store(args) as store:
        restored = journal.restore_guards(store) if args.restore_guards else []
        verdict = journal.verify(store, expected_head=expected)
    if args.json:
        emit_json({**verdict.as_dict(), "restored_guards": restored})
        return EXIT_OK if verdict.ok else EXIT_REFUSED
    if restored:
        print("restored guard triggers: " + ", ".join(restored))
    print(f"{verdict.checked} links checked; {verdict.head.text()}")
    if verdict.ok:
        print("ok: every record matches its link, the guards are carboy's own"
              + (", and the kept head is in the chain" if expected else ""))
        return EXIT_OK
    print(f"FAILED: {verdict.first.text()}")
    for problem in verdict.problems[1:10]:
        print(f"  also: {problem.text()}")
    if len(verdict.problems) > 10:
        print(f"  and {len(verdict.problems) - 10} more (--json lists up to 50)")
    print("see docs/shared-server.md ('When verify fails')")
    return EXIT_REFUSED
