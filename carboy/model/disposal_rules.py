"""A neutralization plan under the storeroom's disposal rule profile.

:func:`apply` takes a :class:`~carboy.model.plan_result.Plan` (as the planner made it),
the :class:`~carboy.model.disposal_profile.DisposalProfile` in force and the container
(or typed sample) it is for, and says what the rules make of it:

* whether it may be treated in the lab at all, and why not (route: licensed disposal):
  a never-treat item it holds, its stream, collected waste where batch treatment is
  forbidden, a plan that is not for the drain;
* the batches the profile allows (the largest batch, the vessel and its fill limit), each
  with its waste, dilution water and ice, reagent and final volume, and whether it fits;
* the dilution step (target % w/w and the ice-water step) when the waste is stronger;
* whether the whole dose would overflow the container (then it proposes batches);
* the temperature a batch may reach against the safe limit, and the ice that keeps it
  there;
* the flush volume; and the steps in order, as people read them.

Everything is plain data (:meth:`DisposalPlan.to_dict` is the ``disposal`` part of the
``--json`` plan).  It advises: local disposal rules and the safety office decide.

Estimates carboy states: the strength of a waste in % w/w is the sum of each compound's
at its own molarity (the catalog's density table where it covers it, else water's
density); the density of a mixture is water's plus each compound's excess; heat of
dilution is not counted (the ice is there for it); a batch's heat is the plan's heat
shared evenly; heat capacity that of water, 4.18 kJ/(kg·K); ice melts at 0 °C taking
334 kJ/kg.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import asdict, dataclass, replace

from carboy.errors import CarboyError
from carboy.model import numbers
from carboy.model.disposal_profile import DisposalProfile, NeverTreat

ROUTE_DRAIN = "drain"
"""Treated here; the neutralized solution goes where local rules allow (the drain only
where they do)."""
ROUTE_LICENSED = "licensed-disposal"
"""Never treated here: held, closed and labelled, for the licensed contractor."""
ROUTES = (ROUTE_DRAIN, ROUTE_LICENSED)
CP_KJ_KG_K = 4.18
"""Heat capacity taken for every batch (water; assumption)."""
ICE_MELT_KJ_KG = 334.0
"""Heat of fusion of ice (common value, from memory)."""
MAX_BATCHES = 500
"""More batches than this is no plan: the container goes to licensed disposal."""


@dataclass(frozen=True, eq=False, repr=False)
class Batch:
    """One batch as the rules allow it (volumes in L, masses in g, ice in kg)."""

    index: int
    waste_l: float
    water_l: float
    ice_kg: float
    reagent_mol: float | None
    reagent_volume_l: float | None
    reagent_mass_g: float | None
    final_l: float
    vessel_l: float | None
    fits: bool
    peak_temperature_c: float | None
    flush_l: float


@dataclass(frozen=True, eq=False, repr=False)
class Dilution:
    """The dilution before treatment: from the waste's strength to the profile's target."""

    strength_percent: float
    target_percent: float
    water_l: float
    """All the dilution water (ice included, as melted), L."""
    ice_kg: float
    liquid_water_l: float


@dataclass(frozen=True, eq=False, repr=False)
class Overflow:
    """The whole dose in the container: does it fit below the fill limit?"""

    capacity_l: float
    final_l: float
    limit_l: float
    fits: bool
    batches: int


@dataclass(frozen=True, eq=False, repr=False)
class DisposalPlan:
    """The plan under the rules; see the module docstring."""

    may_treat: bool
    route: str
    reasons: tuple[str, ...]
    batches: tuple[Batch, ...]
    dilution: Dilution | None
    overflow: Overflow | None
    peak_temperature_c: float | None
    extra_ice_kg: float
    flush_l: float
    steps: tuple[tuple[str, str], ...]
    warnings: tuple[str, ...]
    profile: DisposalProfile
    strength_percent: float | None = None

    @property
    def n_batches(self) -> int:
        return len(self.batches)

    def to_dict(self) -> dict:
        return {
            "may_treat": self.may_treat, "route": self.route, "reasons": list(self.reasons),
            "n_batches": self.n_batches, "batches": [asdict(b) for b in self.batches],
            "strength_percent": self.strength_percent,
            "dilution": asdict(self.dilution) if self.dilution else None,
            "overflow": asdict(self.overflow) if self.overflow else None,
            "temperature": {"peak_c": self.peak_temperature_c,
                            "limit_c": self.profile.max_temperature_c,
                            "extra_ice_kg": self.extra_ice_kg},
            "flush": {"factor": self.profile.flush_factor, "volume_l": self.flush_l},
            "window": {"low_pH": self.profile.window_low, "high_pH": self.profile.window_high},
            "steps": [{"step": k, "text": t} for k, t in self.steps],
            "warnings": list(self.warnings),
            "profile": self.profile.to_dict(),
        }


# -- what a waste holds ------------------------------------------------------------------

def strength_of(compounds: Mapping[str, float], volume_l: float, catalog,
                ) -> tuple[float, float]:
    """(% w/w, density g/mL) of a waste holding ``compounds`` (key -> mol) in
    ``volume_l``, by the estimate the module docstring states."""
    from carboy.model.solutions import strength_of as one_strength

    percent, excess = 0.0, 0.0
    if volume_l <= 0:
        return 0.0, 1.0
    for key, mol in compounds.items():
        if mol <= 0 or key not in catalog:
            continue
        compound = catalog.compound(key)
        conc = mol / volume_l
        w = rho = None
        try:
            found = one_strength(compound, conc_molar=conc, catalog=catalog)
            w, rho = found.mass_percent, found.density_g_ml
        except CarboyError:
            pass
        if w is None:
            w = conc * compound.molar_mass_g_mol / 10.0  # g/L over 1000 g/L of water, in %
        percent += w
        excess += (rho - 1.0) if rho else 0.0
    return min(percent, 100.0), 1.0 + excess


def _holds(item: NeverTreat, compounds: Mapping[str, float], volume_l: float, stream: str | None,
           catalog) -> bool:
    if item.kind == "stream":
        return stream is not None and stream == item.keys[0]
    present = [k for k, mol in compounds.items() if mol > 0]
    if item.kind == "tag":
        return any(k in catalog and set(item.keys) <= catalog.compound(k).hazards
                   for k in present)
    key = item.keys[0]
    if key not in present:
        return False
    if item.above_percent is None:
        return True
    return strength_of({key: compounds[key]}, volume_l, catalog)[0] > item.above_percent


def never_treat_reasons(profile: DisposalProfile, compounds: Mapping[str, float],
                        volume_l: float, stream: str | None, catalog) -> tuple[str, ...]:
    """Why the never-treat list keeps this waste out of the lab (empty: it does not)."""
    return tuple(f"{item.item}: {item.why}" for item in profile.never_treat
                 if _holds(item, compounds, volume_l, stream, catalog))


def verdict(profile: DisposalProfile, plan, *, compounds: Mapping[str, float],
            volume_l: float, stream: str | None, collected: bool, catalog) -> tuple[str, ...]:
    """Every reason the waste may not be treated in the lab (empty: the rules allow it)."""
    reasons = list(never_treat_reasons(profile, compounds, volume_l, stream, catalog))
    if collected and not profile.batch_treatment:
        reasons.append("the storeroom's rules forbid treating collected waste in the lab")
    if plan is not None and not plan.drain_plan:
        reasons.append("the plan itself is not for the drain (see its cautions)")
    if plan is not None and not plan.to_target.reachable:
        reasons.append("the reagent cannot reach the target pH")
    return tuple(reasons)


# -- the plan under the rules ----------------------------------------------------------------

def _dilution(profile: DisposalProfile, volume_l: float, w0: float, rho: float,
              ) -> Dilution | None:
    target = profile.dilute_to_percent
    if target is None or w0 <= target:
        return None
    mass_g = volume_l * rho * 1000.0
    water_g = mass_g * w0 / target - mass_g
    ice_kg = water_g * profile.ice_fraction / 1000.0
    return Dilution(w0, target, water_g / 1000.0, ice_kg, water_g / 1000.0 - ice_kg)


def _count(profile: DisposalProfile, volume_l: float, final_l: float,
           vessel_l: float | None) -> int:
    n = 1
    if profile.batch_max_l:
        n = max(n, math.ceil(volume_l / profile.batch_max_l - 1e-9))
    if vessel_l:
        room = vessel_l * profile.fill_limit_percent / 100.0
        n = max(n, math.ceil(final_l / room - 1e-9))
    return n


def _peak(plan, profile, waste_kg: float, water_kg: float, ice_kg: float, reagent_kg: float,
          n: int) -> tuple[float, float]:
    """(peak temperature °C, extra ice kg to keep under the limit) of one batch."""
    heat = max(plan.heat_released_kj, 0.0) / n
    cp, t0 = CP_KJ_KG_K, plan.sample.temperature_c
    total = waste_kg + water_kg + reagent_kg
    if total <= 0:
        return t0, 0.0
    energy = (waste_kg + reagent_kg) * cp * t0 + heat - ice_kg * ICE_MELT_KJ_KG
    peak = max(energy / (total * cp), 0.0)
    limit = profile.max_temperature_c
    extra = 0.0
    if peak > limit:
        extra = (peak - limit) * total * cp / (ICE_MELT_KJ_KG + cp * limit)
    return peak, extra


def _batches(plan, profile: DisposalProfile, volume_l: float, rho: float,
             dilution: Dilution | None, vessel_l: float | None,
             ) -> tuple[tuple[Batch, ...], float, float]:
    dose = plan.to_target
    reagent_l = dose.reagent_volume_l or 0.0
    water_l = dilution.water_l if dilution else 0.0
    final = volume_l + water_l + reagent_l
    n = _count(profile, volume_l, final, vessel_l)
    if n > MAX_BATCHES:
        return (), final, 0.0
    share = 1.0 / n
    ice = dilution.ice_kg * share if dilution else 0.0
    peak, extra = _peak(plan, profile, volume_l * rho * share, water_l * share, ice,
                        (dose.reagent_mass_g or 0.0) / 1000.0 * share, n)
    room = vessel_l * profile.fill_limit_percent / 100.0 if vessel_l else None

    def part(value: float | None) -> float | None:
        return None if value is None else value * share

    out = tuple(Batch(k, volume_l * share, water_l * share, ice, part(dose.reagent_mol),
                      part(dose.reagent_volume_l), part(dose.reagent_mass_g), final * share,
                      vessel_l, room is None or final * share <= room * (1 + 1e-9), peak,
                      final * share * profile.flush_factor)
                for k in range(1, n + 1))
    return out, peak, extra


def _overflow(profile: DisposalProfile, capacity_l: float | None, volume_l: float, plan,
              ) -> Overflow | None:
    if not capacity_l:
        return None
    final = volume_l + (plan.to_target.reagent_volume_l or 0.0)
    limit = capacity_l * profile.fill_limit_percent / 100.0
    fits = final <= limit * (1 + 1e-9)
    return Overflow(capacity_l, final, limit, fits,
                    1 if fits else math.ceil(final / limit - 1e-9))


def apply(plan, profile: DisposalProfile, container=None, *,
          compounds: Mapping[str, float] | None = None, catalog=None) -> DisposalPlan:
    """The plan under the rules (see the module docstring).

    ``container`` is the :class:`~carboy.model.forms.neutralize.ContainerSample` planned
    (None for a typed sample: then it is not collected waste and has no capacity);
    ``compounds`` (key -> mol) default to the container's contents.
    """
    if catalog is None:
        from carboy.model.catalog import default_catalog

        catalog = default_catalog()
    held = dict(compounds if compounds is not None else
                (container.contents if container is not None else {}))
    volume = plan.sample.volume_l
    stream = container.stream if container is not None else None
    reasons = verdict(profile, plan, compounds=held, volume_l=volume, stream=stream,
                      collected=container is not None, catalog=catalog)
    w0, rho = strength_of(held, volume, catalog)
    overflow = _overflow(profile, container.capacity_l if container else None, volume, plan)
    base = dict(profile=profile, strength_percent=w0, overflow=overflow)
    if reasons:
        return DisposalPlan(False, ROUTE_LICENSED, reasons, (), None, peak_temperature_c=None,
                            extra_ice_kg=0.0, flush_l=0.0, steps=_steps_refused(reasons),
                            warnings=(), **base)
    dilution = _dilution(profile, volume, w0, rho)
    vessel = profile.vessel_l or (container.capacity_l if container is not None else None)
    batches, peak, extra = _batches(plan, profile, volume, rho, dilution, vessel)
    if not batches:
        reasons = (f"the rules would need more than {MAX_BATCHES} batches",)
        return DisposalPlan(False, ROUTE_LICENSED, reasons, (), dilution,
                            peak_temperature_c=None, extra_ice_kg=0.0, flush_l=0.0,
                            steps=_steps_refused(reasons), warnings=(), **base)
    flush = sum(b.flush_l for b in batches)
    warnings = _warnings(plan, profile, overflow, peak, extra, len(batches))
    done = DisposalPlan(True, ROUTE_DRAIN, (), batches, dilution, peak_temperature_c=peak,
                        extra_ice_kg=extra * len(batches), flush_l=flush, steps=(),
                        warnings=warnings, **base)
    return replace(done, steps=_steps(done, plan, in_place=profile.vessel_l is None))


def _warnings(plan, profile: DisposalProfile, overflow: Overflow | None, peak: float,
              extra: float, n: int) -> tuple[str, ...]:
    out = []
    lo, hi = profile.window
    target = plan.to_target.target_pH
    if target is not None and not lo <= target <= hi:
        out.append(f"the target pH {target:g} lies outside the storeroom's window "
                   f"pH {lo:g}–{hi:g}")
    plo, phi = plan.window
    if plo < lo or phi > hi:
        out.append(f"the plan's window pH {plo:g}–{phi:g} is wider than the storeroom's "
                   f"pH {lo:g}–{hi:g}: the treatment is judged by the storeroom's")
    if overflow is not None and not overflow.fits:
        out.append(f"the whole dose would overflow the container: {overflow.final_l:.3g} L "
                   f"in {overflow.capacity_l:g} L (fill limit {overflow.limit_l:.3g} L); "
                   f"treat it in {max(n, overflow.batches)} batches")
    if peak > profile.max_temperature_c:
        out.append(f"a batch would reach about {peak:.0f} °C, above the safe "
                   f"{profile.max_temperature_c:g} °C: add about {extra:.2g} kg more ice per "
                   "batch, or add the reagent in more stages and let it cool")
    return tuple(out)


def _steps_refused(reasons: tuple[str, ...]) -> tuple[tuple[str, str], ...]:
    return (("verdict", "not to be treated in the lab: " + "; ".join(reasons)),
            ("route", "licensed disposal: keep the container closed and labelled; the safety "
                      "office arranges collection"))


def _reagent_text(b: Batch, plan) -> str:
    if b.reagent_volume_l is not None:
        amount = numbers.volume(b.reagent_volume_l)
    else:
        amount = numbers.mass(b.reagent_mass_g)
    return f"{amount} of {plan.reagent.describe()}"


def _steps(done: DisposalPlan, plan, *, in_place: bool) -> tuple[tuple[str, str], ...]:
    """The treatment in order, as people read it (every batch is alike)."""
    p, first, n = done.profile, done.batches[0], done.n_batches
    where = "in the container itself" if in_place else \
        f"in a {numbers.volume(first.vessel_l)} vessel" if first.vessel_l else "in one vessel"
    out = [("verdict", "the storeroom's rules allow treating it in the lab"
            + (" (carboy's placeholders: set your institution's rules)"
               if p.all_placeholders else "")),
           ("batches", f"{numbers.count(n, 'batch', 'batches')} of "
                       f"{numbers.volume(first.waste_l)} waste {where}, each ending at "
                       f"{numbers.volume(first.final_l)}"
                       + ("" if first.fits else ": IT DOES NOT FIT the vessel"))]
    if done.dilution is not None:
        d = done.dilution
        out.append(("dilute", f"the waste is about {d.strength_percent:.3g} % w/w: for each "
                    f"batch put {numbers.volume(first.water_l - first.ice_kg)} of cold water "
                    f"and {numbers.mass(first.ice_kg * 1000)} of ice in the vessel, then add "
                    f"the waste slowly, stirring (acid to water, never water to acid), to "
                    f"about {d.target_percent:g} % (the ice also takes up the heat of dilution, "
                    "which carboy does not count)"))
    out.append(("neutralize", f"add {_reagent_text(first, plan)} to each batch in stages, "
                f"stirring, to pH {plan.to_target.target_pH:g}; the staged plan is for the "
                f"whole, so divide each stage by {n}" if n > 1 else
                f"add {_reagent_text(first, plan)} in stages, stirring, to pH "
                f"{plan.to_target.target_pH:g}"))
    limit = p.max_temperature_c
    out.append(("temperature", f"a batch may reach about {done.peak_temperature_c:.0f} °C "
                f"(safe limit {limit:g} °C)" + ("" if done.peak_temperature_c <= limit else
                f": add about {done.extra_ice_kg / n:.2g} kg more ice per batch or go slower")))
    out.append(("check", f"measure the pH: within pH {p.window_low:g}–{p.window_high:g} by the "
                "storeroom's rules; record it (carboy waste treat, or the record dialog)"))
    out.append(("flush", f"only where local rules allow the drain: flush with "
                f"{numbers.volume(first.flush_l)} of water per batch ({p.flush_factor:g} "
                f"volumes; {numbers.volume(done.flush_l)} in all)"))
    return tuple(out)
