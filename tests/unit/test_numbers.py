"""One rule for the numbers people read: figures that suit the quantity, always a unit."""

from __future__ import annotations

import pytest
from hypothesis import given
from hypothesis import strategies as st

from carboy.model import numbers


@pytest.mark.parametrize(("value", "unit", "text"), [
    (0.0999127195935288, "M", "0.09991 M"),
    (0.944339, "M", "0.9443 M"),
    (0.1, "M", "0.1 M"),
    (37.0, "%w/w", "37 %w/w"),
    (12.1, "M", "12.1 M"),
    (None, "M", "—"),
])
def test_a_strength_has_four_figures_and_its_unit(value, unit, text):
    assert numbers.strength(value, unit) == text


@pytest.mark.parametrize(("litres", "text"), [
    (2.4916, "2.49 L"), (0.35, "350 mL"), (1.5, "1.5 L"), (12.5, "12.5 L"),
    (1234.5, "1230 L"), (0.0005, "500 µL"), (0.0, "0 L"),
])
def test_a_volume_has_three_figures_in_a_unit_that_suits_it(litres, text):
    assert numbers.volume(litres) == text


def test_masses_amounts_ph_and_counts():
    assert numbers.mass(640.0) == "640 g" and numbers.mass(0.51063) == "0.511 g"
    assert numbers.mass(2500.0) == "2.5 kg"
    assert numbers.amount(2.4916, "L") == "2.49 L" and numbers.amount(640, "g") == "640 g"
    assert numbers.ph(7.2134) == "pH 7.21"
    assert numbers.count(1, "bottle") == "1 bottle"
    assert numbers.count(2, "bottle") == "2 bottles" and numbers.count(0, "entry", "entries") \
        == "0 entries"


@given(st.floats(min_value=1e-9, max_value=1e7))
def test_figures_never_use_more_than_asked_and_read_back_close(value):
    text = numbers.figures(value, 3)
    assert abs(float(text) - value) <= abs(value) * 5e-3
    digits = text.split("e")[0].replace(".", "").replace("-", "").lstrip("0")
    assert len(digits.rstrip("0")) <= 3
