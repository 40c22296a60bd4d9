"""Recipes: how to make a solution of given molarity from a concentrate or a solid.

A :class:`Source` is what is drawn from: a solution (a concentrate by its %w/w or
molarity) or a solid (with its purity; a hydrate counts its crystal water in the molar
mass); see :mod:`carboy.model.recipe_sources`.  :func:`plan_recipe` turns a source, a
target molarity and a final volume into a :class:`Recipe`: the amount to measure, the
water to start with, the heat, ordered steps, cautions and notes with the sources of every
number.  :func:`plan_series` chains recipes into a serial dilution.  The cautions and
steps are written by :mod:`carboy.model.recipe_advice`.

How the numbers are computed
----------------------------
* Amount ``n = c_target · V``.  From a solution: ``V_stock = n / c_stock`` and its mass
  ``V_stock · ρ_stock``; a %w/w label gives ``c_stock`` from the catalog density table.
  From a solid: ``mass = n · M(weighed form) / (purity / 100)``.
* Water to start with: two thirds (:data:`WATER_FIRST_FRACTION`) of the water the
  solution needs, ``(m_final − m_stock) / ρ_water(T)``, with ``m_final = V · ρ_final``
  from the density of the product (``solutions.strength_of``).  Where a density is
  unknown, two thirds of ``V − V_stock`` (or of ``V`` for a solid) instead.  The rest
  goes in when making up to the mark.
* Heat released (positive) from ``w1`` to ``w2``: ``n · (ΔH(w2→∞) − ΔH(w1→∞))`` with
  ``ΔH(w→∞)`` from ``thermo.dilution_heat_kj`` (NBS integral enthalpies for H2SO4, the
  CRC acid tables for HCl, HNO3, HF, HClO4, HBr, HI, HCOOH, CH3COOH); for a solid
  ``−n · ΔsolH∞`` from ``thermo.heat_of_solution_kj`` (to infinite dilution: an upper
  estimate for concentrated products of NaOH and KOH).  ``None`` where no published data
  are held; where a table's rows are too sparse for linear interpolation
  (``planning.toml [dilution.KEY] understated``) the recipe says the heat is understated.
* Temperature rise (adiabatic): ``heat / (m_final · c_p)``, with the heat capacity of the
  product's solution from Laliberté's model where ``planning.toml [[heat_capacity]]``
  has its solute (NaOH, KOH, H2SO4, HCl, HNO3, H3PO4, NH3, acetic acid...), else water's;
  the rise while mixing, before making up to volume, uses the heat to the strength in the
  beaker, the mass there (concentrate or solid plus the water put in first) and that
  strength's heat capacity.  The cautions look at the larger of the two.

Thresholds (common practice, carboy's choice, stated in the cautions): heat warning from a
10 K rise, danger from 25 K or a final 60 °C (``planning.toml [thresholds]``, shared with
the neutralization planner); the strengths from which a concentrate is weighed rather
than poured or handled in a fume hood are per compound in ``data/handling.toml`` (any
other concentrate that gives off a toxic gas goes to the hood); a source is a concentrate
from 10 % w/w or 5 mol/L.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace
from typing import NamedTuple

from carboy.errors import InvalidInput
from carboy.model import thermo, water
from carboy.model.catalog import default_catalog
from carboy.model.cautions import Caution
from carboy.model.heat_capacity import SOURCE as CP_SOURCE
from carboy.model.heat_capacity import solute_for_formula, solution_cp
from carboy.model.recipe_advice import recipe_cautions, recipe_steps, volume_text
from carboy.model.recipe_sources import (
    BASES,
    Source,
    fmt,
    parse_source,
    positive_number,
    solid_source,
    solution_source,
)
from carboy.model.solutions import Strength, _number, strength_of

__all__ = [
    "BASES",
    "MAX_FINAL_VOLUME_L",
    "WATER_FIRST_FRACTION",
    "Recipe",
    "Source",
    "heat_released_kj",
    "parse_source",
    "plan_recipe",
    "plan_series",
    "solid_source",
    "solution_source",
]

MAX_FINAL_VOLUME_L = 50.0
"""Largest final volume carboy plans (L): beyond a bench preparation."""

WATER_FIRST_FRACTION = 2.0 / 3.0
"""Share of the needed water put in the vessel before the concentrate or solid."""


# ----------------------------------------------------------------------------- heat


def heat_released_kj(compound_key: str, from_percent: float, to_percent: float
                     ) -> tuple[float, str] | None:
    """Heat released (kJ per mol of solute; positive = released) on diluting from
    ``from_percent`` to ``to_percent`` % w/w, or ``None`` without published data.

    ``n · (ΔH(to→∞) − ΔH(from→∞))`` per mol, with ``thermo.dilution_heat_kj``; e.g. 1 mol
    of 100 % H2SO4 to infinite dilution releases 95.3 kJ (NBS tables).
    """
    start = thermo.dilution_heat_kj(compound_key, from_percent)
    end = thermo.dilution_heat_kj(compound_key, to_percent)
    if start is None or end is None:
        return None
    return end[0] - start[0], start[1]


# ----------------------------------------------------------------------------- recipe


@dataclass(frozen=True)
class Recipe:
    """How to make ``final_volume_ml`` of ``target_molar`` from ``source``.

    ``stock_molar``/``stock_volume_ml`` are ``None`` for a solid; ``stock_mass_g`` is the
    mass of concentrate or solid to weigh (``None`` only for a solution whose density is
    unknown).  ``water_ml`` is the water to put in the vessel first.  ``heat_released_kj``
    is the heat released (positive; negative when it cools) on dilution or dissolution,
    ``None`` without published data;
    ``temperature_rise_c`` the adiabatic rise of the finished solution, ``mixing_rise_c``
    the rise in the vessel before making up to volume.
    """

    source: Source
    target_molar: float
    final_volume_ml: float
    amount_mol: float
    stock_molar: float | None
    stock_volume_ml: float | None
    stock_mass_g: float | None
    water_ml: float
    heat_released_kj: float | None
    temperature_rise_c: float | None
    mixing_rise_c: float | None
    final_mass_percent: float | None
    final_density_g_ml: float | None
    dilution_factor: float | None
    temperature_c: float
    steps: tuple[str, ...]
    cautions: tuple[Caution, ...]
    notes: tuple[str, ...]

    def to_dict(self) -> dict:
        """JSON-ready: plain numbers (or None), lists of strings and caution dicts."""
        return {
            "source": self.source.to_dict(),
            "target_molar": self.target_molar,
            "final_volume_ml": self.final_volume_ml,
            "amount_mol": self.amount_mol,
            "stock_molar": self.stock_molar,
            "stock_volume_ml": self.stock_volume_ml,
            "stock_mass_g": self.stock_mass_g,
            "water_ml": self.water_ml,
            "heat_released_kj": self.heat_released_kj,
            "temperature_rise_c": self.temperature_rise_c,
            "mixing_rise_c": self.mixing_rise_c,
            "final_mass_percent": self.final_mass_percent,
            "final_density_g_ml": self.final_density_g_ml,
            "dilution_factor": self.dilution_factor,
            "temperature_c": self.temperature_c,
            "steps": list(self.steps),
            "cautions": [c.to_dict() for c in self.cautions],
            "notes": list(self.notes),
        }


class _Stock(NamedTuple):
    """What is drawn from the source: molarity, volume (mL), mass (g), dilution factor."""

    molar: float | None
    volume_ml: float | None
    mass_g: float | None
    dilution: float | None


class _Heat(NamedTuple):
    """Heat released (kJ) and the adiabatic rises of the product and of the mixture (K)."""

    heat_released_kj: float | None
    rise_k: float | None
    mix_rise_k: float | None


def _checked_request(source: object, target_molar: object, final_volume_l: object,
                     temperature_c: object) -> tuple[float, float, float]:
    if not isinstance(source, Source):
        raise InvalidInput("source", source, "expected a Source (see parse_source)")
    target = _for_field("target", positive_number, target_molar, "target concentration")
    vol_l = _for_field("volume", positive_number, final_volume_l, "final volume")
    if vol_l > MAX_FINAL_VOLUME_L:
        raise InvalidInput("final volume", final_volume_l,
                           f"carboy plans at most {MAX_FINAL_VOLUME_L:g} L", field="volume")
    return target, vol_l, water.check_temperature(_number(temperature_c, "temperature"))


def _for_field(field: str, check, *args):
    """``check(*args)``, its InvalidInput naming the form field ``field`` (the option the
    command line took the value from, the field a screen puts the message beside)."""
    try:
        return check(*args)
    except InvalidInput as exc:
        exc.field = exc.field or field
        raise


def _stock(source: Source, target: float, target_molar: object, n: float) -> _Stock:
    if source.kind != "solution":
        return _Stock(None, None, n * source.molar_mass_g_mol / (source.purity_percent / 100.0),
                      None)
    if source.conc_molar is None or not target < source.conc_molar:
        raise InvalidInput("target concentration", target_molar,
                           f"must be below the strength of the source, {source.label} "
                           f"({fmt(source.conc_molar or 0.0)} M)", field="target")
    stock_ml = n / source.conc_molar * 1000.0
    stock_mass = stock_ml * source.density_g_ml if source.density_g_ml else None
    return _Stock(source.conc_molar, stock_ml, stock_mass, source.conc_molar / target)


def _water_needed(vol_ml: float, final_mass: float | None, stock: _Stock, rho_w: float,
                  notes: list[str]) -> float:
    """The water the solution needs, mL (two thirds go in first); explained in ``notes``."""
    if final_mass is not None and stock.mass_g is not None:
        water_total = max(final_mass - stock.mass_g, 0.0) / rho_w
        how = (f"(final mass {final_mass:.4g} g − "
               f"{'concentrate' if stock.volume_ml else 'solid'} "
               f"{stock.mass_g:.4g} g) / ρ(water) {rho_w:.5f} g/mL = {water_total:.4g} mL")
    else:
        water_total = vol_ml - (stock.volume_ml or 0.0)
        how = (f"final volume − concentrate volume = {water_total:.4g} mL (density unknown, "
               "approximate)" if stock.volume_ml else
               f"the final volume {water_total:.4g} mL (density unknown, approximate)")
    notes.append(f"water to start with: two thirds of the water the solution needs, {how}; "
                 "the rest goes in when making up to the mark")
    return water_total


def _dilution_heats(source: Source, n: float, final: Strength, stock: _Stock,
                    mix_mass: float, notes: list[str]) -> tuple[float | None, float | None]:
    """Heat (kJ) released diluting to the product, and to the strength in the beaker
    (:func:`_mix_percent`)."""
    compound = source.compound
    if source.mass_percent is None or final.mass_percent is None:
        return None, None
    per_mol = heat_released_kj(compound.key, source.mass_percent, final.mass_percent)
    if per_mol is None:
        return None, None
    notes.append(f"heat of dilution from {fmt(source.mass_percent)} to "
                 f"{fmt(final.mass_percent)} % w/w: {per_mol[0]:.3g} kJ/mol "
                 f"released (25 °C data): {per_mol[1]}")
    heat_to_mix = None
    w_mix = _mix_percent(source, n, final, stock, mix_mass)
    if w_mix is not None:
        mixed = heat_released_kj(compound.key, source.mass_percent, w_mix)
        if mixed is not None:
            heat_to_mix = n * mixed[0]
    understated = thermo.dilution_understated(compound.key)
    if understated is not None and understated[0] < final.mass_percent < understated[1]:
        notes.append(understated[2])
    return n * per_mol[0], heat_to_mix


def _solution_heat(source: Source, n: float, notes: list[str]) -> float | None:
    """Heat (kJ) released dissolving a solid, from its heat of solution."""
    key = source.compound.key
    sol = thermo.heat_of_solution_kj(key)
    if sol is None:
        return None
    notes.append(f"heat of solution of {key} to infinite dilution: "
                 f"{sol[0]:+.4g} kJ/mol (negative: released): {sol[1]}"
                 + ("; for a concentrated product the real heat is somewhat smaller "
                    "(an upper estimate)" if sol[0] < 0 else ""))
    return -n * sol[0]


def _mix_percent(source: Source, n: float, final: Strength, stock: _Stock,
                 mix_mass: float) -> float | None:
    """The strength (% w/w) in the beaker before making up to volume, or None."""
    if stock.mass_g is None or mix_mass <= 0 or final.mass_percent is None:
        return None
    solute = source.anhydrous or source.compound
    w_mix = 100.0 * n * solute.molar_mass_g_mol / mix_mass
    if source.kind == "solution" and source.mass_percent is not None:
        return min(max(w_mix, final.mass_percent), source.mass_percent)
    return max(min(w_mix, 100.0), final.mass_percent)


def _cp(source: Source, percent: float | None, t_c: float) -> tuple[float, str]:
    """Heat capacity (J/(g K)) of the solute's solution at ``percent`` % w/w, and what it
    rests on: Laliberté's model where the solute has parameters, else water's."""
    solute = source.anhydrous or source.compound
    name = solute_for_formula(solute.formula)
    if name is None or percent is None:
        cp = water.specific_heat_j_gk(t_c)
        return cp, f"c_p of water, {cp:.4f} J/(g K) at {t_c:g} °C"
    found = solution_cp({name: percent / 100.0}, t_c)
    edge = "; beyond its fit, taken at its edge" if found.clamped else ""
    return found.cp_j_gk, (f"c_p {found.cp_j_gk:.4f} J/(g K) of {fmt(percent)} % {name} at "
                           f"{t_c:g} °C ({CP_SOURCE}{edge})")


def _heat(source: Source, n: float, final: Strength, stock: _Stock, heat_mass: float,
          mix_mass: float, t_c: float, notes: list[str]) -> _Heat:
    if source.kind == "solution":
        heat, heat_to_mix = _dilution_heats(source, n, final, stock, mix_mass, notes)
    else:
        heat = heat_to_mix = _solution_heat(source, n, notes)
    cp, cp_note = _cp(source, final.mass_percent, t_c)
    cp_mix, _ = _cp(source, _mix_percent(source, n, final, stock, mix_mass), t_c)
    rise = None if heat is None else heat * 1000.0 / (heat_mass * cp)
    mix_rise = None
    if heat_to_mix is not None and mix_mass > 0:
        mix_rise = heat_to_mix * 1000.0 / (mix_mass * cp_mix)
    if heat is None:
        what = "dilution" if source.kind == "solution" else "solution"
        notes.append(f"heat of {what} not estimated: carboy holds no published data for "
                     f"{source.label}")
    else:
        notes.append(
            f"temperature rise (adiabatic) = heat / (mass × {cp_note}): {rise:+.3g} K in the "
            f"finished {heat_mass:.4g} g"
            + (f", {mix_rise:+.3g} K in the {mix_mass:.4g} g mixed before making up to volume "
               f"(c_p {cp_mix:.4f} J/(g K))" if mix_rise is not None else ""))
    return _Heat(heat, rise, mix_rise)


def plan_recipe(source: Source, target_molar: float, final_volume_l: float, *,
                temperature_c: float = 20.0) -> Recipe:
    """The recipe for ``final_volume_l`` litres of ``target_molar`` mol/L from ``source``.

    Refuses (InvalidInput naming the value) a target not below a solution source, a
    non-positive or non-finite target or volume, and a volume above
    :data:`MAX_FINAL_VOLUME_L`.
    """
    target, vol_l, t_c = _checked_request(source, target_molar, final_volume_l, temperature_c)
    solute = source.anhydrous or source.compound
    n, vol_ml = target * vol_l, vol_l * 1000.0
    rho_w = water.density_g_cm3(t_c)
    notes: list[str] = [f"amount: {fmt(n)} mol of {solute.key} in {volume_text(vol_ml)}",
                        *source.notes]
    stock = _stock(source, target, target_molar, n)
    final = strength_of(solute, conc_molar=target, catalog=default_catalog())
    notes.append(f"product {fmt(target)} M {solute.key}: " + (
        f"{fmt(final.mass_percent)} % w/w, ρ {final.density_g_ml:.4f} g/mL ({final.note})"
        if final.density_g_ml is not None else final.note))
    final_mass = vol_ml * final.density_g_ml if final.density_g_ml is not None else None
    water_total = _water_needed(vol_ml, final_mass, stock, rho_w, notes)
    water_first = WATER_FIRST_FRACTION * water_total
    heat = _heat(source, n, final, stock,
                 heat_mass=final_mass if final_mass is not None else vol_ml * rho_w,
                 mix_mass=(stock.mass_g or 0.0) + water_first * rho_w, t_c=t_c, notes=notes)
    if final_mass is None:
        notes.append("the product density is unknown: its mass is taken as that of the same "
                     "volume of water")
    if abs(t_c - 20.0) > 5.0:
        notes.append(f"density tables are for 20 °C; at {t_c:g} °C volumes differ slightly, "
                     "and volumetric glassware is calibrated at 20 °C")
    worst = max((r for r in (heat.rise_k, heat.mix_rise_k) if r is not None), default=None)
    cautions = recipe_cautions(source, target, worst, t_c, heat.heat_released_kj is None, final)
    steps = recipe_steps(source, solute, target, vol_ml, stock.volume_ml, stock.mass_g,
                         water_first, water_total, worst, t_c, cautions)
    return Recipe(
        source=source, target_molar=target, final_volume_ml=vol_ml, amount_mol=n,
        stock_molar=stock.molar, stock_volume_ml=stock.volume_ml, stock_mass_g=stock.mass_g,
        water_ml=water_first, heat_released_kj=heat.heat_released_kj,
        temperature_rise_c=heat.rise_k,
        mixing_rise_c=heat.mix_rise_k, final_mass_percent=final.mass_percent,
        final_density_g_ml=final.density_g_ml, dilution_factor=stock.dilution,
        temperature_c=t_c, steps=tuple(steps), cautions=cautions, notes=tuple(notes))


def plan_series(source: Source, targets_molar: Sequence[float],
                volumes_l: Sequence[float] | float) -> tuple[Recipe, ...]:
    """A serial dilution: step k is made from the product of step k−1 (step 0 from
    ``source``).  ``volumes_l`` is one final volume per step, or one for all.

    Refuses a target not below its source, and a step whose product is too small to
    supply the aliquot the next step takes.
    """
    targets = list(targets_molar) if not isinstance(targets_molar, (int, float)) \
        else [targets_molar]
    if not targets:
        raise InvalidInput("targets", targets_molar, "give at least one target concentration")
    if isinstance(volumes_l, (int, float)) and not isinstance(volumes_l, bool):
        volumes = [volumes_l] * len(targets)
    else:
        volumes = list(volumes_l)
    if len(volumes) != len(targets):
        raise InvalidInput("volumes", volumes_l,
                           f"give one volume per target ({len(targets)}) or a single volume")
    recipes: list[Recipe] = []
    current = source
    for k, (target, volume) in enumerate(zip(targets, volumes), start=1):
        try:
            recipe = plan_recipe(current, target, volume)
        except InvalidInput as exc:
            raise InvalidInput(f"step {k}: {exc.what}", exc.value, exc.reason,
                               field=exc.field) from None
        if recipes:
            made = recipes[-1].final_volume_ml
            if recipe.stock_volume_ml > made:
                raise InvalidInput(
                    f"step {k}: final volume", volume,
                    f"needs {recipe.stock_volume_ml:.4g} mL of the step {k - 1} product, but "
                    f"step {k - 1} makes only {made:.4g} mL", field="volume")
            recipe = replace(recipe, notes=(*recipe.notes, (
                f"serial dilution, step {k}: draws {recipe.stock_volume_ml:.4g} mL of the "
                f"{made:.4g} mL made in step {k - 1}; {made - recipe.stock_volume_ml:.4g} mL of "
                "it remain; errors of earlier steps carry over")))
        recipes.append(recipe)
        current = replace(solution_source(recipe.source.anhydrous or recipe.source.compound,
                                          conc_molar=recipe.target_molar, basis="prepared"),
                          label=f"{(recipe.source.anhydrous or recipe.source.compound).key} "
                                f"{fmt(recipe.target_molar)} M (step {k})")
    return tuple(recipes)


