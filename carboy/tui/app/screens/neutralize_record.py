"""The dialog that records a treatment as it happened (or only the plan), and the flow
around it.

It takes what the treatment form reads (:mod:`carboy.model.forms.treatment`): the final
pH, the stock bottle the reagent came from (or none: the plan's reagent, not from a
bottle), the amount really added, the pH after each stage and after venting, the final
volume and temperature, the route and who did the work.  With no final pH and no amount
only the plan is recorded (the container becomes ``planned``).  The permanent write is
asked once more by the app's one confirmation dialog, with the safe answer focused.
:func:`record` writes through the store (:func:`carboy.store.treatments.record_treatment`).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, replace

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Label, Select, Static

from carboy.model.disposal_rules import ROUTE_DRAIN, ROUTES
from carboy.model.forms.neutralize import ContainerSample
from carboy.model.forms.treatment import TreatmentFields
from carboy.model.forms.treatment import read as read_treatment
from carboy.store.statuses import ContainerStatus
from carboy.tui.app.screens.confirm import ConfirmScreen
from carboy.tui.app.widgets.steady_input import InPlaceInput

INPUTS = (("measured", "Final pH", "e.g. 7,2 — empty: record the plan only"),
          ("bottle", "From bottle", "#7 — empty: the reagent was not from a bottle"),
          ("added", "Added", "what really went in, e.g. 2.5 L or 850 g"),
          ("stage-ph", "Stage pH", "after each stage, e.g. 3,1 5,8 6,9"),
          ("vented", "Vented pH", "once the CO2 has gone (optional)"),
          ("final-volume", "Final vol.", "measured (optional)"),
          ("temperature", "Temp.", "measured, °C (optional)"))
"""Input id, label, placeholder."""
FIELD_INPUT = {"final_ph": "measured", "bottle": "bottle", "reagent": "bottle",
               "added": "added", "stage_ph": "stage-ph", "vented_ph": "vented",
               "final_volume": "final-volume", "temperature": "temperature", "route": "route",
               "performed_by": "who"}


@dataclass(frozen=True)
class RecordRequest:
    """What the dialog read: ``fields`` is None for the plan alone."""

    fields: TreatmentFields | None
    who: str
    final_ph: float | None = None


class RecordDialog(ModalScreen[RecordRequest | None]):
    """Ask what was really done; dismisses with it (or None)."""

    BINDINGS = [Binding("escape", "cancel", "Cancel", id="neutralize.record.cancel")]

    DEFAULT_CSS = """
    RecordDialog { align: center middle; }
    RecordDialog > #record-box {
        width: 76; max-width: 100%; height: auto; max-height: 100%;
        border: heavy $foreground; padding: 0 1; background: $surface;
    }
    RecordDialog .rd-row { height: 1; }
    RecordDialog .rd-row > Label { width: 12; }
    RecordDialog .rd-row > Input, RecordDialog .rd-row > Select { width: 1fr; }
    RecordDialog #measured-echo { height: auto; margin-top: 1; }
    RecordDialog #measured-echo.-error { text-style: bold; color: $text-error; }
    RecordDialog #rd-buttons { height: auto; margin-top: 1; align-horizontal: right; }
    RecordDialog #rd-buttons > Button { margin-left: 2; }
    """

    def __init__(self, container: ContainerSample, plan_line: str, who: str,
                 drain_plan: bool, *, reagent: str = "", bottle_id: int | None = None,
                 catalog=None) -> None:
        super().__init__()
        self.container = container
        self.plan_line = plan_line
        self.default_who = who
        self.drain_plan = drain_plan
        self.reagent = reagent
        self.bottle_id = bottle_id
        self.catalog = catalog

    def compose(self) -> ComposeResult:
        with Vertical(id="record-box"):
            yield Static(f"Record the treatment of {self.container.label}", classes="bold")
            yield Static(self.plan_line, id="rd-plan", markup=False)
            if not self.drain_plan:
                yield Static("‼ NOT FOR DRAIN DISPOSAL: this container goes to licensed "
                             "disposal whatever pH it reaches.", markup=False)
            for wid, label, hint in INPUTS:
                with Horizontal(classes="rd-row"):
                    yield Label(label)
                    value = f"#{self.bottle_id}" if wid == "bottle" and self.bottle_id else ""
                    yield InPlaceInput(value, placeholder=hint, id=wid, compact=True)
            with Horizontal(classes="rd-row"):
                yield Label("Route")
                yield Select([(r.replace("-", " "), r) for r in ROUTES], id="route",
                             value=ROUTE_DRAIN if self.drain_plan else ROUTES[1],
                             allow_blank=False, compact=True)
            with Horizontal(classes="rd-row"):
                yield Label("Who")
                yield InPlaceInput(self.default_who, id="who", compact=True)
            yield Static(self._echo(), id="measured-echo", markup=False)
            with Horizontal(id="rd-buttons"):
                yield Button("Record…", id="rd-ok", compact=True)
                yield Button("Cancel", id="rd-cancel", compact=True)

    def on_mount(self) -> None:
        self.query_one("#measured", Input).focus()

    def _value(self, wid: str) -> str:
        return self.query_one(f"#{wid}", Input).value

    def fields(self) -> TreatmentFields | None:
        """The treatment as typed; None when only the plan is to be recorded."""
        if not self._value("measured").strip() and not self._value("added").strip():
            return None
        bottle = self._value("bottle").strip()
        return TreatmentFields(
            bottle=bottle, reagent="" if bottle else self.reagent, added=self._value("added"),
            stage_ph=tuple(self._value("stage-ph").replace(";", " ").split()),
            vented_ph=self._value("vented"), final_ph=self._value("measured"),
            final_volume=self._value("final-volume"), temperature=self._value("temperature"),
            route=str(self.query_one("#route", Select).value),
            performed_by=self._value("who"))

    def _read(self):
        fields = self.fields()
        return None if fields is None else read_treatment(fields, self.catalog)

    def _echo(self) -> str:
        if not self.is_mounted:
            return "empty: the plan alone is recorded"
        reading = self._read()
        now = self.container.status
        if reading is None:
            return f"no final pH and no amount: the plan is recorded, {now} → planned"
        if not reading.ok:
            return f"✗ {next(iter(reading.errors.values()))}"
        r = reading.value
        source = f"bottle {r.bottle_id}" if r.bottle_id else f"{r.reagent_text}, not from a bottle"
        after = "licensed disposal" if r.route != ROUTE_DRAIN else "neutralized"
        return (f"understood: {r.added.value:g} {r.added.unit} from {source}; final pH "
                f"{r.final_ph:g}; {self.container.label} {now} → {after}")

    def _show_error(self, message: str, focus: str) -> None:
        echo = self.query_one("#measured-echo", Static)
        echo.update(f"✗ {message}")
        echo.add_class("-error")
        self.query_one(f"#{focus}").focus()

    @on(Input.Changed)
    @on(Select.Changed)
    def _changed(self) -> None:
        echo = self.query_one("#measured-echo", Static)
        text = self._echo()
        echo.update(text)
        echo.set_class(text.startswith("✗"), "-error")

    @on(Input.Submitted)
    def _submitted(self) -> None:
        self._press_ok()

    @on(Button.Pressed, "#rd-ok")
    def _press_ok(self) -> None:
        who = self._value("who").strip()
        if not who:
            self._show_error("who: say who did the work", "who")
            return
        reading = self._read()
        if reading is None:
            self.dismiss(RecordRequest(None, who))
            return
        if not reading.ok:
            name, text = next(iter(reading.errors.items()))
            self._show_error(text, FIELD_INPUT.get(name, "measured"))
            return
        self.dismiss(RecordRequest(self.fields(), who, reading.value.final_ph))

    @on(Button.Pressed, "#rd-cancel")
    def _press_cancel(self) -> None:
        self.dismiss(None)

    def action_cancel(self) -> None:
        self.dismiss(None)


def confirmation_text(container: ContainerSample, request: RecordRequest) -> str:
    """What the confirmation asks before the permanent journal entry is written."""
    now = ContainerStatus(container.status)
    if request.fields is None:
        return (f"Append to the journal: the plan for {container.label}, pH not measured, by "
                f"{request.who}.\n{container.label} moves from {now.words} to planned.\n"
                "Journal entries are permanent (a mistake is corrected by a new entry).")
    f = request.fields
    after = ContainerStatus.LICENSED_DISPOSAL if f.route != ROUTE_DRAIN \
        else ContainerStatus.NEUTRALIZED
    source = f"bottle {f.bottle.lstrip('#')} is drawn down by {f.added}" if f.bottle else \
        f"{f.added} of {f.reagent}, not from a stock bottle"
    return (f"Append to the journal: {container.label} treated by {request.who}, final pH "
            f"{request.final_ph:g}; {source}.\n{container.label} moves from {now.words} to "
            f"{after.words}; its volume and contents include the reagent.\n"
            "Journal entries are permanent (a mistake is corrected by a new entry).")


def ask_to_record(app, container: ContainerSample, plan_line: str, who: str, drain_plan: bool,
                  then: Callable[[RecordRequest | None], None], **dialog) -> None:
    """The record flow: the reading (:class:`RecordDialog`), then the one confirmation with
    the safe answer focused; ``then`` gets the request on an explicit yes, else None."""

    def confirmed(request: RecordRequest, yes: bool | None) -> None:
        then(request if yes else None)

    def read(request: RecordRequest | None) -> None:
        if request is None:
            then(None)
            return
        title = "Record this plan?" if request.fields is None else "Record this treatment?"
        app.push_screen(ConfirmScreen(title, confirmation_text(container, request),
                                      yes_label="Record"),
                        lambda yes: confirmed(request, yes))

    app.push_screen(RecordDialog(container, plan_line, who, drain_plan, **dialog), read)


def record(store, label: str, snapshot: dict, request: RecordRequest, *, who=None,
           today=None) -> tuple[int, tuple[str, ...]]:
    """Write what the dialog read: the plan alone, or the treatment (one transaction).
    Returns the journal entry id and the warnings to show."""
    from carboy.store import treatments, waste
    from carboy.store.compounds import catalog_for

    snap = {**snapshot, "performed_by": request.who}
    if request.fields is None:
        return waste.record_neutralization(store, label, snap, None, who=who, today=today), ()
    fields = replace(request.fields, performed_by=request.who)
    readings = read_treatment(fields, catalog_for(store)).raise_first()
    done = treatments.record_treatment(store, label, readings, plan_snapshot=snap, who=who,
                                       today=today)
    return done.entry_id, done.warnings
