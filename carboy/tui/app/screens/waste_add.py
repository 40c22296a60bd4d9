"""Log an addition to a waste container: compound, concentration (or mass), volume.

Each field echoes what carboy understood as you type (``1,5 L`` → ``1.5 L``); a
value that cannot be used is named under its field, and nothing typed is lost.
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

from carboy.model.forms.waste_addition import AdditionFields, read
from carboy.store import waste
from carboy.store.errors import OverCapacity
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
        from carboy.store.compounds import catalog_for

        worker = get_current_worker()
        try:
            with self.app.open_store() as store:
                catalog = catalog_for(store)
            echo = understand(catalog, compound, conc, volume)
        except Exception as exc:
            echo = Echo({}, {"": describe(exc)})
        if not worker.is_cancelled:
            self.app.call_from_thread(self._show_echo, echo, edits)

    def _show_echo(self, echo: Echo, edits: int) -> None:
        if edits <= self._judged:
            return  # a submit has judged these values (e.g. too much for the container)
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
    def _store(self, v: dict[str, str]) -> None:
        from carboy.store.compounds import catalog_for

        fields = AdditionFields(v["add-compound"], v["add-conc"], v["add-volume"],
                                v["add-note"])
        try:
            with self.app.open_store() as store:
                reading = read(fields, catalog_for(store))
                if not reading.ok:
                    name = reading.problems[0][0] if reading.problems else "compound"
                    message = reading.errors.get(name, "")
                    self.app.call_from_thread(self._fail, FORM_FIELD.get(name), message)
                    return
                addition = reading.value
                waste.add(store, self.label, addition.component.text, addition.volume_l,
                          note=addition.note, who=self.app.who)
        except OverCapacity as exc:
            self.app.call_from_thread(self._fail, "add-volume", describe(exc))
            return
        except Exception as exc:  # noqa: BLE001 - shown in place, never as a traceback
            self.app.call_from_thread(self._fail, None, describe(exc))
            return
        self.app.call_from_thread(self._done)

    def _fail(self, field: str | None, message: str) -> None:
        self.busy = False
        self.query_one("#add-error", Static).update(f"✗ Not logged: {message}")
        if field is not None:
            self.row(field).show_error(message)
            self.query_one(f"#{field}", Input).focus()

    def _done(self) -> None:
        self.busy = False
        self.dismiss(True)
