"""The dialog that takes what a neutralization record needs (the pH measured and who did
it).  The permanent write is asked once more by the app's one confirmation dialog, with the
safe answer focused, like every other permanent action."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Label, Static

from carboy.errors import CarboyError
from carboy.model.forms import read_measured_ph
from carboy.model.forms.neutralize import ContainerSample
from carboy.store.statuses import ContainerStatus
from carboy.tui.app.screens.confirm import ConfirmScreen


@dataclass(frozen=True)
class RecordRequest:
    measured_ph: float | None
    who: str


class RecordDialog(ModalScreen[RecordRequest | None]):
    """Ask for the pH measured and who did it; dismisses with them (or None)."""

    BINDINGS = [Binding("escape", "cancel", "Cancel", id="neutralize.record.cancel")]

    DEFAULT_CSS = """
    RecordDialog { align: center middle; }
    RecordDialog > #record-box {
        width: 72; max-width: 100%; height: auto; max-height: 100%;
        border: heavy $foreground; padding: 0 1; background: $surface;
    }
    RecordDialog .rd-row { height: 1; margin-top: 1; }
    RecordDialog .rd-row > Label { width: 14; }
    RecordDialog .rd-row > Input { width: 1fr; }
    RecordDialog #measured-echo { padding-left: 14; height: auto; }
    RecordDialog #measured-echo.-error { text-style: bold; color: $text-error; }
    RecordDialog #rd-buttons { height: auto; margin-top: 1; align-horizontal: right; }
    RecordDialog #rd-buttons > Button { margin-left: 2; }
    """

    def __init__(self, container: ContainerSample, plan_line: str, who: str,
                 drain_plan: bool) -> None:
        super().__init__()
        self.container = container
        self.plan_line = plan_line
        self.default_who = who
        self.drain_plan = drain_plan

    def compose(self) -> ComposeResult:
        with Vertical(id="record-box"):
            yield Static(f"Record the neutralization of {self.container.label}", classes="bold")
            yield Static(self.plan_line, id="rd-plan", markup=False)
            if not self.drain_plan:
                yield Static("‼ NOT FOR DRAIN DISPOSAL: this container goes to licensed "
                             "disposal whatever pH it reaches.", markup=False)
            with Horizontal(classes="rd-row"):
                yield Label("pH measured")
                yield Input(placeholder="e.g. 7,2 — empty if not measured", id="measured",
                            compact=True)
            yield Static(self._echo(""), id="measured-echo", markup=False)
            with Horizontal(classes="rd-row"):
                yield Label("who")
                yield Input(self.default_who, id="who", compact=True)
            with Horizontal(id="rd-buttons"):
                yield Button("Record…", id="rd-ok", compact=True)
                yield Button("Cancel", id="rd-cancel", compact=True)

    def on_mount(self) -> None:
        self.query_one("#measured", Input).focus()

    def _echo(self, text: str) -> str:
        try:
            ph = read_measured_ph(text)
        except CarboyError as err:
            return f"✗ {err}"
        now = self.container.status
        if ph is None:
            return f"not measured: the plan is recorded, {now} → planned"
        return f"understood: pH {ph:g}; {self.container.label} {now} → neutralized"

    def _show_error(self, message: str, focus: str) -> None:
        echo = self.query_one("#measured-echo", Static)
        echo.update(f"✗ {message}")
        echo.add_class("-error")
        self.query_one(f"#{focus}", Input).focus()

    @on(Input.Changed, "#measured")
    def _measured_changed(self, event: Input.Changed) -> None:
        echo = self.query_one("#measured-echo", Static)
        text = self._echo(event.value)
        echo.update(text)
        echo.set_class(text.startswith("✗"), "-error")

    @on(Input.Submitted)
    def _submitted(self) -> None:
        self._press_ok()

    @on(Button.Pressed, "#rd-ok")
    def _press_ok(self) -> None:
        try:
            ph = read_measured_ph(self.query_one("#measured", Input).value)
        except CarboyError as err:
            self._show_error(str(err), "measured")
            return
        who = self.query_one("#who", Input).value.strip()
        if not who:
            self._show_error("who: say who did the work", "who")
            return
        self.dismiss(RecordRequest(ph, who))

    @on(Button.Pressed, "#rd-cancel")
    def _press_cancel(self) -> None:
        self.dismiss(None)

    def action_cancel(self) -> None:
        self.dismiss(None)


def confirmation_text(container: ContainerSample, request: RecordRequest) -> str:
    """What the confirmation asks before the permanent journal entry is written."""
    measured = ("pH not measured" if request.measured_ph is None
                else f"measured pH {request.measured_ph:g}")
    after = ContainerStatus.PLANNED if request.measured_ph is None \
        else ContainerStatus.NEUTRALIZED
    now = ContainerStatus(container.status)
    return (f"Append to the journal: {container.label}, {measured}, by {request.who}.\n"
            f"{container.label} moves from {now.words} to {after.words}.\n"
            "Journal entries are permanent (a mistake is corrected by a new entry).")


def ask_to_record(app, container: ContainerSample, plan_line: str, who: str, drain_plan: bool,
                  then: Callable[[RecordRequest | None], None]) -> None:
    """The record flow: the reading (:class:`RecordDialog`), then the one confirmation with
    the safe answer focused; ``then`` gets the request on an explicit yes, else None."""

    def confirmed(request: RecordRequest, yes: bool | None) -> None:
        then(request if yes else None)

    def read(request: RecordRequest | None) -> None:
        if request is None:
            then(None)
            return
        app.push_screen(ConfirmScreen("Record this neutralization?",
                                      confirmation_text(container, request),
                                      yes_label="Record"),
                        lambda yes: confirmed(request, yes))

    app.push_screen(RecordDialog(container, plan_line, who, drain_plan), read)
