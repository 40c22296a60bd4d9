"""The Standardize screen: the molarity of a titrant from replicate titrations of a
weighed primary standard, and, for a stock bottle, recording it as the bottle's strength.

Left, the form: the titrant (a compound such as ``NaOH``, ``NaOH 0.1 M`` with its
nominal strength, or a stock bottle ``#34``), the primary standard, its assay and the
blank titre, then the replicates, one titration per line (``0.5106 25.02``, units
optional: ``0,5106 g 25,02 mL``).  Every field echoes what carboy understood or says
in place what is wrong; a bad replicate line is named by its line number and the bad
value.  The typed text is never touched.  Right, the result: each replicate's
molarity, the mean, its spread, the outlier test and the decision against the rule in
force.  Below, the handling notes for the standard and the titrant.

Recompute
---------
As on the Neutralize screen: each change bumps a generation counter; a change after a
quiet spell is computed at once, a burst of changes once, :data:`DEBOUNCE_S` after
the last.  One computation runs at a time (in a thread worker, which also reads the
bottle from the database when one is named); a result is shown only if its generation
is still the current one.  While the inputs have an error the last good result stays
on screen, greyed and marked STALE, and nothing can be recorded.

Record (ctrl+s) writes the accepted mean as the bottle's current strength with a
journal entry, in one transaction, after a confirmation.  It refuses, saying why, when
no bottle is given, the result is not accepted, or the result is not up to date.
"""

from __future__ import annotations

from dataclasses import dataclass

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.screen import Screen
from textual.widgets import Footer, Input, Label, Static, TextArea

from carboy.model.forms import bottle_ref
from carboy.model.forms.standardize import (
    FIELDS,
    NEED_REPLICATES,
    NEED_STANDARD,
    NEED_TITRANT,
    BottleInfo,
    StandardizeFields,
    evaluate,
    fmt_molar,
    method_of,
)
from carboy.store.statuses import BottleStatus
from carboy.tui.app.live import Computed, LiveComputation, Outcome
from carboy.tui.app.screens.confirm import ConfirmScreen
from carboy.tui.app.screens.standardize_text import (
    ACCEPTED_MARK,
    GENERAL_CAUTION,
    REJECTED_MARK,
    cautions_text,
    result_text,
    rule_text,
    short_reasons,
)
from carboy.tui.app.widgets.mode_bar import ModeBar
from carboy.tui.app.widgets.steady_input import InPlaceInput, OrderedTextArea
from carboy.tui.edge import describe

INPUT_IDS = ("sz-titrant", "sz-standard", "sz-assay", "sz-blank")
REPLICATES_TITLE = "Replicates: mass g  titre mL"
PLACEHOLDER = "e.g. 0.5106 25.02\ne.g. 0,5098 g 24,97 mL"

NO_RESULT = ("No result yet: give the titrant, the standard and at least one titration "
             "(mass of standard and titre, one per line).")





@dataclass(frozen=True)
class FormState:
    """The form as typed and the acceptance rule in force (None while it is read)."""

    fields: StandardizeFields
    rule: object | None = None


def compute(state: FormState, generation: int = 0, *, bottle: BottleInfo | None = None,
            bottle_error: str | None = None) -> Outcome:
    """Read and standardize the form (never raises: errors come back by field)."""
    reading = evaluate(state.fields, state.rule, bottle=bottle, bottle_error=bottle_error)
    return Outcome(generation, state, reading)


# -- the screen --------------------------------------------------------------------------

