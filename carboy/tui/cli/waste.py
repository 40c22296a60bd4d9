"""``carboy waste``: waste containers headless (new, add, show, list, record)."""

from __future__ import annotations

import argparse

from carboy.store.statuses import CONTAINER_STATUSES, ContainerStatus
from carboy.tui.cli.kit import (
    EXIT_OK,
    common_options,
    emit_json,
    first_problem,
    group,
    open_store,
)
from carboy.tui.wording import count, volume


def register(sub) -> None:
    common = common_options()
    fmt = argparse.RawDescriptionHelpFormatter
    waste_sub = group(sub, "waste", help="waste containers: new, add, show, list, record",
                      description="Waste containers and what went into them.")

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
    p.add_argument("--status", choices=CONTAINER_STATUSES)
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


def waste_new(args) -> int:
    from carboy.store import waste

    with open_store(args) as store:
        c = waste.new_container(store, args.label, location=args.location,
                                capacity=args.capacity, notes=args.notes)
    if args.json:
        emit_json(c.as_dict())
    else:
        print(f"opened waste container {c.label} ({volume(c.capacity_l)}) at "
              f"{c.location or '-'}")
    return EXIT_OK


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
        addition_id = waste.add(store, args.label, addition.component.text,
                                addition.volume_l, note=addition.note)
        c = waste.container(store, args.label)
    if args.json:
        emit_json({"addition_id": addition_id, **c.as_dict()})
    else:
        print(f"logged addition {addition_id} to {c.label}: now {volume(c.volume_l)} of "
              f"{volume(c.capacity_l)}")
    return EXIT_OK


def waste_show(args) -> int:
    from carboy.store import waste

    with open_store(args) as store:
        info = waste.show(store, args.label)
    if args.json:
        emit_json(info)
        return EXIT_OK
    print(f"{info['label']}  {ContainerStatus(info['status']).words}  "
          f"{volume(info['volume_l'])} of {volume(info['capacity_l'])}"
          f"  {info['location']}")
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
        found = waste.containers(store, status=args.status)
    if args.json:
        emit_json([c.as_dict() for c in found])
        return EXIT_OK
    for c in found:
        print(f"{c.label:<12} {ContainerStatus(c.status).words:<18} "
              f"{volume(c.volume_l):>8} of {volume(c.capacity_l):<8} "
              f"{count(c.n_additions, 'addition'):>13}  {c.location}")
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
