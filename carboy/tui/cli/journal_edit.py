"""``carboy journal correct`` and ``carboy journal note``: new entries, never edits.

A correction points at the entry it corrects and applies the corrected values through
the same store rules as the original (a treatment's readings and the reagent added, a
preparation's amount drawn, a bottle's amount left); ``addition:ID`` corrects a waste
addition instead (its volume or what it was), superseding it.
"""

from __future__ import annotations

import argparse
import re

from carboy.errors import InvalidInput
from carboy.model.forms.correction import CorrectionFields
from carboy.tui.cli.kit import EXIT_OK, emit_json, first_problem, open_store, warn

CORRECT_OPTIONS = {"reason": "--reason", "final_ph": "--ph", "vented_ph": "--vented-ph",
                   "stage_ph": "--stage-ph", "final_volume": "--final-volume",
                   "temperature": "--temperature", "added": "--added", "used": "--used",
                   "amount_left": "--amount-left"}
"""The option that carries each field of the correction form."""

CORRECT_EPILOG = """ENTRY is a journal entry id (12 or #12), or addition:ID for a waste addition.

examples:
  carboy journal correct 41 --reason "meter read in the wrong buffer" --ph 6.8
  carboy journal correct 41 --reason "2.6 L went in, not 2.5 L" --added 2.6L
  carboy journal correct 17 --reason "drew 8.3 mL, not 8.4 mL" --used 8.3mL
  carboy journal correct 3 --reason "stocktake" --amount-left 0.4L
  carboy journal correct addition:9 --reason "was 200 mL" --volume 200mL
  carboy journal correct addition:9 --reason "logged in the wrong container" --withdraw

An entry already corrected is refused (correct the newer entry); nothing is written
when anything is refused.  Exit status 2 for bad input, 1 where the store refuses by
rule (a container no longer collecting, past its fill limit)."""

_ADDITION = re.compile(r"^(?:addition:|a)\s*#?\s*([0-9]{1,19})$", re.ASCII | re.IGNORECASE)


def register(journal_sub, common) -> None:
    p = journal_sub.add_parser(
        "correct", parents=[common], help="correct an entry (a new entry that points at it)",
        description="Record a correction: a new entry pointing at the one it corrects, "
                    "with the corrected values applied through the same rules. Nothing is "
                    "edited in place.", epilog=CORRECT_EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("entry", metavar="ENTRY")
    p.add_argument("--reason", required=True, metavar="TEXT", help="what was wrong")
    p.add_argument("--ph", default="", metavar="PH", help="the final pH of a treatment")
    p.add_argument("--vented-ph", default="", metavar="PH", help="the pH once the CO2 vented")
    p.add_argument("--stage-ph", nargs="+", action="extend", default=[], metavar="PH",
                   help="the pH after each stage (all of them)")
    p.add_argument("--final-volume", default="", metavar="V")
    p.add_argument("--temperature", default="", metavar="C")
    p.add_argument("--added", default="", metavar="AMOUNT",
                   help="the reagent a treatment really added")
    p.add_argument("--used", default="", metavar="AMOUNT",
                   help="the amount a preparation really drew from its bottle")
    p.add_argument("--amount-left", default="", metavar="AMOUNT",
                   help="what the entry's bottle really holds")
    p.add_argument("--volume", metavar="V", help="(addition:ID) the volume really added")
    p.add_argument("--component", metavar="NAME=CONC",
                   help="(addition:ID) what really went in")
    p.add_argument("--withdraw", action="store_true",
                   help="(addition:ID) it never went in: withdraw it")
    p.set_defaults(func=journal_correct)

    p = journal_sub.add_parser("note", parents=[common],
                               help="a free note on a bottle or a container")
    p.add_argument("text", metavar="TEXT")
    about = p.add_mutually_exclusive_group(required=True)
    about.add_argument("--bottle", metavar="ID")
    about.add_argument("--waste", metavar="LABEL", help="a waste container")
    p.set_defaults(func=journal_note)


def _correct_addition(store, args, addition_id: int) -> dict:
    from carboy.store import waste

    if not (args.volume or args.component or args.withdraw):
        raise InvalidInput("addition correction", f"addition:{addition_id}", "give --volume, "
                           "--component or --withdraw", field="volume")
    if args.withdraw and (args.volume or args.component):
        raise InvalidInput("--withdraw", "", "withdraws the addition: give no new values")
    component = args.component
    if component is None and not args.withdraw:
        old = store.one("SELECT entered FROM waste_additions WHERE id = ?", [addition_id])
        component = old["entered"] if old else None
    new_id = waste.correct_addition(store, addition_id, args.reason, component=component,
                                    volume=args.volume)
    return {"addition_id": new_id, "supersedes": addition_id}


def journal_correct(args) -> int:
    from carboy.model.forms.correction import read
    from carboy.store import corrections

    found = _ADDITION.match(args.entry.strip())
    with open_store(args) as store:
        if found:
            done = _correct_addition(store, args, int(found.group(1)))
            line = (f"addition {done['supersedes']} corrected by addition {done['addition_id']}"
                    " (the original stays on record)")
        else:
            if args.volume or args.component or args.withdraw:
                raise InvalidInput("--volume/--component/--withdraw", args.entry,
                                   "correct a waste addition: give ENTRY as addition:ID")
            values = first_problem(read(CorrectionFields(
                reason=args.reason, final_ph=args.ph, vented_ph=args.vented_ph,
                stage_ph=tuple(args.stage_ph), final_volume=args.final_volume,
                temperature=args.temperature, added=args.added, used=args.used,
                amount_left=args.amount_left)), CORRECT_OPTIONS)
            result = corrections.correct(store, args.entry, values)
            done = result.to_dict()
            line = (f"entry {result.corrects_id} corrected by entry {result.entry_id}"
                    + (": " + ", ".join(result.changes) if result.changes else ""))
            for text in result.warnings:
                warn(text)
    if args.json:
        emit_json(done)
    else:
        print(line)
    return EXIT_OK


def journal_note(args) -> int:
    from carboy.store import corrections

    with open_store(args) as store:
        entry = corrections.note(store, args.text, bottle=args.bottle, container=args.waste)
    if args.json:
        emit_json({"journal_entry": entry})
    else:
        print(f"noted as journal entry {entry}")
    return EXIT_OK
