"""``carboy standardize``: the molarity of a titrant from replicate titrations of a weighed
primary standard, with its statistics and the acceptance decision; with ``--bottle`` an
accepted result becomes that bottle's current strength."""

from __future__ import annotations

import argparse

from carboy.model.forms.standardize import method_of, read_millilitres, read_replicate
from carboy.tui.cli.kit import EXIT_OK, UsageError, emit_json

EXIT_NOT_ACCEPTED = 1

EXAMPLES = """examples:
  carboy standardize --titrant NaOH --standard KHP \\
      --mass 0.5106 --volume 25.02 --mass 0.5098 --volume 24.97 --mass 0.5112 --volume 25.05
  carboy standardize --bottle 34 --standard KHP --purity 99.97 --blank 0.03 \\
      --mass 0.4087g --volume 20.11mL --mass 0.4120g --volume 20.27mL --mass 0.4101g --volume 20.18mL
  carboy standardize --titrant HCl --standard Na2CO3 --mass 0.2650 --volume 24.95 ...

A bare --mass is in grams and a bare --volume or --blank in millilitres.
With --bottle, an accepted result is written as the bottle's current strength with a
journal entry (use --dry-run to only compute). Exit status: 0 when accepted, 1 when
computed but not accepted, 2 on bad input.
"""


