"""What the Neutralize screen draws from a plan, without the app: the curve's data and key,
the one-line caution headline and the plan's figures.  The plans come from the form
(:func:`carboy.model.forms.neutralize.evaluate`); every expected figure is read from the
plan itself, never typed here."""

from __future__ import annotations

import pytest

from carboy.model.forms.neutralize import NeutralizeFields, evaluate
from carboy.tui.app.widgets.ph_curve import curve_data_from_plan, curve_key, reagent_axis
from carboy.tui.app.widgets.plan_view import (
    by_severity,
    cautions_text,
    fmt_mol,
    headline,
    plan_text,
    stage_rows,
)


def plan_of(catalog, components="HCl=0.1M", volume="1 L", reagent="NaOH=1M"):
    fields = NeutralizeFields(components=components, volume=volume, reagent=reagent)
    out = evaluate(fields, catalog, curve_points=50)
    assert out.ok, out.errors
    return out.value


def test_the_curve_data_is_the_plans_in_the_reagents_unit(catalog):
    plan = plan_of(catalog)
    data = curve_data_from_plan(plan)
    assert data.x_unit == "mL" and len(data.x) == len(plan.curve) == 50
    assert data.window == (6.0, 9.0) and data.target_pH == 7.0
    assert data.target_x == pytest.approx(plan.to_target.reagent_volume_l * 1000)
    assert [m.tag for m in data.equivalence] == ["E1"]
    assert data.pH[0] == pytest.approx(plan.initial_pH)
    key = curve_key(data)
    assert "window pH 6–9" in key and "◆E1" in key and "to pH 7" in key
    assert curve_key(data, stale=True).startswith("STALE")
    assert curve_key(None).startswith("No curve yet")


def test_the_axis_unit_follows_the_size_of_the_dose(catalog):
    assert reagent_axis(plan_of(catalog, "HCl=1M", "10 L"))[0] == "L"  # past 2 L
    solid = plan_of(catalog, reagent="NaHCO3")
    assert reagent_axis(solid)[0] == "g"
    rows = stage_rows(solid)
    assert rows and all(add.endswith(" g") and total.endswith(" g") for _, add, total, _ in rows)


def test_the_headline_is_the_most_serious_caution_with_the_count_of_the_rest(catalog):
    plan = plan_of(catalog, "HF=0.5M NaF=0.1M")
    ranked = by_severity(plan.cautions)
    assert ranked[0].severity == "danger"
    assert [c.severity for c in ranked] == sorted(
        (c.severity for c in plan.cautions), key=["danger", "warning", "notice"].index)
    line = str(headline(plan.cautions))
    assert line.startswith(f"[{len(plan.cautions) - 1} more: ctrl+g] ‼ DANGER")
    assert str(headline([])).startswith("· NOTE")
    assert str(headline(plan.cautions, stale=True)).startswith("(last good plan)")
    every = str(cautions_text(plan.cautions))
    assert all(f"[{c.code}]" in every for c in plan.cautions)


def test_the_plan_text_leads_with_the_dose_and_says_when_it_is_no_drain_plan(catalog):
    plan = plan_of(catalog)
    text = str(plan_text(plan))
    assert "NOT FOR DRAIN" not in text
    assert f"To pH 7      {plan.to_target.reagent_volume_l * 1000:.0f} mL" in text
    assert "local rules set the real window" in text
    assert str(plan_text(plan_of(catalog, "HF=0.5M NaF=0.1M"))).startswith(
        "‼ NOT FOR DRAIN DISPOSAL")
    assert (fmt_mol(0.05), fmt_mol(2.0), fmt_mol(None)) == ("50 mmol", "2 mol", "—")
