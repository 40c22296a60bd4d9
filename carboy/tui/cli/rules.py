"""``carboy rules``: the storeroom's re-check intervals, acceptance rule and disposal rule
profile (every change journaled)."""

from __future__ import annotations

import argparse

from carboy.tui.cli.kit import EXIT_OK, common_options, emit_json, open_store


def register(sub) -> None:
    common = common_options()
    fmt = argparse.RawDescriptionHelpFormatter
    p = sub.add_parser(
        "rules", parents=[common], formatter_class=fmt,
        help="the storeroom's re-check intervals, acceptance rule and disposal rules",
        description="Show the rules in force, or set the storeroom's own. Every change is "
                    "journaled. Without options, shows them.",
        epilog="examples:\n  carboy rules --recheck NaOH=7 --recheck HCl=never\n"
               "  carboy rules --recheck NaOH=default\n"
               "  carboy rules --max-rsd 0.3 --min-replicates 3\n"
               "  carboy rules --acceptance-default\n"
               "  carboy rules --storeroom-name 'Storeroom B, North Wing'\n"
               "  carboy rules --window 5.5:9.5 --batch-max 500mL --flush 20\n"
               "  carboy rules --batch-treatment no\n"
               "  carboy rules --never-treat 'HNO3>10%' --treat-again HF\n"
               "  carboy rules --disposal-default batch_max_l   (or: all)")
    p.add_argument("--recheck", action="append", default=[], metavar="COMPOUND=DAYS",
                   help="re-check interval of a molar solution: days, 'never' or 'default' "
                        "(repeatable)")
    p.add_argument("--max-rsd", metavar="PERCENT",
                   help="largest accepted RSD of standardization replicates (default 0.2)")
    p.add_argument("--min-replicates", metavar="N", help="fewest replicates (default 3)")
    p.add_argument("--acceptance-default", action="store_true",
                   help="return to carboy's default acceptance rule")
    p.add_argument("--storeroom-name", metavar="NAME",
                   help="the storeroom's name printed on labels, records and reports "
                        "('' removes it)")
    d = p.add_argument_group("disposal rules", "the storeroom's rules for treating waste in "
                             "the lab; carboy's values are placeholders until set")
    for option, _name, metavar, words in DISPOSAL_OPTIONS:
        d.add_argument(option, metavar=metavar, help=words)
    d.add_argument("--never-treat", action="append", default=[], metavar="ITEM",
                   help="add to the never-treat list: HClO4, 'HNO3>20%%', stream:hf, "
                        "tag:heavy_metal (repeatable)")
    d.add_argument("--treat-again", action="append", default=[], metavar="ITEM",
                   help="take an item off the never-treat list (repeatable)")
    d.add_argument("--disposal-default", nargs="+", metavar="RULE",
                   help="return rules to carboy's placeholders: rule names or 'all'")
    p.set_defaults(func=rules_cmd)


DISPOSAL_OPTIONS = (
    ("--window", "window", "LO:HI", "acceptance window of a treated waste, e.g. 6:9"),
    ("--batch-treatment", "batch_treatment", "YES|NO",
     "whether collected waste may be treated in the lab at all"),
    ("--batch-max", "batch_max_l", "V|none", "largest batch of waste treated at once"),
    ("--vessel", "vessel_l", "V|none", "the treatment vessel (none: the container itself)"),
    ("--dilute-to", "dilute_to_percent", "PCT|none",
     "dilute a stronger waste to this %% w/w before treating"),
    ("--ice", "ice_fraction", "PCT", "part of the dilution water given as ice, e.g. 50%%"),
    ("--flush", "flush_factor", "N", "flush with N volumes of water"),
    ("--max-temperature", "max_temperature_c", "C", "safe temperature of a batch, °C"),
    ("--fill-limit", "fill_limit_percent", "PCT",
     "fill a waste container to at most this (headspace), default 90"),
    ("--nearly-full", "nearly_full_percent", "PCT",
     "a container is nearly full from this, default 80"),
)
"""Option, rule name, metavar, help of each disposal rule set from the command line."""


