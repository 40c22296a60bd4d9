"""``carboy prep``: a recipe for a diluted solution (or one made from a solid), its label,
and, with ``--record``, the preparation written to the database."""

from __future__ import annotations

import argparse
from datetime import date

from carboy.model.forms import bottle_ref
from carboy.model.forms.prepare import PrepareFields
from carboy.tui.cli.kit import EXIT_OK, emit_json, first_problem, open_store
from carboy.tui.wording import heat_text

EXAMPLES = """examples:
  carboy prep --from H2SO4=96% --target 1M --volume 1L
  carboy prep --from HCl=12.1M --target 1M --target 0.1M --volume 100mL    (serial)
  carboy prep --from 'CuSO4·5H2O' --target 0.1M --volume 250mL --purity 99%
  carboy prep --from 23 --target 0.01M --volume 500mL --record --location 'Bench 2'
      (23 is a stock bottle id: its measured strength is used if it has one)

STOCK is COMPOUND=STRENGTH (a molarity or %w/w), a solid's formula (hydrates as
CuSO4·5H2O or CuSO4.5H2O; NaOH@97% gives an assay), or a stock bottle id.
"""

def register(sub) -> None:
    p = sub.add_parser(
        "prep", help="recipe for a diluted solution or one made from a solid",
        description="How much concentrate (volume and mass) or solid, the water to start "
        "with, the order of addition, the heat and temperature rise, the cautions, and the "
        "label text of the new bottle. Nothing is written unless --record is given.",
        epilog=EXAMPLES, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("--from", dest="source", required=True, metavar="STOCK",
                   help="H2SO4=96%%, HCl=12.1M, NaOH (solid), CuSO4·5H2O, or a bottle id")
    p.add_argument("--target", action="append", required=True, metavar="CONC",
                   help="target molarity, e.g. 1M or 100mM; repeat for a serial dilution, "
                   "each step made from the one before")
    p.add_argument("--volume", action="append", required=True, metavar="V",
                   help="final volume with a unit (250mL, 1L); once for every step, or once "
                   "per --target")
    p.add_argument("--purity", metavar="P", help="assay of a solid, %% (default 100)")
    p.add_argument("--temperature", default="20", metavar="C",
                   help="starting temperature of the water, °C (default 20)")
    p.add_argument("--record", action="store_true",
                   help="write it to the database: draw from the source bottle, add the new "
                   "bottle(s) and journal it, in one transaction")
    p.add_argument("--location", default="", metavar="TEXT", help="where the new bottle goes")
    p.add_argument("--lot", default="", metavar="CODE", help="lot code for the new bottle")
    p.add_argument("--expires", metavar="YYYY-MM-DD",
                   help="expiry of the new bottle (default: the storeroom shelf life)")
    p.add_argument("--by", metavar="NAME", help="preparer's name on the label (default: you)")
    p.add_argument("--db", metavar="PATH", default=argparse.SUPPRESS,
                   help="database file (needed for a bottle id or --record)")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.set_defaults(func=run)


OPTIONS = {"source": "--from", "target": "--target", "volume": "--volume",
           "purity": "--purity", "temperature": "--temperature", "expires": "--expires"}
"""The option that carries each field of the preparation form."""


def fields_of(args) -> PrepareFields:
    """The preparation form as the command line fills it."""
    return PrepareFields(source=args.source, target=tuple(args.target),
                         volume=tuple(args.volume), purity=args.purity or "",
                         temperature=args.temperature, location=args.location, lot=args.lot,
                         expires=args.expires or "")


def build(args):
    """The recipes, their labels and (with --record) what was written; no output."""
    from carboy.model.catalog import default_catalog
    from carboy.store import preparations as preparing
    from carboy.store.db import current_user

    fields = fields_of(args)
    plan = {"today": date.today(), "prepared_by": (args.by or "").strip() or current_user()}
    if bottle_ref(args.source) is None and not args.record:
        made = first_problem(preparing.evaluate(None, fields, default_catalog(), **plan),
                             OPTIONS)
        return made.recipes, made.labels, None
    from carboy.store.compounds import catalog_for

    with open_store(args) as store:
        reading = preparing.evaluate(store, fields, catalog_for(store), **plan)
        made = first_problem(reading, OPTIONS)
        recorded = None
        if args.record:
            done = preparing.record_made(store, made, reading.bottle)
            recorded = [{"entry_id": m.entry_id, "new_bottle_id": m.new_bottle_id,
                         "source_left": m.source_left} for m in done]
    return made.recipes, made.labels, recorded


def run(args) -> int:
    recipes, labels_, recorded = build(args)
    if args.json:
        def one(k: int) -> dict:
            out = {**recipes[k].to_dict(), "label": labels_[k].to_dict()}
            if recorded is not None:
                out["recorded"] = recorded[k]
            return out

        emit_json(one(0) if len(recipes) == 1 else {"series": [one(k) for k in
                                                                range(len(recipes))]})
        return EXIT_OK
    for k, recipe in enumerate(recipes):
        if len(recipes) > 1:
            print(f"== step {k + 1} of {len(recipes)} ==")
        print(render_recipe(recipe))
        print()
        print("label for the new bottle:")
        for line in labels_[k].lines:
            print(f"  | {line}")
        if recorded is not None:
            r = recorded[k]
            print(f"recorded: journal entry #{r['entry_id']}, new bottle {r['new_bottle_id']}"
                  + (f"; source bottle has {r['source_left']:.6g} left"
                     if r["source_left"] is not None else ""))
        print()
    return EXIT_OK


def render_recipe(recipe) -> str:
    """A recipe as plain text."""
    src = recipe.source
    lines = [f"{recipe.final_volume_ml:.6g} mL of {recipe.target_molar:.4g} M "
             f"{src.compound.key} from {src.label}"]
    if recipe.stock_volume_ml is not None:
        lines.append(f"  concentrate     {recipe.stock_volume_ml:.4g} mL "
                     f"({recipe.stock_mass_g:.4g} g)"
                     + (f" at {recipe.stock_molar:.4g} M" if recipe.stock_molar else ""))
    else:
        lines.append(f"  weigh           {recipe.stock_mass_g:.4g} g")
    lines.append(f"  water first     about {recipe.water_ml:.0f} mL")
    lines.append(f"  heat            {heat_text(recipe)}")
    lines.append("steps:")
    lines += [f"  {i}. {step}" for i, step in enumerate(recipe.steps, 1)]
    lines.append("cautions:")
    lines += [f"  {c.severity.upper():<7} {c.text}" for c in recipe.cautions]
    if recipe.notes:
        lines.append("notes:")
        lines += [f"  - {n}" for n in recipe.notes]
    return "\n".join(lines)
