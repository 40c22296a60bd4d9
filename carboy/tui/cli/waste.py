"""``carboy waste``: waste containers headless (new, add, stream, show, list, record; treat,
licensed and dispose in :mod:`carboy.tui.cli.waste_treat`).

An addition the compatibility rules refuse is not logged: one line on stderr names the
hazard and the exit status is 1.  One they question needs ``--accept "REASON"``; a gas
hazard (HCN, H2S, Cl2, chloramines, HN3) is refused whatever reason is given.
"""

from __future__ import annotations

import argparse
import sys

from carboy.errors import HazardRefused, Refused
from carboy.model.compatibility import MATERIALS, streams
from carboy.store.statuses import CONTAINER_STATUSES, ContainerStatus
from carboy.tui.cli import waste_treat
from carboy.tui.cli.kit import (
    EXIT_OK,
    EXIT_REFUSED,
    common_options,
    emit_json,
    first_problem,
    group,
    none_found,
    open_store,
)
from carboy.tui.wording import count, volume

STREAM_HELP = "what the container is meant for: " + ", ".join(
    f"{key} ({s.name})" for key, s in streams().items())
ACCEPT_ADVICE = 'to log it anyway, give --accept "REASON" (the journal keeps it)'


def register(sub) -> None:
    common = common_options()
    fmt = argparse.RawDescriptionHelpFormatter
    waste_sub = group(sub, "waste", help="waste containers: new, add, stream, show, list, "
                      "record, treat, licensed, dispose",
                      description="Waste containers and what went into them.")

    p = waste_sub.add_parser("new", parents=[common], help="open a new container")
    p.add_argument("label")
    p.add_argument("--stream", required=True, choices=tuple(streams()), metavar="NAME",
                   help=STREAM_HELP)
    p.add_argument("--material", choices=MATERIALS, help="what the container is made of")
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
    p.add_argument("--accept", default="", metavar="REASON",
                   help="log it although the rules question it (never for a gas hazard); "
                        "the journal keeps the reason")
    p.set_defaults(func=waste_add)

    p = waste_sub.add_parser(
        "stream", parents=[common], help="change what a container is meant for (journaled)",
        description="Change a container's stream (and material); the journal keeps the "
                    "reason. Refused when the contents contradict the new stream.")
    p.add_argument("label")
    p.add_argument("stream", choices=tuple(streams()), metavar="NAME", help=STREAM_HELP)
    p.add_argument("--reason", required=True, metavar="TEXT", help="why it changes")
    p.add_argument("--material", choices=MATERIALS, help="what the container is made of")
    p.set_defaults(func=waste_stream)

    p = waste_sub.add_parser("show", parents=[common], help="a container, its composition "
                             "and additions")
    p.add_argument("label")
    p.set_defaults(func=waste_show)

    p = waste_sub.add_parser("list", parents=[common], help="every container")
    p.add_argument("--status", choices=CONTAINER_STATUSES)
    p.add_argument("--nearly-full", action="store_true",
                   help="only collecting containers at or past the rules' nearly-full level "
                        "(80 %% unless set: carboy rules --nearly-full)")
    p.set_defaults(func=waste_list)

    p = waste_sub.add_parser(
        "record", parents=[common], help="a container's disposal record as a PDF",
        description="Write the disposal record of a container to a PDF (A4): its stream, "
                    "every addition, the composition, cautions, the plan, the treatment or "
                    "licensed-disposal hand-over from the journal, and lines to sign. "
                    "Nothing in the database changes.")
    p.add_argument("label")
    p.add_argument("--pdf", required=True, metavar="PATH", help="the PDF file to write")
    p.add_argument("--storeroom", metavar="NAME", help="storeroom name printed on each page")
    p.set_defaults(func=waste_record)
    waste_treat.register(waste_sub, common)


def waste_new(args) -> int:
    from carboy.store import waste

    with open_store(args) as store:
        c = waste.new_container(store, args.label, location=args.location,
                                capacity=args.capacity, notes=args.notes, stream=args.stream,
                                material=args.material)
    if args.json:
        emit_json(c.as_dict())
    else:
        print(f"opened waste container {c.label} ({volume(c.capacity_l)}, "
              f"{streams()[c.stream].name}) at {c.location or '-'}")
    return EXIT_OK


def _report(args, container, extra: dict, line: str) -> int:
    """The container after a change: as JSON (with ``extra``) or as one line."""
    if args.json:
        emit_json({**extra, **container.as_dict()})
    else:
        print(line)
    return EXIT_OK


