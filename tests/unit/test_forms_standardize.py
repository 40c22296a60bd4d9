"""The standardization form as a plain object, and how its result reads on screen.

The replicate data are an invented, realistic example: about 0.51 g of KHP per titration
of a nominal 0.1 M NaOH, titres near 25 mL.  Every expected molarity comes from the
model's own ``standardize`` on the same inputs, never from a number typed here.
"""

from __future__ import annotations

from hypothesis import given, settings
from hypothesis import strategies as st

from carboy.model.forms.standardize import (
    BottleInfo,
    StandardizeFields,
    evaluate,
    fmt_molar,
    parse_replicates,
)
from carboy.model.standardization import AcceptanceRule, Replicate, standardize
from carboy.tui.app.screens.standardize_text import (
    ACCEPTED_MARK,
    OUTLIER_MARK,
    REJECTED_MARK,
    cautions_text,
    result_text,
    short_reasons,
)

GOOD = [(0.5106, 25.02), (0.5098, 24.97), (0.5112, 25.05)]
"""Invented triplicate, KHP against about 0.1 M NaOH: RSD well under 0.2 %."""
SPREAD = [(0.5106, 25.02), (0.5098, 25.21), (0.5112, 24.86)]
"""Invented triplicate with poor agreement: RSD near 0.7 %, not accepted."""


def lines(pairs) -> str:
    return "\n".join(f"{m} {v}" for m, v in pairs)


def bottle(**kw) -> BottleInfo:
    base = {"id": 34, "compound_key": "NaOH", "compound_name": "sodium hydroxide",
            "strength_unit": "M", "label_strength": 0.1, "current_strength": 0.1003,
            "measured_at": "2025-02-09T10:00:00Z", "status": "in-use", "location": "Bench"}
    return BottleInfo(**{**base, **kw})


def test_typed_values_with_commas_units_and_either_order_give_the_models_numbers():
    reading = evaluate(StandardizeFields(
        titrant="NaOH 0,1 M", standard="KHP",
        replicates="0.5106 25.02\n0,5098 g 24,97 mL\n25.05 mL 0.5112 g"))
    expected = standardize("NaOH", "KHP", [Replicate(m, v) for m, v in GOOD],
                           nominal_molar=0.1)
    result = reading.value
    assert reading.ok and result is not None
    assert [r.molar for r in result.replicates] == [r.molar for r in expected.replicates]
    assert result.mean_molar == expected.mean_molar
    assert result.deviation_percent == expected.deviation_percent
    assert "sodium hydroxide" in reading.echoes["titrant"]
    assert "nominal 0.1 M" in reading.echoes["titrant"]
    assert "204.22 g/mol" in reading.echoes["standard"] and "120 °C" in reading.echoes["standard"]
    assert "potassium hydrogen phthalate" in reading.echoes["standard"]
    panel = result_text(result).plain
    assert ACCEPTED_MARK in panel and f"{expected.rsd_percent:.3f} %" in panel
    assert all(fmt_molar(r.molar) in panel for r in expected.replicates)
    assert "≤ 0.2 %" in panel and "≥ 3 replicates" in panel
    assert "safe" not in panel.lower()


def test_a_bad_line_is_named_by_its_number_and_value_and_gives_no_result():
    reading = evaluate(StandardizeFields(titrant="NaOH", standard="KHP",
                                         replicates="0.5106 25.02\n0.5098 24,9x\n0.5112 25.05"))
    assert reading.value is None
    assert [e.line for e in reading.line_errors] == [2]
    assert "24,9x" in str(reading.line_errors[0])
    assert [r.line for r in reading.lines] == [1, 3]


def test_a_titre_not_above_the_blank_is_a_line_error():
    reading = evaluate(StandardizeFields(titrant="NaOH", standard="KHP", blank="25.03",
                                         replicates=lines(GOOD)))
    assert {e.line for e in reading.line_errors} == {1, 2}


def test_each_bad_field_is_named():
    reading = evaluate(StandardizeFields(titrant="NaOH", standard="KHP", assay="abc",
                                         blank="x mL", replicates="x y z"))
    assert reading.value is None
    assert "abc" in reading.errors["assay"] and "blank" in reading.errors
    assert [e.line for e in reading.line_errors] == [1]


def test_a_standard_that_does_not_suit_the_titrant_is_refused():
    reading = evaluate(StandardizeFields(titrant="HCl", standard="KHP", replicates=lines(GOOD)))
    assert reading.value is None and "Na2CO3" in reading.errors["standard"]


def test_empty_fields_are_hints():
    reading = evaluate(StandardizeFields(blank=""))
    assert reading.missing == {"titrant", "standard", "replicates"}


