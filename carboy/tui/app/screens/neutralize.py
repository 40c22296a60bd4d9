"""The Neutralize screen: plan how much reagent a waste needs, then record what was done.

Left, the form: the sample (a waste container, a stock bottle, or components typed in
with a volume), the reagent (a stock bottle that can serve, or a formula), the target
pH and acceptance window, the temperature and the activity model.  Every field echoes
what carboy understood, or says in place why it could not read it; the typed text is
never lost.  Right, the plan in three views (figures, staged additions, the pH curve).
Below, the cautions, always on screen, with the standing disposal note.

The form is read and planned by :mod:`carboy.model.forms.neutralize` (the same code as
``carboy neutralize``) in a thread worker, driven by :class:`~carboy.tui.app.live.
LiveComputation`; while the inputs have an error the last good plan stays on screen,
greyed and marked STALE.
"""

from __future__ import annotations

from dataclasses import dataclass

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal
from textual.screen import Screen
from textual.timer import Timer
from textual.widgets import (
    Input,
    Select,
    Static,
    TabbedContent,
    TabPane,
)

from carboy.model.forms.neutralize import (
    FIELDS,
    ContainerSample,
    NeutralizeFields,
    evaluate,
    snapshot,
)
from carboy.store.planning import BottleChoice
from carboy.store.statuses import ContainerStatus
from carboy.tui.app.live import Computed, LiveComputation, Outcome
from carboy.tui.app.screens.neutralize_form import NeutralizeForm
from carboy.tui.app.screens.neutralize_parts import (
    TYPED,
    ChoicesLoaded,
    ContainerLoaded,
    Recorded,
    container_summary,
    reagent_options,
    sample_options,
    window_values,
)
from carboy.tui.app.screens.neutralize_record import RecordRequest, ask_to_record, record
from carboy.tui.app.widgets import redraw
from carboy.tui.app.widgets.mode_bar import ModeBar
from carboy.tui.app.widgets.ph_curve import PHCurvePanel, curve_data_from_plan
from carboy.tui.app.widgets.plan_view import CautionsPanel, PlanSummary, StagesTable, dose_text
from carboy.tui.app.widgets.quiet_select import QuietSelect
from carboy.tui.app.widgets.steady_footer import SteadyFooter
from carboy.tui.edge import describe

CURVE_POINTS = 200
PLANNING_NOTE_S = 0.1
"""A plan that takes longer says "… planning" meanwhile (a quicker one draws one frame
less, and the plan arrives sooner)."""
"""Points of the pH curve on screen: a plot at most ~100 columns wide draws 2 braille
dots per column, so 200 points are as smooth as the screen can show (and replan faster)."""


@dataclass(frozen=True)
class FormState:
    """The form as typed, with the container it is about (nothing parsed yet)."""

    fields: NeutralizeFields
    container: ContainerSample | None = None
    sample_note: str = ""
    profile: object | None = None
    """The storeroom's disposal rules the plan obeys (None until loaded)."""


def compute(state: FormState, generation: int = 0, catalog=None) -> Outcome:
    """Read and plan the form (never raises: errors come back by field)."""
    from carboy.model.catalog import default_catalog

    reading = evaluate(state.fields, catalog or default_catalog(), state.container,
                       curve_points=CURVE_POINTS, profile=state.profile)
    return Outcome(generation, state, reading)


# -- the screen ----------------------------------------------------------------------------

