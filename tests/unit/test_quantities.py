"""Reading the quantities people type."""

from __future__ import annotations

import pytest

from carboy.errors import InvalidInput
from carboy.model import quantities as q


@pytest.mark.parametrize(
    "text, litres",
    [("250 mL", 0.25), ("250mL", 0.25), ("1.5 L", 1.5), ("1,5 L", 1.5), ("20 l", 20.0),
     ("500 µL", 5e-4), ("2 dL", 0.2), ("0.5 gallon", 1.8927), (".5 L", 0.5),
     # a decimal comma that cannot be a thousands separator: whole part 0, or not three
     # digits after it (1,500 is refused: thousands to some, 1.5 to others)
     ("0,500 L", 0.5), ("2,25 L", 2.25), ("1,5000 L", 1.5), ("1500 mL", 1.5)],
)
def test_volumes(text, litres):
    assert q.volume_l(text) == pytest.approx(litres, rel=1e-4)


@pytest.mark.parametrize(
    "text, molar",
    [("0.1 M", 0.1), ("0,1 M", 0.1), ("10mM", 0.01), ("10 mmol/L", 0.01), ("2", 2.0),
     ("50 µM", 5e-5), ("1e-3 M", 1e-3)],
)
def test_concentrations(text, molar):
    assert q.concentration_molar(text) == pytest.approx(molar)


def test_temperature_and_percent_and_mass():
    assert q.temperature_c("35") == 35.0
    assert q.temperature_c("35 °C") == 35.0
    assert q.temperature_c("300 K") == pytest.approx(26.85)
    assert q.percent("37 %") == 37.0
    assert q.percent("37") == 37.0
    assert q.mass_g("1,2 kg") == pytest.approx(1200.0)


def test_echo_says_what_was_understood():
    r = q.parse("1,5 L", "volume")
    assert r.echo() == "1.5 L"


@pytest.mark.parametrize(
    "func, text, fragment",
    [
        (q.volume_l, "250", "give a unit"),
        (q.volume_l, "0.1 M", "concentration, not a volume"),
        (q.volume_l, "-5 mL", "must not be negative"),
        (q.volume_l, "abc", "expected a number"),
        (q.volume_l, "1.000,5 L", "decimal point or a decimal comma"),
        (q.volume_l, "3 kg", "mass, not a volume"),
        (q.volume_l, "3 parsecs", "unknown unit"),
        (q.volume_l, "3 blorps", "unknown unit"),
        (q.concentration_molar, "2 N", "normality"),
        (q.concentration_molar, "5 mL", "volume, not a concentration"),
        (q.percent, "137 %", "cannot exceed 100"),
        (q.temperature_c, "-300", "absolute zero"),
        (q.volume_l, "1,500 mL", "write '1500 mL' or '1.500 mL'"),
        (q.volume_l, "10,000 mL", "ambiguous"),
        (q.mass_g, "2,500 g", "ambiguous"),
        (q.concentration_molar, "1,500 mM", "ambiguous"),
    ],
)
def test_bad_input_names_the_value(func, text, fragment):
    with pytest.raises(InvalidInput) as info:
        func(text)
    msg = str(info.value)
    assert repr(text) in msg
    assert fragment in msg
