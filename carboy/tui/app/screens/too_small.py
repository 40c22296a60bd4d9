"""Shown instead of everything else while the terminal is smaller than 80×24."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.containers import Center, Middle
from textual.screen import Screen
from textual.widgets import Static


class TooSmallScreen(Screen):
    """Asks for a larger window; goes away by itself when the terminal grows."""

    def compose(self) -> ComposeResult:
        with Middle(), Center():
            yield Static(id="too-small-message", markup=False)

    def on_mount(self) -> None:
        self.show_size(self.app.size.width, self.app.size.height)

    def show_size(self, width: int, height: int) -> None:
        self.query_one("#too-small-message", Static).update(
            f"carboy needs a terminal of at least 80×24.\n"
            f"This one is {width}×{height}.\n\n"
            f"Enlarge the window, or press ctrl+q to quit.")
