"""Correct a journal entry: a new entry that points at it, with the corrected values applied
through the same store rules (:mod:`carboy.store.corrections`).  The dialog offers the
values the entry holds: a treatment its readings and the reagent added, a preparation
the amount drawn, an entry about a bottle the amount left; every entry takes a reason."""

from __future__ import annotations

from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.widgets import Button, Input, Label, Static

from carboy.model.forms.correction import CorrectionFields
from carboy.model.forms.correction import read as read_correction
from carboy.store import journal
from carboy.tui.app.screens.confirm import ConfirmScreen
from carboy.tui.app.screens.form_dialog import FormDialog
from carboy.tui.app.widgets.steady_input import InPlaceInput
from carboy.tui.edge import describe

TREATMENT = (("final_ph", "Final pH", "e.g. 6,9"), ("added", "Added", "e.g. 2.6 L"),
             ("stage_ph", "Stage pH", "after each stage, e.g. 3,1 5,8 6,9"),
             ("vented_ph", "Vented pH", ""), ("final_volume", "Final vol.", "e.g. 11 L"),
             ("temperature", "Temp.", "°C"))
PREPARATION = (("used", "Drawn", "what really came from the bottle, e.g. 8.3 mL"),)
BOTTLE = (("amount_left", "Left", "what the bottle really holds, e.g. 0.4 L"),)


def fields_for(entry: journal.Entry) -> tuple[tuple[str, str, str], ...]:
    """The values a correction of ``entry`` may give (field, label, placeholder)."""
    snap = entry.snapshot
    found: tuple = ()
    if snap.get("event") == "treatment" or "readings" in snap:
        found = TREATMENT
    elif entry.kind == "neutralization" and snap.get("measured_ph") is not None:
        found = TREATMENT[:1]
    elif entry.kind == "preparation" or "used" in snap:
        found = PREPARATION
    if entry.bottle_id is not None:
        found = found + BOTTLE
    return found


class CorrectionDialog(FormDialog):
    """Dismisses with the new entry's id, or ``None`` when cancelled."""

    HELP = ("Correct a journal entry: a new entry points at it with the reason and the "
            "corrected values; the original stays as it was.")

    BINDINGS = [
        Binding("ctrl+s", "submit", "Record correction", id="correct.submit"),
        Binding("escape", "cancel", "Cancel", id="correct.cancel"),
    ]

    DEFAULT_CSS = """
    CorrectionDialog .cd-row { height: 1; }
    CorrectionDialog .cd-row > Label { width: 12; }
    CorrectionDialog .cd-row > Input { width: 1fr; }
    CorrectionDialog #correct-error { height: auto; margin-top: 1; }
    """

    def __init__(self, entry: journal.Entry) -> None:
        super().__init__()
        self.entry = entry
        self.inputs = (("reason", "Reason", "what was wrong (the journal keeps it)"),
                       *fields_for(entry))
        self.busy = False

    def compose(self) -> ComposeResult:
        with Vertical(id="correct-dialog", classes="dialog"):
            yield Static(f"Correct entry {self.entry.id} · {self.entry.kind}",
                         classes="dialog-title", markup=False)
            yield Static(self.entry.summary, markup=False)
            for field, label, hint in self.inputs:
                with Horizontal(classes="cd-row"):
                    yield Label(label)
                    yield InPlaceInput(placeholder=hint, id=f"cd-{field}", compact=True)
            yield Static("Nothing is edited: the correction is a new entry.",
                         id="correct-error", markup=False)
            with Horizontal(classes="dialog-buttons"):
                yield Button("Record correction (ctrl+s)", id="correct-submit",
                             variant="primary", compact=True, classes="dialog-submit")
                yield Button("Cancel (esc)", id="correct-cancel", compact=True,
                             classes="dialog-cancel")

    def on_mount(self) -> None:
        self.query_one("#cd-reason", Input).focus()

    def form(self) -> CorrectionFields:
        values = {f: self.query_one(f"#cd-{f}", Input).value for f, _, _ in self.inputs}
        if "stage_ph" in values:
            values["stage_ph"] = tuple(values["stage_ph"].replace(";", " ").split())
        return CorrectionFields(**values)

    def action_submit(self) -> None:
        if self.busy:
            return
        reading = read_correction(self.form())
        if not reading.ok:
            field, text = next(iter(reading.errors.items()))
            self._fail(text, field)
            return
        self.busy = True

        def answered(yes: bool | None) -> None:
            if yes:
                self._store(reading.value)
            else:
                self.busy = False
                self.query_one("#correct-error", Static).update("not recorded")

        self.app.push_screen(ConfirmScreen(
            f"Record this correction of entry {self.entry.id}?",
            "A correction is a new, permanent journal entry; the entry it corrects stays on "
            "record beside it.", yes_label="Record correction"), answered)

    @work(thread=True, exclusive=True, exit_on_error=False, group="correct-entry")
    def _store(self, values) -> None:
        from carboy.store import corrections

        try:
            with self.app.open_store() as store:
                done = corrections.correct(store, self.entry.id, values, who=self.app.who)
        except Exception as exc:  # noqa: BLE001 - shown in place, never as a traceback
            self.app.call_from_thread(self._fail, describe(exc),
                                      getattr(exc, "field", "") or "reason")
            return
        self.app.call_from_thread(self.dismiss, done.entry_id)

    def _fail(self, message: str, field: str = "reason") -> None:
        self.busy = False
        self.query_one("#correct-error", Static).update(f"✗ Not recorded: {message}")
        known = {f for f, _, _ in self.inputs}
        self.query_one(f"#cd-{field if field in known else 'reason'}", Input).focus()
