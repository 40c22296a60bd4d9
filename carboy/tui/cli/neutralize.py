"""``carboy neutralize``: a neutralization plan for a waste named by its components."""

from __future__ import annotations

import argparse
import sys

from carboy.errors import HazardRefused
from carboy.model.forms import split_window
from carboy.model.forms.neutralize import NeutralizeFields
from carboy.tui.cli.kit import (
    EXIT_REFUSED,
    UsageError,
    add_activity_options,
    chosen_activity,
    emit_json,
    first_problem,
    open_store,
)
from carboy.tui.wording import disposal_lines, heat_portions_text, plan_heat_text

EXAMPLES = """examples:
  carboy neutralize H2SO4=0.5M --volume 250mL --reagent NaOH=2M
  carboy neutralize HCl=1M H3PO4=0.1M --volume 1L --reagent NaHCO3 --window 6:9
  carboy neutralize Na2CO3=0.2M --volume 500mL --reagent HCl=1M --json
  carboy neutralize --waste ACID-03 --reagent NaOH=50% --db storeroom.db
"""


def register(sub) -> None:
    p = sub.add_parser(
        "neutralize",
        help="plan the neutralization of a waste",
        description="Plan how much reagent takes a waste to a target pH: doses, heat, CO2, "
        "staged additions, precipitates and the cautions that apply. Local disposal rules "
        "and your safety office set the real acceptance window.",
        epilog=EXAMPLES,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("components", nargs="*", metavar="NAME=CONC",
                   help="the waste's components, as for 'carboy ph'")
    p.add_argument("--waste", metavar="LABEL", help="plan for a waste container of the database "
                   "instead of named components")
    p.add_argument("--volume", metavar="V", help="volume of the waste with a unit (mL, L)")
    p.add_argument("--reagent", required=True, metavar="REAGENT",
                   help="NaOH=2M (solution), NaOH=50%% (%%w/w), NaHCO3 (solid), NaOH@97%% "
                   "(solid with assay)")
    p.add_argument("--target", default="7", metavar="PH", help="target pH (default 7)")
    p.add_argument("--window", default=None, metavar="LO:HI",
                   help="acceptance window (default: the storeroom's disposal rules with "
                        "--waste, else carboy's placeholder 6:9; local rules set the real one)")
    p.add_argument("--temperature", default="25", metavar="C",
                   help="temperature in °C, 0–100 (default 25)")
    add_activity_options(p)
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.set_defaults(func=run)


OPTIONS = {"components": "components (NAME=CONC, or --waste LABEL)", "volume": "--volume", "reagent": "--reagent",
           "target": "--target", "window": "--window", "temperature": "--temperature"}
"""The option that carries each field of the neutralization form."""


def fields_of(args, window: tuple[float, float] = (6.0, 9.0)) -> NeutralizeFields:
    """The neutralization form as the command line fills it (``window``: the default)."""
    text = args.window if args.window is not None else f"{window[0]:g}:{window[1]:g}"
    edges = split_window(text)
    if edges is None:
        raise UsageError(f"window {text!r}: expected LO:HI, e.g. 6:9 (or 6-9)")
    low, high = edges
    return NeutralizeFields(components=tuple(args.components), volume=args.volume or "",
                            reagent=args.reagent, target=args.target, window_low=low,
                            window_high=high, temperature=args.temperature,
                            activity=chosen_activity(args))


def build_plan(args):
    """The plan of ``carboy neutralize`` (the Neutralize screen reads the same form) and
    the plan under the disposal rules: the storeroom's with ``--waste``, else carboy's
    placeholders."""
    from carboy.model.catalog import default_catalog
    from carboy.model.disposal_profile import shipped
    from carboy.model.forms import neutralize as form

    container, catalog, profile = None, None, shipped()
    if args.waste:
        if args.components:
            raise UsageError("give either components or --waste, not both")
        if args.volume:
            raise UsageError("--volume comes from the container with --waste; leave it out")
        from carboy.store import disposal
        from carboy.store.planning import container_sample

        with open_store(args) as store:
            container, catalog = container_sample(store, args.waste)
            profile = disposal.load(store)
    reading = form.evaluate(fields_of(args, profile.window), catalog or default_catalog(),
                            container, profile=profile)
    return first_problem(reading, OPTIONS), reading.disposal


def _amount(dose, reagent) -> str:
    if not dose.reachable:
        return "not reachable with this reagent"
    parts = [f"{dose.reagent_mol:.4g} mol"]
    if dose.reagent_volume_l is not None:
        parts.append(_litres(dose.reagent_volume_l))
    parts.append(f"{dose.reagent_mass_g:.4g} g")
    return ", ".join(parts) + f"  ->  pH {dose.pH:.2f}"


def _litres(litres: float) -> str:
    """A volume to four figures, in mL below a litre and in L from one (11 L, not
    1.1e+04 mL)."""
    return f"{litres:.4g} L" if abs(litres) >= 1.0 else f"{litres * 1000:.4g} mL"


def format_report(plan) -> str:
    from carboy.model.speciation_models import describe_model

    lines = []
    marks = {"danger": "!!", "warning": "! ", "notice": "- "}
    if not plan.drain_plan:
        lines.append("THIS IS NOT A DRAIN-DISPOSAL PLAN: collect for licensed disposal.")
    lines.append("cautions")
    for c in plan.cautions:
        lines.append(f" {marks.get(c.severity, '- ')} [{c.severity} {c.code}] {c.text}")
    for w in plan.warnings:
        lines.append(f" ?  {w}")
    lines.append("")
    r = plan.reagent
    lines.append(f"reagent        {r.describe()}")
    lines.append(f"sample         {_litres(plan.sample.volume_l)} at "
                 f"{plan.sample.temperature_c:g} °C, pH {plan.initial_pH:.2f} "
                 f"({describe_model(plan.activity, plan.activity_model)})")
    if plan.direction == "base":
        lines.append(f"every proton   {plan.proton_equivalents_mol:.4g} mol OH- needed to take "
                     "every acid to its fully deprotonated form"
                     + (" and every metal to its hydroxide" if plan.metal_hydroxide_mol
                        else ""))
    else:
        lines.append(f"every proton   {-plan.proton_equivalents_mol:.4g} mol H+ needed to take "
                     "every base to its fully protonated form")
    width = max((len(name) for name in plan.breakdown), default=0) + 2
    for name, v in plan.breakdown.items():
        lines.append(f"                 {name:<{width}}{v:+.4g} mol")
    lines.append(f"full dose      {_amount(plan.full, r)}")
    if plan.reagent_reach is not None and plan.reagent_reach.limited:
        cannot = ", ".join(f"{k} {v:.4g} mol" for k, v in plan.reagent_reach.cannot.items())
        lines.append(f"not counted    protons {r.key} cannot take: {cannot}")
    lines.append(f"to pH {plan.to_target.target_pH:<8g} {_amount(plan.to_target, r)}")
    lo, hi = plan.window_doses
    lines.append(f"window {plan.window[0]:g}-{plan.window[1]:g}   low edge: {_amount(lo, r)}")
    lines.append(f"               high edge: {_amount(hi, r)}")
    lines.append("               (local disposal rules set the real acceptance window)")
    if plan.bound_protons_at_target:
        bound = ", ".join(f"{k} {v:.2f}" for k, v in plan.bound_protons_at_target.items())
        lines.append(f"left acidic    acid hydrogens still held per formula unit at the "
                     f"target (expected for weak acids): {bound}")
    lines.append(f"heat           {plan_heat_text(plan)}")
    if plan.gas_l or plan.vented_pH is not None:
        lines.append(f"CO2            {plan.gas_l:.3g} L right after adding the dose to target, "
                     f"{plan.vented_gas_l:.3g} L once vented; at {plan.gas_conditions}")
        if plan.pH_before_venting is not None:
            lines.append(f"right after    pH about {plan.pH_before_venting:.2f} while the CO2 "
                         "formed is still dissolved")
        if plan.vented_pH is not None:
            lines.append(f"after venting  pH {plan.vented_pH:.2f} (air pCO2 "
                         f"{plan.vent_pco2_atm:.2g} atm assumed; doses are for this state)")
    lines.append("")
    lines.append(f"stages (sensitivity {plan.sensitivity_pH_per_percent:.2g} pH per 1 % of dose)")
    for s in plan.stages:
        vol = f"{_litres(s.add_volume_l):>11}" if s.add_volume_l is not None else ""
        lines.append(f"  {s.index}. add {s.add_mol:9.4g} mol {s.add_mass_g:9.4g} g {vol}"
                     f"  -> pH {s.pH_after:.2f}")
    portions = heat_portions_text(plan)
    if portions:
        lines.append(f"  ! {portions}")
    over = [s for s in plan.salt_limits if s.exceeded]
    for s in over:
        lines.append(f"salt limit     {s.salt} about {s.molality:.3g} mol/kg, "
                     f"{s.saturated_molality:.3g} dissolve at {s.temperature_c:g} °C: "
                     f"add about {s.water_to_add_l:.2g} L water or collect the solid")
    if plan.precipitates:
        lines.append("saturation at the target (SI > 0: expected to precipitate)")
        for p in plan.precipitates:
            lines.append(f"  {p.solid:<32} SI {p.saturation_index:+.2f}"
                         f"{'  expected: sludge, not drain' if p.expected else ''}")
    for head, text in plan.metal_lines():
        lines.append(f"{head:<15}{text}")
    if plan.equivalence_points:
        lines.append("equivalence points")
        for e in plan.equivalence_points:
            lines.append(f"  {e.reagent_mol:.4g} mol  pH {e.pH:.2f}  {e.label}")
    return "\n".join(lines)


def run(args) -> int:
    try:
        plan, rules = build_plan(args)
    except HazardRefused as exc:  # a cyanide or sulfide waste is never planned towards acid
        if args.json:
            emit_json({"plan": None, "refused": str(exc)})
        print(f"carboy: {exc}", file=sys.stderr)
        return EXIT_REFUSED
    if args.json:
        emit_json({**plan.to_dict(), "disposal": rules.to_dict() if rules else None})
    else:
        if rules is not None and not rules.may_treat and plan.drain_plan:   # first, as HF's
            print("NOT TO BE TREATED HERE under the storeroom's disposal rules: route "
                  "licensed disposal (the doses below are for information only).")
        print(format_report(plan))
        if rules is not None:
            print("\nunder the disposal rules" + ("" if args.waste else
                                                  " (carboy's placeholders)"))
            print("\n".join("  " + line for line in disposal_lines(rules)))
    return 0
