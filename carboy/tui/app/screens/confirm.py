"""A yes/no question before anything that cannot be undone."""

from __future__ import annotations

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Static


class ConfirmScreen(ModalScreen[bool]):
    """Dismisses with ``True`` only on an explicit yes; the safe answer has the focus."""

    BINDINGS = [
        Binding("y", "answer(True)", "Yes, do it", id="confirm.yes"),
        Binding("n,escape", "answer(False)", "No, go back", id="confirm.no"),
    ]

    def __init__(self, title: str, message: str, *, yes_label: str = "Yes",
                 no_label: str = "Cancel") -> None:
        super().__init__()
        self.title_text = title
        self.message = message
        self.yes_label = yes_label
        self.no_label = no_label

    def compose(self) -> ComposeResult:
        with Vertical(id="confirm-dialog", classes="dialog"):
            yield Static(self.title_text, classes="dialog-title", markup=False)
            yield Static(self.message, id="confirm-message", markup=False)
            with Horizontal(classes="dialog-buttons"):
                yield Button(f"{self.yes_label} (y)", id="confirm-yes", variant="error", compact=True)
                yield Button(f"{self.no_label} (n)", id="confirm-no", variant="primary", compact=True)

    def on_mount(self) -> None:
        self.query_one("#confirm-no", Button).focus()

    @on(Button.Pressed, "#confirm-yes")
    def _yes(self) -> None:
        self.dismiss(True)

    @on(Button.Pressed, "#confirm-no")
    def _no(self) -> None:
        self.dismiss(False)

    def action_answer(self, yes: bool) -> None:
        self.dismiss(yes)