def register(sub) -> None:
    p = sub.add_parser(
        "standardize", help="molarity of a titrant from replicate titrations",
        description="Molarity of each replicate, mean, standard deviation, RSD, 95 % "
        "confidence interval, an outlier test and the acceptance decision.",
        epilog=EXAMPLES, formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("--titrant", metavar="NAME",
                   help="NaOH, KOH, HCl, H2SO4 or HNO3 (default: the bottle's compound)")
    p.add_argument("--standard", required=True, metavar="NAME",
                   help="primary standard: KHP, Na2CO3, Tris or sulfamic acid")
    p.add_argument("--mass", action="append", default=[], metavar="M",
                   help="mass of standard weighed for one replicate (repeat)")
    p.add_argument("--volume", action="append", default=[], metavar="V",
                   help="titrant volume at the end point for that replicate (repeat)")
    p.add_argument("--blank", action="append", default=[], metavar="V",
                   help="blank titration volume: once for all, or once per replicate")
    p.add_argument("--purity", metavar="P",
                   help="assay of the standard, %% (default: the standard's usual assay)")
    p.add_argument("--bottle", metavar="ID", help="stock bottle being standardized")
    p.add_argument("--max-rsd", metavar="P", help="largest accepted RSD, %% (default: the "
                   "storeroom rule, else 0.2)")
    p.add_argument("--min-replicates", metavar="N", help="fewest replicates (default: the "
                   "storeroom rule, else 3)")
    p.add_argument("--dry-run", action="store_true", help="with --bottle: compute only")
    p.add_argument("--db", metavar="PATH", default=argparse.SUPPRESS,
                   help="database file (for --bottle and the storeroom's rules)")
    p.add_argument("--json", action="store_true", help="print one JSON object")
    p.set_defaults(func=run)


def _replicates(args):
    from carboy.model.standardization import Replicate

    if not args.mass:
        raise UsageError("give at least one replicate: --mass M --volume V")
    if len(args.mass) != len(args.volume):
        raise UsageError(f"{len(args.mass)} --mass but {len(args.volume)} --volume: give one "
                         "volume for every mass, in the same order")
    n = len(args.mass)
    blanks = args.blank or ["0"]
    if len(blanks) == 1:
        blanks = blanks * n
    elif len(blanks) != n:
        raise UsageError(f"--blank given {len(blanks)} times for {n} replicates: give it once, "
                         "or once per replicate")
    out = []
    for k, (m, v, b) in enumerate(zip(args.mass, args.volume, blanks), 1):
        mass, volume = read_replicate(m, v, what=f" of replicate {k}")
        blank = read_millilitres(b, f"blank of replicate {k}")
        out.append(Replicate(mass_g=mass, volume_ml=volume, blank_ml=blank))
    return out


def _rule(args, base):
    from dataclasses import replace

    from carboy.store import rules

    changes = {}
    if args.max_rsd is not None or args.min_replicates is not None:
        # the same checks as a stored rule, without storing anything
        probe = rules.parse_acceptance(max_rsd_percent=args.max_rsd,
                                       min_replicates=args.min_replicates)
        changes = {k: v for k, v in probe.items() if v is not None}
    return replace(base, **changes)


def build(args):
    """The standardization and what was recorded (entry id or None); no output."""
    from carboy.model import standardization as std
    from carboy.model.standardization import AcceptanceRule

    replicates = _replicates(args)
    purity = None
    if args.purity is not None:
        from carboy.model import quantities

        purity = quantities.percent(args.purity, "assay of the standard")
    db_wanted = args.bottle is not None or getattr(args, "db", None) or getattr(args, "demo",
                                                                                False)
    if not db_wanted:
        if not args.titrant:
            raise UsageError("give --titrant (or --bottle to standardize a stock bottle)")
        result = std.standardize(args.titrant, args.standard, replicates,
                                 purity_percent=purity, rule=_rule(args, AcceptanceRule()))
        return result, None, None
    from carboy.store import rules, stock
    from carboy.tui.cli.kit import open_store

    with open_store(args) as store:
        rule = _rule(args, rules.load(store).acceptance())
        bottle = stock.get(store, args.bottle) if args.bottle is not None else None
        titrant = args.titrant
        nominal = None
        if bottle is not None:
            if titrant is None:
                titrant = bottle.compound_key
            elif std.titrant(titrant).key != std.titrant(bottle.compound_key).key:
                raise UsageError(f"--titrant {titrant!r}: bottle {bottle.id} holds "
                                 f"{bottle.compound_key}")
            if bottle.strength_unit != "M":
                raise UsageError(f"bottle {bottle.id} is labelled "
                                 f"{bottle.strength_text}: standardization gives a molarity, "
                                 "so only a bottle labelled in M can take it")
            nominal = bottle.label_strength
        elif titrant is None:
            raise UsageError("give --titrant (or --bottle to standardize a stock bottle)")
        result = std.standardize(titrant, args.standard, replicates, purity_percent=purity,
                                 rule=rule, nominal_molar=nominal)
        entry = None
        if bottle is not None and result.accepted and not args.dry_run:
            entry = stock.record_standardization(
                store, bottle.id, result.mean_molar, method=method_of(result),
                snapshot={"standardization": result.to_dict()})
        return result, bottle, entry


def run(args) -> int:
    result, bottle, entry = build(args)
    if args.json:
        out = result.to_dict()
        out["bottle_id"] = bottle.id if bottle is not None else None
        out["recorded_entry_id"] = entry
        emit_json(out)
        return EXIT_OK if result.accepted else EXIT_NOT_ACCEPTED
    print(render(result))
    if bottle is not None:
        if entry is not None:
            print(f"recorded: bottle {bottle.id} is now {result.mean_molar:.5g} M "
                  f"(journal entry #{entry})")
        elif result.accepted:
            print(f"not recorded (--dry-run): bottle {bottle.id} keeps its strength")
        else:
            print(f"not recorded: bottle {bottle.id} keeps its strength")
    return EXIT_OK if result.accepted else EXIT_NOT_ACCEPTED


def render(result) -> str:
    """A standardization as plain text (also used by the Standardize screen)."""
    lines = [f"{result.titrant.key} against {result.standard.name} "
             f"(assay {result.purity_percent:g} %)",
             f"  {'#':>2}  {'mass / g':>10}  {'volume / mL':>11}  {'blank':>6}  "
             f"{'molarity / M':>12}"]
    for r in result.replicates:
        flag = "  outlier" if r.outlier else ""
        lines.append(f"  {r.index:>2}  {r.mass_g:>10.4f}  {r.volume_ml:>11.2f}  "
                     f"{r.blank_ml:>6.2f}  {r.molar:>12.5f}{flag}")
    lines.append(f"  mean {result.mean_molar:.5f} M")
    if result.sd_molar is not None:
        lines.append(f"  sd {result.sd_molar:.2g} M, RSD {result.rsd_percent:.3f} %, "
                     f"95 % CI ± {result.ci95_molar:.2g} M (t = {result.t_critical:.3f})")
    test = result.outlier_test
    if test.get("applicable", test.get("statistic") is not None):
        lines.append(f"  outlier test: {test.get('method')} G = {test['statistic']:.3f}, "
                     f"critical {test['critical']:.3f} at alpha {test.get('alpha')}")
    else:
        lines.append(f"  outlier test: {test.get('note') or 'not applied'}")
    if result.deviation_percent is not None:
        lines.append(f"  against the label {result.nominal_molar:g} M: "
                     f"{result.deviation_percent:+.2f} %")
    lines.append("accepted" if result.accepted else "NOT accepted")
    lines += [f"  - {r}" for r in result.reasons]
    lines += [f"  note: {w}" for w in result.warnings]
    lines += [f"  standard: {n}" for n in result.notes]
    return "\n".join(lines)
