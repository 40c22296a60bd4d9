"""The Neutralize screen: plan how much reagent a waste needs, then record what was done.

Left, the form: the sample (a waste container, a stock bottle, or components typed in
with a volume), the reagent (a stock bottle that can serve, or a formula), the target
pH and acceptance window, the temperature and the activity model.  Every field echoes
what carboy understood, or says in place why it could not read it; the typed text is
never lost.  Right, the plan in three views (figures, staged additions, the pH curve).
Below, the cautions, always on screen, with the standing disposal note.

Recompute
---------
Each change bumps a generation counter.  A change after a quiet spell starts the
planner at once (so one keystroke shows its plan quickly); changes in quick
succession are gathered and planned once, :data:`DEBOUNCE_S` after the last.  At most
one planner thread runs at a time: a change made while it runs is planned when it
finishes.  A result is shown only if its generation is still the current one, so an
older plan can never overwrite a newer one.  When the inputs have an error the last
good plan stays on screen, greyed and marked STALE.
"""

from __future__ import annotations

import time
from collections.abc import Mapping
from dataclasses import dataclass, field
from datetime import date

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.message import Message
from textual.screen import ModalScreen, Screen
from textual.widgets import (
    Button,
    Checkbox,
    Footer,
    Input,
    Label,
    Select,
    Static,
    TabbedContent,
    TabPane,
)

from carboy.errors import CarboyError, InvalidInput, TemperatureOutOfRange, UnknownCompound
from carboy.tui.app.widgets.mode_bar import ModeBar
from carboy.tui.app.widgets.ph_curve import PHCurvePanel, curve_data_from_plan
from carboy.tui.app.widgets.plan_view import CautionsPanel, PlanSummary, StagesTable, dose_text

DEBOUNCE_S = 0.15
"""Quiet time after the last change before a burst of changes is planned."""

DEFAULTS = {"target": "7.0", "window_low": "6.0", "window_high": "9.0", "temperature": "25 °C"}

REAGENT_BASES = ("NaOH", "KOH", "Na2CO3", "NaHCO3", "Ca(OH)2", "Mg(OH)2")
"""Stock compounds offered to neutralize acid waste."""
REAGENT_ACIDS = ("HCl", "H2SO4", "C6H8O7", "CH3COOH")
"""Stock compounds offered to neutralize alkaline waste (strong, then gentle: citric, acetic)."""
SAMPLE_COMPOUNDS = ("HCl", "H2SO4", "HNO3", "H3PO4", "HF", "HCOOH", "CH3COOH", "C6H8O7",
                    "H2C2O4", "NaOH", "KOH", "NH3", "Na2CO3", "NaHCO3")
"""Stock solutions offered as a sample (an expired or surplus bottle to neutralize)."""
BOTTLES_PER_COMPOUND = 50
"""The lists are built from one short search per compound, never the whole stock."""

RECORDABLE = ("collecting", "planned")
"""Container statuses from which a neutralization can be recorded."""

TYPED = "typed"
FIELDS = ("components", "volume", "temperature", "reagent", "target", "window")


# -- what the form holds, and what it means ---------------------------------------------

@dataclass(frozen=True)
class ContainerInfo:
    """A waste container as loaded for planning."""

    label: str
    status: str
    volume_l: float
    capacity_l: float
    location: str
    moles: Mapping[str, float]
    hazards: frozenset[str]
    notes: str = ""

    def summary(self) -> str:
        comp = ", ".join(f"{k} {_conc(n / self.volume_l)}" for k, n in self.moles.items()
                         if self.volume_l > 0)
        head = (f"{self.label} · {self.status} · {self.volume_l:.3g} L of "
                f"{self.capacity_l:.3g} L · {self.location}")
        if self.status not in RECORDABLE:
            head += f"\nstatus {self.status}: no neutralization can be recorded for it"
        return head + "\n" + (comp or "(no additions recorded)")


@dataclass(frozen=True)
class BottleChoice:
    """A stock bottle offered as reagent or sample, with the text it stands for."""

    bottle_id: int
    compound_key: str
    text: str
    title: str
    kind: str  # "base", "acid" or "sample"
    amount_left: float
    amount_unit: str


@dataclass(frozen=True)
class FormState:
    """The form's text as typed (nothing parsed yet)."""

    components: str = ""
    volume: str = ""
    temperature: str = DEFAULTS["temperature"]
    reagent: str = ""
    target: str = DEFAULTS["target"]
    window_low: str = DEFAULTS["window_low"]
    window_high: str = DEFAULTS["window_high"]
    ideal: bool = False
    container: ContainerInfo | None = None
    sample_note: str = ""


@dataclass(frozen=True)
class Outcome:
    """What one planner run found: a plan, or per-field errors; echoes either way."""

    generation: int
    state: FormState
    plan: object | None
    errors: dict[str, str] = field(default_factory=dict)
    echoes: dict[str, str] = field(default_factory=dict)
    missing: frozenset[str] = frozenset()
    """Fields still empty: their reason is a hint, not an error."""
    direction: str | None = None
    elapsed_ms: float = 0.0

    @property
    def ok(self) -> bool:
        return self.plan is not None and not self.errors


