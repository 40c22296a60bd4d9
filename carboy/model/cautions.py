"""The caution rules of a neutralization plan: a table of (code, severity, test, text).

Each rule looks at :class:`Facts` (what the plan found and what is known of the sample)
and, when it applies, yields one :class:`Caution`.  The closing rule always applies:
carboy advises and never declares a batch fit to pour away.  The order of the table
is the order of the output, most serious first within the drain-route rules.
:func:`derived_hazards` gives the hazard tags a composition implies by itself
(fluoride, perchlorate, chromate, heavy-metal ions…), which join the tags the store
knows and the reagent's own.

The second half looks at the waste itself, beside a finished plan; the planner calls
both (:mod:`carboy.model.planner`, its start and last steps), so every caller of
``plan_neutralization`` gets them: :func:`refuse_plan` says when no plan may be given at
all (acidifying a cyanide or sulfide waste), and :func:`amend` adds the cautions that
need no solver change (gas escaping now, ammonia released above pH 9, an oxidizing acid
with organics, any other compatibility rule the contents break) and settles the drain
verdict by the container's stream and the rule table (:mod:`carboy.model.compatibility`).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field

from carboy.model import compatibility, numbers

SEVERITIES = ("danger", "warning", "notice")
PITZER_NOTICE_MOLAR = 5.0
"""With the specific-interaction model the validity notice comes above this ionic
strength (mol/L; about 6 mol/kg, the range its parameters were fitted to)."""

NO_DRAIN_TAGS = frozenset({"hf_type", "no_drain", "heavy_metal", "chromic", "perchloric",
                           "cyanide", "sulfide", "explosive_residue"})

HEAVY_METAL_IONS = frozenset({"Cu+2", "Zn+2", "Ni+2", "Pb+2", "Ag+", "Cd+2", "Cr+3"})


def derived_hazards(totals: Mapping[str, float]) -> frozenset[str]:
    """Hazard tags that follow from a sample's composition alone (its ``totals`` keys)."""
    tags = set()
    if "fluoride" in totals:
        tags |= {"hf_type", "no_drain"}
    if "ClO4-" in totals:
        tags |= {"perchloric", "oxidizer", "no_drain"}
    if "NO3-" in totals:
        tags.add("oxidizer")
    if "chromate" in totals:
        tags |= {"chromic", "heavy_metal", "oxidizer", "no_drain"}
    for key in ("cyanide", "sulfide"):
        if key in totals:
            tags |= {key, "no_drain"}
    if any(k in HEAVY_METAL_IONS for k in totals):
        tags |= {"heavy_metal", "no_drain"}
    return frozenset(tags)


@dataclass(frozen=True, eq=False)
class Caution:
    """One caution: its code, its severity (one of ``SEVERITIES``) and its words."""

    code: str
    severity: str
    text: str

    def to_dict(self) -> dict:
        return {"code": self.code, "severity": self.severity, "text": self.text}


@dataclass(frozen=True, eq=False, repr=False)
class Facts:
    """What the caution rules look at."""

    hazards: frozenset[str]
    direction: str
    reagent_key: str
    reagent_form: str
    reagent_hazards: frozenset[str]
    reagent_is_slurry: bool
    reagent_has_carbonate: bool
    slurry_limit: str = ""
    slurry_exceeded: bool = False
    temperature_rise_k: float = 0.0
    final_temperature_c: float = 25.0
    gas_l: float = 0.0
    vented_gas_l: float = 0.0
    """CO2 given off in all once the batch has vented (``gas_l``: right after the dose)."""
    carbonate_present: bool = False
    pH_before_venting: float | None = None
    vented_pH: float | None = None
    sensitivity_pH_per_percent: float = 0.0
    ionic_strength_molar: float = 0.0
    activity_model: str = ""   # the plan's model once "auto" is settled ("pitzer", ...)
    max_total_molar: float = 0.0
    expected_solids: tuple[str, ...] = ()
    target_reached: bool = True
    thresholds: dict = field(default_factory=dict)
    batch_heat: object | None = None
    """:class:`~carboy.model.batch_heat.BatchHeat`: boiling and the stages that keep the
    batch under its safe temperature."""
    salt_limits: tuple = ()
    """:class:`~carboy.model.precipitates.SaltLimit` of each salt beyond its solubility."""
    reagent_reach: object | None = None
    """:class:`~carboy.model.reagent_reach.Reach` of a carbonate reagent."""
    window_reached: bool = True
    """False when the reagent cannot bring the batch into the window at all."""
    target_pH: float = 7.0
    window: tuple[float, float] = (6.0, 9.0)
    initial_pH: float | None = None


