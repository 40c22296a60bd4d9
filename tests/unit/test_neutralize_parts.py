"""The Neutralize screen's pure parts: the choosers' options, the container summary and
the window fields under new disposal rules (no app needed)."""

from __future__ import annotations

from types import SimpleNamespace

from carboy.model.forms.neutralize import ContainerSample
from carboy.store.planning import BottleChoice
from carboy.tui.app.screens.neutralize_parts import (
    TYPED,
    container_summary,
    reagent_options,
    sample_options,
    window_values,
)

CHOICES = [
    BottleChoice(3, "NaOH", "NaOH=1M", "NaOH 1 M #3", "base", 2.0, "L"),
    BottleChoice(5, "HCl", "HCl=1M", "HCl 1 M #5", "acid", 1.0, "L"),
    BottleChoice(7, "H2SO4", "H2SO4=96%", "H2SO4 96 % #7", "sample", 0.5, "L"),
]


def test_the_sample_chooser_offers_typing_every_container_and_sample_bottles():
    options = sample_options([("MA-01", "planned"), ("HF-04", "licensed-disposal")], CHOICES)
    assert [value for _, value in options] == [TYPED, "c:MA-01", "c:HF-04", "b:7"]
    assert options[2][0] == "waste HF-04 (licensed disposal)"


def test_the_reagent_chooser_offers_what_the_direction_needs():
    assert reagent_options(CHOICES, "base") == ([("NaOH 1 M #3", "r:3")], ("base",))
    assert reagent_options(CHOICES, "acid")[0] == [("HCl 1 M #5", "r:5")]
    unknown, kinds = reagent_options(CHOICES, None)
    assert [v for _, v in unknown] == ["r:3", "r:5"] and kinds == ("base", "acid")


def container(status="collecting", volume_l=2.0, moles=None):
    return ContainerSample("MA-01", status, volume_l, 10.0, "Bay 2",
                           {"HCl": 0.1} if moles is None else moles, frozenset())


def test_the_container_summary_says_what_is_in_it_and_whether_it_can_be_recorded():
    text = container_summary(container())
    assert text.splitlines() == ["MA-01 · collecting · 2 L of 10 L · Bay 2", "HCl 50 mM"]
    held = container_summary(container("licensed-disposal"))
    assert "MA-01 is held for licensed disposal: no neutralization can be recorded" in held
    assert container_summary(container(volume_l=0.0, moles={})).endswith(
        "(no additions recorded)")


def test_window_fields_follow_new_rules_unless_a_person_typed_them():
    boxes = [SimpleNamespace(value="6"), SimpleNamespace(value="8.5")]
    new = SimpleNamespace(window=(5.5, 9.5))
    assert window_values(None, new, boxes) == ["5.5", "8.5"]  # the default edge moves
    old = SimpleNamespace(window=(5.5, 8.5))
    assert window_values(old, SimpleNamespace(window=(6.5, 9.0)), boxes) == ["6", "9"]
