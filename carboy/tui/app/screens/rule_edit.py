"""Change one disposal rule: its value as text, read as it is typed, stored with a journal
entry (the store holds to that).  The never-treat list is typed as items separated by
commas; items already on it keep their reasons."""

from __future__ import annotations

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.widgets import Button, Input, Static

from carboy.errors import CarboyError
from carboy.model import disposal_profile as dp
from carboy.tui.app.screens.form_dialog import FormDialog
from carboy.tui.app.widgets.field_row import FieldRow
from carboy.tui.edge import describe


def typed_value(name: str, text: str, profile: dp.DisposalProfile):
    """What is stored for the text typed (the never-treat list keeps known reasons)."""
    if dp.rule(name).kind == "items":
        return dp.with_reasons(text, profile.never_treat)
    return text


def understood(name: str, text: str, profile: dp.DisposalProfile, catalog=None) -> str:
    """``understood: …`` for a value typed, or raises the reader's error."""
    value = dp.read_rule(name, typed_value(name, text, profile), catalog)
    return "understood: " + dp.describe(name, value)


class RuleDialog(FormDialog):
    """Dismisses with the journal entry id of the change, or ``None`` when cancelled."""

    HELP = ("Change one of the storeroom's disposal rules. The journal keeps the old and new "
            "value; carboy's placeholders are not your institution's rules.")

    BINDINGS = [
        Binding("ctrl+s", "submit", "Change it", id="rule_edit.submit"),
        Binding("escape", "cancel", "Cancel", id="rule_edit.cancel"),
    ]

    def __init__(self, name: str, profile: dp.DisposalProfile, catalog=None) -> None:
        super().__init__()
        self.rule = dp.rule(name)
        self.profile = profile
        self.catalog = catalog
        self.busy = False

    def compose(self) -> ComposeResult:
        r = self.rule
        current = dp.as_text(r.name, self.profile.value(r.name))
        origin = self.profile.origin.get(r.name, dp.PLACEHOLDER)
        with Vertical(id="rule-dialog", classes="dialog"):
            yield Static(f"Change: {r.words}", classes="dialog-title", markup=False)
            yield Static(f"now {dp.describe(r.name, self.profile.value(r.name))} ({origin})",
                         markup=False)
            yield FieldRow("Value", field_id="rule-value", value=current,
                           placeholder=f"e.g. {r.example}", hint=f"e.g. {r.example}")
            yield Static("", id="rule-error", classes="error-line", markup=False)
            with Horizontal(classes="dialog-buttons"):
                yield Button("Change it (ctrl+s)", id="rule-submit", variant="primary",
                             compact=True, classes="dialog-submit")
                yield Button("Cancel (esc)", id="rule-cancel", compact=True,
                             classes="dialog-cancel")

    def on_mount(self) -> None:
        self.query_one("#rule-value", Input).focus()

    @property
    def row(self) -> FieldRow:
        return self.query_one("#row-rule-value", FieldRow)

    @on(Input.Changed, "#rule-value")
    def _typed(self, event: Input.Changed) -> None:
        try:
            self.row.show_echo(understood(self.rule.name, event.value, self.profile,
                                          self.catalog))
        except CarboyError as err:
            self.row.show_error(str(err))

    def action_submit(self) -> None:
        if self.busy:
            return
        text = self.query_one("#rule-value", Input).value
        try:
            understood(self.rule.name, text, self.profile, self.catalog)
        except CarboyError as err:
            self._fail(str(err))
            return
        self.busy = True
        self._store(typed_value(self.rule.name, text, self.profile))

    @work(thread=True, exclusive=True, exit_on_error=False, group="rule-edit")
    def _store(self, value) -> None:
        from carboy.store import disposal

        try:
            with self.app.open_store() as store:
                entry = disposal.set_rules(store, {self.rule.name: value}, who=self.app.who)
        except Exception as exc:  # noqa: BLE001 - shown in place, never as a traceback
            self.app.call_from_thread(self._fail, describe(exc))
            return
        self.app.call_from_thread(self.dismiss, entry)

    def _fail(self, message: str) -> None:
        self.busy = False
        self.query_one("#rule-error", Static).update(f"✗ Not changed: {message}")
        self.row.show_error(message)
        self.query_one("#rule-value", Input).focus()