def test_a_bottle_as_titrant_gives_its_label_as_nominal():
    reading = evaluate(StandardizeFields(titrant="#34", standard="KHP", replicates=lines(GOOD)),
                       bottle=bottle())
    assert reading.ok and reading.value.nominal_molar == 0.1
    assert reading.bottle_id == 34 and "bottle 34: NaOH 0.1 M" in reading.echoes["titrant"]


def test_a_bottle_that_is_not_molar_or_not_read_is_named():
    pct = evaluate(StandardizeFields(titrant="#34", standard="KHP", replicates=lines(GOOD)),
                   bottle=bottle(strength_unit="%w/w", label_strength=50.0))
    assert "only a bottle labelled in M" in pct.errors["titrant"]
    missing = evaluate(StandardizeFields(titrant="#9999", standard="KHP",
                                         replicates=lines(GOOD)),
                       bottle_error="no stock bottle '9999'")
    assert "9999" in missing.errors["titrant"]


def test_the_rule_given_is_the_rule_applied():
    strict = AcceptanceRule(max_rsd_percent=0.02)
    reading = evaluate(StandardizeFields(titrant="NaOH", standard="KHP",
                                         replicates=lines(GOOD)), strict)
    expected = standardize("NaOH", "KHP", [Replicate(m, v) for m, v in GOOD], rule=strict)
    assert expected.accepted is False  # RSD about 0.026 %: over 0.02 %
    assert reading.value.accepted is False and reading.value.rule.max_rsd_percent == 0.02
    assert "rule (storeroom): RSD ≤ 0.02 %" in result_text(reading.value,
                                                           rule_origin="storeroom").plain


def test_a_spread_result_says_why_it_is_not_accepted():
    reading = evaluate(StandardizeFields(titrant="NaOH", standard="KHP",
                                         replicates=lines(SPREAD)))
    expected = standardize("NaOH", "KHP", [Replicate(m, v) for m, v in SPREAD])
    assert reading.value.accepted is False and expected.accepted is False
    why = f"RSD {expected.rsd_percent:.3f} % > 0.2 %"
    assert why in short_reasons(reading.value)
    assert REJECTED_MARK in result_text(reading.value).plain


def test_an_outlier_is_marked_in_words_on_its_row():
    pairs = [(0.5106, 25.02), (0.5098, 24.97), (0.5112, 25.05), (0.5101, 25.25),
             (0.5104, 25.01)]
    expected = standardize("NaOH", "KHP", [Replicate(m, v) for m, v in pairs])
    assert expected.outliers == (4,)
    result = evaluate(StandardizeFields(titrant="NaOH", standard="KHP",
                                        replicates=lines(pairs))).value
    row = next(line for line in result_text(result).plain.splitlines()
               if fmt_molar(expected.replicates[3].molar) in line)
    assert OUTLIER_MARK in row
    assert "replicate 4 is an outlier" in short_reasons(result)


@settings(max_examples=40, deadline=None)
@given(mass=st.floats(0.1, 5.0), volume=st.floats(5.0, 50.0), comma=st.booleans(),
       units=st.sampled_from(["", "g mL", "mg mL", "swap"]))
def test_replicate_lines_read_back_what_was_written(mass, volume, comma, units):
    m, v = f"{mass:.4f}", f"{volume:.2f}"
    if units == "mg mL":
        m = f"{mass * 1000:.1f}"
    if comma:
        m, v = m.replace(".", ","), v.replace(".", ",")
    if units == "":
        line = f"{m} {v}"
    elif units == "swap":
        line = f"{v} mL {m} g"
    else:
        mass_unit = units.split()[0]
        line = f"{m} {mass_unit} {v}mL"
    lines, errors = parse_replicates(f"\n{line}  # replicate\n")
    assert errors == ()
    assert len(lines) == 1 and lines[0].line == 2
    want_mass = round(mass * 1000, 1) / 1000 if units == "mg mL" else round(mass, 4)
    assert abs(lines[0].mass_g - want_mass) < 1e-9
    assert abs(lines[0].volume_ml - round(volume, 2)) < 1e-9


def test_the_cautions_follow_the_titrant_and_the_standard():
    base = evaluate(StandardizeFields(titrant="NaOH 0,1 M", standard="KHP",
                                      replicates=lines(GOOD)))
    text = cautions_text(base.titrant, base.standard)
    assert text.startswith("⚠ KHP: dry for 3 hours at 120 °C")
    assert "CO2-free water" in text and "soda-lime" in text
    acid = evaluate(StandardizeFields(titrant="HCl", standard="Na2CO3", replicates=lines(GOOD)))
    text = cautions_text(acid.titrant, acid.standard)
    assert "acid into water, never water into acid" in text and "soda-lime" not in text
    assert cautions_text() != text and "CO2-free water" in cautions_text()  # nothing read yet
    assert all("safe" not in t.lower() for t in (text, cautions_text(),
                                                 cautions_text(base.titrant, base.standard)))