class StandardizeScreen(Screen):
    """Standardize a titrant against a primary standard and record it on a bottle."""

    HELP = ("The molarity of a titrant from replicate titrations of a weighed primary "
            "standard (KHP or sulfamic acid for NaOH and KOH; Na2CO3 or Tris for HCl, HNO3, "
            "H2SO4): each replicate, mean, SD, RSD, 95 % CI, Grubbs' outlier test and the "
            "decision against the storeroom's rule. Give a bottle id (#34) as the titrant "
            "and ctrl+s records an accepted mean as its strength, with a journal entry.")

    BINDINGS = [
        Binding("ctrl+s", "record", "Record", id="standardize.record",
                tooltip="Write the accepted mean as the bottle's current strength "
                        "(asks first; journal entry)"),
    ]

    HORIZONTAL_BREAKPOINTS = [(0, "-narrow"), (110, "-wide")]

    DEFAULT_CSS = """
    StandardizeScreen { layout: vertical; }
    StandardizeScreen #sz-main { height: 1fr; }
    StandardizeScreen #sz-form {
        width: 40;
        height: 1fr;
        border-right: vkey $foreground 30%;
        scrollbar-size-vertical: 1;
    }
    StandardizeScreen.-wide #sz-form { width: 52; }
    StandardizeScreen .sz-row { height: 1; }
    StandardizeScreen .sz-row > Label { width: 9; text-style: bold; }
    StandardizeScreen .sz-row > Label.sz-label2 { width: 10; padding-left: 1; }
    StandardizeScreen .sz-row > Input { width: 1fr; }
    StandardizeScreen .sz-echo { height: auto; padding-left: 2; color: $text-muted; }
    StandardizeScreen .sz-echo.-error { color: $text-error; text-style: bold; }
    StandardizeScreen Input.-invalid { text-style: underline; }
    StandardizeScreen #sz-replicates {
        height: 1fr;
        min-height: 6;
        margin-top: 0;
    }
    StandardizeScreen #sz-replicates.-invalid { border: round $error; }
    StandardizeScreen #sz-results { width: 1fr; height: 1fr; padding: 0 1; }
    StandardizeScreen #sz-results.-stale > Static { text-style: dim; }
    StandardizeScreen #sz-status {
        height: auto;
        max-height: 2;
        padding: 0 1;
        background: $boost;
        text-style: bold;
    }
    StandardizeScreen #sz-cautions {
        height: auto;
        max-height: 3;
        padding: 0 1;
        border-left: thick $warning;
    }
    """

    def __init__(self, name: str | None = None, id: str | None = None,  # noqa: A002
                 classes: str | None = None) -> None:
        super().__init__(name=name, id=id, classes=classes)
        self.result = None
        """The last good result (None before the first)."""
        self.result_state: FormState | None = None
        """The inputs that result was computed from."""
        self.outcome: Outcome | None = None
        """The latest outcome shown (good or with errors)."""
        self.stale = False
        self.rule = None
        """The AcceptanceRule in force, once read from the database."""
        self.rule_origin = ""
        self.rule_error = ""
        self.last_journal_id: int | None = None
        self.recorded_state: FormState | None = None
        self._bottles: dict[int, BottleInfo | str] = {}
        self.live = LiveComputation(self, self._start_compute)
        self._composed = False
        self._recording = False

    # -- layout ----------------------------------------------------------------------
    def compose(self) -> ComposeResult:
        yield ModeBar("standardize")
        with Horizontal(id="sz-main"):
            with VerticalScroll(id="sz-form"):
                with Horizontal(classes="sz-row"):
                    yield Label("Titrant")
                    yield InPlaceInput(placeholder="e.g. NaOH, HCl 0.1 M, #34", id="sz-titrant",
                                compact=True)
                yield Static(Text(NEED_TITRANT, style="dim"), id="echo-titrant",
                             classes="sz-echo")
                with Horizontal(classes="sz-row"):
                    yield Label("Standard")
                    yield InPlaceInput(placeholder="e.g. KHP, Na2CO3, Tris", id="sz-standard",
                                compact=True)
                yield Static(Text(NEED_STANDARD, style="dim"), id="echo-standard",
                             classes="sz-echo")
                with Horizontal(classes="sz-row"):
                    yield Label("Assay %")
                    yield InPlaceInput(placeholder="e.g. 99.97", id="sz-assay", compact=True)
                    yield Label("Blank mL", classes="sz-label2")
                    yield InPlaceInput("0", id="sz-blank", compact=True)
                yield Static("", id="echo-assay", classes="sz-echo")
                yield Static("", id="echo-blank", classes="sz-echo")
                yield OrderedTextArea("", id="sz-replicates", show_line_numbers=True,
                               soft_wrap=False, tab_behavior="focus", placeholder=PLACEHOLDER)
                yield Static(Text(NEED_REPLICATES, style="dim"), id="echo-replicates",
                             classes="sz-echo")
            with VerticalScroll(id="sz-results"):
                yield Static(Text(NO_RESULT, style="dim"), id="sz-result-text")
        yield Static("", id="sz-status", markup=False)
        yield Static(GENERAL_CAUTION, id="sz-cautions", markup=False)
        yield Footer()

    def on_mount(self) -> None:
        area = self.query_one("#sz-replicates", TextArea)
        area.border_title = REPLICATES_TITLE
        for wid in ("echo-blank", "echo-assay"):
            self.query_one(f"#{wid}").display = False
        self.watch(self.app, "data_version", self._data_changed, init=False)
        # children may still be mounting when a mode is switched to very early
        self.call_after_refresh(self._start)

    def _start(self) -> None:
        self._composed = True
        if not self.query_one("#sz-titrant", Input).value:
            self.query_one("#sz-titrant", Input).focus()
        self._set_status("○ no result yet: give the titrant, the standard and the titrations")
        self._load_rule()
        self._inputs_changed()

    # -- public: the app opens a bottle here ----------------------------------------
    def use_bottle(self, bottle_id: int) -> None:
        """Standardize stock bottle ``bottle_id``: it becomes the titrant (and its label
        strength the nominal); the other fields keep what was typed."""
        titrant = self.query_one("#sz-titrant", Input)
        titrant.value = f"#{int(bottle_id)}"
        titrant.cursor_position = len(titrant.value)
        if self.query_one("#sz-standard", Input).value.strip():
            self.query_one("#sz-replicates", TextArea).focus()
        else:
            self.query_one("#sz-standard", Input).focus()
        self._inputs_changed()

    # -- form events -----------------------------------------------------------------
    @on(Input.Changed)
    def _input_changed(self, event: Input.Changed) -> None:
        if event.input.id in INPUT_IDS:
            self._inputs_changed()

    @on(TextArea.Changed, "#sz-replicates")
    def _replicates_changed(self) -> None:
        self._inputs_changed()

    def _form_state(self) -> FormState:
        def text(wid: str) -> str:
            return self.query_one(f"#{wid}", Input).value

        fields = StandardizeFields(titrant=text("sz-titrant"), standard=text("sz-standard"),
                                   assay=text("sz-assay"), blank=text("sz-blank"),
                                   replicates=self.query_one("#sz-replicates", TextArea).text)
        return FormState(fields, self.rule)

    # -- recompute -------------------------------------------------------------------
    def _inputs_changed(self) -> None:
        if self._composed:
            self.live.changed()

    def _start_compute(self, generation: int) -> None:
        self._compute(self._form_state(), generation, dict(self._bottles))

    @work(thread=True, exclusive=True, group="standardize-compute", exit_on_error=False)
    def _compute(self, state: FormState, generation: int,
                 bottles: dict[int, BottleInfo | str]) -> None:
        try:
            bid = bottle_ref(state.fields.titrant)
        except Exception:  # noqa: BLE001 - the form names it
            bid = None
        known = bottles.get(bid) if bid is not None else None
        if bid is not None and known is None:
            try:
                from carboy.store import stock

                with self.app.open_store() as store:
                    known = BottleInfo.of(stock.get(store, bid, today=self.app.today))
            except Exception as exc:  # noqa: BLE001 - shown in place
                known = describe(exc)
        bottle = known if isinstance(known, BottleInfo) else None
        error = known if isinstance(known, str) else None
        self.post_message(Computed(compute(state, generation, bottle=bottle,
                                           bottle_error=error)))

    def on_computed(self, message: Computed) -> None:
        outcome = message.outcome
        reading = outcome.reading
        if reading.bottle_id is not None:
            if reading.bottle is not None:
                self._bottles[reading.bottle_id] = reading.bottle
            elif reading.bottle_error:
                self._bottles[reading.bottle_id] = reading.bottle_error
        if self.live.finished(outcome.generation):
            self._apply(outcome)

    @work(thread=True, exclusive=True, group="standardize-rule", exit_on_error=False)
    def _load_rule(self) -> None:
        try:
            from carboy.store import rules

            with self.app.open_store() as store:
                loaded = rules.load(store)
            rule = loaded.acceptance()
            origin = ("storeroom" if loaded.max_rsd_percent is not None
                      or loaded.min_replicates is not None else "default")
            from carboy.model.standardization import t_critical

            t_critical(2)  # loads scipy here, so the first result is not slow to come
        except Exception as exc:  # noqa: BLE001 - shown in place
            self.app.call_from_thread(self._rule_loaded, None, "", describe(exc))
            return
        self.app.call_from_thread(self._rule_loaded, rule, origin, "")

    def _rule_loaded(self, rule, origin: str, error: str) -> None:
        self.rule, self.rule_origin, self.rule_error = rule, origin, error
        self._inputs_changed()

    def _data_changed(self, _version: int) -> None:
        """Something was written (here or elsewhere): read the bottle and the rule again."""
        self._bottles.clear()
        self._load_rule()
        self._inputs_changed()

    # -- showing an outcome ------------------------------------------------------------
    def _apply(self, outcome: Outcome) -> None:
        self.outcome = outcome
        for name in FIELDS:
            self._show_field(name, outcome)
        self._show_lines(outcome)
        panel = self.query_one("#sz-results", VerticalScroll)
        text = self.query_one("#sz-result-text", Static)
        if outcome.ok:
            self.result, self.result_state, self.stale = outcome.value, outcome.state, False
            panel.remove_class("-stale")
            text.update(result_text(self.result, rule_origin=self.rule_origin))
        elif self.result is not None:
            self.stale = True
            panel.add_class("-stale")
            text.update(result_text(self.result, rule_origin=self.rule_origin, stale=True))
        else:
            text.update(Text(outcome.reading.errors.get("general") and f"✗ {outcome.reading.errors['general']}"
                             or NO_RESULT, style="dim"))
        self.query_one("#sz-cautions", Static).update(
            cautions_text(outcome.reading.titrant, outcome.reading.standard))
        self._set_status(self._status_text(outcome))

    def _show_field(self, name: str, outcome: Outcome) -> None:
        widget = self.query_one(f"#echo-{name}", Static)
        error = outcome.reading.errors.get(name)
        if name in outcome.reading.missing:
            widget.update(Text(f"○ {error}", style="dim"))
            widget.remove_class("-error")
            error = None
        elif error:
            widget.update(Text(f"✗ {error}"))
            widget.add_class("-error")
        else:
            widget.update(Text(outcome.reading.echoes.get(name, "")))
            widget.remove_class("-error")
        widget.display = bool(error or outcome.reading.echoes.get(name) or name in outcome.reading.missing)
        self.query_one(f"#sz-{name}", Input).set_class(bool(error), "-invalid")

    def _show_lines(self, outcome: Outcome) -> None:
        """Bad lines named under the replicates (and on their frame); the count on the frame."""
        area = self.query_one("#sz-replicates", TextArea)
        echo = self.query_one("#echo-replicates", Static)
        bad = outcome.reading.line_errors
        problem = outcome.reading.errors.get("replicates") or outcome.reading.errors.get("general")
        area.set_class(bool(bad), "-invalid")
        text, error = "", False
        if bad:
            which = ", ".join(str(e.line) for e in bad)
            area.border_subtitle = f"✗ line{'s' if len(bad) > 1 else ''} {which}"
            text, error = "\n".join(f"✗ {e}" for e in bad), True
        elif "replicates" in outcome.reading.missing:
            area.border_subtitle = ""
            text = f"○ {outcome.reading.errors['replicates']}"
        elif problem:
            area.border_subtitle = ""
            text, error = f"✗ {problem}", True
        else:
            said = outcome.reading.echoes.get("replicates", "")
            area.border_subtitle = said.split(";")[0]
            if ";" in said:  # what the frame cannot hold goes below it
                text = "○ " + said.split(";", 1)[1].strip()
        echo.update(Text(text, style="" if error else "dim"))
        echo.set_class(error, "-error")
        echo.display = bool(text)

    def _status_text(self, outcome: Outcome) -> str:
        if outcome.ok:
            r = outcome.value
            if not r.accepted:
                return f"{REJECTED_MARK}: " + "; ".join(short_reasons(r))
            head = f"{ACCEPTED_MARK} {fmt_molar(r.mean_molar)} M {r.titrant.key}, n {r.n}"
            if r.rsd_percent is not None:
                head += f", RSD {r.rsd_percent:.3f} %"
            if self._already_recorded(outcome):
                return (f"{head} · recorded on bottle {outcome.reading.bottle.id} as journal entry "
                        f"#{self.last_journal_id}")
            why = self.record_blocker()
            if why is None:
                return f"{head} · ctrl+s records it on bottle {outcome.reading.bottle.id}"
            return f"{head} · cannot record: {why}"
        bad = sorted((set(outcome.reading.errors) - outcome.reading.missing) - {"general"})
        if outcome.reading.line_errors:
            lines = [str(e.line) for e in outcome.reading.line_errors]
            bad.append(("replicate line " if len(lines) == 1 else "replicate lines ")
                       + ", ".join(lines))
        todo = sorted(outcome.reading.missing)
        parts = ([f"check {', '.join(bad)} (marked ✗)"] if bad else []) + (
            [f"fill in {', '.join(todo)}"] if todo else [])
        if "general" in outcome.reading.errors:
            parts.append(outcome.reading.errors["general"])
        if self.result is not None:
            return f"✗ {'; '.join(parts)}: the result shown is STALE"
        return f"○ no result yet: {'; '.join(parts)}"

    def _set_status(self, text: str) -> None:
        self.query_one("#sz-status", Static).update(text)

    # -- record ------------------------------------------------------------------------
    def _is_current(self) -> bool:
        return (self.outcome is not None and self.outcome.ok and self.live.settled
                and self.outcome.generation == self.live.generation
                and self.outcome.state == self._form_state())

    def record_blocker(self) -> str | None:
        """Why the result on screen cannot be recorded now, or None when it can."""
        if self._recording:
            return "recording already under way"
        if self.outcome is None or (not self.outcome.ok and self.result is None):
            return "no result yet: give the titrant, the standard and the titrations"
        if not self.outcome.ok:
            return "the inputs have errors (marked ✗): nothing is recorded from bad input"
        if not self._is_current():
            return "the result is being recomputed; try again in a moment"
        outcome, result = self.outcome, self.outcome.value
        if outcome.reading.bottle is None:
            return "give a bottle id as the titrant (e.g. #34) to record on a bottle"
        if not result.accepted:
            return "not accepted: " + "; ".join(short_reasons(result))
        if outcome.state.rule is None:
            return (f"the storeroom's rule could not be read ({self.rule_error})"
                    if self.rule_error else "the storeroom's rule is still being read")
        if not BottleStatus(outcome.reading.bottle.status).is_usable:
            return (f"bottle {outcome.reading.bottle.id} is "
                    f"{BottleStatus(outcome.reading.bottle.status).words}: only a bottle in "
                    "use takes a new strength")
        if self._already_recorded(outcome):
            return f"already recorded as journal entry #{self.last_journal_id}"
        return None

    def _already_recorded(self, outcome: Outcome) -> bool:
        return self.last_journal_id is not None and self.recorded_state == outcome.state

    def action_record(self) -> None:
        why = self.record_blocker()
        if why is not None:
            self.notify(f"Cannot record: {why}", severity="warning", timeout=6)
            self._set_status(f"✗ cannot record: {why}")
            return
        outcome = self.outcome
        result, bottle = outcome.value, outcome.reading.bottle
        message = "\n".join([
            f"Bottle {bottle.id} · {bottle.compound_key}, label {bottle.label_text}"
            + (f" · {bottle.location}" if bottle.location else ""),
            f"Strength: {bottle.current_text} → {fmt_molar(result.mean_molar)} M",
            f"By {method_of(result)}.",
            f"Accepted under the {rule_text(result.rule, self.rule_origin)}.",
            f"Recorded by {self.app.who}; the journal entry is permanent (a mistake is "
            "corrected by a new standardization).",
        ])

        def done(yes: bool | None) -> None:
            if not yes:
                self._set_status("recording cancelled: nothing was written")
                return
            if self.outcome is not outcome or not self._is_current():
                self._set_status("✗ not recorded: the inputs changed while asking")
                return
            self._recording = True
            self._set_status(f"recording on bottle {bottle.id}…")
            self._record(outcome)

        self.app.push_screen(ConfirmScreen("Record this standardization?", message,
                                           yes_label="Record"), done)

    def snapshot(self, outcome: Outcome) -> dict:
        """What the journal keeps: the inputs as typed and the result as computed."""
        fields = outcome.state.fields
        return {
            "inputs": {"titrant": fields.titrant, "standard": fields.standard,
                       "assay": fields.assay, "blank": fields.blank,
                       "replicates": fields.replicates, "rule_origin": self.rule_origin},
            "standardization": outcome.value.to_dict(),
            "recorded_from": "carboy standardize screen",
        }

    @work(thread=True, exclusive=True, group="standardize-record", exit_on_error=False)
    def _record(self, outcome: Outcome) -> None:
        from carboy.store import stock

        result = outcome.value
        try:
            with self.app.open_store() as store:
                entry = stock.record_standardization(
                    store, outcome.reading.bottle.id, result.mean_molar, method=method_of(result),
                    snapshot=self.snapshot(outcome), who=self.app.who)
        except Exception as exc:  # noqa: BLE001 - shown in place
            self.app.call_from_thread(self._record_failed, describe(exc))
            return
        self.app.call_from_thread(self._recorded, outcome, entry)

    def _record_failed(self, message: str) -> None:
        self._recording = False
        self._set_status(f"✗ not recorded: {message}")
        self.notify(f"Not recorded: {message}", severity="error")

    def _recorded(self, outcome: Outcome, entry: int) -> None:
        self._recording = False
        self.last_journal_id = entry
        self.recorded_state = outcome.state
        mean = fmt_molar(outcome.value.mean_molar)
        self.notify(f"Recorded: bottle {outcome.reading.bottle.id} is now {mean} M "
                    f"(journal entry #{entry}).", timeout=6)
        self._set_status(f"✓ recorded: bottle {outcome.reading.bottle.id} is now {mean} M "
                         f"(journal entry #{entry})")
        self.app.refresh_data()