def _t(f: Facts, key: str, default: float) -> float:
    return float(f.thresholds.get(key, default))


def not_for_drain(f: Facts) -> bool:
    """True when the sample must go to licensed disposal whatever its final pH."""
    return bool(f.hazards & NO_DRAIN_TAGS)


def _reasons(f: Facts) -> str:
    names = {
        "hf_type": "fluoride (HF-type)", "perchloric": "perchlorate", "chromic": "chromium(VI)",
        "heavy_metal": "heavy metal", "no_drain": "a no-drain substance",
        "cyanide": "cyanide", "sulfide": "sulfide", "explosive_residue": "perchlorate residue",
    }
    found = sorted({names[t] for t in f.hazards & NO_DRAIN_TAGS})
    return ", ".join(found)


def _boils(f: Facts) -> bool:
    return f.batch_heat is not None and f.batch_heat.boils


def _gas_text(f) -> str:
    """The CO2 predicted: in all once vented, and what leaves as the dose goes in."""
    if f.vented_gas_l > f.gas_l * 1.05:
        return (f"about {f.vented_gas_l:.3g} L in all once the batch has vented, "
                f"{f.gas_l:.3g} L of it as the dose goes in")
    return f"{max(f.gas_l, f.vented_gas_l):.3g} L predicted"


def _stages_text(f: Facts) -> str:
    """How many stages keep the batch under its safe temperature, when it would pass it."""
    bh = f.batch_heat
    if bh is None or not bh.above_safe:
        return ""
    if bh.stages is None:
        return (f"; staging alone cannot keep it below {bh.safe_c:g} °C ({bh.safe_from}): "
                "dilute and cool it first")
    return (f"; at least {bh.stages} equal stages, letting it cool back to about "
            f"{bh.start_c:g} °C between them, keep it below {bh.safe_c:g} °C ({bh.safe_from})")


def _heat_danger(f: Facts) -> str:
    if _boils(f):
        bh = f.batch_heat
        return (f"The heat released (about {numbers.figures(bh.released_kj, 2)} kJ) would take "
                "this batch past "
                f"boiling (about {bh.boil_c:g} °C): it would boil and spatter hot corrosive "
                "liquid. Dilute it first, stand it in an ice bath and add the reagent in "
                f"portions{_stages_text(f)}.")
    return (f"Predicted temperature rise {f.temperature_rise_k:.0f} K (to about "
            f"{f.final_temperature_c:.0f} °C): boiling and spattering risk. Dilute first, stage "
            "the additions and cool in an ice bath; wait for the batch to cool between "
            f"stages{_stages_text(f)}.")


def stronger_reagent_words(direction: str, reagent_key: str) -> str:
    """A stronger reagent than ``reagent_key`` for a plan of ``direction``, in words."""
    if direction == "acid":
        return "a strong acid such as HCl or H2SO4, diluted"
    if reagent_key in ("NaHCO3", "KHCO3"):
        return "Na2CO3 (to about pH 10.3) or a hydroxide such as NaOH or KOH"
    return "a hydroxide such as NaOH or KOH"


def stronger_reagent(f: Facts) -> str:
    """A stronger reagent than the plan's, in words."""
    return stronger_reagent_words(f.direction, f.reagent_key)


def _salt_text(f: Facts) -> str:
    parts = []
    for s in f.salt_limits:
        parts.append(f"{s.salt} about {s.molality:.2g} mol/kg against {s.saturated_molality:.2g}"
                     f" that dissolve at {s.temperature_c:g} °C ({s.solid}; {s.source})")
    water = max(s.water_to_add_l for s in f.salt_limits)
    return ("At the target this batch holds more salt than its water dissolves: "
            + "; ".join(parts) + ". It crystallizes as the batch stands or cools. Add about "
            f"{water:.2g} L more water (before neutralizing) to keep it dissolved, or settle and "
            "collect the solid for disposal; do not wash it down the drain.")


