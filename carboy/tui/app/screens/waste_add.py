"""Log an addition to a waste container: compound, concentration (or mass), volume.

Each field echoes what carboy understood as you type (``1,5 L`` → ``1.5 L``); a
value that cannot be used is named under its field, and nothing typed is lost.

The compatibility rules judge the addition against the container (the store's
:func:`carboy.store.waste.add`): a line under the fields warns as soon as the values
are readable; a refused addition is named in the dialog and nothing is written; one
the rules question opens :class:`AcceptAdditionScreen`, and only a reason logs it.
"""

from __future__ import annotations

from dataclasses import dataclass

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.timer import Timer
from textual.widgets import Button, Input, Static
from textual.worker import get_current_worker

from carboy.errors import CarboyError, HazardRefused
from carboy.model.forms.waste_addition import AdditionFields, read
from carboy.store import waste
from carboy.store.compounds import catalog_for
from carboy.store.errors import OverCapacity
from carboy.tui.app.screens.waste_accept import AcceptAdditionScreen
from carboy.tui.app.widgets.field_row import FieldRow
from carboy.tui.edge import describe

ECHO_DELAY_S = 0.12
FIELDS = ("add-compound", "add-conc", "add-volume", "add-note")


FORM_FIELD = {"compound": "add-compound", "amount": "add-conc", "volume": "add-volume",
              "note": "add-note"}
"""The dialog's input behind each field of the addition form."""


@dataclass(frozen=True)
class Echo:
    """What each input was understood as ('' = nothing to say), or its error."""

    messages: dict[str, str]
    errors: dict[str, str]


def understand(catalog, compound: str, conc: str, volume: str, note: str = "") -> Echo:
    """Read the inputs as the store will (the addition form; no database)."""
    reading = read(AdditionFields(compound, conc, volume, note), catalog)
    errors = {FORM_FIELD[k]: v for k, v in reading.errors.items() if k not in reading.missing}
    return Echo({FORM_FIELD[k]: v for k, v in reading.echoes.items()}, errors)


@dataclass(frozen=True)
class Outcome:
    """What became of one attempt to log an addition.

    ``kind``: ``logged``; ``field`` (a value is wrong: ``field`` names the input, or None);
    ``refused`` (the rules refuse it: nothing written, no reason helps); ``confirm`` (the
    rules question it: nothing written until a reason is given).
    """

    kind: str
    message: str = ""
    field: str | None = None
    findings: tuple = ()
    addition_id: int | None = None
    what: str = ""

    @property
    def short(self) -> str:
        """What the field's line says: the first hazard alone, or the whole message."""
        if self.kind in ("refused", "confirm") and self.findings:
            return f"{'refused' if self.kind == 'refused' else 'questioned'}: " \
                   f"{self.findings[0].hazard}"
        return self.message


def _field_of(exc: CarboyError) -> str | None:
    if isinstance(exc, OverCapacity):
        return "add-volume"
    return FORM_FIELD.get(getattr(exc, "field", "") or "")


def log_addition(store, label: str, fields: AdditionFields, *, accept: str = "",
                 who: str | None = None) -> Outcome:
    """Read the dialog's fields and log them (the dialog's worker calls this)."""
    reading = read(fields, catalog_for(store))
    if not reading.ok:
        name = reading.problems[0][0] if reading.problems else "compound"
        return Outcome("field", reading.errors.get(name, ""), FORM_FIELD.get(name))
    addition = reading.value
    try:
        added = waste.add(store, label, addition.component.text, addition.volume_l,
                          note=addition.note, accept=accept, who=who)
    except HazardRefused as exc:
        kind = "confirm" if exc.overridable else "refused"
        return Outcome(kind, describe(exc), "add-compound", tuple(exc.findings), what=exc.what)
    except CarboyError as exc:
        return Outcome("field", describe(exc), _field_of(exc))
    return Outcome("logged", addition_id=added)


def preview(store, label: str, fields: AdditionFields) -> str:
    """A line on what the rules will say of these values ('' when nothing, or when the
    values cannot be read yet)."""
    reading = read(fields, catalog_for(store))
    if not reading.ok:
        return ""
    addition = reading.value
    try:
        found = waste.screen(store, label, addition.component.text, addition.volume_l)
    except CarboyError:
        return ""
    if not found:
        return ""
    first = found[0]
    if first.severity == "refuse":
        return f"⚠ Will be refused: {first.hazard}."
    return f"⚠ Needs a reason: {first.hazard}."


