"""The one list of the app's main screens: mode, label, key, screen class, palette and help
text.  The app's bindings and modes, the mode bar, the command palette and the Help
screen are all built from it (a test checks they agree), so a new screen is added here
and nowhere else.

Screen classes are named by import path and imported when first shown, which keeps the
app's first frame quick.
"""

from __future__ import annotations

import importlib
from collections.abc import Callable
from dataclasses import dataclass

from textual.binding import Binding
from textual.screen import Screen


@dataclass(frozen=True)
class Destination:
    """One main screen of the app (a Textual mode)."""

    mode: str
    label: str
    short: str
    """A shorter label for a narrow mode bar."""
    key: str
    """The function key that leads here from anywhere (works while typing)."""
    screen: str
    """``module:Class`` of the screen."""
    palette: str
    """What the command palette says about going there."""
    help: str
    """One line: what the screen is for (tooltip, Help)."""

    def screen_class(self) -> type[Screen]:
        module, _, name = self.screen.partition(":")
        return getattr(importlib.import_module(module), name)

    def factory(self) -> Callable[[], Screen]:
        return lambda: self.screen_class()()


_SCREENS = "carboy.tui.app.screens"

DESTINATIONS: tuple[Destination, ...] = (
    Destination("stock", "Stock", "Stock", "f2", f"{_SCREENS}.stock:StockScreen",
                "the bottles on the shelves", "The stock bottles on the shelves"),
    Destination("waste", "Waste", "Waste", "f3", f"{_SCREENS}.waste:WasteScreen",
                "waste containers and what is in them",
                "Waste containers and what went into them"),
    Destination("neutralize", "Neutralize", "Neutr.", "f4",
                f"{_SCREENS}.neutralize:NeutralizeScreen",
                "plan the neutralization of a waste container",
                "Plan and record the neutralization of a waste container"),
    Destination("journal", "Journal", "Journal", "f5", f"{_SCREENS}.journal:JournalScreen",
                "the record of everything done", "The append-only record of everything done"),
    Destination("prepare", "Prepare", "Prep.", "f7", f"{_SCREENS}.prepare:PrepareScreen",
                "a recipe to dilute a concentrate or dissolve a solid",
                "A recipe to dilute a concentrate or dissolve a solid, and its label"),
    Destination("standardize", "Standardize", "Std.", "f8",
                f"{_SCREENS}.standardize:StandardizeScreen",
                "a titrant's molarity from replicate titrations",
                "The molarity of a titrant from replicate titrations"),
    Destination("rules", "Rules", "Rules", "f9", f"{_SCREENS}.rules:RulesScreen",
                "the storeroom's disposal rules and the yearly treatment log",
                "The storeroom's disposal rules and the yearly log of treatments"),
    Destination("help", "Help", "Help", "f1", f"{_SCREENS}.help:HelpScreen",
                "every key and what each screen is for",
                "Every key of every screen, and what each screen is for"),
)
"""In the order the mode bar shows them."""

DEFAULT_MODE = "stock"


def destination(mode: str) -> Destination:
    """The destination of ``mode``."""
    for d in DESTINATIONS:
        if d.mode == mode:
            return d
    raise KeyError(mode)


def modes() -> dict[str, Callable[[], Screen]]:
    """The app's ``MODES``: each builds its screen on first use."""
    return {d.mode: d.factory() for d in DESTINATIONS}


def bindings() -> list[Binding]:
    """The keys that lead to each destination, from anywhere (even while typing).  The mode
    bar shows them all, so the footer keeps its room for the screen's own keys: of these it
    shows only Help, first."""
    ordered = sorted(DESTINATIONS, key=lambda d: d.mode != "help")
    return [Binding(d.key, f"go('{d.mode}')", d.label, id=f"app.go.{d.mode}", priority=True,
                    tooltip=d.help, show=d.mode == "help") for d in ordered]