def _reach_text(f: Facts) -> str:
    r = f.reagent_reach
    names = ", ".join(f"{k} ({v:.3g} mol)" for k, v in r.cannot.items())
    limit = max(p for p, _ in r.levels)
    return (f"{f.reagent_key} cannot take the protons of {names}, even once its CO2 has gone "
            f"(it takes acids of pKa below about {limit:.1f}): the full dose counts only the "
            f"others, and the batch stays near pH {limit:.1f} at most. To neutralize them "
            f"choose a stronger base: {stronger_reagent(f)}.")


Rule = tuple[str, str, Callable[[Facts], bool], Callable[[Facts], str]]

RULES: tuple[Rule, ...] = (
    ("not-a-drain-plan", "danger", not_for_drain, lambda f: (
        f"This waste holds {_reasons(f)}: it must NOT go to the drain, neutralized or not. "
        "This is NOT a drain-disposal plan; collect it, label it and send it for licensed "
        "hazardous-waste disposal through the safety office.")),
    ("never-acidify", "danger",
     lambda f: bool(f.hazards & {"cyanide", "sulfide"}), lambda f: (
        "Cyanide- or sulfide-bearing waste: never acidify it and never mix it with acid waste "
        "(HCN or H2S gas). Keep it alkaline and hand it to licensed disposal.")),
    ("hf-contact", "danger", lambda f: "hf_type" in f.hazards, lambda f: (
        "Fluoride present: with acid it is HF, which penetrates skin and burns without "
        "early pain. HF-rated gloves and face shield; calcium gluconate gel at hand; "
        "plastic ware, not glass.")),
    ("oxidizing-acid", "warning",
     lambda f: bool(f.hazards & {"oxidizer", "perchloric"}), lambda f: (
        "Oxidizer present (an oxidizing acid such as nitric, perchloric or chromic, or an "
        "oxidizing salt): keep organics, solvents and reducers away; many institutions forbid "
        "in-lab treatment of these - check before you start.")),
    ("corrosive-ppe", "warning", lambda f: True, lambda f: (
        "Corrosive work: splash goggles and a face shield, chemical-resistant gloves, lab coat; "
        "work in a fume hood with an eyewash and safety shower nearby.")),
    ("add-slowly", "warning", lambda f: True, lambda f: (
        f"Add the {f.reagent_key} slowly with stirring, in portions, into an open vented "
        "container; check the pH after each portion. Add concentrated acid or base to water, "
        "never water to it.")),
    ("dilute-first", "warning",
     lambda f: f.max_total_molar >= _t(f, "concentrated_molar", 5.0)
     or f.reagent_form == "concentrate", lambda f: (
        "Concentrated acid or base involved: dilute it first by adding it slowly to cold water "
        "(to about 10 % or less), then neutralize the dilute solution; the heat of dilution "
        "of a concentrated sample is not included in the heat figure.")),
    ("heat-danger", "danger",
     lambda f: f.temperature_rise_k >= _t(f, "rise_danger_k", 25.0)
     or f.final_temperature_c >= _t(f, "final_danger_c", 60.0) or _boils(f), _heat_danger),
    ("heat-warning", "warning",
     lambda f: _t(f, "rise_warn_k", 10.0) <= f.temperature_rise_k < _t(f, "rise_danger_k", 25.0)
     and f.final_temperature_c < _t(f, "final_danger_c", 60.0) and not _boils(f), lambda f: (
        f"Predicted temperature rise {f.temperature_rise_k:.0f} K: add in stages, cool the "
        f"container (ice bath) and let it cool between stages{_stages_text(f)}.")),
    ("co2-foaming", "warning",
     lambda f: f.gas_l > 0 or f.reagent_has_carbonate or f.carbonate_present, lambda f: (
        f"CO2 is given off ({_gas_text(f)}): foaming and pressure. Use an open, "
        "oversized container (at least 3-4 times the liquid volume), add in small portions, "
        "let the foam settle; never cap or seal the container while gas may still form.")),
    ("co2-reading", "notice",
     lambda f: f.pH_before_venting is not None and f.vented_pH is not None
     and abs(f.vented_pH - f.pH_before_venting) >= 0.2, lambda f: (
        f"Dissolved CO2 holds the pH down at first: right after the last addition expect "
        f"about pH {f.pH_before_venting:.1f}, rising towards {f.vented_pH:.1f} as the CO2 "
        "escapes. Stir, wait until the fizzing stops and measure again before adding more, "
        "or the batch overshoots.")),
    ("slurry-reagent", "notice", lambda f: f.reagent_is_slurry, lambda f: (
        f"{f.reagent_key} is only slightly soluble ({f.slurry_limit}): feed it as a stirred "
        "slurry; it dissolves as it reacts, so the pH lags the addition - wait and stir "
        "before reading the pH.")),
    ("slurry-limit", "warning", lambda f: f.reagent_is_slurry and f.slurry_exceeded, lambda f: (
        f"At this end point the solution would hold more dissolved {f.reagent_key} than its "
        "solubility product allows: undissolved solid remains and the pH levels off below the "
        "prediction.")),
    ("salt-limit", "warning", lambda f: bool(f.salt_limits), _salt_text),
    ("weak-reagent", "warning",
     lambda f: f.reagent_reach is not None and f.reagent_reach.limited, _reach_text),
    ("target-unreached", "warning", lambda f: not f.target_reached, lambda f: (
        f"{f.reagent_key} cannot bring this batch to the target pH: choose a stronger "
        f"reagent, {stronger_reagent(f)}.")),
    ("window-unreached", "warning", lambda f: f.target_reached and not f.window_reached,
     lambda f: (f"{f.reagent_key} cannot bring this batch into the window: choose a stronger "
                f"reagent, {stronger_reagent(f)}.")),
    ("target-outside-window", "warning",
     lambda f: not f.window[0] <= f.target_pH <= f.window[1], lambda f: (
        f"The target pH {f.target_pH:g} lies outside the acceptance window pH "
        f"{f.window[0]:g}–{f.window[1]:g}: a batch brought there is not accepted; aim inside "
        "the window.")),
    ("already-in-window", "notice",
     lambda f: f.initial_pH is not None and f.window[0] <= f.initial_pH <= f.window[1],
     lambda f: (f"The sample is already at pH {f.initial_pH:.2f}, inside the window pH "
                f"{f.window[0]:g}–{f.window[1]:g}: it needs no reagent to be accepted; the "
                "doses only bring it to the target.")),
    ("steep-end-point", "warning",
     lambda f: f.sensitivity_pH_per_percent > _t(f, "steep_ph_per_percent", 0.5), lambda f: (
        f"Steep end point: about {f.sensitivity_pH_per_percent:.2g} pH units per 1 % of dose, "
        "so small errors overshoot. Approach the end in small portions, or use a gentler "
        + ("acid (a weak acid such as citric or acetic, or a more dilute one)."
           if f.direction == "acid" else
           "base (a carbonate such as NaHCO3, or a more dilute base).")) ),
    ("sludge", "notice", lambda f: bool(f.expected_solids), lambda f: (
        "Expected to precipitate: " + ", ".join(f.expected_solids)
        + ". Settle and collect the solid as a sludge for disposal; do not wash it down the "
        "drain.")),
    ("model-validity", "notice",
     lambda f: f.ionic_strength_molar > (
         PITZER_NOTICE_MOLAR if f.activity_model == "pitzer"
         else _t(f, "ionic_strength_notice_molar", 0.1)), lambda f: (
        f"Ionic strength about {f.ionic_strength_molar:.2g} M: the activity model is "
        "approximate here (" + ("the specific-interaction parameters were fitted to about "
                                "6 mol/kg" if f.activity_model == "pitzer" else
                                "Davies is reliable to about 0.1-0.5 M")
        + "); measure the pH rather than trust the prediction.")),
    ("local-rules", "notice", lambda f: True, lambda f: (
        "Follow your local disposal rules and your institution's safety office: they set the "
        "real acceptance window and whether drain disposal is allowed at all. carboy advises; "
        "it never declares anything safe to pour away.")),
)


