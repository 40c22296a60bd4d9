"""What a recipe tells the person at the bench: its cautions and its ordered steps.

The cautions are rules over the source, the product and the estimated heat: HF, perchloric
acid, cyanide and sulfide first; heat (warning from a 10 K rise, danger from 25 K or a
final 60 °C, ``planning.toml [thresholds]``, shared with the neutralization planner);
acid-into-water; the fume hood and weighing rather than pouring (per compound, from
``data/handling.toml``; any other concentrate that gives off a toxic gas goes to the hood);
protective equipment; standardizing a product made from a hygroscopic solid or from a
nominal strength; residues that never go to the drain; the label.  The steps follow from
the cautions (a hood, an ice bath, plastic ware for HF).
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence

from carboy.model import thermo
from carboy.model.batch_heat import boil_c, default_safe_c
from carboy.model.cautions import SEVERITIES, Caution
from carboy.model.entities import Compound
from carboy.model.handling import HandlingFact, handling
from carboy.model.recipe_sources import Source, fmt
from carboy.model.solutions import Strength

__all__ = [
    "FLASK_MAX_RISE_K",
    "mass_text",
    "recipe_cautions",
    "recipe_steps",
    "thresholds",
    "volume_text",
]

FLASK_MAX_RISE_K = 5.0
"""Largest expected rise for diluting straight into the volumetric flask; above it the
mixing is done in a beaker and the cooled solution transferred (volumetric glass is
calibrated at 20 °C and must not be heated; common practice)."""


def thresholds() -> dict:
    """The heat thresholds of ``planning.toml [thresholds]``."""
    return thermo.planning_constants()["thresholds"]


# ----------------------------------------------------------------------------- texts


def _sig(x: float, sig: int) -> str:
    """``x`` to ``sig`` significant figures, trailing zeros kept (40.00, 18.0, 501)."""
    if x == 0 or not math.isfinite(x):
        return f"{x:g}"
    decimals = max(0, sig - 1 - int(math.floor(math.log10(abs(x)))))
    return f"{x:.{decimals}f}"


def mass_text(g: float) -> str:
    """A mass to weigh, four significant figures (``40.00 g``)."""
    return f"{_sig(g, 4)} g"


def volume_text(ml: float) -> str:
    """A volume to measure: three significant figures, in L from 1000 mL."""
    if ml >= 1000.0:
        return f"{_sig(ml / 1000.0, 4)} L"
    return f"{_sig(ml, 3)} mL"


def _about_ml(ml: float) -> str:
    """A rounded volume for water poured by cylinder (two significant figures)."""
    if ml <= 0:
        return "0 mL"
    digits = max(0, 1 - int(math.floor(math.log10(ml))))
    value = round(ml, digits)
    return f"{value / 1000.0:g} L" if value >= 1000 else f"{value:g} mL"


_BEAKERS_ML = (50, 100, 250, 400, 600, 1000, 2000, 3000, 5000)


def _beaker(ml: float) -> str:
    for size in _BEAKERS_ML:
        if size >= 1.5 * ml:
            return f"{size} mL" if size < 1000 else f"{size // 1000} L"
    return f"{math.ceil(1.5 * ml / 1000.0)} L"


# ----------------------------------------------------------------------------- cautions


def _fuming(source: Source) -> bool:
    if source.kind != "solution":
        return False
    limit = handling().fume_hood_percent(source.key)
    if limit is not None:
        if source.mass_percent is not None:
            return source.mass_percent >= limit
        return source.is_concentrate
    return "toxic_gas" in source.compound.hazards and source.is_concentrate


def _viscous(source: Source) -> bool:
    limit = handling().weigh_percent(source.key)
    return (source.kind == "solution" and limit is not None and source.mass_percent is not None
            and source.mass_percent >= limit)


def _is_perchloric(compound: Compound) -> bool:
    return bool(compound.hazards & {"perchloric", "explosive_residue"})


def _limits_text(facts: Mapping[str, HandlingFact], *, last: str = " and ") -> str:
    """``H2SO4 90 % and H3PO4 75 %``: the per-compound thresholds, as the cautions cite them."""
    items = [f"{key} {fact.value:g} %" for key, fact in facts.items()]
    return items[0] if len(items) == 1 else ", ".join(items[:-1]) + last + items[-1]


def _danger_cautions(source: Source) -> list[Caution]:
    """HF, perchloric acid, cyanide and sulfide: dangers whatever the strength."""
    c = source.compound
    hz, name = c.hazards, c.name
    out: list[Caution] = []
    if "hf_type" in hz:
        out.append(Caution("hf-danger", "danger", (
            f"{name}: fluoride gives HF, which penetrates skin and burns without early pain. "
            "Only people trained for HF work; HF-rated gloves, face shield and apron; calcium "
            "gluconate gel at hand before you start; plastic ware (PE, PP, PTFE/PFA) "
            "throughout, never glass.")))
    if _is_perchloric(c):
        out.append(Caution("perchloric-danger", "danger", (
            "Perchloric acid: a strong oxidizer whose dried residues and contact with "
            "organics, wood, paper or reducers can explode. Keep it from organics, wipe up "
            "every drop, never let it dry on surfaces; heat or evaporate it only in a "
            "perchloric-acid fume hood with wash-down.")))
    if hz & {"cyanide", "sulfide"}:
        gas = " or ".join(g for tag, g in (("cyanide", "HCN"), ("sulfide", "H2S")) if tag in hz)
        out.append(Caution("never-acidify", "danger", (
            f"{name}: never let it meet acid ({gas} gas). Work in a fume hood, keep the "
            "solution alkaline and store it away from acids.")))
    return out


def portions_to_stay_safe(rise: float | None, t_c: float) -> int | None:
    """About how many portions keep each under carboy's safe temperature (``planning.toml
    [boiling] safe_c``) when the whole would pass it, cooling back to ``t_c`` between
    portions (each portion's rise taken as the whole's shared out); None when one does or
    when the start is already too warm."""
    safe = default_safe_c()
    if rise is None or t_c + rise <= safe or t_c >= safe:
        return None
    return max(2, math.ceil(rise / (safe - t_c) - 1e-9))


def _boil_text(rise: float, t_c: float) -> str:
    """The temperature a heat danger names, or that the mixture would boil."""
    if t_c + rise >= boil_c():
        return (f"The heat would take the mixture past boiling (about {boil_c():g} °C): it "
                "would boil and spatter")
    boil = " - it can boil and spatter" if t_c + rise >= 90.0 else ""
    return f"Estimated temperature rise about {rise:.0f} K (to about {t_c + rise:.0f} °C){boil}"


def _heat_cautions(source: Source, rise: float | None, t_c: float,
                   heat_unknown: bool) -> list[Caution]:
    """Heat danger or warning, unknown heat, and the order of mixing."""
    c = source.compound
    hz, name = c.hazards, c.name
    th = thresholds()
    warn_k, danger_k = float(th["rise_warn_k"]), float(th["rise_danger_k"])
    final_danger_c = float(th["final_danger_c"])
    concentrate = source.is_concentrate
    corrosive = "corrosive" in hz
    out: list[Caution] = []
    if rise is not None and (rise >= danger_k or t_c + rise >= final_danger_c):
        portions = portions_to_stay_safe(rise, t_c)
        many = (f" (at least {portions} portions keep each below {default_safe_c():g} °C)"
                if portions else "")
        out.append(Caution("heat-danger", "danger", (
            f"{_boil_text(rise, t_c)}. Stand the vessel in an ice/water bath, add in small "
            f"portions{many} with stirring and let it cool between portions; for a large "
            f"batch make it in stages. (Danger from a {danger_k:g} K rise or "
            f"{final_danger_c:g} °C: common practice, carboy's choice.)")))
    elif rise is not None and rise >= warn_k:
        out.append(Caution("heat-warning", "warning", (
            f"Estimated temperature rise about {rise:.0f} K: cool the vessel in an ice/water "
            f"bath and add in portions. (Warning from a {warn_k:g} K rise: common practice.)")))
    if heat_unknown and ((concentrate and corrosive) or "dilution_heat" in hz):
        verb = "Diluting" if source.kind == "solution" else "Dissolving"
        out.append(Caution("heat-unknown", "warning", (
            f"{verb} {source.label} can release much heat, but carboy holds no published data "
            "to estimate how much: add it in portions, watch the temperature and cool as "
            "needed.")))
    if concentrate and (corrosive or "dilution_heat" in hz):
        out.append(Caution("add-to-water", "warning", (
            f"Add the {name} slowly to the water, with stirring - never water to the "
            "concentrate: water poured onto a concentrate boils locally and spatters acid or "
            "alkali.")))
    elif source.kind == "solid" and "dilution_heat" in hz:
        out.append(Caution("add-to-water", "warning", (
            f"Add the {c.key} to the water in portions, with stirring - never water onto the "
            "solid: it heats strongly where it dissolves.")))
    return out


def _handling_cautions(source: Source) -> list[Caution]:
    """Fume hood, oxidizer, flammable, toxic solid, protective equipment, viscous liquid."""
    c = source.compound
    hz, name = c.hazards, c.name
    concentrate = source.is_concentrate
    corrosive = "corrosive" in hz
    data = handling()
    out: list[Caution] = []
    if _fuming(source):
        out.append(Caution("fume-hood", "warning", (
            f"{source.label} gives off corrosive or toxic vapour: open, measure and dilute it "
            f"in a fume hood. (Hood from {_limits_text(data.fume_hood_from_percent, last=', ')} "
            "and other concentrates that fume: common practice.)")))
    if "oxidizer" in hz and source.kind == "solution" and concentrate \
            and not _is_perchloric(c):
        out.append(Caution("oxidizing-acid", "warning", (
            f"{name} is an oxidizer: keep organics, solvents and reducers away; never mix its "
            "waste with organic waste.")))
    if "flammable" in hz and source.kind == "solution" and concentrate:
        out.append(Caution("flammable", "warning", (
            f"{source.label} is flammable: no flames, hot plates or sparks nearby while it is "
            "open.")))
    if source.kind == "solid" and hz & {"acutely_toxic", "chromic", "reprotoxic"}:
        out.append(Caution("toxic-solid", "warning", (
            f"{name} is toxic: weigh it in a fume hood or ventilated balance enclosure, avoid "
            "raising dust, wear gloves and wash hands after.")))
    ppe_sev = "warning" if corrosive or concentrate or hz & {"acutely_toxic", "hf_type"} \
        else "notice"
    out.append(Caution("ppe", ppe_sev, (
        "Splash goggles, chemical-resistant gloves and a lab coat"
        + ("; a face shield while pouring the concentrate" if concentrate else "")
        + "; eyewash and safety shower within reach.")))
    if _viscous(source):
        out.append(Caution("weigh-viscous", "notice", (
            f"{source.label} is viscous and drains slowly from pipettes and cylinders: weigh "
            "it rather than measure it by volume (the recipe gives both). (Weigh from "
            f"{_limits_text(data.weigh_from_percent)}: common practice.)")))
    return out


def _product_cautions(source: Source, target: float, final: Strength) -> list[Caution]:
    """Standardizing the product, residues, solubility unknown, the label."""
    c = source.compound
    hz, name = c.hazards, c.name
    out: list[Caution] = []
    if source.kind == "solid" and handling().is_hygroscopic(c.key):
        out.append(Caution("standardize-base", "warning", (
            f"{c.key} takes up water and CO2 from air, so the strength of the product is "
            "approximate: standardize it against a primary standard (e.g. potassium hydrogen "
            "phthalate) before use as a volumetric solution.")))
    elif source.kind == "solution" and source.basis in ("label", "catalog", "prepared"):
        out.append(Caution("label-strength", "notice", (
            f"The strength of {source.label} is nominal"
            + (" (from an earlier step)" if source.basis == "prepared" else " (from the label)")
            + ": for a volumetric solution, standardize the product before use.")))
    if hz & {"heavy_metal", "no_drain"}:
        out.append(Caution("collect-residues", "notice", (
            f"{name}: do not pour leftovers or rinses down the drain; collect them for "
            "hazardous-waste disposal and follow your local disposal rules and safety "
            "office.")))
    if source.kind == "solid" and final.mass_percent is None:
        out.append(Caution("no-solubility-data", "notice", (
            f"carboy holds no solubility or density data for {c.key} at {fmt(target)} M: "
            "check that it dissolves at this strength.")))
    out.append(Caution("label-bottle", "notice", (
        "Label the new bottle: name and concentration, date, your initials and the hazard "
        "pictograms of the contents.")))
    return out


def recipe_cautions(source: Source, target: float, rise: float | None, t_c: float,
                    heat_unknown: bool, final: Strength) -> tuple[Caution, ...]:
    """Every caution of a recipe, most severe first (in rule order within a severity).

    ``rise`` is the larger of the estimated temperature rises (None: heat unknown),
    ``final`` the strength of the product.
    """
    out = [*_danger_cautions(source), *_heat_cautions(source, rise, t_c, heat_unknown),
           *_handling_cautions(source), *_product_cautions(source, target, final)]
    rank = {s: i for i, s in enumerate(SEVERITIES)}
    return tuple(sorted(out, key=lambda x: rank[x.severity]))


# ----------------------------------------------------------------------------- steps


def recipe_steps(source: Source, solute: Compound, target: float, vol_ml: float,
           stock_ml: float | None, stock_mass: float | None, water_first: float,
           water_total: float, rise: float | None, t_c: float,
           cautions: Sequence[Caution]) -> list[str]:
    """The ordered bench steps of a recipe; the cautions decide hood, bath and ware."""
    codes = {c.code for c in cautions}
    hf = "hf-danger" in codes
    cool = "heat-danger" in codes or "heat-warning" in codes
    hood = "fume-hood" in codes or "never-acidify" in codes or "toxic-solid" in codes
    vessel_kind = "polypropylene (PP) or PTFE beaker" if hf else "borosilicate beaker"
    flask = "PP or PFA volumetric flask (never glass)" if hf else "volumetric flask"
    concentrate = source.is_concentrate or (source.kind == "solid"
                                            and "dilution_heat" in source.compound.hazards)
    in_flask = source.kind == "solution" and not concentrate and (rise is None or
                                                                   rise < FLASK_MAX_RISE_K)
    vol_txt = volume_text(vol_ml)
    steps = ["Put on splash goggles, chemical-resistant gloves and a lab coat"
             + (" and work in a fume hood." if hood else ".")]
    if in_flask:
        steps.append(f"Put about {_about_ml(water_first)} of water (two thirds of the "
                     f"{water_total:.4g} mL needed) into a {vol_txt} {flask}.")
    else:
        bath = ", standing in an ice/water bath" if cool else ""
        steps.append(f"Put about {_about_ml(water_first)} of water (two thirds of the "
                     f"{water_total:.4g} mL needed) into a {_beaker(water_first + (stock_ml or 0))}"
                     f" {vessel_kind}{bath}.")
    if source.kind == "solution":
        vol_s = volume_text(stock_ml)
        if "weigh-viscous" in codes and stock_mass is not None:
            steps.append(f"Weigh {mass_text(stock_mass)} of {source.label} (about {vol_s}) "
                         "into a dry beaker: it is too viscous to measure accurately by volume.")
        elif stock_mass is not None:
            steps.append(f"Measure {vol_s} of {source.label} ({mass_text(stock_mass)}).")
        else:
            steps.append(f"Measure {vol_s} of {source.label}.")
        if concentrate:
            steps.append(f"Add the {source.compound.name} to the water slowly, in a thin "
                         "stream or small portions, with constant stirring; never pour water "
                         "into the concentrate.")
        else:
            steps.append("Add it to the water and swirl to mix.")
    else:
        purity = "" if source.purity_percent == 100.0 else \
            f", {source.purity_percent:g} % purity"
        quick = " quickly, in a closed weighing bottle (it takes up water and CO2 from air)" \
            if handling().is_hygroscopic(source.key) else ""
        steps.append(f"Weigh {mass_text(stock_mass)} of {source.key} "
                     f"({source.molar_mass_g_mol:.2f} g/mol{purity}){quick}.")
        if "dilution_heat" in source.compound.hazards:
            steps.append("Add the solid to the water in small portions with stirring until it "
                         "has dissolved; never pour water onto the solid.")
        else:
            steps.append("Add the solid to the water and stir until it has dissolved.")
    if rise is not None and rise >= 1.0:
        steps.append(f"Let the solution cool to room temperature (it warms by about "
                     f"{rise:.0f} K).")
    elif rise is not None and rise <= -1.0:
        steps.append(f"Let the solution come back to room temperature (it cools by about "
                     f"{-rise:.0f} K).")
    elif not in_flask:
        steps.append("Let the solution come to room temperature.")
    if not in_flask:
        steps.append(f"Transfer it into a {vol_txt} {flask}; rinse the beaker three times "
                     "with a little water and add the rinses to the flask.")
    steps.append(f"Make up to the mark with water at about {t_c:g} °C, stopper and invert "
                 "about 15 times to mix.")
    bottle = "a clean plastic bottle" if hf else "a clean, dry bottle"
    tail = "" if "standardize-base" not in codes else ", and 'standardize before use'"
    steps.append(f"Transfer to {bottle} and label it '{solute.key} {fmt(target)} M' with the "
                 f"date, your initials and the hazard pictograms{tail}.")
    return steps
