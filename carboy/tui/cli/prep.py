"""``carboy prep``: a recipe for a diluted solution (or one made from a solid), its label,
and, with ``--record``, the preparation written to the database."""

from __future__ import annotations

import argparse
import re
from datetime import date, timedelta

from carboy.tui.cli.kit import EXIT_OK, UsageError, emit_json

EXAMPLES = """examples:
  carboy prep --from H2SO4=96% --target 1M --volume 1L
  carboy prep --from HCl=12.1M --target 1M --target 0.1M --volume 100mL    (serial)
  carboy prep --from 'CuSO4·5H2O' --target 0.1M --volume 250mL --purity 99%
  carboy prep --from 23 --target 0.01M --volume 500mL --record --location 'Bench 2'
      (23 is a stock bottle id: its measured strength is used if it has one)

STOCK is COMPOUND=STRENGTH (a molarity or %w/w), a solid's formula (hydrates as
CuSO4·5H2O or CuSO4.5H2O; NaOH@97% gives an assay), or a stock bottle id.
"""

_BOTTLE_ID = re.compile(r"^#?\s*(\d+)$")


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


def _volumes(args, n: int) -> list[float]:
    from carboy.model import quantities

    vols = [quantities.volume_l(v, "final volume") for v in args.volume]
    if len(vols) == 1:
        return vols * n
    if len(vols) != n:
        raise UsageError(f"--volume given {len(vols)} times for {n} targets: give it once, or "
                         "once per --target")
    return vols


def _targets(args) -> list[float]:
    from carboy.model import quantities

    return [quantities.concentration_molar(t, "target concentration") for t in args.target]


def source_from_bottle(bottle, catalog):  # also used by the Prepare screen
    """A preparation Source for a stock bottle: its measured strength if any, else its label."""
    from carboy.model import preparation

    compound = catalog.compound(bottle.compound_key)
    value = bottle.current_strength if bottle.current_strength is not None \
        else bottle.label_strength
    basis = "measured" if bottle.current_strength is not None else "label"
    if bottle.amount_unit == "g":
        purity = value if bottle.strength_unit == "%w/w" else 100.0
        return preparation.solid_source(compound, purity_percent=purity, catalog=catalog)
    if bottle.strength_unit == "M":
        return preparation.solution_source(compound, conc_molar=value, basis=basis,
                                           catalog=catalog)
    return preparation.solution_source(compound, mass_percent=value, basis=basis,
                                       catalog=catalog)


def _source_from_text(text: str, purity: str | None, catalog):
    from carboy.model import preparation, quantities

    text = text.strip()
    if "@" in text:
        formula, _, assay = text.partition("@")
        if purity is not None:
            raise UsageError(f"source {text!r}: give the assay once, either @P or --purity")
        purity = assay
        text = formula.strip()
    source = preparation.parse_source(text, catalog=catalog)
    if purity is not None:
        if source.kind != "solid":
            raise UsageError(f"--purity {purity!r}: only a solid has an assay; a solution's "
                             "strength goes after '=', e.g. H2SO4=96%")
        source = preparation.solid_source(source.compound, purity_percent=quantities.percent(
            purity, "assay"), catalog=catalog)
    return source


def amount_used(recipe, unit: str) -> str:
    """What a recipe draws from a bottle kept in ``unit`` (``L`` or ``g``), as text."""
    if unit == "g" or recipe.stock_volume_ml is None:
        return f"{recipe.stock_mass_g:.6g} g"
    return f"{recipe.stock_volume_ml:.6g} mL"


def new_bottle_fields(recipe, today: date, *, location: str = "", lot: str = "",
                      expires: str | None = None) -> dict:
    """The stock-bottle fields of what a recipe makes (also used by the Prepare screen);
    expiry defaults to the storeroom shelf life of the compound."""
    from carboy.model import upkeep

    expires = expires or (today + timedelta(
        days=upkeep.shelf_life_days(recipe.source.compound.key))).isoformat()
    return {"compound": recipe.source.compound.key,
            "label_strength": f"{recipe.target_molar:.6g} M",
            "container_size": f"{recipe.final_volume_ml:.6g} mL",
            "location": location, "lot": lot, "received_on": today.isoformat(),
            "opened_on": today.isoformat(), "expires_on": expires,
            "notes": f"prepared from {recipe.source.label}"}