def _conc(molar: float) -> str:
    if molar < 0.1:
        return f"{molar * 1000:.3g} mM"
    return f"{molar:.3g} M"


def _number(text: str, what: str) -> float:
    raw = (text or "").strip().replace(",", ".")
    if not raw:
        raise InvalidInput(what, text, "is empty: give a number, e.g. 7")
    try:
        return float(raw)
    except ValueError:
        raise InvalidInput(what, text, "expected a number, e.g. 7 or 6,5") from None


def _ph(text: str, what: str) -> float:
    value = _number(text, what)
    if not 0.0 <= value <= 14.0:
        raise InvalidInput(what, text, "expected a pH between 0 and 14")
    return value


def split_components(text: str) -> list[str]:
    """``'H2SO4=0.05 M, NaH2PO4=10mM'`` -> ``['H2SO4=0.05 M', 'NaH2PO4=10mM']``.

    Components are separated by commas, semicolons or spaces; a unit typed after a
    space stays with its number, and a name of several words with its ``=``.
    """
    words = text.replace(";", " ").replace(",", " , ").split()
    items: list[str] = []
    pending = ""
    for word in words:
        if word == ",":
            # a decimal comma sits between digits: "0,05" was split into "0 , 05"
            if items and items[-1][-1:].isdigit():
                items[-1] += ","
            continue
        if items and items[-1].endswith(","):
            items[-1] += word
            continue
        if "=" in word:
            items.append((pending + " " + word).strip())
            pending = ""
        elif items and (items[-1][-1:].isdigit() or items[-1].endswith(".")):
            items[-1] += " " + word
        else:
            pending = (pending + " " + word).strip()
    if pending:
        items.append(pending)
    return items


def parse_sample(state: FormState, temperature_c: float, catalog):
    """(mixture, hazard tags, echo) of the sample; raises CarboyError naming the field."""
    from carboy.model.mixture import Mixture
    from carboy.model.quantities import volume_l
    from carboy.store.waste import parse_component

    if state.container is not None:
        c = state.container
        mixture = Mixture.from_moles(dict(c.moles), c.volume_l, temperature_c=temperature_c)
        return mixture, c.hazards, f"container {c.label}: {c.volume_l:.3g} L"
    try:
        volume = volume_l(state.volume, what="volume") if state.volume.strip() else None
    except CarboyError as err:
        raise _FieldError("volume", err) from None
    if volume is None:
        raise _FieldError("volume", "needed: the sample's volume, e.g. 250 mL or 1,5 L",
                          missing=True)
    if volume <= 0:
        raise _FieldError("volume", f"volume {state.volume!r}: must be greater than zero")
    items = split_components(state.components)
    if not items:
        raise _FieldError("components", "needed: the components, e.g. H2SO4=0.05M "
                          "NaH2PO4=10mM, or pick a container", missing=True)
    parsed, hazards, echo = [], set(), []
    for item in items:
        try:
            comp = parse_component(item, catalog)
        except CarboyError as err:
            raise _FieldError("components", err) from None
        if comp.mass_g is not None:
            conc = comp.mass_g / comp.compound.molar_mass_g_mol / volume
        else:
            conc = comp.conc_molar
        parsed.append((comp.compound, conc))
        hazards |= comp.compound.hazards
        echo.append(f"{comp.compound.key} {_conc(conc)}")
    mixture = Mixture.from_compounds(parsed, volume_l=volume, temperature_c=temperature_c)
    return mixture, frozenset(hazards), " · ".join(echo) + f" in {volume:g} L"


class _FieldError(Exception):
    def __init__(self, field_name: str, reason: object, *, missing: bool = False):
        super().__init__(str(reason))
        self.field_name = field_name
        self.missing = missing


_PLANNER_FIELDS = {"reagent": "reagent", "target pH": "target", "window": "window",
                   "window low pH": "window", "window high pH": "window",
                   "sample volume": "volume", "sample": "components", "temperature": "temperature"}


CURVE_POINTS = 200
"""Points of the pH curve on screen: a plot at most ~100 columns wide draws 2 braille
dots per column, so 200 points are as smooth as the screen can show (and replan faster)."""


