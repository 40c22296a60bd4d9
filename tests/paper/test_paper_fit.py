"""Text fits its box: the fitting rules, and every catalog compound's label at 70 x 37 mm."""

from __future__ import annotations

import pytest

from carboy.model.label_documents import BottleFacts, bottle_label
from carboy.model.labels import make_label
from carboy.tui.paper.canvas import measure
from carboy.tui.paper.fit import ELLIPSIS, LEADING, Run, fit, wrap
from carboy.tui.paper.label import HAZARD_SIZES, LABEL_PT, layout_label

EPS = 1e-6


def test_wrap_never_exceeds_the_width_and_breaks_a_word_too_long_for_it():
    text = "Hydrochloric acid tris(hydroxymethyl)aminomethane-hydrochloride-solution end"
    for width in (30.0, 60.0, 120.0):
        lines = wrap(text, width, 7.0, False, measure)
        assert all(measure(line, 7.0) <= width + EPS for line in lines)
        assert "".join(lines).replace(" ", "") == text.replace(" ", "")


def test_fit_takes_the_largest_size_that_fits():
    runs = [Run("Causes severe skin burns and eye damage. " * 3)]
    roomy = fit(runs, 200.0, 200.0, max_size=9.0, min_size=4.0, measure=measure)
    tight = fit(runs, 120.0, 30.0, max_size=9.0, min_size=4.0, measure=measure)
    assert roomy.size == 9.0 and roomy.complete
    assert 4.0 <= tight.size < 9.0 and tight.complete and tight.height <= 30.0 + EPS
    # one step larger would not have fitted
    bigger = fit(runs, 120.0, 30.0, max_size=tight.size + 0.25, min_size=tight.size + 0.25,
                 measure=measure)
    assert not bigger.complete


def test_text_that_cannot_fit_is_cut_with_an_ellipsis_inside_the_box():
    runs = [Run("word " * 400)]
    got = fit(runs, 80.0, 20.0, max_size=6.0, min_size=4.0, measure=measure)
    assert not got.complete and got.lines[-1].text.endswith(ELLIPSIS)
    assert all(ln.width <= 80.0 + EPS for ln in got.lines)
    assert got.lines[-1].baseline + 0.2 * 4.0 * LEADING <= 20.0 + EPS


def _facts(compound) -> BottleFacts:
    """The longest values a label line is likely to carry, around the compound's own name."""
    return BottleFacts(
        bottle_id=1234567, name=compound.name[:1].upper() + compound.name[1:],
        formula=compound.key, labelled="12.3456 M", mass_percent=None, measured="12.3456 M",
        measured_on="2025-03-01", made_here=True, dated="2025-03-14",
        by="h.ostervald-wyncombe", source_bottle=1234566, lot="FW-PREP-2025-0214-B",
        expires_on="2026-03-14", recheck_on="2025-03-28",
        storeroom="Fenwold Annex storeroom, east wing, room 0.114")


def _assert_inside(layout):
    width, height = layout.size
    for region in layout.regions:
        box = region.box
        assert 0 <= box.x and box.x + box.w <= width + EPS, region.name
        assert 0 <= box.y and box.y + box.h <= height + EPS, region.name
        for line in region.fit.lines:
            assert line.width <= box.w + EPS, (region.name, line.text)
            # the line's whole height (ascent and descent) stays inside its box
            assert line.baseline + 0.2 * line.size * LEADING <= box.h + EPS, (region.name,
                                                                              line.text)
    for _, box in layout.pictograms:
        assert box.x + box.w <= width + EPS and box.y + box.h <= height + EPS


def test_every_catalog_compound_fits_a_70_by_37_mm_label(catalog):
    # the top band of each hazard class ("as supplied") gives the most statements
    longest = max(catalog.compounds.values(), key=lambda c: len(c.name))
    assert len(longest.name) >= 30
    for compound in catalog.compounds.values():
        label = make_label(compound, conc_text="12.3456 M", mass_percent=None,
                           prepared_on="2025-03-14", prepared_by="x", catalog=catalog)
        layout = layout_label(bottle_label(label, _facts(compound)))
        assert layout.size == pytest.approx(LABEL_PT)
        _assert_inside(layout)
        assert layout.complete, compound.key
        # every statement is printed in full (one to a line, or run on), never cut to codes
        assert layout.hazard_style in ("lines", "run-on"), compound.key
        hazards = layout.region("hazards")
        assert hazards.fit.size >= HAZARD_SIZES[1]
        printed = " ".join(ln.text for ln in hazards.fit.lines)
        for statement in label.statements:
            assert statement.code in printed


def test_a_label_with_more_than_fits_falls_back_to_codes(catalog):
    label = make_label("HNO3", conc_text="65 %", mass_percent=65, prepared_on="2025-03-14",
                       prepared_by="x", catalog=catalog)
    many = type(label)(**{**label.__dict__, "statements": label.statements * 4})
    layout = layout_label(bottle_label(many, _facts(catalog.compound("HNO3"))))
    assert layout.hazard_style == "codes" and layout.complete
    _assert_inside(layout)
    printed = " ".join(ln.text for ln in layout.region("hazards").fit.lines)
    assert "H272" in printed and "safety data sheet" in printed