def label_for(recipe, fields: dict, who: str):
    """The label of the bottle a recipe makes, from its fields (see new_bottle_fields)."""
    from carboy.model import labels

    return labels.make_label(
        recipe.source.compound, conc_text=f"{recipe.target_molar:.4g} M",
        mass_percent=recipe.final_mass_percent, prepared_on=fields["received_on"],
        prepared_by=who, expires_on=fields["expires_on"], lot=fields["lot"] or None,
        source_text=recipe.source.label)


def _fields(recipe, args, today: date) -> dict:
    return new_bottle_fields(recipe, today, location=args.location, lot=args.lot,
                             expires=args.expires)


def build(args):
    """The recipes, their labels and (with --record) what was written; no output."""
    from carboy.model import preparation, quantities
    from carboy.model.catalog import default_catalog
    from carboy.store.db import current_user

    targets = _targets(args)
    volumes = _volumes(args, len(targets))
    t_c = quantities.temperature_c(args.temperature, "water temperature")
    today = date.today()
    who = (args.by or "").strip() or current_user()
    match = _BOTTLE_ID.match(args.source.strip())
    if args.expires:
        from carboy.store.stock import parse_date

        parse_date(args.expires, "expiry date")
    needs_store = bool(match) or args.record
    if needs_store:
        from carboy.store import stock
        from carboy.store.compounds import catalog_for
        from carboy.tui.cli.kit import open_store

        with open_store(args) as store:
            catalog = catalog_for(store)
            bottle = stock.get(store, match.group(1)) if match else None
            if bottle is not None and args.purity is not None:
                raise UsageError("--purity: a bottle's own assay or strength is used")
            source = source_from_bottle(bottle, catalog) if bottle else \
                _source_from_text(args.source, args.purity, catalog)
            recipes = _plan(preparation, source, targets, volumes, t_c)
            fields = [_fields(r, args, today) for r in recipes]
            labels_ = [label_for(r, f, who) for r, f in zip(recipes, fields)]
            recorded = None
            if args.record:
                steps = []
                for k, (recipe, f) in enumerate(zip(recipes, fields)):
                    if k == 0:
                        src = bottle.id if bottle else None
                        used = amount_used(recipe, bottle.amount_unit) if bottle else None
                    else:
                        src, used = stock.PREVIOUS, amount_used(recipe, "L")
                    steps.append(stock.PreparationStep(
                        src, used, f, snapshot={"recipe": recipe.to_dict(),
                                                "label": labels_[k].to_dict()}))
                made = stock.prepare_series(store, steps, who=who)
                recorded = [{"entry_id": m.entry_id, "new_bottle_id": m.new_bottle_id,
                             "source_left": m.source_left} for m in made]
        return recipes, labels_, recorded
    catalog = default_catalog()
    source = _source_from_text(args.source, args.purity, catalog)
    recipes = _plan(preparation, source, targets, volumes, t_c)
    labels_ = [label_for(r, _fields(r, args, today), who) for r in recipes]
    return recipes, labels_, None


def _plan(preparation, source, targets, volumes, t_c):
    if len(targets) == 1:
        return (preparation.plan_recipe(source, targets[0], volumes[0], temperature_c=t_c),)
    return preparation.plan_series(source, targets, volumes)


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


def heat_text(recipe) -> str:
    """The heat line of a recipe: how much, and how warm it gets while mixing and after."""
    if recipe.heat_kj is None:
        return "not estimated (no published data held for this solution)"
    if recipe.heat_kj < 0:
        text = f"about {-recipe.heat_kj:.2g} kJ taken up (it cools)"
    else:
        text = f"about {recipe.heat_kj:.2g} kJ released"
    mixing = getattr(recipe, "mixing_rise_c", None)
    if mixing is not None and recipe.temperature_rise_c is not None:
        text += (f"; about {mixing:+.1f} K while mixing, {recipe.temperature_rise_c:+.1f} K "
                 "once made up")
    elif recipe.temperature_rise_c is not None:
        text += f"; temperature change about {recipe.temperature_rise_c:+.1f} K"
    return text


def render_recipe(recipe) -> str:
    """A recipe as plain text (also used by the Prepare screen)."""
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
