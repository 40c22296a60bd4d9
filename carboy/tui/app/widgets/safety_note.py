"""The standing disposal note shown on every screen that leads toward disposal."""

from __future__ import annotations

from textual.widgets import Static

from carboy.tui.wording import DISPOSAL_NOTE  # the same words as the command line

LICENSED_ONLY_NOTE = (
    "⚑ Licensed disposal only: {reasons}. Never neutralize it for the drain; the safety "
    "office arranges collection by a licensed contractor."
)


class SafetyNote(Static):
    """Always-visible note: carboy advises, local rules and the safety office decide."""

    DEFAULT_CLASSES = "safety-note"

    def __init__(self, text: str = DISPOSAL_NOTE, **kwargs) -> None:
        super().__init__(text, markup=False, **kwargs)