def evaluate(facts: Facts) -> tuple[Caution, ...]:
    """Every caution that applies, in table order; never empty (the last rule always applies)."""
    out = tuple(Caution(code, sev, text(facts)) for code, sev, test, text in RULES
                if test(facts))
    assert out and out[-1].code == "local-rules"
    return out


# ----------------------------------------------------------------------------- the waste itself

GAS_OF = {"cyanide": ("hydrogen cyanide", "HCN"), "sulfide": ("hydrogen sulfide", "H2S")}
"""The hazard tags whose waste gives off a gas when acidified, and that gas."""
KEEP_ALKALINE_PH = max(r.acidic_below_ph for r in compatibility.rules()
                       if r.gas in ("HCN", "H2S"))
"""Below this pH a cyanide or sulfide waste gives off its gas: the compatibility rules'
threshold (``cyanide-acid``, ``sulfide-acid``: pH 10, above HCN's pKa 9.21)."""
AMMONIA_RELEASE_PH = 9.0
"""Above this pH ammonium turns to ammonia that leaves as a gas (NH4+ pKa 9.25,
systems.toml; common practice to keep ammonium wastes at or below pH 9)."""
AMMONIA_SYSTEM = "ammonium"
OXIDIZING_ORGANIC_RULE = "oxidizing-acid-organic"