class AddWasteScreen(ModalScreen[bool]):
    """Dismisses with ``True`` once the addition is stored."""

    HELP = ("Log what went into a waste container. The compound is a formula or name from "
            "the catalog; the concentration accepts 1 M, 100 mM, 37 % (w/w) or a mass for a "
            "solid (2 g); the volume 250 mL, 1,5 L …")

    BINDINGS = [
        Binding("ctrl+s", "submit", "Log it", id="waste_add.submit"),
        Binding("escape", "cancel", "Cancel", id="waste_add.cancel"),
    ]

    def __init__(self, label: str) -> None:
        super().__init__()
        self.label = label
        self._timer: Timer | None = None
        self.busy = False
        self._edits = 0
        """Changes typed so far; an echo is dropped if a submit already judged that state."""
        self._judged = -1

    def compose(self) -> ComposeResult:
        with Vertical(id="add-dialog", classes="dialog"):
            yield Static(f"Log an addition to {self.label}", classes="dialog-title",
                         markup=False)
            yield FieldRow("Compound", field_id="add-compound", hint="formula or name, e.g. HCl, sulfuric acid, NaOH")
            yield FieldRow("Concentration", field_id="add-conc", hint="1 M, 100 mM, 37 % (w/w); a solid's mass: 2 g")
            yield FieldRow("Volume", field_id="add-volume", hint="250 mL, 1,5 L (optional for a solid)")
            yield FieldRow("Note", field_id="add-note", hint="optional")
            yield Static("", id="add-hazard", classes="error-line", markup=False)
            yield Static("", id="add-error", classes="error-line", markup=False)
            with Horizontal(classes="dialog-buttons"):
                yield Button("Log it (ctrl+s)", id="add-submit", variant="primary", compact=True)
                yield Button("Cancel (esc)", id="add-cancel", compact=True)

    def on_mount(self) -> None:
        self.query_one("#add-compound", Input).focus()

    def values(self) -> dict[str, str]:
        return {f: self.query_one(f"#{f}", Input).value for f in FIELDS}

    def row(self, field_id: str) -> FieldRow:
        return self.query_one(f"#row-{field_id}", FieldRow)

    # -- echo while typing -------------------------------------------------------------
    @on(Input.Changed)
    def _changed(self) -> None:
        self._edits += 1
        if self._timer is not None:
            self._timer.stop()
        self._timer = self.set_timer(ECHO_DELAY_S, self._echo)

    def _echo(self) -> None:
        v = self.values()
        self._understand(v["add-compound"], v["add-conc"], v["add-volume"], self._edits)

    @work(thread=True, exclusive=True, exit_on_error=False, group="waste-add-echo")
    def _understand(self, compound: str, conc: str, volume: str, edits: int) -> None:
        worker = get_current_worker()
        hazard = ""
        try:
            with self.app.open_store() as store:
                catalog = catalog_for(store)
                echo = understand(catalog, compound, conc, volume)
                if not echo.errors:
                    hazard = preview(store, self.label, AdditionFields(compound, conc, volume))
        except Exception as exc:
            echo = Echo({}, {"": describe(exc)})
        if not worker.is_cancelled:
            self.app.call_from_thread(self._show_echo, echo, edits, hazard)

    def _show_echo(self, echo: Echo, edits: int, hazard: str = "") -> None:
        if edits <= self._judged:
            return  # a submit has judged these values (e.g. too much for the container)
        self.query_one("#add-hazard", Static).update(hazard)
        for field in FIELDS[:3]:
            if field in echo.errors:
                self.row(field).show_error(echo.errors[field])
            else:
                self.row(field).show_echo(echo.messages.get(field, ""))

    # -- submit --------------------------------------------------------------------------
    @on(Input.Submitted)
    def _enter(self, event: Input.Submitted) -> None:
        order = list(FIELDS)
        here = order.index(event.input.id) if event.input.id in order else -1
        if 0 <= here < len(order) - 1 and not self.values()[order[here + 1]].strip() \
                and order[here + 1] != "add-note":
            self.query_one(f"#{order[here + 1]}", Input).focus()
        else:
            self.action_submit()

    @on(Button.Pressed, "#add-submit")
    def _pressed(self) -> None:
        self.action_submit()

    @on(Button.Pressed, "#add-cancel")
    def _cancel_pressed(self) -> None:
        self.action_cancel()

    def action_cancel(self) -> None:
        self.dismiss(False)

    def action_submit(self) -> None:
        if self.busy:
            return
        if self._timer is not None:
            self._timer.stop()
        self._judged = self._edits
        self.busy = True
        self.query_one("#add-error", Static).update("Logging …")
        self._store(self.values())

    @work(thread=True, exclusive=True, exit_on_error=False, group="waste-add")
    def _store(self, v: dict[str, str], accept: str = "") -> None:
        fields = AdditionFields(v["add-compound"], v["add-conc"], v["add-volume"],
                                v["add-note"])
        try:
            with self.app.open_store() as store:
                outcome = log_addition(store, self.label, fields, accept=accept,
                                       who=self.app.who)
        except Exception as exc:  # noqa: BLE001 - shown in place, never as a traceback
            outcome = Outcome("field", describe(exc))
        self.app.call_from_thread(self._outcome, outcome, v)

    def _outcome(self, outcome: Outcome, v: dict[str, str]) -> None:
        if outcome.kind == "logged":
            self._done()
        elif outcome.kind == "confirm":
            self._ask(outcome, v)
        else:
            self._fail(outcome.field, outcome.message, outcome.short)

    def _ask(self, outcome: Outcome, v: dict[str, str]) -> None:
        def answered(reason: str | None) -> None:
            if reason:
                self._store(v, reason)
            else:
                self._fail("add-compound", outcome.message, outcome.short)

        self.app.push_screen(AcceptAdditionScreen(self.label, outcome.what, outcome.findings),
                             answered)

    def _fail(self, field: str | None, message: str, short: str = "") -> None:
        self.busy = False
        self.query_one("#add-hazard", Static).update("")
        self.query_one("#add-error", Static).update(f"✗ Not logged: {message}")
        if field is not None:
            self.row(field).show_error(short or message)
            self.query_one(f"#{field}", Input).focus()

    def _done(self) -> None:
        self.busy = False
        self.dismiss(True)