class NeutralizeScreen(Screen):
    """Plan a neutralization and record it against a waste container."""

    DEFAULT_CSS = """
    NeutralizeScreen { layout: vertical; }
    #nz-main { height: 1fr; }
    #nz-views { width: 1fr; height: 1fr; }
    #nz-views TabPane { padding: 0; }
    #nz-status { height: 1; padding: 0 1; background: $boost; text-style: bold; }
    """

    BINDINGS = [
        Binding("ctrl+r", "record", "Record", id="neutralize.record"),
        Binding("ctrl+t", "next_view", "Next view", id="neutralize.next_view",
                tooltip="Cycle the plan views: figures, stages, curve"),
        Binding("ctrl+n", "typed_sample", "Type sample", id="neutralize.typed_sample",
                tooltip="Leave the container and type the sample's components"),
        Binding("ctrl+g", "read_cautions", "All cautions", id="neutralize.read_cautions",
                tooltip="Every caution of the plan, most serious first"),
    ]

    def __init__(self, name: str | None = None, id: str | None = None,  # noqa: A002
                 classes: str | None = None) -> None:
        super().__init__(name=name, id=id, classes=classes)
        self.plan = None
        """The last good plan (None before the first)."""
        self.disposal = self.profile = None  # the plan under the rules; the rules in force
        self.plan_state: FormState | None = None
        """The inputs that plan was made from."""
        self.outcome: Outcome | None = None
        """The latest outcome shown (good or with errors)."""
        self.stale = False
        self.container: ContainerSample | None = None
        self.sample_note = ""
        self.last_journal_id: int | None = None
        self._recorded_label: str | None = None
        self.choices: list[BottleChoice] = []
        self.containers: list[tuple[str, str]] = []
        self._catalog = None
        self.live = LiveComputation(self, self._start_plan)
        self._planning_note: Timer | None = None
        self._pending_label: str | None = None
        self._reagent_options: list | None = None
        self._composed = False

    # -- layout --------------------------------------------------------------------------
    def compose(self) -> ComposeResult:
        yield ModeBar("neutralize")
        with Horizontal(id="nz-main"):
            yield NeutralizeForm(id="nz-form")
            with TabbedContent(id="nz-views", initial="view-plan"):
                with TabPane("Plan", id="view-plan"):
                    yield PlanSummary(id="plan-summary")
                with TabPane("Stages", id="view-stages"):
                    yield StagesTable(id="stages")
                with TabPane("Curve", id="view-curve"):
                    yield PHCurvePanel(id="curve-panel")
        yield Static("", id="nz-status", markup=False)
        yield CautionsPanel(id="cautions")
        yield SteadyFooter()  # refresh_bindings on each key and result: rebuilt only on change

    def on_mount(self) -> None:
        # Children may still be mounting when a mode is switched to very early.
        self.call_after_refresh(self._start)
        self.watch(self.app, "data_version", self._data_changed, init=False)

    def _data_changed(self, _version: int) -> None:
        """Something was written: the bottles, the containers and the one loaded here."""
        if not self._composed:
            return
        self._load_choices()
        if self.container is not None and self._pending_label is None:
            self._start_container_load(self.container.label)

    def _start(self) -> None:
        self._composed = True
        self.query_one("#reagent" if self._pending_label else "#components", Input).focus()
        self._set_status("○ no plan yet: give a sample and a reagent")
        self._load_choices()
        for echo in self.query(".nz-echo"):
            echo.display = echo.id in ("sample-info", "echo-window")
        if self._pending_label:
            self._start_container_load(self._pending_label)
        self._inputs_changed()

    # -- public: the app opens a container here -----------------------------------------
    def load_container(self, label: str) -> None:
        """Plan for the waste container ``label`` (called from the Waste screen)."""
        if not self.is_mounted:
            self._pending_label = label
            return
        self._start_container_load(label)

    # -- workers ---------------------------------------------------------------------------
    def _open_store(self):
        return self.app.open_store()

    @work(thread=True, exclusive=True, group="neutralize-lists", exit_on_error=False)
    def _load_choices(self) -> None:
        from carboy.store import disposal, planning, waste
        from carboy.store.compounds import catalog_for

        try:
            with self._open_store() as store, store.reading():
                catalog = catalog_for(store)
                choices = planning.choices(store, getattr(self.app, "today", None))
                containers = [(c.label, c.status) for c in waste.containers(store)]
                profile = disposal.load(store)
        except Exception as err:  # noqa: BLE001 - reported in place
            self.post_message(ChoicesLoaded([], [], None,
                                            f"stock list unavailable: {describe(err)}"))
            return
        self.post_message(ChoicesLoaded(choices, containers, catalog, profile=profile))

    def _start_container_load(self, label: str) -> None:
        self._pending_label = label
        self.query_one("#sample-info", Static).update(f"loading {label}…")
        self._load_container(label)

    @work(thread=True, exclusive=True, group="neutralize-container", exit_on_error=False)
    def _load_container(self, label: str) -> None:
        from carboy.store.planning import container_sample

        try:
            with self._open_store() as store:
                info, catalog = container_sample(store, label)
        except Exception as err:  # noqa: BLE001 - reported in place
            self.post_message(ContainerLoaded(label, None, None, describe(err)))
            return
        self.post_message(ContainerLoaded(label, info, catalog))

    @work(thread=True, exclusive=True, group="neutralize-plan", exit_on_error=False)
    def _plan(self, state: FormState, generation: int, catalog) -> None:
        self.post_message(Computed(compute(state, generation, catalog)))

    @work(thread=True, exclusive=True, group="neutralize-record", exit_on_error=False)
    def _record(self, label: str, snapshot: dict, request: RecordRequest) -> None:
        try:  # the name typed is who did the work; recorded_by is the account running carboy
            with self._open_store() as store:
                entry, warnings = record(store, label, snapshot, request, who=self.app.who,
                                         today=getattr(self.app, "today", None))
        except Exception as err:  # noqa: BLE001 - reported in place
            self.post_message(Recorded(label, None, request.final_ph, describe(err)))
            return
        self.post_message(Recorded(label, entry, request.final_ph, warnings=warnings))

    # -- message handlers ------------------------------------------------------------------
    def on_choices_loaded(self, message: ChoicesLoaded) -> None:
        if message.catalog is not None:
            self._catalog = message.catalog
        if message.profile is not None:
            self._use_profile(message.profile)
        self.choices = list(message.choices)
        self.containers = list(message.containers)
        if message.error:
            self.query_one("#echo-plan", Static).update(f"✗ {message.error}")
        self._fill_sample_select()
        self._fill_reagent_select()
        self._inputs_changed()

    def on_container_loaded(self, message: ContainerLoaded) -> None:
        if message.label != self._pending_label:
            return
        self._pending_label = None
        info = self.query_one("#sample-info", Static)
        if message.info is None:
            info.update(f"✗ {message.error}")
            info.add_class("-error")
            return
        info.remove_class("-error")
        if message.catalog is not None:
            self._catalog = message.catalog
        fresh = self.container is None or self.container.label != message.info.label
        if fresh:
            self._clear_plan()  # a plan of another sample is never shown for this one
        self.container = message.info
        self.sample_note = ""
        summary = container_summary(self.container)
        recorded = self.container.recorded
        if fresh and recorded is not None:  # a planned container opens on its recorded plan
            self.query_one(NeutralizeForm).fill(recorded.fields)
            summary += f"\n{recorded.heading()}"
        info.update(summary)
        self._set_sample_inputs_enabled(False)
        label = self.container.label
        self.query_one("#sample-source", QuietSelect).select_quietly(f"c:{label}")
        focused = self.focused
        if focused is None or not focused.is_attached or isinstance(focused, Input) and focused.disabled:
            self.query_one("#reagent", Input).focus()
        self.refresh_bindings()
        self._inputs_changed()

    def on_computed(self, message: Computed) -> None:
        if self.live.finished(message.outcome.generation):
            self._apply(message.outcome)
        if self.live.settled and self._planning_note is not None:
            self._planning_note.stop()
            self._planning_note = None
        self.refresh_bindings()

    def on_recorded(self, message: Recorded) -> None:
        if message.entry_id is None:
            self._set_status(f"✗ not recorded: {message.error}")
            self.notify(f"Not recorded: {message.error}", severity="error")
            return
        for text in message.warnings:
            self.notify(text, severity="warning", timeout=8)
        self.last_journal_id = message.entry_id
        self._recorded_label = message.label
        done = ("plan recorded (pH not measured)" if message.measured_ph is None
                else f"measured pH {message.measured_ph:g}")
        self._set_status(f"✓ journal entry #{message.entry_id}: {message.label}, {done}")
        self.notify(f"Recorded journal entry #{message.entry_id} for {message.label}")
        self.app.refresh_data()  # every screen, this one included, reads the new state

    # -- form events -----------------------------------------------------------------------
    @on(Input.Changed)
    def _input_changed(self, event: Input.Changed) -> None:
        if event.input.id in ("components", "volume", "reagent", "target", "window_low",
                              "window_high", "temperature"):
            self._inputs_changed()

    @on(Select.Changed, "#activity")
    def _activity_changed(self) -> None:
        self._inputs_changed()

    @on(Select.Changed, "#sample-source")
    def _sample_source_changed(self, event: Select.Changed) -> None:
        # Only the user's own choice counts (a Select also reports values set in code).
        if event.value is Select.NULL or not event.select.chosen_by_user():
            return
        value = str(event.value)
        if value == TYPED:
            if self.container is not None or self._pending_label is not None or self.sample_note:
                self.action_typed_sample()
        elif value.startswith("c:"):
            label = value[2:]
            current = self.container.label if self.container else None
            if label not in (current, self._pending_label):
                self._start_container_load(label)
        elif value.startswith("b:"):
            choice = next((c for c in self.choices if f"b:{c.bottle_id}" == value
                           and c.kind == "sample"), None)
            if choice is not None and self.sample_note != f"stock bottle #{choice.bottle_id}":
                self._use_bottle_as_sample(choice)

    @on(Select.Changed, "#reagent-bottle")
    def _reagent_bottle_changed(self, event: Select.Changed) -> None:
        if event.value is Select.NULL or not event.select.chosen_by_user():
            return
        choice = next((c for c in self.choices if c.kind != "sample"
                       and f"r:{c.bottle_id}" == event.value), None)
        reagent = self.query_one("#reagent", Input)
        if choice is not None and reagent.value != choice.text:
            reagent.value = choice.text

    # -- actions ---------------------------------------------------------------------------
    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        if action == "record":
            # shown whenever a container is the sample; pressing it says why when it can't
            return self.container is not None
        if action == "typed_sample":
            return self.container is not None
        return True

    def record_blocker(self) -> str | None:
        """Why the plan on screen cannot be recorded now, or None when it can."""
        if self.container is None:
            return "records are kept for a waste container: pick one as the sample"
        status = ContainerStatus(self.container.status)
        if not status.can_record_neutralization:
            return f"{self.container.label} is {status.state}: no neutralization is recorded"
        if self.plan is None:
            return "no plan yet: give a reagent (and fix what is marked ✗)"
        if not self._plan_is_current():
            return "the plan shown is stale: fix the inputs marked ✗, or wait for the new plan"
        return None

    def _plan_is_current(self) -> bool:
        return (not self.stale and self.live.settled and self.plan_state is not None
                and self.plan_state == self._form_state())

    def action_record(self) -> None:
        why = self.record_blocker()
        if why is not None:
            self._set_status(f"✗ cannot record: {why}")
            self.notify(f"Cannot record: {why}", severity="warning", timeout=6)
            return
        plan, container = self.plan, self.container
        plan_line = (f"planned: {plan.reagent.describe()}: to pH {plan.to_target.target_pH:g} "
                     f"{dose_text(plan, plan.to_target)}")
        who = str(getattr(self.app, "who", "") or "")
        bottle = self.snapshot()["inputs"]["reagent_bottle_id"]

        def go_on(request: RecordRequest | None) -> None:
            if request is None:
                self._set_status("recording cancelled: nothing was written")
                return
            self._set_status(f"recording {container.label}…")
            self._record(container.label, self.snapshot(), request)

        ask_to_record(self.app, container, plan_line, who, plan.drain_plan, go_on,
                      reagent=plan.reagent.text, bottle_id=bottle, catalog=self._catalog)

    def action_next_view(self) -> None:
        tabs = self.query_one("#nz-views", TabbedContent)
        order = ["view-plan", "view-stages", "view-curve"]
        tabs.active = order[(order.index(tabs.active) + 1) % len(order)] \
            if tabs.active in order else order[0]

    def action_typed_sample(self) -> None:
        self.container = None
        self._pending_label = None
        self.sample_note = ""
        self._set_sample_inputs_enabled(True)
        info = self.query_one("#sample-info", Static)
        info.remove_class("-error")
        info.update("typed in below")
        self.query_one("#sample-source", QuietSelect).select_quietly(TYPED)
        self.query_one("#components", Input).focus()
        self.refresh_bindings()
        self._inputs_changed()

    def action_read_cautions(self) -> None:
        self.app.push_screen(self.query_one(CautionsPanel).full_screen())

    # -- recompute -------------------------------------------------------------------------
    def _form_state(self) -> FormState:
        fields = self.query_one(NeutralizeForm).fields()
        return FormState(fields, self.container, self.sample_note, self.profile)

    def _inputs_changed(self) -> None:
        if not self._composed:
            return
        self.live.changed()
        self.refresh_bindings()

    def _start_plan(self, generation: int) -> None:
        if self._planning_note is None:  # said only if it takes long enough to be seen
            self._planning_note = self.set_timer(PLANNING_NOTE_S, self._note_planning)
        self._plan(self._form_state(), generation, self._catalog)

    def _note_planning(self) -> None:
        self._planning_note = None
        if not self.live.settled:
            self._set_status("… planning", keep_result=True)

    def _apply(self, outcome: Outcome) -> None:
        self.outcome = outcome
        reading = outcome.reading
        for name in FIELDS:
            reason = reading.errors.get(name)
            if name in reading.missing:
                self._show_field(name, None, f"○ {reason}")
            else:
                self._show_field(name, reason, reading.echoes.get(name, ""))
        general = reading.errors.get("plan") or reading.errors.get("sample")
        plan_echo = self.query_one("#echo-plan", Static)
        redraw.update(plan_echo, f"✗ {general}" if general else "")
        plan_echo.set_class(bool(general), "-error")
        plan_echo.display = bool(general)
        if reading.direction:
            self._fill_reagent_select(reading.direction)
        if outcome.ok:
            self.plan, self.disposal = outcome.value, reading.disposal
            self.plan_state = outcome.state
            self.stale = False
            self._show_plan()
            what = outcome.state.container.label if outcome.state.container else "typed sample"
            self._set_status(f"✓ plan up to date: {what}, {self.plan.reagent.key} "
                             f"({reading.elapsed_ms:.0f} ms){self._record_note()}")
        else:
            self.stale = self.plan is not None
            self._mark_stale()
            bad = sorted(set(reading.errors) - reading.missing)
            todo = sorted(reading.missing)
            parts = ([f"check {', '.join(bad)} (marked ✗)"] if bad else []) + (
                [f"fill in {', '.join(todo)}"] if todo else [])
            if self.plan is not None:
                self._set_status(f"✗ {'; '.join(parts)}: the plan shown is STALE"
                                 + self._record_note())
            else:
                self._set_status(f"○ no plan yet: {'; '.join(parts)}")

    def _show_plan(self) -> None:
        plan = self.plan
        summary = self.query_one(PlanSummary)
        summary.show_plan(plan, self.disposal)
        summary.remove_class("-stale")
        table = self.query_one(StagesTable)
        table.show_plan(plan)
        table.remove_class("-stale")
        self.query_one(PHCurvePanel).show_curve(curve_data_from_plan(plan))
        self.query_one(CautionsPanel).show_cautions(plan.cautions, drain_plan=self._drain())

    def _drain(self) -> bool:
        """The plan may lead to the drain: its own verdict, and the storeroom's disposal
        rules allow treating it here (else the banner says licensed disposal, on top)."""
        return self.plan.drain_plan and (self.disposal is None or self.disposal.may_treat)

    def _clear_plan(self) -> None:
        """No plan on screen (another sample is being loaded)."""
        self.plan = self.plan_state = self.disposal = None
        self.stale = False
        self.query_one(PlanSummary).show_plan(None, None)
        self.query_one(StagesTable).show_plan(None)
        self.query_one(PHCurvePanel).show_curve(None)
        self.query_one(CautionsPanel).show_cautions(())

    def _mark_stale(self) -> None:
        if self.plan is None:
            return
        self.query_one(PlanSummary).add_class("-stale")
        self.query_one(StagesTable).add_class("-stale")
        self.query_one(PHCurvePanel).mark_stale(True)
        self.query_one(CautionsPanel).show_cautions(self.plan.cautions,
                                                    drain_plan=self._drain(), stale=True)

    def _show_field(self, name: str, error: str | None, echo: str) -> None:
        self.query_one(NeutralizeForm).show_field(name, error, echo,
                                                  typed=self.container is None)

    def _record_note(self) -> str:
        """The last journal entry recorded here, while its container is still loaded."""
        if self.last_journal_id is None or self.container is None \
                or self.container.label != self._recorded_label:
            return ""
        return f" · recorded as journal entry #{self.last_journal_id}"

    def _set_status(self, text: str, keep_result: bool = False) -> None:
        status = self.query_one("#nz-status", Static)
        if keep_result and self.outcome is not None and self.stale:
            text = f"{text} (the plan shown is STALE)"
        redraw.update(status, text, layout=False)  # one line: the screen keeps its layout

    # -- the lists ---------------------------------------------------------------------------
    def _fill_sample_select(self) -> None:
        select = self.query_one("#sample-source", QuietSelect)
        options = sample_options(self.containers, self.choices)
        current = f"c:{self.container.label}" if self.container else select.current or TYPED
        select.set_options_quietly(options, current if current in {v for _, v in options}
                                   else TYPED)

    def _fill_reagent_select(self, direction: str | None = None) -> None:
        options, kinds = reagent_options(self.choices, direction)
        if self._reagent_options == options:
            return
        self._reagent_options = options
        text = self.query_one("#reagent", Input).value
        current = next((f"r:{c.bottle_id}" for c in self.choices
                        if c.kind in kinds and c.text == text), None)
        self.query_one("#reagent-bottle", QuietSelect).set_options_quietly(options, current)

    def _use_bottle_as_sample(self, choice: BottleChoice) -> None:
        self.container = None
        self._set_sample_inputs_enabled(True)
        self.sample_note = f"stock bottle #{choice.bottle_id}"
        self.query_one("#components", Input).value = choice.text
        self.query_one("#volume", Input).value = f"{choice.amount_left:g} L"
        self.query_one("#sample-info", Static).update(
            f"stock bottle {choice.title}; volume = amount left (edit if less is treated)")
        self.refresh_bindings()
        self._inputs_changed()

    def _set_sample_inputs_enabled(self, enabled: bool) -> None:
        self.query_one(NeutralizeForm).typed_sample(enabled)

    # -- the record ---------------------------------------------------------------------------
    def snapshot(self) -> dict:
        """What the journal keeps: the inputs as typed and the plan as computed now."""
        state = self.plan_state
        reagent_bottle = next((c.bottle_id for c in self.choices
                               if c.kind != "sample" and c.text == state.fields.reagent), None)
        return snapshot(state.fields, self.plan,
                        container_label=state.container.label if state.container else None,
                        reagent_bottle_id=reagent_bottle,
                        recorded_from="carboy neutralize screen", disposal=self.disposal)

    def _use_profile(self, profile) -> None:
        """Plan under the storeroom's rules; its window fills window fields left as they were."""
        boxes = [self.query_one(f"#{wid}", Input) for wid in ("window_low", "window_high")]
        for box, value in zip(boxes, window_values(self.profile, profile, boxes)):
            box.value = value
        self.profile = profile