def compute(state: FormState, generation: int = 0, catalog=None) -> Outcome:
    """Parse the form and plan; never raises (errors come back per field)."""
    from carboy.model.catalog import default_catalog
    from carboy.model.planner import plan_neutralization
    from carboy.model.quantities import temperature_c
    from carboy.model.reagents import parse_reagent

    started = time.perf_counter()
    catalog = catalog or default_catalog()
    errors: dict[str, str] = {}
    echoes: dict[str, str] = {}
    missing: set[str] = set()
    try:
        t_c = temperature_c(state.temperature or DEFAULTS["temperature"])
        echoes["temperature"] = f"understood: {t_c:g} °C"
    except CarboyError as err:
        errors["temperature"] = str(err)
        t_c = 25.0
    mixture = hazards = None
    try:
        mixture, hazards, echo = parse_sample(state, t_c, catalog)
        if state.container is None:
            echoes["components"] = f"understood: {echo}"
            echoes["volume"] = f"understood: {mixture.volume_l:g} L"
    except _FieldError as err:
        errors[err.field_name] = str(err)
        if err.missing:
            missing.add(err.field_name)
        if err.field_name == "volume" and not state.components.strip():
            errors["components"] = ("needed: the components, e.g. H2SO4=0.05M NaH2PO4=10mM, "
                                    "or pick a container")
            missing.add("components")
    except CarboyError as err:
        errors["components"] = str(err)
    reagent = None
    if not state.reagent.strip():
        errors["reagent"] = "needed: pick a stock bottle or type e.g. NaOH=1M or NaHCO3"
        missing.add("reagent")
    else:
        try:
            reagent = parse_reagent(state.reagent, catalog)
            echoes["reagent"] = f"understood: {reagent.describe()}"
        except CarboyError as err:
            errors["reagent"] = str(err)
    target = None
    try:
        target = _ph(state.target, "target pH")
        echoes["target"] = f"understood: pH {target:g}"
    except CarboyError as err:
        errors["target"] = str(err)
    window = None
    try:
        lo, hi = _ph(state.window_low, "window low pH"), _ph(state.window_high, "window high pH")
        if not lo < hi:
            raise InvalidInput("window", f"{state.window_low}–{state.window_high}",
                               "the low edge must be below the high edge")
        window = (lo, hi)
        echoes["window"] = f"window pH {lo:g}–{hi:g}; local rules set the real one"
    except CarboyError as err:
        errors["window"] = str(err)
    direction = None
    if mixture is not None and target is not None:
        try:
            from carboy.model.speciation import speciate

            ph0 = speciate(mixture, activity="ideal" if state.ideal else "davies",
                           catalog=catalog).pH
            direction = "base" if ph0 < target else "acid"
        except CarboyError:
            direction = None
    plan = None
    if not errors:
        try:
            plan = plan_neutralization(
                mixture, reagent, target_pH=target, window=window,
                activity="ideal" if state.ideal else "davies", catalog=catalog,
                hazards=hazards, curve_points=CURVE_POINTS)
            direction = plan.direction
        except (InvalidInput, UnknownCompound) as err:
            name = _PLANNER_FIELDS.get(getattr(err, "what", ""), "reagent")
            errors[name] = str(err)
        except TemperatureOutOfRange as err:
            errors["temperature"] = str(err)
        except CarboyError as err:
            errors["plan"] = f"the planner could not finish: {err}"
        except Exception as err:  # noqa: BLE001 - shown in place, never as a traceback
            errors["plan"] = f"the planner failed ({type(err).__name__}: {err})"
    return Outcome(generation, state, plan, errors, echoes, frozenset(missing), direction,
                   (time.perf_counter() - started) * 1000.0)


# -- reading the store (inside worker threads) ------------------------------------------

def bottle_text(bottle) -> str | None:
    """The reagent or component text a stock bottle stands for (``NaOH=1M``…)."""
    strength = (bottle.current_strength if bottle.current_strength is not None
                else bottle.label_strength)
    value = f"{strength:.6g}"
    if bottle.strength_unit == "M":
        return f"{bottle.compound_key}={value}M"
    if bottle.amount_unit == "g":
        return f"{bottle.compound_key}@{value}%"
    return f"{bottle.compound_key}={value}%"


def load_choices(store, today: date | None) -> tuple[list[BottleChoice], list[tuple[str, str]]]:
    """Bottles that can serve (reagents, samples) and every container as (label, status)."""
    from carboy.store import stock, waste

    seen: set[tuple[int, str]] = set()
    choices: list[BottleChoice] = []
    wanted = [(k, "base") for k in REAGENT_BASES] + [(k, "acid") for k in REAGENT_ACIDS]
    wanted += [(k, "sample") for k in SAMPLE_COMPOUNDS]
    for key, kind in wanted:
        found = stock.page(store, key, status="in-use", limit=BOTTLES_PER_COMPOUND, today=today)
        for b in found.bottles:
            if b.compound_key != key or (kind == "sample" and b.amount_unit != "L"):
                continue
            if (b.id, kind) in seen:
                continue
            seen.add((b.id, kind))
            text = bottle_text(b)
            flag = "" if b.strength_status == "current" else f" [{b.strength_status}]"
            title = (f"#{b.id} {b.compound_key} {b.strength_text}{flag} · "
                     f"{b.amount_left:g} {b.amount_unit}")
            choices.append(BottleChoice(b.id, key, text, title, kind, b.amount_left,
                                        b.amount_unit))
    containers = [(c.label, c.status) for c in waste.containers(store)]
    return choices, containers


def load_container_info(store, label: str) -> tuple[ContainerInfo, object]:
    """The container and the catalog its additions were logged against."""
    from carboy.store import waste
    from carboy.store.compounds import catalog_for

    catalog = catalog_for(store)
    shown = waste.show(store, label)
    hazards: set[str] = set()
    for add in shown["additions"]:
        if add["superseded"]:
            continue
        if add["compound_key"] in catalog:
            hazards |= catalog.compound(add["compound_key"]).hazards
    info = ContainerInfo(label=shown["label"], status=shown["status"],
                         volume_l=float(shown["volume_l"]),
                         capacity_l=float(shown["capacity_l"]), location=shown["location"],
                         moles=dict(shown["composition"]), hazards=frozenset(hazards),
                         notes=shown.get("notes", ""))
    return info, catalog