def disposal_changes(args, profile) -> dict:
    """The disposal rules the options set (rule name -> text as typed)."""
    from carboy.errors import InvalidInput
    from carboy.model.forms import split_window

    changes = {}
    for option, name, _m, _w in DISPOSAL_OPTIONS:
        value = getattr(args, option[2:].replace("-", "_"))
        if value is None:
            continue
        if name == "window":
            edges = split_window(value)
            if edges is None:
                raise InvalidInput("--window", value, "expected LO:HI, e.g. 6:9 (or 6-9)")
            changes["window_low"], changes["window_high"] = edges
        else:
            changes[name] = value
    if args.never_treat or args.treat_again:
        items = [i.to_dict() for i in profile.never_treat]
        gone = {t.strip() for t in args.treat_again}
        unknown = gone - {i["item"] for i in items}
        if unknown:
            raise InvalidInput("--treat-again", sorted(unknown)[0], "is not on the never-treat "
                               "list: " + ", ".join(i["item"] for i in items))
        changes["never_treat"] = [i for i in items if i["item"] not in gone] + \
            [t.strip() for t in args.never_treat]
    return changes


def rules_cmd(args) -> int:
    from carboy.errors import InvalidInput
    from carboy.store import disposal, rules

    with open_store(args) as store:
        for item in args.recheck:
            compound, sep, days = item.partition("=")
            if not sep or not compound.strip():
                raise InvalidInput("--recheck", item, "expected COMPOUND=DAYS, e.g. NaOH=7")
            rules.set_recheck(store, compound.strip(), days.strip())
        if args.acceptance_default:
            rules.reset_acceptance(store)
        if args.storeroom_name is not None:
            rules.set_storeroom_name(store, args.storeroom_name)
        if args.max_rsd is not None or args.min_replicates is not None:
            rules.set_acceptance(store, max_rsd_percent=args.max_rsd,
                                 min_replicates=args.min_replicates)
        if args.disposal_default:
            names = args.disposal_default
            disposal.reset(store, None if names == ["all"] else names)
        changes = disposal_changes(args, disposal.load(store))
        if changes:
            disposal.set_rules(store, changes)
        in_force = rules.load(store)
        profile = disposal.load(store)
    if args.json:
        emit_json({**in_force.to_dict(), "disposal": profile.to_dict()})
        return EXIT_OK
    rule = in_force.acceptance()
    print(f"storeroom name on paper: {in_force.storeroom_name or '(not set)'}")
    print("re-check intervals of molar solutions (a bottle's own interval wins):")
    for key, days in sorted(in_force.recheck_days.items()):
        print(f"  {key:<10} every {days:>4} days  ({in_force.recheck_origin[key]})")
    print(f"standardization accepted when RSD <= {rule.max_rsd_percent:g} % over at least "
          f"{rule.min_replicates} replicates and no replicate is an outlier")
    print(f"  (default 0.2 %: {rule.source})")
    print("\n".join(disposal_text(profile)))
    return EXIT_OK


def disposal_text(profile) -> list[str]:
    """The disposal rules in force, one line each, with where each comes from."""
    from carboy.model import disposal_profile as dp

    lines = ["disposal rules (treating waste in the lab):"]
    for r in dp.RULES:
        origin = profile.origin.get(r.name, dp.PLACEHOLDER)
        value = dp.describe(r.name, profile.value(r.name))
        if r.kind != "items":
            lines.append(f"  {r.words:<50} {value}  ({origin})")
    lines.append(f"  never treated in the lab ({profile.origin.get('never_treat')}):")
    lines += [f"    {i.item:<28} {i.why}" for i in profile.never_treat]
    if profile.all_placeholders or dp.PLACEHOLDER in profile.origin.values():
        lines.append(f"  ({dp.shipped_notice()}; sources: carboy/model/data/"
                     f"{dp.DATA_FILE})")
    return lines