@dataclass(frozen=True, eq=False, repr=False)
class Sample:
    """What the waste cautions know of a sample beyond the plan: its compounds (key ->
    mol, empty when unknown) and, for a stored container, its stream and material."""

    compounds: Mapping[str, float] = field(default_factory=dict)
    stream: str | None = None
    material: str | None = None


def gas_hazards(totals: Mapping[str, float], hazards: frozenset[str]) -> tuple[str, ...]:
    """``cyanide``, ``sulfide``: those a sample holds (by composition or tag)."""
    found = (hazards | derived_hazards(totals)) & set(GAS_OF)
    return tuple(sorted(found))


def _gas_words(found: tuple[str, ...]) -> tuple[str, str]:
    """('cyanide or sulfide', 'hydrogen cyanide (HCN) and hydrogen sulfide (H2S)')."""
    held = " and ".join(found)
    gases = " and ".join(f"{GAS_OF[k][0]} ({GAS_OF[k][1]})" for k in found)
    return held, gases


def refuse_plan(totals: Mapping[str, float], hazards: frozenset[str], initial_pH: float,
                target_pH: float, direction: str) -> str | None:
    """Why no neutralization plan may be given for this sample, or None.

    A waste holding cyanide or sulfide is never acidified: no dose, stages or curve
    when the plan would lower its pH, nor one to a target below
    :data:`KEEP_ALKALINE_PH` (there the gas keeps escaping).  The reason says what to
    do instead.
    """
    found = gas_hazards(totals, hazards)
    if not found:
        return None
    held, gases = _gas_words(found)
    after = (f"keep it alkaline (above pH {KEEP_ALKALINE_PH:g}), closed and labelled, "
             "collect it for licensed disposal and follow your institution's safety office")
    if direction == "acid":
        return (f"this waste holds {held} (pH about {initial_pH:.1f}): acidifying it releases "
                f"{gases}, so carboy gives no acidification dose, stages or curve; {after}")
    if target_pH < KEEP_ALKALINE_PH:
        now = (f"at pH about {initial_pH:.1f} {gases} is escaping from it now; "
               if initial_pH < KEEP_ALKALINE_PH else "")
        return (f"this waste holds {held}: {now}a target of pH {target_pH:g} would leave it "
                f"below pH {KEEP_ALKALINE_PH:g}, where the gas keeps escaping; carboy plans "
                f"it only to pH {KEEP_ALKALINE_PH:g} or above: {after}")
    return None


def _gas_now(plan) -> Caution | None:
    found = gas_hazards(plan.sample.totals, plan.hazards)
    if not found or plan.initial_pH >= KEEP_ALKALINE_PH:
        return None
    held, gases = _gas_words(found)
    return Caution("gas-escaping-now", "danger", (
        f"IMMEDIATE DANGER: this waste holds {held} at pH about {plan.initial_pH:.1f}: "
        f"{gases} is escaping from it now. Do not open or stir it outside a working fume "
        "hood; keep people away; if anyone smells bitter almonds or rotten eggs, or feels "
        "unwell, leave and call the safety office. Make it alkaline (above pH "
        f"{KEEP_ALKALINE_PH:g}) only as the safety office directs; licensed disposal only."))


