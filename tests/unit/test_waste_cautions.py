"""The cautions that look at the waste itself: no acidification plan for cyanide or
sulfide, gas escaping now, ammonia above pH 9, an oxidizing acid with organics, and the
drain verdict following the container's stream and the compatibility rules."""

from __future__ import annotations

import pytest

from carboy.errors import HazardRefused
from carboy.model import cautions
from carboy.model.forms.neutralize import ContainerSample, NeutralizeFields, evaluate
from carboy.model.mixture import Mixture

CURVE = 40  # plan curves only as long as these tests need


def fields(components, reagent, **kw) -> NeutralizeFields:
    return NeutralizeFields(**{"components": components, "volume": "1 L", "reagent": reagent,
                               **kw})


def planned(catalog, *args, container=None, **kw):
    reading = evaluate(fields(*args, **kw), catalog, container, curve_points=CURVE)
    assert reading.ok, reading.errors
    plan = reading.value
    assert plan.cautions[-1].code == "local-rules"
    assert not any("safe to pour" in c.text and "never" not in c.text for c in plan.cautions)
    return plan


def codes(plan) -> list[str]:
    return [c.code for c in plan.cautions]


# -- no acidification plan for cyanide or sulfide --------------------------------------------

REFUSED = [
    # (components, reagent, target, words the reason holds)
    ("NaCN=0.05M NaOH=0.01M", "HCl=1M", "7", ["holds cyanide", "no acidification dose",
                                               "above pH 10", "licensed disposal"]),
    ("Na2S=0.05M", "H2SO4=0.5M", "7", ["holds sulfide", "hydrogen sulfide (H2S)"]),
    ("HCl=0.1M NaCN=0.05M", "NaOH=1M", "7", ["escaping from it now", "pH 10 or above",
                                              "safety office"]),
    ("NaCN=0.05M HCl=0.04M", "NaOH=1M", "9.5", ["a target of pH 9.5 would leave it below "
                                                 "pH 10", "escaping from it now"]),
]


@pytest.mark.parametrize("components, reagent, target, words", REFUSED,
                         ids=[r[0] for r in REFUSED])
def test_no_plan_acidifies_a_cyanide_or_sulfide_waste(catalog, components, reagent, target,
                                                      words):
    reading = evaluate(fields(components, reagent, target=target, window_low="6",
                              window_high="12"), catalog, curve_points=CURVE)
    assert reading.value is None and set(reading.errors) == {"plan"}
    (name, problem), = reading.problems
    assert name == "plan" and isinstance(problem, HazardRefused) and not problem.overridable
    text = reading.errors["plan"]
    assert text.startswith("refused: a neutralization plan: this waste holds")
    for word in words:
        assert word in text, text
    assert "safe" not in text.replace("safety", "")
    assert reading.direction in ("acid", "base")


def test_refuse_plan_keeps_to_the_rule_tables_threshold():
    assert cautions.KEEP_ALKALINE_PH == 10.0  # compatibility.toml, cyanide-acid / sulfide-acid
    totals = {"cyanide": 0.1, "Na+": 0.1}
    assert cautions.refuse_plan(totals, frozenset(), 11.0, 12.0, "base") is None
    assert cautions.refuse_plan(totals, frozenset(), 11.0, 9.9, "acid")
    assert cautions.refuse_plan({"Cl-": 0.1}, frozenset(), 1.0, 7.0, "base") is None
    assert cautions.refuse_plan({"Na+": 0.1}, frozenset({"sulfide"}), 12.0, 7.0, "acid")


def test_an_acidic_cyanide_waste_taken_alkaline_says_hcn_is_escaping_first(catalog):
    plan = planned(catalog, "HCl=0.1M NaCN=0.05M", "NaOH=1M", target="11",
                   window_low="10", window_high="12")
    first = plan.cautions[0]
    assert (first.code, first.severity) == ("gas-escaping-now", "danger")
    assert "hydrogen cyanide (HCN) is escaping from it now" in first.text
    assert f"pH about {plan.initial_pH:.1f}" in first.text and plan.initial_pH < 2
    assert plan.drain_plan is False


