"""The caution rules of a neutralization plan: a table of (code, severity, test, text).

Each rule looks at :class:`Facts` (what the plan found and what is known of the sample)
and, when it applies, yields one :class:`Caution`.  The closing rule always applies:
carboy advises and never declares a batch fit to pour away.  The order of the table
is the order of the output, most serious first within the drain-route rules.
:func:`derived_hazards` gives the hazard tags a composition implies by itself
(fluoride, perchlorate, chromate, heavy-metal ions…), which join the tags the store
knows and the reagent's own.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field

SEVERITIES = ("danger", "warning", "notice")

NO_DRAIN_TAGS = frozenset({"hf_type", "no_drain", "heavy_metal", "chromic", "perchloric",
                           "cyanide", "sulfide", "explosive_residue"})

HEAVY_METAL_IONS = frozenset({"Cu+2", "Zn+2", "Ni+2", "Pb+2", "Ag+"})


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


@dataclass(frozen=True)
class Caution:
    code: str
    severity: str
    text: str

    def to_dict(self) -> dict:
        return {"code": self.code, "severity": self.severity, "text": self.text}


@dataclass(frozen=True)
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
    carbonate_present: bool = False
    pH_before_venting: float | None = None
    vented_pH: float | None = None
    sensitivity_pH_per_percent: float = 0.0
    ionic_strength_molar: float = 0.0
    max_total_molar: float = 0.0
    expected_solids: tuple[str, ...] = ()
    target_reached: bool = True
    thresholds: dict = field(default_factory=dict)


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
     or f.final_temperature_c >= _t(f, "final_danger_c", 60.0), lambda f: (
        f"Predicted temperature rise {f.temperature_rise_k:.0f} K (to about "
        f"{f.final_temperature_c:.0f} °C): boiling and spattering risk. Dilute first, stage "
        "the additions and cool in an ice bath; wait for the batch to cool between stages.")),
    ("heat-warning", "warning",
     lambda f: _t(f, "rise_warn_k", 10.0) <= f.temperature_rise_k < _t(f, "rise_danger_k", 25.0)
     and f.final_temperature_c < _t(f, "final_danger_c", 60.0), lambda f: (
        f"Predicted temperature rise {f.temperature_rise_k:.0f} K: add in stages, cool the "
        "container (ice bath) and let it cool between stages.")),
    ("co2-foaming", "warning",
     lambda f: f.gas_l > 0 or f.reagent_has_carbonate or f.carbonate_present, lambda f: (
        f"CO2 is given off ({f.gas_l:.3g} L predicted): foaming and pressure. Use an open, "
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
    ("target-unreached", "warning", lambda f: not f.target_reached, lambda f: (
        f"{f.reagent_key} cannot bring this batch to the target pH: choose a stronger "
        "reagent.")),
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
     lambda f: f.ionic_strength_molar > _t(f, "ionic_strength_notice_molar", 0.1), lambda f: (
        f"Ionic strength about {f.ionic_strength_molar:.2g} M: the activity model is "
        "approximate here (Davies is reliable to about 0.1-0.5 M); measure the pH rather "
        "than trust the prediction.")),
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
