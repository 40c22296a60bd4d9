"""``carboy waste treat``, ``waste licensed`` and ``waste dispose``: what happens to a
container at the end, headless (the actions the app's Waste and Neutralize screens do).

``treat`` records a treatment as it happened, in one transaction: the reagent bottle is
drawn down, the container's volume and contents include the reagent, its status moves
on and the journal keeps the plan (computed for the container as it stood, under the
storeroom's disposal rules) with the readings.  A final pH outside the window is
recorded with a warning (the container then cannot be marked disposed).
"""

from __future__ import annotations

import argparse

from carboy.errors import CarboyError
from carboy.model.disposal_rules import ROUTES
from carboy.model.forms.treatment import TreatmentFields
from carboy.store.statuses import ContainerStatus
from carboy.tui.cli.kit import EXIT_OK, emit_json, first_problem, open_store, warn
from carboy.tui.wording import DISPOSAL_NOTE, treatment_line

TREAT_OPTIONS = {"bottle": "--bottle", "reagent": "--reagent", "added": "--added",
                 "stage_added": "--stage-added", "stage_ph": "--stage-ph",
                 "vented_ph": "--vented-ph", "final_ph": "--ph",
                 "final_volume": "--final-volume", "temperature": "--temperature",
                 "route": "--route", "performed_by": "--by", "note": "--note"}
"""The option that carries each field of the treatment form."""

TREAT_EPILOG = """examples:
  carboy waste treat MA-01 --bottle 7 --added 2.5L --ph 7.2
  carboy waste treat MA-01 --bottle 7 --added 2.5L --stage-added 2L 0.5L \\
      --stage-ph 4.1 6.9 --vented-ph 7.0 --ph 7.2 --final-volume 11L --temperature 31
  carboy waste treat MA-02 --reagent NaHCO3 --added 850g --ph 6.8 --route licensed-disposal

Exit status: 0 recorded; 1 the rules refuse it (never treated here, not waiting for
treatment); 2 bad input (a reading outside pH 0-14, more than the bottle holds)."""


def register(waste_sub, common) -> None:
    p = waste_sub.add_parser(
        "treat", parents=[common], help="record a treatment as it happened",
        description="Record what was really done to a container: the reagent and its "
                    "bottle, the amount added, the pH readings, final volume and route. "
                    "One transaction; the journal keeps the plan and the readings.",
        epilog=TREAT_EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("label")
    p.add_argument("--bottle", metavar="ID", default="", help="the stock bottle the reagent "
                   "came from (it is drawn down)")
    p.add_argument("--reagent", metavar="R", default="", help="a reagent not taken from a "
                   "stock bottle: NaOH=2M, NaHCO3, NaOH@97%%")
    p.add_argument("--added", metavar="AMOUNT", default="", help="amount added in all, in "
                   "the bottle's unit: 2.5L, 850g")
    p.add_argument("--stage-added", nargs="+", action="extend", default=[], metavar="AMOUNT",
                   help="the amount of each stage (they add up to --added)")
    p.add_argument("--ph", metavar="PH", default="", help="final pH measured (0-14)")
    p.add_argument("--stage-ph", nargs="+", action="extend", default=[], metavar="PH",
                   help="pH after each stage")
    p.add_argument("--vented-ph", metavar="PH", default="", help="pH once the CO2 vented")
    p.add_argument("--final-volume", metavar="V", default="", help="final volume measured")
    p.add_argument("--temperature", metavar="C", default="", help="temperature measured, °C")
    p.add_argument("--route", default="drain", choices=ROUTES,
                   help="where it goes: drain (where local rules allow) or licensed-disposal")
    p.add_argument("--by", metavar="NAME", default="", help="who did the work (default: you)")
    p.add_argument("--note", metavar="TEXT", default="")
    p.set_defaults(func=waste_treat)

    for name, words, status in (
            ("licensed", "hold a container for licensed disposal (journaled; final)",
             ContainerStatus.LICENSED_DISPOSAL),
            ("dispose", "mark a treated container disposed (journaled; final)",
             ContainerStatus.DISPOSED)):
        p = waste_sub.add_parser(name, parents=[common], help=words, description=words + ". "
                                 "Local disposal rules and the safety office decide the route.")
        p.add_argument("label")
        p.add_argument("--note", metavar="TEXT", default="")
        p.set_defaults(func=waste_move, status=status)


def _fields(args) -> TreatmentFields:
    return TreatmentFields(bottle=args.bottle, reagent=args.reagent, added=args.added,
                           stage_added=tuple(args.stage_added), stage_ph=tuple(args.stage_ph),
                           vented_ph=args.vented_ph, final_ph=args.ph,
                           final_volume=args.final_volume, temperature=args.temperature,
                           route=args.route, performed_by=args.by, note=args.note)


def _plan(store, args, readings):
    """The plan for the container as it stands (under the rules), or None and why not."""
    from carboy.model.forms.neutralize import snapshot
    from carboy.store import stock, treatments
    from carboy.store.planning import bottle_text

    try:
        text = readings.reagent_text or bottle_text(stock.get(store, readings.bottle_id))
        reading, fields = treatments.plan_for(store, args.label, text)
    except CarboyError as err:
        return {"error": str(err)}, None
    if not reading.ok:
        return {"error": "; ".join(reading.errors.values())}, None
    snap = snapshot(fields, reading.value, container_label=args.label,
                    reagent_bottle_id=readings.bottle_id, recorded_from="carboy waste treat",
                    disposal=reading.disposal)
    return snap, reading.disposal


def waste_treat(args) -> int:
    from carboy.model.forms.treatment import read
    from carboy.store import treatments
    from carboy.store.compounds import catalog_for

    with open_store(args) as store:
        readings = first_problem(read(_fields(args), catalog_for(store)), TREAT_OPTIONS)
        plan, disposal = _plan(store, args, readings)
        treated = treatments.record_treatment(store, args.label, readings,
                                              plan_snapshot=plan)
    if args.json:
        emit_json({**treated.to_dict(), "plan_error": plan.get("error"),
                   "disposal": disposal.to_dict() if disposal is not None else None})
    else:
        print(treatment_line(treated))
    for text in treated.warnings:
        warn(text)
    return EXIT_OK


def waste_move(args) -> int:
    from carboy.store import waste

    with open_store(args) as store:
        entry = waste.set_status(store, args.label, args.status, note=args.note)
        c = waste.container(store, args.label)
    if args.json:
        emit_json({"journal_entry": entry, **c.as_dict()})
    else:
        print(f"{c.label} is now {ContainerStatus(c.status).state} (journal entry {entry})")
        print(DISPOSAL_NOTE)
    return EXIT_OK
