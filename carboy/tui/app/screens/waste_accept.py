"""Asked before an addition the compatibility rules question (never one they refuse):
what the rules found, a reason field, and the safe answer focused.

The reason goes into the journal with the addition.  A gas hazard never reaches this
dialog: the store refuses it outright.
"""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.widgets import Button, Input, Static

from carboy.tui.app.screens.form_dialog import FormDialog
from carboy.tui.app.widgets.field_row import FieldRow

NEED_REASON = "needed: say why it goes into this container anyway (the journal keeps it)"


def findings_text(findings) -> str:
    """One paragraph per finding: the hazard, then the advice."""
    def first_up(text: str) -> str:
        return text[:1].upper() + text[1:]

    return "\n\n".join(f"• {first_up(f.hazard)}.\n  {first_up(f.advice)}." for f in findings)


class AcceptAdditionScreen(FormDialog):
    """Dismisses with the reason given, or ``None`` (nothing is logged)."""

    HELP = ("The rules question this addition (it is not refused outright). Log it only with "
            "a reason, which the journal keeps; otherwise go back and choose another container.")

    BINDINGS = [
        Binding("ctrl+s", "submit", "Log it anyway", id="waste_accept.accept"),
        Binding("escape", "cancel", "Don't log it", id="waste_accept.cancel"),
    ]

    def __init__(self, label: str, what: str, findings) -> None:
        super().__init__()
        self.label = label
        self.what = what
        self.findings = tuple(findings)

    def compose(self) -> ComposeResult:
        with Vertical(id="accept-dialog", classes="dialog"):
            yield Static(f"{self.what[:1].upper()}{self.what[1:]}: log it anyway?",
                         classes="dialog-title", markup=False)
            yield Static(findings_text(self.findings), id="accept-findings", markup=False)
            yield FieldRow("Reason", field_id="accept-reason",
                           hint="why it goes in this container anyway")
            with Horizontal(classes="dialog-buttons"):
                yield Button("Log it anyway (ctrl+s)", id="accept-yes", variant="error",
                             compact=True, classes="dialog-submit")
                yield Button("Don't log it (esc)", id="accept-no", variant="primary",
                             compact=True, classes="dialog-cancel")

    def on_mount(self) -> None:
        self.query_one("#accept-no", Button).focus()

    @property
    def reason(self) -> str:
        return self.query_one("#accept-reason", Input).value.strip()

    def action_submit(self) -> None:
        if not self.reason:
            self.query_one("#row-accept-reason", FieldRow).show_error(NEED_REASON)
            self.query_one("#accept-reason", Input).focus()
            return
        self.dismiss(self.reason)
