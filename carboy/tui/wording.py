"""Words and numbers both front ends print the same way.

The app and the command line lay things out differently, but a quantity, a heat or a
status reads the same in both: the phrasing lives here, once (numbers by the rule of
:mod:`carboy.model.numbers`, which the journal's summaries follow too).
"""

from __future__ import annotations

from carboy.model import numbers
from carboy.model.numbers import amount, count, mass, moles, ph, strength, volume

__all__ = ["DISPOSAL_NOTE", "amount", "count", "disposal_lines", "heat_portions", "heat_portions_text", "heat_text",
           "mass", "moles", "ph", "plan_heat_text",
           "short_strength", "strength", "tally", "treatment_line", "volume"]


def heat_text(recipe) -> str:
    """The heat line of a recipe: how much, and how warm it gets while mixing and after."""
    # here, not at the top: batch_heat loads numpy, which the app's first screen (the
    # stock list, worded here) never needs
    from carboy.model.batch_heat import boil_c

    if recipe.heat_released_kj is None:
        return "not estimated (no published data held for this solution)"
    text = _released(recipe.heat_released_kj)
    mixing = getattr(recipe, "mixing_rise_c", None)
    rises = [r for r in (mixing, recipe.temperature_rise_c) if r is not None]
    if rises and recipe.temperature_c + max(rises) >= boil_c():
        return text + (f"; enough to take it past boiling (about {boil_c():g} °C): add it in "
                       "portions, cooling between them")
    if mixing is not None and recipe.temperature_rise_c is not None:
        text += (f"; about {mixing:+.1f} K while mixing, {recipe.temperature_rise_c:+.1f} K "
                 "once made up")
    elif recipe.temperature_rise_c is not None:
        text += f"; temperature change about {recipe.temperature_rise_c:+.1f} K"
    return text


def _released(kj: float) -> str:
    """``about 12 kJ released`` or ``about 3 kJ taken up (it cools)``: heat released is
    the positive figure everywhere."""
    if kj < 0:
        return f"about {numbers.figures(-kj, 2)} kJ taken up (it cools)"
    return f"about {numbers.figures(kj, 2)} kJ released"


def plan_heat_text(plan) -> str:
    """The heat line of a neutralization plan: heat released, the batch's temperature (or
    that it would boil), the stages that keep it under the safe temperature, and the heat
    capacity it rests on."""
    text = _released(plan.heat_released_kj)
    bh = getattr(plan, "batch_heat", None)
    if bh is None:
        return text + f", temperature change about {plan.temperature_rise_c:+.1f} K"
    if bh.boils:
        text += (f"; enough to take the batch past boiling (about {bh.boil_c:g} °C): it would "
                 "boil and spatter")
    else:
        text += (f"; temperature change about {bh.rise_k:+.1f} K, to about "
                 f"{numbers.figures(bh.final_c, 2)} °C")
    if bh.above_safe:
        text += (f"; to stay below {bh.safe_c:g} °C ({bh.safe_from}) add it in at least "
                 f"{bh.stages} stages, cooling between them" if bh.stages is not None else
                 f"; staging alone cannot keep it below {bh.safe_c:g} °C: dilute and cool first")
    return text + f" (adiabatic; {bh.heat_capacity.note()})"


def heat_portions(plan) -> tuple[str, int | None, float] | None:
    """What the heat asks of the stages where the batch would pass its safe temperature
    (the staged table is about the pH, and its first stage is most of the dose): (the most
    of the reagent to add at a time, in at least how many equal portions, the temperature
    to cool back to), with ``("", None, safe °C)`` where staging alone cannot do it; None
    where the batch stays below it."""
    bh = getattr(plan, "batch_heat", None)
    if bh is None or not bh.above_safe:
        return None
    if bh.stages is None:
        return "", None, bh.safe_c
    r = plan.reagent
    n = (plan.to_target.reagent_mol or 0.0) / bh.stages
    litres = r.volume_l(n)
    return (volume(litres) if litres is not None else mass(r.mass_g(n))), bh.stages, bh.start_c


def heat_portions_text(plan) -> str | None:
    """:func:`heat_portions` as one line under the staged table."""
    got = heat_portions(plan)
    if got is None:
        return None
    each, k, temp_c = got
    if k is None:
        return f"heat: staging alone cannot keep it below {temp_c:g} °C: dilute and cool first"
    return (f"heat: add at most {each} at a time (the dose in at least {k} equal portions), "
            f"cooling to about {temp_c:g} °C between them: split the stages above so")


def short_strength(value: float | None, unit: str) -> str:
    """A strength for a narrow column: ``0.1 M``, ``37 %`` (w/w), ``—`` when unknown."""
    return numbers.strength(value, unit).replace(" %w/w", " %")


def tally(found, noun: str | None = None) -> str:
    """A count the store may have stopped counting (``found.n``, ``found.exact``, as
    :class:`carboy.store.stock_search.Count`): ``1,234`` or ``more than 10,000``; with
    ``noun``, ``1 bottle`` or ``more than 10,000 bottles``."""
    if found.exact:
        return f"{found.n:,}" if noun is None else count(found.n, noun)
    return f"more than {found.n:,}" + ("" if noun is None else f" {noun}s")


DISPOSAL_NOTE = (
    "⚠ Advice only: carboy never calls anything safe to pour away. Follow local "
    "disposal rules, your institution's safety office and licensed practice."
)
"""The standing disposal note: on every screen, and after every command, that leads
toward disposal."""


def disposal_lines(disposal) -> list[str]:
    """The plan under the storeroom's disposal rules, one line a step (both front ends):
    a :class:`~carboy.model.disposal_rules.DisposalPlan`."""
    lines = []
    if not disposal.may_treat:
        lines.append("NOT TO BE TREATED HERE: route licensed disposal")
    for step, text in disposal.steps:
        lines.append(f"{step:<12} {text}")
    lines += [f"!            {w}" for w in disposal.warnings]
    if disposal.profile.all_placeholders:
        lines.append(f"             ({disposal.profile.to_dict()['note']})")
    return lines


def treatment_line(treated) -> str:
    """What a recorded treatment did, in one line (a
    :class:`~carboy.store.treatments.Treated`)."""
    lo, hi = treated.window
    where = "in" if treated.in_window else "OUTSIDE"
    bottle = ""
    if treated.bottle_id is not None:
        bottle = (f"; bottle {treated.bottle_id} has "
                  f"{numbers.amount(treated.bottle_left, treated.bottle_unit)} left")
    return (f"recorded the treatment of {treated.label} as journal entry {treated.entry_id}: "
            f"final pH {where} the window pH {lo:g}–{hi:g}; {treated.label} is now "
            f"{treated.status.replace('-', ' ')}, {numbers.volume(treated.volume_l)}{bottle}")
