"""``carboy rules``: the storeroom's re-check intervals and acceptance rule."""

from __future__ import annotations

import argparse

from carboy.tui.cli.kit import EXIT_OK, common_options, emit_json, open_store


def register(sub) -> None:
    common = common_options()
    fmt = argparse.RawDescriptionHelpFormatter
    p = sub.add_parser(
        "rules", parents=[common], formatter_class=fmt,
        help="the storeroom's re-check intervals and acceptance rule",
        description="Show the rules in force, or set the storeroom's own. Every change is "
                    "journaled. Without options, shows them.",
        epilog="examples:\n  carboy rules --recheck NaOH=7 --recheck HCl=never\n"
               "  carboy rules --recheck NaOH=default\n"
               "  carboy rules --max-rsd 0.3 --min-replicates 3\n"
               "  carboy rules --acceptance-default")
    p.add_argument("--recheck", action="append", default=[], metavar="COMPOUND=DAYS",
                   help="re-check interval of a molar solution: days, 'never' or 'default' "
                        "(repeatable)")
    p.add_argument("--max-rsd", metavar="PERCENT",
                   help="largest accepted RSD of standardization replicates (default 0.2)")
    p.add_argument("--min-replicates", metavar="N", help="fewest replicates (default 3)")
    p.add_argument("--acceptance-default", action="store_true",
                   help="return to carboy's default acceptance rule")
    p.set_defaults(func=rules_cmd)


def rules_cmd(args) -> int:
    from carboy.errors import InvalidInput
    from carboy.store import rules

    with open_store(args) as store:
        for item in args.recheck:
            compound, sep, days = item.partition("=")
            if not sep or not compound.strip():
                raise InvalidInput("--recheck", item, "expected COMPOUND=DAYS, e.g. NaOH=7")
            rules.set_recheck(store, compound.strip(), days.strip())
        if args.acceptance_default:
            rules.reset_acceptance(store)
        if args.max_rsd is not None or args.min_replicates is not None:
            rules.set_acceptance(store, max_rsd_percent=args.max_rsd,
                                 min_replicates=args.min_replicates)
        in_force = rules.load(store)
    if args.json:
        emit_json(in_force.to_dict())
        return EXIT_OK
    rule = in_force.acceptance()
    print("re-check intervals of molar solutions (a bottle's own interval wins):")
    for key, days in sorted(in_force.recheck_days.items()):
        print(f"  {key:<10} every {days:>4} days  ({in_force.recheck_origin[key]})")
    print(f"standardization accepted when RSD <= {rule.max_rsd_percent:g} % over at least "
          f"{rule.min_replicates} replicates and no replicate is an outlier")
    print(f"  (default 0.2 %: {rule.source})")
    return EXIT_OK