def _ammonia(plan) -> Caution | None:
    if AMMONIA_SYSTEM not in plan.sample.totals:
        return None
    raised = max(plan.to_target.target_pH or 0.0, plan.to_target.pH or 0.0)
    if raised > AMMONIA_RELEASE_PH:
        return Caution("ammonia-release", "danger", (
            f"Ammonium in this waste turns to ammonia above about pH {AMMONIA_RELEASE_PH:g}: "
            f"taking it to pH {raised:.1f} releases ammonia gas (toxic, choking). Choose a "
            f"target of pH {AMMONIA_RELEASE_PH:g} or below; if it must go higher, work in a "
            "fume hood, keep the batch cool and covered, and treat it as licensed-disposal "
            "waste, not a drain plan."))
    if plan.initial_pH > AMMONIA_RELEASE_PH:
        return Caution("ammonia-release", "warning", (
            f"This waste is at pH about {plan.initial_pH:.1f}, above "
            f"{AMMONIA_RELEASE_PH:g}: part of its ammonium is ammonia, which escapes as a toxic, "
            "choking gas. Work in a fume hood until it is brought down."))
    return None


def _rule_caution(f: compatibility.Finding) -> Caution:
    with_ = f" with {', '.join(f.present)}" if f.present else ""
    if f.rule_id == OXIDIZING_ORGANIC_RULE:
        return Caution("oxidizer-with-organics", "danger", (
            f"An oxidizing acid and organic compounds are together in this waste ({f.added}"
            f"{with_}): they react, slowly or in a runaway, with heat, brown NOx fumes and "
            "gas pressure that can burst a closed container. Never cap it tightly, never "
            "heat it, do not neutralize it in the lab: it goes to licensed disposal through "
            "the safety office."))
    severity = "danger" if f.severity == "refuse" else "warning"
    return Caution(f"rule-{f.rule_id}", severity,
                   f"In this waste, {f.added}{with_}: {f.hazard}; {f.advice}.")


def _findings(plan, sample: Sample, catalog) -> tuple[compatibility.Finding, ...]:
    if not sample.compounds:
        return ()
    box = compatibility.Container(sample.stream, dict(sample.compounds), plan.initial_pH,
                                  plan.sample.volume_l, sample.material)
    found = compatibility.check_container(box, catalog=catalog)
    # the gas of an acidic cyanide or sulfide waste has its own caution at the top
    return tuple(f for f in found if f.gas not in ("HCN", "H2S"))


def _stream_caution(sample: Sample) -> Caution | None:
    if sample.stream is None:
        return None
    st = compatibility.stream(sample.stream)
    if st.drain_treatable:
        return None
    return Caution("stream-not-drain", "danger", (
        f"This container is meant for {st.name} ({st.words}) This is NOT a drain-disposal "
        "plan: the container goes to licensed disposal through the safety office."))


def amend(plan, sample: Sample | None = None, *, catalog=None):
    """``plan`` with the waste's own cautions and the drain verdict settled.

    The immediate danger of gas escaping now goes first; then the plan's own leading
    dangers (its drain-route verdict); then ammonia released above pH 9, an oxidizing
    acid with organics, every other compatibility rule the contents break and, for a
    container whose stream is never drain-treatable, that (dangers first); then the rest
    of the plan's cautions (the closing note stays last).  ``drain_plan`` stays true only
    when the plan said so, the stream may be treated for the drain, no rule refuses the
    contents, no gas escapes and no ammonia is driven off.  ``catalog`` knows the
    sample's compounds (default: the built-in one); an unknown one raises
    :class:`~carboy.errors.UnknownCompound`.
    """
    sample = sample or Sample()
    top = _gas_now(plan)
    ammonia = _ammonia(plan)
    findings = _findings(plan, sample, catalog)
    extra = [c for c in (ammonia, *(_rule_caution(f) for f in findings),
                         _stream_caution(sample)) if c is not None]
    drain = (plan.drain_plan and top is None and not compatibility.refusals(findings)
             and (ammonia is None or ammonia.severity != "danger")
             and (sample.stream is None or compatibility.stream(sample.stream).drain_treatable))
    extra.sort(key=lambda c: SEVERITIES.index(c.severity))
    lead = 0
    while lead < len(plan.cautions) and plan.cautions[lead].severity == "danger":
        lead += 1
    cautions = (*((top,) if top else ()), *plan.cautions[:lead], *extra,
                *plan.cautions[lead:])
    return dataclasses.replace(plan, cautions=cautions, drain_plan=drain)
