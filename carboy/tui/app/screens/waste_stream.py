"""Change what a waste container is meant for: its stream (and material), with a reason
that the journal keeps.  The store refuses a stream the contents contradict (an acid
already in a container being made a cyanide one)."""

from __future__ import annotations

from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.widgets import Button, Input, Select, Static

from carboy.errors import InvalidInput
from carboy.store import waste
from carboy.tui.app.screens.form_dialog import FormDialog
from carboy.tui.app.screens.waste_new import MATERIAL_OPTIONS, stream_options, stream_words
from carboy.tui.app.widgets.choice_row import ChoiceRow
from carboy.tui.app.widgets.field_row import FieldRow
from carboy.tui.edge import describe

NEED_REASON = "needed: say why the stream changes (the journal keeps it)"
FIELD_OF = {"stream": "change-stream", "material": "change-material", "reason": "change-reason"}


class ChangeStreamScreen(FormDialog):
    """Dismisses with the new stream's key, or ``None`` when cancelled."""

    HELP = ("Change what a container collects. The journal keeps the old and new stream and "
            "your reason; a stream its contents contradict is refused.")

    BINDINGS = [
        Binding("ctrl+s", "submit", "Change it", id="waste_stream.submit"),
        Binding("escape", "cancel", "Cancel", id="waste_stream.cancel"),
    ]

    def __init__(self, label: str, stream: str, material: str | None) -> None:
        super().__init__()
        self.label = label
        self.stream = stream
        self.material = material
        self.busy = False

    def compose(self) -> ComposeResult:
        with Vertical(id="stream-dialog", classes="dialog"):
            yield Static(f"What {self.label} collects", classes="dialog-title", markup=False)
            yield ChoiceRow("Stream", field_id="change-stream", options=stream_options(),
                            prompt="choose what it collects", value=self.stream,
                            hint=stream_words(self.stream), describe=stream_words)
            yield ChoiceRow("Material", field_id="change-material", options=MATERIAL_OPTIONS,
                            prompt="not recorded", value=self.material, hint="optional")
            yield FieldRow("Reason", field_id="change-reason", hint="why it changes")
            yield Static("", id="change-error", classes="error-line", markup=False)
            with Horizontal(classes="dialog-buttons"):
                yield Button("Change it (ctrl+s)", id="change-submit", variant="primary",
                             compact=True, classes="dialog-submit")
                yield Button("Cancel (esc)", id="change-cancel", compact=True,
                             classes="dialog-cancel")

    def on_mount(self) -> None:
        self.query_one("#change-stream", Select).focus()

    def row(self, field_id: str) -> FieldRow:
        return self.query_one(f"#row-{field_id}", FieldRow)

    def action_submit(self) -> None:
        if self.busy:
            return
        stream = self.query_one("#row-change-stream", ChoiceRow).value
        material = self.query_one("#row-change-material", ChoiceRow).value
        reason = self.query_one("#change-reason", Input).value.strip()
        if not reason:
            self._fail("change-reason", NEED_REASON)
            return
        self.busy = True
        self._store(stream or "", material, reason)

    @work(thread=True, exclusive=True, exit_on_error=False, group="waste-stream")
    def _store(self, stream: str, material: str | None, reason: str) -> None:
        try:
            with self.app.open_store() as store:
                waste.set_stream(store, self.label, stream, reason, material=material,
                                 who=self.app.who)
        except Exception as exc:  # noqa: BLE001 - shown in place, never as a traceback
            field = FIELD_OF.get(exc.field) if isinstance(exc, InvalidInput) else None
            self.app.call_from_thread(self._fail, field, describe(exc))
            return
        self.app.call_from_thread(self.dismiss, stream)

    def _fail(self, field: str | None, message: str) -> None:
        self.busy = False
        self.query_one("#change-error", Static).update(f"✗ Not changed: {message}")
        if field is not None:
            self.row(field).show_error(message)
            self.query_one(f"#{field}").focus()