# -- messages ------------------------------------------------------------------------------

class PlanComputed(Message):
    def __init__(self, outcome: Outcome) -> None:
        super().__init__()
        self.outcome = outcome


class ChoicesLoaded(Message):
    def __init__(self, choices, containers, catalog, error: str = "") -> None:
        super().__init__()
        self.choices, self.containers, self.catalog, self.error = choices, containers, catalog, error


class ContainerLoaded(Message):
    def __init__(self, label: str, info: ContainerInfo | None, catalog, error: str = "") -> None:
        super().__init__()
        self.label, self.info, self.catalog, self.error = label, info, catalog, error


class Recorded(Message):
    def __init__(self, label: str, entry_id: int | None, measured_ph, error: str = "") -> None:
        super().__init__()
        self.label, self.entry_id, self.measured_ph, self.error = label, entry_id, measured_ph, error


# -- the record dialog -------------------------------------------------------------------

@dataclass(frozen=True)
class RecordRequest:
    measured_ph: float | None
    who: str


NOT_MEASURED = ("", "-", "none", "not measured", "n/a", "na")


def parse_measured_ph(text: str) -> float | None:
    """``''`` or ``'not measured'`` -> None; ``'7,2'`` -> 7.2; outside 0–14 raises."""
    if (text or "").strip().lower() in NOT_MEASURED:
        return None
    return _ph(text, "measured pH")


