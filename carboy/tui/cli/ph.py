"""``carboy ph``: the pH and speciation of a solution named by its components."""

from __future__ import annotations

import argparse

from carboy.tui.cli.kit import add_activity_options, chosen_activity, emit_json

EXAMPLES = """examples:
  carboy ph H2SO4=0.05M NaH2PO4=10mM --temperature 35
  carboy ph "acetic acid=0.1" "sodium acetate=0.1" --json
"""


def register(sub) -> None:
    p = sub.add_parser(
        "ph",
        help="pH and speciation of a solution",
        description="Solve the exact charge and mass balances of a solution and report its "
        "pH, ionic strength and every species.",
        epilog=EXAMPLES,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("components", nargs="+", metavar="NAME=CONC",
                   help="a catalog formula or name and its concentration (M, mM, µM, mol/L; "
                   "a bare number is molar)")
    p.add_argument("--temperature", default="25", metavar="C",
                   help="temperature in °C, 0–100 (default 25)")
    add_activity_options(p)
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.set_defaults(func=run)


def build_result(args) -> dict:
    from carboy.model import quantities
    from carboy.model.catalog import default_catalog
    from carboy.model.components import parse_component
    from carboy.model.mixture import Mixture
    from carboy.model.speciation import speciate

    catalog = default_catalog()
    parsed = [parse_component(text, catalog) for text in args.components]
    t = quantities.temperature_c(args.temperature)
    mixture = Mixture.from_compounds(parsed, temperature_c=t)
    res = speciate(mixture, activity=chosen_activity(args), catalog=catalog)
    part = res.model_part
    return {
        "pH": res.pH,
        "h_molar": res.h_molar,
        "pkw": res.pkw,
        "ionic_strength_molar": res.ionic_strength_molar,
        "temperature_c": res.temperature_c,
        "activity": res.activity,
        "activity_model": part.model if part else res.activity,
        "ph_scale": res.ph_scale,
        "ionic_strength_molal": part.ionic_strength_molal if part else None,
        "water_kg_per_l": part.water_kg_per_l if part else None,
        "water_activity": part.water_activity if part else None,
        "components": [
            {"compound": c.key, "name": c.name, "formula": c.formula, "conc_molar": v}
            for c, v in parsed
        ],
        "totals_molar": dict(mixture.totals),
        "species": dict(res.species),
        "molality": dict(res.molality),
        "fractions": {k: dict(v) for k, v in res.fractions.items()},
        "activity_coefficients": dict(res.activity_coefficients),
        "solids_molar": dict(res.solids),
        "saturation_indices": dict(res.saturation_indices),
        "dissolved_metals_molar": dict(res.dissolved_metals),
        "warnings": list(res.warnings),
        "converged": res.converged,
        "iterations": res.iterations,
        "charge_residual_molar": res.charge_residual_molar,
    }


def format_report(r: dict) -> str:
    from carboy.model.speciation_models import describe_model

    lines = []
    for w in r["warnings"]:
        lines.append(f"! {w}")
    comps = ", ".join(f"{c['compound']} {c['conc_molar']:.4g} M" for c in r["components"])
    model = describe_model(r["activity"], r["activity_model"])
    ionic = f"{r['ionic_strength_molar']:.4g} M"
    if r["ionic_strength_molal"] is not None:
        ionic += f"   ({r['ionic_strength_molal']:.4g} mol/kg)"
    for label, value in (
        ("solution", comps),
        ("temperature", f"{r['temperature_c']:g} °C   (pKw {r['pkw']:.3f})"),
        ("pH", f"{r['pH']:.3f}   ({model})"),
        ("ionic strength", ionic),
    ):
        lines.append(f"{label:<16}{value}")
    lines.append("")
    molal = r["molality"]
    lines.append(f"{'species':<14}{'mol/L':>12}" + (f"{'mol/kg':>12}" if molal else "")
                 + f"   {'gamma':>6}")
    order = sorted(r["species"].items(), key=lambda kv: -kv[1])
    for label, c in order:
        g = r["activity_coefficients"].get(label, 1.0)
        kg = f"{molal[label]:>12.4e}" if molal else ""
        lines.append(f"{label:<14}{c:>12.4e}{kg}   {g:>6.3f}")
    formed = {name: v for name, v in r["solids_molar"].items() if v > 0}
    if formed:
        lines.append("")
        lines.append("solids formed (mol of formula units per L)")
        for name, v in sorted(formed.items(), key=lambda kv: -kv[1]):
            lines.append(f"  {name:<30}{v:>12.4e}")
    if r["fractions"]:
        lines.append("")
        lines.append("protonation forms of each system (the part not in pairs or complexes)")
        for key, fr in r["fractions"].items():
            parts = "  ".join(f"{lab} {v:.3g}" for lab, v in fr.items())
            lines.append(f"  {key:<12} {parts}")
    return "\n".join(lines)


def run(args) -> int:
    r = build_result(args)
    if args.json:
        emit_json(r)
    else:
        print(format_report(r))
    return 0
