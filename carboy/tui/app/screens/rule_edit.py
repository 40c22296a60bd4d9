"""Change one rule: its value as text, read as it is typed, stored with a journal entry
(the store holds to that).

:class:`RuleDialog` changes a disposal rule (the never-treat list is typed as items
separated by commas; items already on it keep their reasons); :class:`StoreroomNameDialog`
the storeroom's name printed on paper.  Both are a :class:`ValueDialog`: a title, the
value now, one field echoed as it is typed, and a store call in a worker."""

from __future__ import annotations

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.widgets import Button, Input, Static

from carboy.errors import CarboyError
from carboy.model import disposal_profile as dp
from carboy.model.label_documents import STOREROOM_NAME_MOST
from carboy.model.text import read_label
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


class ValueDialog(FormDialog):
    """One value typed, echoed and stored; dismisses with the journal entry id of the
    change, or ``None`` when cancelled.  Subclasses give the words and two calls:
    :meth:`understood` (raises on a bad value) and :meth:`store_value`."""

    HELP = ("Change one of the storeroom's disposal rules, or its name printed on paper. The "
            "journal keeps the old and new value; carboy's placeholders are not your "
            "institution's rules.")

    BINDINGS = [
        Binding("ctrl+s", "submit", "Change it", id="rule_edit.submit"),
        Binding("escape", "cancel", "Cancel", id="rule_edit.cancel"),
    ]

    heading = ""
    now = ""
    field_label = "Value"
    current = ""
    example = ""
    hint = ""

    def __init__(self) -> None:
        super().__init__()
        self.busy = False

    def understood(self, text: str) -> str:  # pragma: no cover - every dialog defines it
        raise NotImplementedError

    def store_value(self, store, text: str) -> int:  # pragma: no cover - idem
        raise NotImplementedError

    def compose(self) -> ComposeResult:
        with Vertical(id="rule-dialog", classes="dialog"):
            yield Static(f"Change: {self.heading}", classes="dialog-title", markup=False)
            yield Static(f"now {self.now}", markup=False)
            yield FieldRow(self.field_label, field_id="rule-value", value=self.current,
                           placeholder=f"e.g. {self.example}", hint=self.hint)
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
            self.row.show_echo(self.understood(event.value))
        except CarboyError as err:
            self.row.show_error(str(err))

    def action_submit(self) -> None:
        if self.busy:
            return
        text = self.query_one("#rule-value", Input).value
        try:
            self.understood(text)
        except CarboyError as err:
            self._fail(str(err))
            return
        self.busy = True
        self._store(text)

    @work(thread=True, exclusive=True, exit_on_error=False, group="rule-edit")
    def _store(self, text: str) -> None:
        try:
            with self.app.open_store() as store:
                entry = self.store_value(store, text)
        except Exception as exc:  # noqa: BLE001 - shown in place, never as a traceback
            self.app.call_from_thread(self._fail, describe(exc))
            return
        self.app.call_from_thread(self.dismiss, entry)

    def _fail(self, message: str) -> None:
        self.busy = False
        self.query_one("#rule-error", Static).update(f"✗ Not changed: {message}")
        self.row.show_error(message)
        self.query_one("#rule-value", Input).focus()


class RuleDialog(ValueDialog):
    """One disposal rule of the storeroom's profile."""

    HELP = ("Change one of the storeroom's disposal rules. The journal keeps the old and new "
            "value; carboy's placeholders are not your institution's rules.")

    def __init__(self, name: str, profile: dp.DisposalProfile, catalog=None) -> None:
        super().__init__()
        self.rule = dp.rule(name)
        self.profile = profile
        self.catalog = catalog
        value = profile.value(name)
        self.heading = self.rule.words
        self.now = f"{dp.describe(name, value)} ({profile.origin.get(name, dp.PLACEHOLDER)})"
        self.current = dp.as_text(name, value)
        self.example = self.rule.example
        self.hint = f"e.g. {self.rule.example}"

    def understood(self, text: str) -> str:
        return understood(self.rule.name, text, self.profile, self.catalog)

    def store_value(self, store, text: str) -> int:
        from carboy.store import disposal

        return disposal.set_rules(store, {self.rule.name: typed_value(
            self.rule.name, text, self.profile)}, who=self.app.who)


class StoreroomNameDialog(ValueDialog):
    """The storeroom's name on labels, disposal records and reports; empty removes it."""

    HELP = ("The storeroom's name, printed on bottle labels, disposal records and the "
            "treatment report. The journal keeps the old and new name.")
    heading = "the storeroom's name on paper"
    field_label = "Name"
    example = "Stores Room 4, East Annex"
    hint = "empty: no name printed"

    def __init__(self, current: str) -> None:
        super().__init__()
        self.current = current
        self.now = current or "(not set)"

    def understood(self, text: str) -> str:
        name = read_label(text, "storeroom name", most=STOREROOM_NAME_MOST)
        return f"understood: {name}" if name else "understood: no name printed"

    def store_value(self, store, text: str) -> int:
        from carboy.store import rules

        return rules.set_storeroom_name(store, text, who=self.app.who)