class RecordDialog(ModalScreen[RecordRequest | None]):
    """Ask for the pH measured and who did it, then ask once more before writing."""

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
    RecordDialog #confirm-text { display: none; height: auto; margin-top: 1; text-style: bold; }
    RecordDialog.-confirming #confirm-text { display: block; }
    RecordDialog #rd-buttons { height: auto; margin-top: 1; align-horizontal: right; }
    RecordDialog #rd-buttons > Button { margin-left: 2; }
    """

    def __init__(self, container: ContainerInfo, plan_line: str, who: str,
                 drain_plan: bool) -> None:
        super().__init__()
        self.container = container
        self.plan_line = plan_line
        self.default_who = who
        self.drain_plan = drain_plan
        self.request: RecordRequest | None = None

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
            yield Static("", id="confirm-text", markup=False)
            with Horizontal(id="rd-buttons"):
                yield Button("Record…", id="rd-ok", compact=True)
                yield Button("Cancel", id="rd-cancel", compact=True)

    def on_mount(self) -> None:
        self.query_one("#measured", Input).focus()

    def _next_status(self, ph: float | None) -> str:
        return "planned" if ph is None else "neutralized"

    def _echo(self, text: str) -> str:
        try:
            ph = parse_measured_ph(text)
        except CarboyError as err:
            return f"✗ {err}"
        now = self.container.status
        if ph is None:
            return f"not measured: the plan is recorded, {now} → planned"
        return f"understood: pH {ph:g}; {self.container.label} {now} → neutralized"

    @on(Input.Changed, "#measured")
    def _measured_changed(self, event: Input.Changed) -> None:
        echo = self.query_one("#measured-echo", Static)
        text = self._echo(event.value)
        echo.update(text)
        echo.set_class(text.startswith("✗"), "-error")
        self._back_to_edit()

    @on(Input.Changed, "#who")
    def _who_changed(self) -> None:
        self._back_to_edit()

    def _back_to_edit(self) -> None:
        if self.has_class("-confirming"):
            self.remove_class("-confirming")
            self.query_one("#rd-ok", Button).label = "Record…"
            self.query_one("#rd-cancel", Button).label = "Cancel"
            self.request = None

    @on(Input.Submitted)
    def _submitted(self) -> None:
        self._press_ok()

    @on(Button.Pressed, "#rd-ok")
    def _press_ok(self) -> None:
        if self.request is not None:
            self.dismiss(self.request)
            return
        try:
            ph = parse_measured_ph(self.query_one("#measured", Input).value)
        except CarboyError as err:
            echo = self.query_one("#measured-echo", Static)
            echo.update(f"✗ {err}")
            echo.add_class("-error")
            self.query_one("#measured", Input).focus()
            return
        who = self.query_one("#who", Input).value.strip()
        if not who:
            echo = self.query_one("#measured-echo", Static)
            echo.update("✗ who: say who did the work")
            echo.add_class("-error")
            self.query_one("#who", Input).focus()
            return
        self.request = RecordRequest(ph, who)
        measured = "pH not measured" if ph is None else f"measured pH {ph:g}"
        self.query_one("#confirm-text", Static).update(
            f"Append to the journal: {self.container.label}, {measured}, by {who}. "
            f"{self.container.label} moves {self.container.status} → {self._next_status(ph)}. "
            "Journal entries are permanent (a mistake is corrected by a new entry). "
            "Confirm?")
        self.add_class("-confirming")
        self.query_one("#rd-ok", Button).label = "Confirm"
        self.query_one("#rd-cancel", Button).label = "Back"
        self.query_one("#rd-ok", Button).focus()

    @on(Button.Pressed, "#rd-cancel")
    def _press_cancel(self) -> None:
        if self.request is not None:
            self._back_to_edit()
            self.query_one("#measured", Input).focus()
        else:
            self.dismiss(None)

    def action_cancel(self) -> None:
        self.dismiss(None)


# -- the screen ----------------------------------------------------------------------------

class NeutralizeScreen(Screen):
    """Plan a neutralization and record it against a waste container."""

    DEFAULT_CSS = """
    NeutralizeScreen {
        layout: vertical;
    }

    #nz-main {
        height: 1fr;
    }

    #nz-form {
        width: 38;
        height: 1fr;
        border-right: vkey $foreground 30%;
        scrollbar-size-vertical: 1;
    }

    #nz-form > .nz-row {
        height: 1;
        margin-top: 0;
    }

    #nz-form > .nz-row > Label {
        width: 10;
        text-style: bold;
    }

    #nz-form > .nz-row > Input,
    #nz-form > .nz-row > Select {
        width: 1fr;
    }

    #nz-form > .nz-row > .nz-dash {
        width: 3;
        content-align: center middle;
    }

    #nz-form > .nz-row > Checkbox {
        border: none;
        padding: 0;
        height: 1;
        width: 1fr;
        background: transparent;
    }

    #nz-form > .nz-echo {
        height: auto;
        padding-left: 2;
        color: $text-muted;
    }

    #nz-form > .nz-echo.-error {
        color: $text-error;
        text-style: bold;
    }

    #nz-form Input.-invalid {
        text-style: underline;
    }

    #nz-views {
        width: 1fr;
        height: 1fr;
    }

    #nz-views TabPane {
        padding: 0;
    }

    #nz-status {
        height: 1;
        padding: 0 1;
        background: $boost;
        text-style: bold;
    }
    """

    BINDINGS = [
        Binding("ctrl+r", "record", "Record", id="neutralize.record"),
        Binding("ctrl+t", "next_view", "Next view", id="neutralize.next_view",
                tooltip="Cycle the plan views: figures, stages, curve"),
        Binding("ctrl+n", "typed_sample", "Type sample", id="neutralize.typed_sample",
                tooltip="Leave the container and type the sample's components"),
        Binding("ctrl+g", "read_cautions", "Cautions", id="neutralize.read_cautions",
                tooltip="Move to the cautions to scroll through them"),
    ]

    def __init__(self, name: str | None = None, id: str | None = None,  # noqa: A002
                 classes: str | None = None) -> None:
        super().__init__(name=name, id=id, classes=classes)
        self.plan = None
        """The last good plan (None before the first)."""
        self.plan_state: FormState | None = None
        """The inputs that plan was made from."""
        self.outcome: Outcome | None = None
        """The latest outcome shown (good or with errors)."""
        self.stale = False
        self.container: ContainerInfo | None = None
        self.sample_note = ""
        self.last_journal_id: int | None = None
        self._recorded_label: str | None = None
        self.choices: list[BottleChoice] = []
        self.containers: list[tuple[str, str]] = []
        self._catalog = None
        self._generation = 0
        self._planning = False
        self._dirty = False
        self._debounce = None
        self._last_change = 0.0
        self._pending_label: str | None = None
        self._reagent_options: list | None = None
        self._options: dict[str, set] = {}
        self._composed = False

    # -- layout --------------------------------------------------------------------------
    def compose(self) -> ComposeResult:
        yield ModeBar("neutralize")
        with Horizontal(id="nz-main"):
            with VerticalScroll(id="nz-form"):
                with Horizontal(classes="nz-row"):
                    yield Label("Sample")
                    yield Select([(_typed_title(), TYPED)], value=TYPED, allow_blank=False,
                                 compact=True, id="sample-source")
                yield Static("typed in below", id="sample-info", classes="nz-echo",
                             markup=False)
                with Horizontal(classes="nz-row", id="row-components"):
                    yield Label("Contents")
                    yield Input(placeholder="H2SO4=0.05M NaH2PO4=10mM", id="components",
                                compact=True)
                yield Static("", id="echo-components", classes="nz-echo", markup=False)
                with Horizontal(classes="nz-row", id="row-volume"):
                    yield Label("Volume")
                    yield Input(placeholder="250 mL", id="volume", compact=True)
                yield Static("", id="echo-volume", classes="nz-echo", markup=False)
                with Horizontal(classes="nz-row"):
                    yield Label("Stock")
                    yield Select([], prompt="reagent bottle…", compact=True,
                                 id="reagent-bottle")
                with Horizontal(classes="nz-row"):
                    yield Label("Reagent")
                    yield Input(placeholder="NaOH=1M, NaOH=50%, NaHCO3", id="reagent",
                                compact=True)
                yield Static("", id="echo-reagent", classes="nz-echo", markup=False)
                with Horizontal(classes="nz-row"):
                    yield Label("Target pH")
                    yield Input(DEFAULTS["target"], id="target", compact=True)
                yield Static("", id="echo-target", classes="nz-echo", markup=False)
                with Horizontal(classes="nz-row"):
                    yield Label("Window")
                    yield Input(DEFAULTS["window_low"], id="window_low", compact=True)
                    yield Static("–", classes="nz-dash")
                    yield Input(DEFAULTS["window_high"], id="window_high", compact=True)
                yield Static("local rules set the real window", id="echo-window",
                             classes="nz-echo", markup=False)
                with Horizontal(classes="nz-row"):
                    yield Label("Temp.")
                    yield Input(DEFAULTS["temperature"], id="temperature", compact=True)
                yield Static("", id="echo-temperature", classes="nz-echo", markup=False)
                with Horizontal(classes="nz-row"):
                    yield Label("Activity")
                    yield Checkbox("ideal (no Davies)", id="ideal")
                yield Static("", id="echo-plan", classes="nz-echo", markup=False)
            with TabbedContent(id="nz-views", initial="view-plan"):
                with TabPane("Plan", id="view-plan"):
                    yield PlanSummary(id="plan-summary")
                with TabPane("Stages", id="view-stages"):
                    yield StagesTable(id="stages")
                with TabPane("Curve", id="view-curve"):
                    yield PHCurvePanel(id="curve-panel")
        yield Static("", id="nz-status", markup=False)
        yield CautionsPanel(id="cautions")
        yield Footer()

    def on_mount(self) -> None:
        # Children may still be mounting when a mode is switched to very early.
        self.call_after_refresh(self._start)

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
        try:
            from carboy.store.compounds import catalog_for

            store = self._open_store()
            try:
                catalog = catalog_for(store)
                choices, containers = load_choices(store, getattr(self.app, "today", None))
            finally:
                store.close()
        except Exception as err:  # noqa: BLE001 - reported in place
            self.post_message(ChoicesLoaded([], [], None, f"stock list unavailable: {err}"))
            return
        self.post_message(ChoicesLoaded(choices, containers, catalog))

    def _start_container_load(self, label: str) -> None:
        self._pending_label = label
        self.query_one("#sample-info", Static).update(f"loading {label}…")
        self._load_container(label)

    @work(thread=True, exclusive=True, group="neutralize-container", exit_on_error=False)
    def _load_container(self, label: str) -> None:
        try:
            store = self._open_store()
            try:
                info, catalog = load_container_info(store, label)
            finally:
                store.close()
        except Exception as err:  # noqa: BLE001 - reported in place
            self.post_message(ContainerLoaded(label, None, None, str(err)))
            return
        self.post_message(ContainerLoaded(label, info, catalog))

    @work(thread=True, exclusive=True, group="neutralize-plan", exit_on_error=False)
    def _plan(self, state: FormState, generation: int, catalog) -> None:
        self.post_message(PlanComputed(compute(state, generation, catalog)))

    @work(thread=True, exclusive=True, group="neutralize-record", exit_on_error=False)
    def _record(self, label: str, snapshot: dict, request: RecordRequest) -> None:
        from carboy.store import waste

        try:
            store = self._open_store()
            try:
                entry = waste.record_neutralization(
                    store, label, snapshot, request.measured_ph, who=request.who,
                    today=getattr(self.app, "today", None))
            finally:
                store.close()
        except Exception as err:  # noqa: BLE001 - reported in place
            self.post_message(Recorded(label, None, request.measured_ph, str(err)))
            return
        self.post_message(Recorded(label, entry, request.measured_ph))

    # -- message handlers ------------------------------------------------------------------
    def on_choices_loaded(self, message: ChoicesLoaded) -> None:
        if message.catalog is not None:
            self._catalog = message.catalog
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
        self.container = message.info
        self.sample_note = ""
        info.update(self.container.summary())
        self._set_sample_inputs_enabled(False)
        self._quietly_select("#sample-source", f"c:{self.container.label}")
        focused = self.focused
        if focused is None or not focused.is_attached or isinstance(focused, Input) and focused.disabled:
            self.query_one("#reagent", Input).focus()
        self.refresh_bindings()
        self._inputs_changed()

    def on_plan_computed(self, message: PlanComputed) -> None:
        self._planning = False
        outcome = message.outcome
        if outcome.generation == self._generation:
            self._apply(outcome)
        if self._dirty:
            self._dirty = False
            self._start_plan()
        self.refresh_bindings()

    def on_recorded(self, message: Recorded) -> None:
        if message.entry_id is None:
            self._set_status(f"✗ not recorded: {message.error}")
            self.notify(f"Not recorded: {message.error}", severity="error")
            return
        self.last_journal_id = message.entry_id
        self._recorded_label = message.label
        done = ("plan recorded (pH not measured)" if message.measured_ph is None
                else f"measured pH {message.measured_ph:g}")
        self._set_status(f"✓ journal entry #{message.entry_id}: {message.label}, {done}")
        self.notify(f"Recorded journal entry #{message.entry_id} for {message.label}")
        refresh = getattr(self.app, "refresh_data", None)
        if callable(refresh):
            refresh()
        self._start_container_load(message.label)
        self._load_choices()

    # -- form events -----------------------------------------------------------------------
    @on(Input.Changed)
    def _input_changed(self, event: Input.Changed) -> None:
        if event.input.id in ("components", "volume", "reagent", "target", "window_low",
                              "window_high", "temperature"):
            self._inputs_changed()

    @on(Checkbox.Changed, "#ideal")
    def _ideal_changed(self) -> None:
        self._inputs_changed()

    @on(Select.Changed, "#sample-source")
    def _sample_source_changed(self, event: Select.Changed) -> None:
        # Only the user's own choice counts (a Select also reports values set in code).
        if event.value is Select.NULL or not self._chosen_by_user(event.select):
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
            if choice is not None and self.sample_note != _bottle_note(choice):
                self._use_bottle_as_sample(choice)

    @on(Select.Changed, "#reagent-bottle")
    def _reagent_bottle_changed(self, event: Select.Changed) -> None:
        if event.value is Select.NULL or not self._chosen_by_user(event.select):
            return
        choice = next((c for c in self.choices if c.kind != "sample"
                       and f"r:{c.bottle_id}" == event.value), None)
        reagent = self.query_one("#reagent", Input)
        if choice is not None and reagent.value != choice.text:
            reagent.value = choice.text

    def _chosen_by_user(self, select: Select) -> bool:
        focused = self.focused
        return focused is not None and select in focused.ancestors_with_self

    # -- actions ---------------------------------------------------------------------------
    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        if action == "record":
            if self.container is None or self.plan is None:
                return False
            if self.container.status not in RECORDABLE:
                return False
            if not self._plan_is_current():
                return None
            return True
        if action == "typed_sample":
            return self.container is not None
        return True

    def _plan_is_current(self) -> bool:
        return (not self.stale and not self._planning and self.plan_state is not None
                and self.plan_state == self._form_state())

    def action_record(self) -> None:
        if self.check_action("record", ()) is not True:
            return
        plan, container = self.plan, self.container
        plan_line = (f"{plan.reagent.describe()}: to pH {plan.to_target.target_pH:g} "
                     f"{dose_text(plan, plan.to_target)}")
        who = str(getattr(self.app, "who", "") or "")

        def done(request: RecordRequest | None) -> None:
            if request is None:
                self._set_status("recording cancelled: nothing was written")
                return
            self._set_status(f"recording {container.label}…")
            self._record(container.label, self.snapshot(), request)

        self.app.push_screen(RecordDialog(container, plan_line, who, plan.drain_plan), done)

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
        self._quietly_select("#sample-source", TYPED)
        self.query_one("#components", Input).focus()
        self.refresh_bindings()
        self._inputs_changed()

    def action_read_cautions(self) -> None:
        self.query_one("#cautions-scroll").focus()

    # -- recompute -------------------------------------------------------------------------
    def _form_state(self) -> FormState:
        def text(wid: str) -> str:
            return self.query_one(f"#{wid}", Input).value

        return FormState(
            components=text("components"), volume=text("volume"),
            temperature=text("temperature"), reagent=text("reagent"), target=text("target"),
            window_low=text("window_low"), window_high=text("window_high"),
            ideal=self.query_one("#ideal", Checkbox).value, container=self.container,
            sample_note=self.sample_note)

    def _inputs_changed(self) -> None:
        if not self._composed:
            return
        self._generation += 1
        now = time.monotonic()
        quiet = now - self._last_change >= DEBOUNCE_S
        self._last_change = now
        if self._debounce is not None:
            self._debounce.stop()
            self._debounce = None
        if quiet and not self._planning:
            self._start_plan()
        else:
            self._debounce = self.set_timer(DEBOUNCE_S, self._start_plan)
        self.refresh_bindings()

    def _start_plan(self) -> None:
        self._debounce = None
        if self._planning:
            self._dirty = True
            return
        self._planning = True
        self._set_status("… planning", keep_result=True)
        self._plan(self._form_state(), self._generation, self._catalog)

    def _apply(self, outcome: Outcome) -> None:
        self.outcome = outcome
        for name in FIELDS:
            reason = outcome.errors.get(name)
            if name in outcome.missing:
                self._show_field(name, None, f"○ {reason}")
            else:
                self._show_field(name, reason, outcome.echoes.get(name, ""))
        general = outcome.errors.get("plan")
        plan_echo = self.query_one("#echo-plan", Static)
        plan_echo.update(f"✗ {general}" if general else "")
        plan_echo.set_class(bool(general), "-error")
        plan_echo.display = bool(general)
        if outcome.direction:
            self._fill_reagent_select(outcome.direction)
        if outcome.ok:
            self.plan = outcome.plan
            self.plan_state = outcome.state
            self.stale = False
            self._show_plan()
            what = outcome.state.container.label if outcome.state.container else "typed sample"
            self._set_status(f"✓ plan up to date: {what}, {self.plan.reagent.key} "
                             f"({outcome.elapsed_ms:.0f} ms){self._record_note()}")
        else:
            self.stale = self.plan is not None
            self._mark_stale()
            bad = sorted(set(outcome.errors) - outcome.missing)
            todo = sorted(outcome.missing)
            parts = ([f"check {', '.join(bad)} (marked ✗)"] if bad else []) + (
                [f"fill in {', '.join(todo)}"] if todo else [])
            if self.plan is not None:
                self._set_status(f"✗ {'; '.join(parts)}: the plan shown is STALE")
            else:
                self._set_status(f"○ no plan yet: {'; '.join(parts)}")

    def _show_plan(self) -> None:
        plan = self.plan
        summary = self.query_one(PlanSummary)
        summary.show_plan(plan)
        summary.remove_class("-stale")
        table = self.query_one(StagesTable)
        table.show_plan(plan)
        table.remove_class("-stale")
        self.query_one(PHCurvePanel).show_curve(curve_data_from_plan(plan))
        self.query_one(CautionsPanel).show_cautions(plan.cautions, drain_plan=plan.drain_plan)

    def _mark_stale(self) -> None:
        if self.plan is None:
            return
        self.query_one(PlanSummary).add_class("-stale")
        self.query_one(StagesTable).add_class("-stale")
        self.query_one(PHCurvePanel).mark_stale(True)
        self.query_one(CautionsPanel).show_cautions(self.plan.cautions,
                                                    drain_plan=self.plan.drain_plan, stale=True)

    def _show_field(self, name: str, error: str | None, echo: str) -> None:
        widget = self.query_one(f"#echo-{name}", Static)
        if name == "window" and not error:
            echo = echo or "local rules set the real window"
        if name in ("components", "volume") and self.container is not None:
            widget.display = False
            return
        widget.update(f"✗ {error}" if error else echo)
        widget.set_class(bool(error), "-error")
        widget.display = bool(error or echo)
        ids = ("window_low", "window_high") if name == "window" else (name,)
        for wid in ids:
            self.query_one(f"#{wid}", Input).set_class(bool(error), "-invalid")

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
        status.update(text)

    # -- the lists ---------------------------------------------------------------------------
    def _fill_sample_select(self) -> None:
        options = [(_typed_title(), TYPED)]
        options += [(f"waste {label} ({status})", f"c:{label}") for label, status in self.containers]
        options += [(f"bottle {c.title}", f"b:{c.bottle_id}") for c in self.choices
                    if c.kind == "sample"]
        if self.container is not None:
            current = f"c:{self.container.label}"
        else:
            current = self._current_value("#sample-source") or TYPED
        if current not in {v for _, v in options}:
            current = TYPED
        self._quietly_set_options("#sample-source", options, current)

    def _fill_reagent_select(self, direction: str | None = None) -> None:
        kinds = {"base": ("base",), "acid": ("acid",)}.get(direction or "", ("base", "acid"))
        options = [(c.title, f"r:{c.bottle_id}") for c in self.choices if c.kind in kinds]
        if self._reagent_options == options:
            return
        self._reagent_options = options
        text = self.query_one("#reagent", Input).value
        current = next((f"r:{c.bottle_id}" for c in self.choices
                        if c.kind in kinds and c.text == text), None)
        self._quietly_set_options("#reagent-bottle", options, current)

    def _current_value(self, selector: str):
        value = self.query_one(selector, Select).value
        return None if value is Select.NULL else value

    def _quietly_set_options(self, selector: str, options, value) -> None:
        select = self.query_one(selector, Select)
        self._options[selector] = {v for _, v in options}
        with select.prevent(Select.Changed):
            select.set_options(options)
            if value is not None and value in self._options[selector]:
                select.value = value

    def _quietly_select(self, selector: str, value) -> None:
        select = self.query_one(selector, Select)
        if value in self._options.get(selector, {TYPED}) and select.value != value:
            with select.prevent(Select.Changed):
                select.value = value

    def _use_bottle_as_sample(self, choice: BottleChoice) -> None:
        self.container = None
        self._set_sample_inputs_enabled(True)
        self.sample_note = _bottle_note(choice)
        self.query_one("#components", Input).value = choice.text
        self.query_one("#volume", Input).value = f"{choice.amount_left:g} L"
        self.query_one("#sample-info", Static).update(
            f"stock bottle {choice.title}; volume = amount left (edit if less is treated)")
        self.refresh_bindings()
        self._inputs_changed()

    def _set_sample_inputs_enabled(self, enabled: bool) -> None:
        """Typed components and volume apply only without a container (hidden, not lost)."""
        for wid in ("components", "volume"):
            self.query_one(f"#{wid}", Input).disabled = not enabled
            self.query_one(f"#row-{wid}").display = enabled
            self.query_one(f"#echo-{wid}").display = enabled

    # -- the record ---------------------------------------------------------------------------
    def snapshot(self) -> dict:
        """What the journal keeps: the inputs as typed and the plan as computed now."""
        state = self.plan_state
        reagent_bottle = next((c.bottle_id for c in self.choices
                               if c.kind != "sample" and c.text == state.reagent), None)
        return {
            "inputs": {
                "container": state.container.label if state.container else None,
                "reagent": state.reagent, "reagent_bottle_id": reagent_bottle,
                "target_pH": state.target, "window": [state.window_low, state.window_high],
                "temperature": state.temperature,
                "activity": "ideal" if state.ideal else "davies",
            },
            "plan": self.plan.to_dict(),
            "recorded_from": "carboy neutralize screen",
        }


def _bottle_note(choice: BottleChoice) -> str:
    return f"stock bottle #{choice.bottle_id}"


def _typed_title() -> str:
    return "components typed in"
