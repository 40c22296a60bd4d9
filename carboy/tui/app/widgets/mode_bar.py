"""The bar at the top of each main screen: where you are, where you can go, who you are.

The destinations come from the app's one registry of screens.  When the terminal is
narrow the labels shorten (``Neutralize`` → ``Neutr.``), then all but the current one
shrink to their key, so every destination stays on the bar at 80 columns however many
screens there are; the brand and "who · where" show only when there is room beside them.
"""

from __future__ import annotations

from textual.app import ComposeResult
from textual.containers import Horizontal
from textual.widgets import Static

from carboy.tui.app import registry

WIDTHS = ("full", "short", "key")
"""The label forms a tab can take, widest first."""


class ModeTab(Static):
    """One destination; the current one is bracketed (a shape, not only a colour)."""

    def __init__(self, destination: registry.Destination, key: str, current: bool) -> None:
        super().__init__("", markup=False,
                         classes="mode-tab" + (" -current" if current else ""))
        self.mode = destination.mode
        self.current = current
        label = {"full": destination.label, "short": destination.short,
                 "key": destination.label if current else ""}
        self.forms = {w: (f"{key} {text}" if text else key) for w, text in label.items()}
        if current:
            self.forms = {w: f"[{t}]" for w, t in self.forms.items()}
        self.update(self.forms["full"])

    def use(self, width: str) -> int:
        """Show the label form ``width``; returns the cells it takes (with its margin)."""
        self.update(self.forms[width])
        return len(self.forms[width]) + 1

    def on_click(self) -> None:
        self.app.run_action(f"go('{self.mode}')")


class ModeBar(Horizontal):
    """``carboy  F2 Stock  [F3 Waste]  F4 Neutralize …        who · database``."""

    def __init__(self, current: str, **kwargs) -> None:
        super().__init__(**kwargs)
        self.current = current

    def compose(self) -> ComposeResult:
        app = self.app
        yield Static("carboy", classes="mode-brand")
        keys = getattr(app, "mode_keys", lambda: {})()
        for d in registry.DESTINATIONS:
            yield ModeTab(d, keys.get(d.mode, d.key), d.mode == self.current)
        where = getattr(app, "place_text", lambda: "")()
        yield Static(where, classes="mode-where", markup=False)

    def fit(self, width: int) -> str:
        """Choose the widest label form that fits ``width`` cells; returns its name."""
        tabs = list(self.query(ModeTab))
        chosen = WIDTHS[-1]
        for form in WIDTHS:
            if sum(len(t.forms[form]) + 1 for t in tabs) <= width:
                chosen = form
                break
        used = sum(t.use(chosen) for t in tabs)
        brand = self.query_one(".mode-brand", Static)
        brand.display = width >= used + len("carboy") + 2
        where = self.query_one(".mode-where", Static)
        where.display = brand.display and width >= used + len("carboy") + 2 + \
            len(str(where.content)) + 2
        return chosen

    def on_resize(self, event) -> None:
        self.fit(event.size.width)
