"""The bar at the top of each main screen: where you are, where you can go, who you are."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.containers import Horizontal
from textual.widgets import Static

# mode -> label, in the order shown
MODE_LABELS: tuple[tuple[str, str], ...] = (
    ("stock", "Stock"),
    ("waste", "Waste"),
    ("neutralize", "Neutralize"),
    ("journal", "Journal"),
    ("prepare", "Prepare"),
    ("standardize", "Standardize"),
    ("help", "Help"),
)


class ModeTab(Static):
    """One destination; the current one is bracketed (a shape, not only a colour)."""

    def __init__(self, mode: str, label: str, key: str, current: bool) -> None:
        text = f"[{key} {label}]" if current else f"{key} {label}"
        super().__init__(text, markup=False, classes="mode-tab" + (" -current" if current else ""))
        self.mode = mode

    def on_click(self) -> None:
        self.app.run_action(f"go('{self.mode}')")


class ModeBar(Horizontal):
    """``carboy │ 1 Stock  [2 Waste]  3 Neutralize …        who · database``."""

    def __init__(self, current: str, **kwargs) -> None:
        super().__init__(**kwargs)
        self.current = current

    def compose(self) -> ComposeResult:
        app = self.app
        yield Static("carboy", classes="mode-brand")
        keys = getattr(app, "mode_keys", lambda: {})()
        for mode, label in MODE_LABELS:
            yield ModeTab(mode, label, keys.get(mode, "?"), mode == self.current)
        where = getattr(app, "place_text", lambda: "")()
        yield Static(where, classes="mode-where", markup=False)

    def on_resize(self, event) -> None:
        # the destinations come first: who and where only when there is room beside them
        tabs = sum(len(str(t.content)) + 1 for t in self.query(ModeTab))
        brand = self.query_one(".mode-brand", Static)
        brand.display = event.size.width >= tabs + len("carboy") + 2
        where = self.query_one(".mode-where", Static)
        where.display = event.size.width >= tabs + len("carboy") + 2 + \
            len(str(where.content)) + 2