def test_an_alkaline_cyanide_waste_has_no_escaping_gas_caution(catalog):
    plan = planned(catalog, "NaCN=0.05M NaOH=0.1M", "NaOH=1M", target="13",
                   window_low="12", window_high="14")
    assert "gas-escaping-now" not in codes(plan) and plan.initial_pH > 12
    assert "never-acidify" in codes(plan) and plan.drain_plan is False


# -- ammonia -----------------------------------------------------------------------------------

def test_ammonium_taken_above_ph_9_gets_a_toxic_gas_danger_and_no_drain_plan(catalog):
    plan = planned(catalog, "NH4Cl=1M", "NaOH=5M", target="10.5", window_low="10",
                   window_high="11")
    (c,) = [c for c in plan.cautions if c.code == "ammonia-release"]
    assert c.severity == "danger" and "ammonia gas" in c.text and "pH 10.5" in c.text
    assert plan.drain_plan is False


def test_ammonium_kept_below_ph_9_has_no_ammonia_caution(catalog):
    plan = planned(catalog, "NH4Cl=0.1M HCl=0.05M", "NaOH=1M", target="7")
    assert "ammonia-release" not in codes(plan) and plan.drain_plan is True


def test_an_ammonia_waste_brought_down_is_warned_of_the_vapour(catalog):
    plan = planned(catalog, "NH3=0.5M", "HCl=1M", target="7")
    (c,) = [c for c in plan.cautions if c.code == "ammonia-release"]
    assert c.severity == "warning" and plan.initial_pH > 11
    assert plan.drain_plan is True


# -- nitric acid with organics --------------------------------------------------------------

def test_nitric_acid_with_acetic_acid_has_its_own_danger_and_no_drain_plan(catalog):
    plan = planned(catalog, "HNO3=2M CH3COOH=1M", "NaOH=5M")
    (c,) = [c for c in plan.cautions if c.code == "oxidizer-with-organics"]
    assert c.severity == "danger" and "HNO3 with CH3COOH" in c.text
    assert "NOx" in c.text and "licensed disposal" in c.text
    assert plan.drain_plan is False
    assert codes(plan).index("oxidizer-with-organics") < codes(plan).index("corrosive-ppe")


def test_nitric_acid_alone_keeps_its_plan(catalog):
    plan = planned(catalog, "HNO3=0.1M", "NaOH=1M")
    assert "oxidizer-with-organics" not in codes(plan) and plan.drain_plan is True
    assert "oxidizing-acid" in codes(plan)


# -- the stream of a stored container --------------------------------------------------------

def _container(stream, contents, moles, volume_l=1.0):
    return ContainerSample(label="T-1", status="collecting", volume_l=volume_l,
                           capacity_l=20.0, location="", moles=moles, hazards=frozenset(),
                           contents=contents, stream=stream)


@pytest.mark.parametrize("stream, drain", [("acid", True), ("mixed", False),
                                           ("heavy_metal", False)])
def test_the_drain_verdict_follows_the_stream(catalog, stream, drain):
    box = _container(stream, {"HCl": 0.1}, {"Cl-": 0.1})
    plan = planned(catalog, "", "NaOH=1M", volume="", container=box)
    assert plan.drain_plan is drain
    assert ("stream-not-drain" in codes(plan)) is (not drain)


def test_a_container_whose_contents_break_a_rule_is_not_a_drain_plan(catalog):
    box = _container("acid", {"HNO3": 1.0, "CH3COOH": 0.5}, {"NO3-": 1.0, "acetate": 0.5})
    plan = planned(catalog, "", "NaOH=5M", volume="", container=box)
    assert "oxidizer-with-organics" in codes(plan) and plan.drain_plan is False


def test_amend_leaves_a_plan_with_nothing_to_add_as_it_was(catalog):
    reading = evaluate(fields("HCl=0.1M", "NaOH=1M"), catalog, curve_points=CURVE)
    plan = reading.value
    again = cautions.amend(plan, cautions.Sample({"HCl": 0.1}), catalog=catalog)
    assert again.cautions == plan.cautions and again.drain_plan == plan.drain_plan


def test_gas_hazards_read_the_composition_and_the_tags():
    assert cautions.gas_hazards(Mixture({"cyanide": 0.1}).totals, frozenset()) == ("cyanide",)
    assert cautions.gas_hazards({}, frozenset({"sulfide", "corrosive"})) == ("sulfide",)
    assert cautions.gas_hazards({"Cl-": 1.0}, frozenset()) == ()