def refused(exc: Refused, args) -> int:
    """One line naming the hazard (and, where a reason may pass it, how); status 1."""
    line = f"carboy: {exc}" + (f"; {ACCEPT_ADVICE}" if exc.overridable else "")
    if args.json:
        emit_json({"logged": False, "refused": str(exc), "overridable": exc.overridable,
                   "findings": [f.to_dict() for f in exc.findings]})
    print(line, file=sys.stderr)
    return EXIT_REFUSED


ADD_OPTIONS = {"compound": "COMPONENT (NAME=CONC)", "amount": "COMPONENT (NAME=CONC)", "volume": "--volume",
               "note": "--note"}
"""The argument that carries each field of the addition form."""


def waste_add(args) -> int:
    from carboy.model.forms.waste_addition import AdditionFields, read
    from carboy.store import waste
    from carboy.store.compounds import catalog_for

    fields = AdditionFields.of_component(args.component, args.volume or "", args.note)
    with open_store(args) as store:
        addition = first_problem(read(fields, catalog_for(store)), ADD_OPTIONS)
        try:
            addition_id = waste.add(store, args.label, addition.component.text,
                                    addition.volume_l, note=addition.note, accept=args.accept)
        except HazardRefused as exc:
            return refused(exc, args)
        c = waste.container(store, args.label)
    return _report(args, c, {"addition_id": addition_id},
                   f"logged addition {addition_id} to {c.label}: now {volume(c.volume_l)} of "
                   f"{volume(c.capacity_l)}")


def waste_stream(args) -> int:
    from carboy.store import waste

    material = {} if args.material is None else {"material": args.material}
    with open_store(args) as store:
        try:
            entry = waste.set_stream(store, args.label, args.stream, args.reason, **material)
        except HazardRefused as exc:
            return refused(exc, args)
        c = waste.container(store, args.label)
    return _report(args, c, {"journal_entry": entry},
                   f"{c.label} is now meant for {streams()[c.stream].name} "
                   f"(journal entry {entry})")


def waste_show(args) -> int:
    from carboy.store import waste

    with open_store(args) as store:
        info = waste.show(store, args.label)
    if args.json:
        emit_json(info)
        return EXIT_OK
    fill = " (full)" if info["full"] else " (nearly full)" if info["nearly_full"] else ""
    print(f"{info['label']}  {ContainerStatus(info['status']).words}  "
          f"{volume(info['volume_l'])} of {volume(info['capacity_l'])}{fill}"
          f"  {info['location']}")
    made_of = f", {info['material']}" if info["material"] else ""
    print(f"  stream: {info['stream_name']}{made_of}"
          + (f"  ({info['stream_note']})" if info["stream_note"] else ""))
    for w in info["warnings"]:
        answered = f"  (logged with a reason: {w['accepted']})" if "accepted" in w else ""
        print(f"  ! {w['message']}{answered}")
    if info["estimated_pH"] is not None:
        print(f"  estimated pH {info['estimated_pH']:.1f} (computed from the additions)")
    if info["notes"]:
        print(f"  {info['notes']}")
    print("  composition (mol):")
    for key, mol in info["composition"].items():
        print(f"    {key:<12} {mol:.4g}")
    print("  additions:")
    for a in info["additions"]:
        vol = volume(a["volume_l"]) if a["volume_l"] else ""
        gone = "  [superseded]" if a["superseded"] else ""
        print(f"    #{a['id']} {a['added_at'][:16]} {a['added_by']:<12} {a['entered']:<18} "
              f"{vol:<8} {a['note']}{gone}")
    return EXIT_OK


def waste_list(args) -> int:
    from carboy.store import waste

    with open_store(args) as store:
        found = waste.containers(store, status=args.status, nearly_full=args.nearly_full)
    if args.json:
        emit_json([c.as_dict() for c in found])
        return EXIT_OK
    if not found:
        print(none_found("waste containers", [f"status {args.status}"] * bool(args.status)
                         + ["nearly full"] * args.nearly_full))
    for c in found:
        mark = "FULL" if c.full else "nearly full" if c.nearly_full else ""
        print(f"{c.label:<12} {ContainerStatus(c.status).words:<18} {streams()[c.stream].name.split(' waste')[0]:<16} "
              f"{volume(c.volume_l):>8} of {volume(c.capacity_l):<8} {c.fill_percent:4.0f} % "
              f"{mark:<11} {count(c.n_additions, 'addition'):>13}  {c.location}")
    return EXIT_OK


def waste_record(args) -> int:
    from carboy.store.disposal_record import disposal_record
    from carboy.tui.paper import render as paper

    with open_store(args) as store:
        doc = disposal_record(store, args.label, storeroom=args.storeroom)
    path = str(paper.write_pdf([doc], args.pdf))
    if args.json:
        emit_json({"pdf": path, "record": doc.to_dict()})
    else:
        print(f"wrote the disposal record of {args.label} to {path}")
    return EXIT_OK
