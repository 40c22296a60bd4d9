"""Open a new, empty waste container, meant for one stream (what it collects)."""

from __future__ import annotations

from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.widgets import Button, Input, Static

from carboy.errors import InvalidInput
from carboy.model.compatibility import MATERIALS, streams
from carboy.store import waste
from carboy.store.errors import AlreadyExists
from carboy.tui.app.screens.form_dialog import FormDialog
from carboy.tui.app.widgets.choice_row import ChoiceRow
from carboy.tui.app.widgets.field_row import FieldRow
from carboy.tui.edge import describe

FIELDS = ("new-label", "new-location", "new-capacity", "new-notes")
CHOICES = ("new-stream", "new-material")
NEED_STREAM = "needed: what the container collects (its stream)"


def stream_options() -> list[tuple[str, str]]:
    """(what a person reads, stream key), in the order of the data file."""
    return [(s.name, key) for key, s in streams().items()]


MATERIAL_OPTIONS = [(m, m) for m in MATERIALS]


def stream_words(key: str | None) -> str:
    """What a stream takes and where it ends ('' when none is chosen)."""
    return streams()[key].words if key in streams() else ""


def field_of(exc: BaseException) -> str | None:
    if isinstance(exc, AlreadyExists):
        return "new-label"
    if isinstance(exc, InvalidInput):
        by_field = {"stream": "new-stream", "material": "new-material"}.get(exc.field)
        return by_field or {"container label": "new-label", "capacity": "new-capacity",
                            "volume": "new-capacity"}.get(exc.what)
    return None


class NewContainerScreen(FormDialog):
    """Dismisses with the new container's label, or ``None`` when cancelled."""

    HELP = "Open a new, empty waste container that starts collecting."

    BINDINGS = [
        Binding("ctrl+s", "submit", "Open it", id="waste_new.submit"),
        Binding("escape", "cancel", "Cancel", id="waste_new.cancel"),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.busy = False

    def compose(self) -> ComposeResult:
        with Vertical(id="new-dialog", classes="dialog"):
            yield Static("Open a new waste container", classes="dialog-title")
            yield FieldRow("Label", field_id="new-label", placeholder="e.g. MA-05 (needed)",
                           hint="unique, as written on the container")
            yield ChoiceRow("Stream", field_id="new-stream", options=stream_options(),
                            prompt="choose what it collects",
                            hint="what it is meant for; changed later only with a reason",
                            describe=stream_words)
            yield ChoiceRow("Material", field_id="new-material", options=MATERIAL_OPTIONS,
                            prompt="not recorded", hint="optional; HF waste needs plastic")
            yield FieldRow("Location", field_id="new-location",
                           placeholder="e.g. Acid waste bay / left", hint="optional")
            yield FieldRow("Capacity", field_id="new-capacity", value="20 L",
                           hint="e.g. 20 L, 5 L, 2500 mL")
            yield FieldRow("Notes", field_id="new-notes", placeholder="e.g. what it collects",
                           hint="optional")
            yield Static("", id="new-error", classes="error-line", markup=False)
            with Horizontal(classes="dialog-buttons"):
                yield Button("Open it (ctrl+s)", id="new-submit", variant="primary",
                             compact=True, classes="dialog-submit")
                yield Button("Cancel (esc)", id="new-cancel", compact=True,
                             classes="dialog-cancel")

    def on_mount(self) -> None:
        self.query_one("#new-label", Input).focus()

    def values(self) -> dict[str, str | None]:
        found: dict[str, str | None] = {f: self.query_one(f"#{f}", Input).value
                                        for f in FIELDS}
        found.update({f: self.query_one(f"#row-{f}", ChoiceRow).value for f in CHOICES})
        return found

    def action_submit(self) -> None:
        if self.busy:
            return
        for field in FIELDS:
            self.query_one(f"#row-{field}", FieldRow).show_echo("")
        v = self.values()
        if v["new-stream"] is None:
            self._fail("new-stream", NEED_STREAM)
            return
        self.busy = True
        self._store(v)

    @work(thread=True, exclusive=True, exit_on_error=False, group="waste-new")
    def _store(self, v: dict[str, str | None]) -> None:
        try:
            with self.app.open_store() as store:
                made = waste.new_container(
                    store, v["new-label"], location=v["new-location"].strip(),
                    capacity=v["new-capacity"].strip() or None, notes=v["new-notes"].strip(),
                    stream=v["new-stream"], material=v["new-material"],
                    who=self.app.who, today=self.app.today)
        except Exception as exc:
            self.app.call_from_thread(self._fail, field_of(exc), describe(exc))
            return
        self.app.call_from_thread(self._done, made.label)

    def _done(self, label: str) -> None:
        self.busy = False
        self.dismiss(label)

    def _fail(self, field: str | None, message: str) -> None:
        self.busy = False
        self.query_one("#new-error", Static).update(f"✗ Not opened: {message}")
        if field is not None:
            self.query_one(f"#row-{field}", FieldRow).show_error(message)
            self.query_one(f"#{field}").focus()
