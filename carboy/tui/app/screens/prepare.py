"""The Prepare screen: a recipe to dilute a concentrate (or dissolve a solid), its label, and
the preparation recorded in one transaction.

The form: the source (``H2SO4=96%``, ``HCl=12.1M``, a solid such as ``NaOH`` or
``CuSO4·5H2O``, or a stock bottle ``#23``), the target molarity, the final volume and where
the new bottle goes.  Each field echoes what was understood or says in place what is
wrong; the typed text is never touched.  The recipe is worked out in a thread worker a
moment after the last keystroke; a result is shown only if no newer change came since.
Record (ctrl+s) asks first, then draws from the source bottle, adds the new bottle and
journals it, all or nothing.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.screen import Screen
from textual.widgets import Footer, Input, Static, TabbedContent, TabPane

from carboy.model.forms.prepare import PrepareFields, amount_used
from carboy.tui.app.live import LiveComputation
from carboy.tui.app.widgets.error_line import ErrorLine
from carboy.tui.app.widgets.field_row import FieldRow
from carboy.tui.app.widgets.mode_bar import ModeBar
from carboy.tui.app.widgets.plan_view import CautionsPanel
from carboy.tui.edge import describe
from carboy.tui.wording import heat_text

FIELDS = ("source", "target", "volume", "location")
PREP_NOTE = ("Acid (or concentrated base) into water, never the reverse. Goggles, gloves, "
             "lab coat; your safety office's rules come first.")
NO_RECIPE = ("No recipe yet: give a source, a target molarity and a final volume. Treat every "
             "concentrate as corrosive: goggles, gloves, fume hood.")


@dataclass(frozen=True)
class PrepOutcome:
    """What one run found: a recipe with its label, or per-field errors."""

    generation: int
    recipe: object | None = None
    label: object | None = None
    bottle: object | None = None
    new_bottle: dict | None = None
    errors: dict[str, str] = field(default_factory=dict)
    echoes: dict[str, str] = field(default_factory=dict)
    made: object | None = None


def recipe_text(recipe) -> Text:
    """The recipe's figures and steps, as the screen shows them."""
    t = Text()
    src = recipe.source
    t.append(f"{recipe.final_volume_ml:.6g} mL of {recipe.target_molar:.4g} M "
             f"{src.compound.key}", style="bold")
    t.append(f" from {src.label}\n")
    if recipe.stock_volume_ml is not None:
        t.append(f"  measure  {recipe.stock_volume_ml:.4g} mL  (or weigh "
                 f"{recipe.stock_mass_g:.4g} g)\n")
    else:
        t.append(f"  weigh    {recipe.stock_mass_g:.4g} g\n")
    t.append(f"  water    about {recipe.water_ml:.0f} mL in the flask first\n")
    t.append(f"  heat     {heat_text(recipe)}\n")
    for i, step in enumerate(recipe.steps, 1):
        t.append(f"{i:>2}. {step}\n")
    for note in recipe.notes:
        t.append(f"  · {note}\n", style="dim")
    return t


def label_text(label) -> Text:
    t = Text()
    width = max((len(line) for line in label.lines), default=20)
    t.append("┌" + "─" * (width + 2) + "┐\n")
    for line in label.lines:
        t.append(f"│ {line:<{width}} │\n")
    t.append("└" + "─" * (width + 2) + "┘\n")
    if label.basis:
        t.append(f"basis: {label.basis}\n", style="dim")
    return t


class PrepareScreen(Screen):
    HELP = ("A recipe for a solution: from a concentrate (H2SO4=96%, HCl=12.1M), a solid "
            "(NaOH, CuSO4·5H2O) or a stock bottle (#23, its measured strength if it has one), "
            "to a target molarity and final volume. It gives the volume and mass to take, the "
            "water to start with, the order of addition, the heat, the cautions and the label. "
            "ctrl+s records it: the amount is drawn from the bottle and the new bottle added.")

    BINDINGS = [
        Binding("ctrl+s", "record", "Record", id="prepare.record",
                tooltip="Draw from the source bottle, add the new bottle and journal it"),
        Binding("ctrl+l", "show_tab('label')", "Label", id="prepare.label",
                tooltip="The label text for the new bottle"),
        Binding("ctrl+e", "show_tab('recipe')", "Recipe", id="prepare.recipe",
                tooltip="The recipe: amounts, steps and heat"),
        Binding("ctrl+g", "read_cautions", "All cautions", id="prepare.read_cautions",
                tooltip="Every caution of the recipe, most serious first"),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.live = LiveComputation(self, self._start)
        self.outcome: PrepOutcome | None = None
        self.results = 0
        """Completed computations (tests wait on it)."""
        self.last_recorded: dict | None = None

    def compose(self) -> ComposeResult:
        yield ModeBar("prepare")
        with VerticalScroll(id="prep-form"):
            yield FieldRow("From", field_id="source", placeholder="e.g. H2SO4=96%, NaOH, #23",
                           hint="a concentrate with its strength, a solid, or a bottle #id")
            with Horizontal(id="prep-row2"):
                yield FieldRow("Target", field_id="target", placeholder="e.g. 1 M", hint="molarity")
                yield FieldRow("Volume", field_id="volume", placeholder="e.g. 1 L",
                               hint="final volume")
                yield FieldRow("Place", field_id="location", placeholder="e.g. Bench 2",
                               hint="where it goes")
        yield ErrorLine(id="prep-error")
        with TabbedContent(initial="recipe"):
            with TabPane("Recipe", id="recipe"):
                with VerticalScroll(id="prep-recipe"):
                    yield Static(Text(NO_RECIPE, style="dim"), id="prep-recipe-text")
            with TabPane("Label", id="label"):
                with VerticalScroll(id="prep-label"):
                    yield Static(Text("The label appears with the recipe.", style="dim"),
                                 id="prep-label-text")
        yield CautionsPanel(id="prep-cautions", note=PREP_NOTE, empty=NO_RECIPE)
        yield Footer()

    def on_mount(self) -> None:
        self.call_after_refresh(lambda: self.query_one("#source", Input).focus())
        # the source bottle may have less in it now: read it again
        self.watch(self.app, "data_version", lambda _v: self.live.changed(), init=False)

    # -- entry points -----------------------------------------------------------------
    def use_source(self, text: str) -> None:
        """Set the source field (the Stock screen's 'prepare from this bottle')."""
        def put() -> None:
            self.query_one("#source", Input).value = text
            self.query_one("#target", Input).focus()

        self.call_after_refresh(put)

    def form(self) -> dict[str, str]:
        return {name: self.query_one(f"#{name}", Input).value for name in FIELDS}

    # -- recompute -------------------------------------------------------------------
    @on(Input.Changed)
    def _changed(self, event: Input.Changed) -> None:
        if event.input.id in FIELDS:
            self.live.changed()

    def _start(self, generation: int) -> None:
        self._compute(generation, self.form())

    @work(thread=True, exclusive=True, exit_on_error=False, group="prepare")
    def _compute(self, generation: int, form: dict[str, str]) -> None:
        outcome = compute(form, generation, self.app)
        self.app.call_from_thread(self._show, outcome)

    def _show(self, outcome: PrepOutcome) -> None:
        if not self.live.finished(outcome.generation):
            return  # a newer change is on its way
        self.results += 1
        for name in FIELDS:
            row = self.query_one(f"#row-{name}", FieldRow)
            if name in outcome.errors:
                row.show_error(outcome.errors[name])
            else:
                row.show_echo(outcome.echoes.get(name, ""))
        stale = outcome.recipe is None and self.outcome is not None \
            and self.outcome.recipe is not None
        self.query_one("#prep-error", ErrorLine).show(_error_line(outcome.errors, stale))
        cautions = self.query_one(CautionsPanel)
        if outcome.recipe is None:
            self.set_class(stale, "-stale")
            if self.outcome is None or self.outcome.recipe is None:
                cautions.show_cautions(())
            self.refresh_bindings()
            return
        self.remove_class("-stale")
        self.outcome = outcome
        self.query_one("#prep-recipe-text", Static).update(recipe_text(outcome.recipe))
        self.query_one("#prep-label-text", Static).update(label_text(outcome.label))
        cautions.show_cautions(outcome.recipe.cautions)
        self.refresh_bindings()

    # -- record ----------------------------------------------------------------------
    def _current(self) -> PrepOutcome | None:
        o = self.outcome
        if o is None or o.recipe is None or self.has_class("-stale"):
            return None
        return o

    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        if action == "record":
            return self._current() is not None
        return True

    def action_read_cautions(self) -> None:
        self.app.push_screen(self.query_one(CautionsPanel).full_screen())

    def action_show_tab(self, tab: str) -> None:
        self.query_one(TabbedContent).active = tab

    def action_record(self) -> None:
        from carboy.tui.app.screens.confirm import ConfirmScreen

        o = self._current()
        if o is None:
            return
        r = o.recipe
        lines = []
        if o.bottle is not None:
            lines.append(f"Draw {amount_used(r, o.bottle.amount_unit)} from bottle "
                         f"{o.bottle.id} ({o.bottle.compound_key} {o.bottle.strength_text}).")
        else:
            lines.append(f"Nothing is drawn from the inventory (source: {r.source.label}).")
        nb = o.new_bottle
        lines.append(f"Add a bottle: {nb['compound']} {nb['label_strength']}, "
                     f"{nb['container_size']}, expires {nb['expires_on']}"
                     + (f", at {nb['location']}" if nb['location'] else "") + ".")
        lines.append(f"Journal it as prepared by {self.app.who}.")

        def done(yes: bool | None) -> None:
            if yes:
                self._record(o)

        self.app.push_screen(ConfirmScreen("Record this preparation?", "\n".join(lines),
                                           yes_label="Record"), done)

    @work(thread=True, exclusive=True, exit_on_error=False, group="prepare-record")
    def _record(self, o: PrepOutcome) -> None:
        from carboy.store import preparations as preparing

        try:
            with self.app.open_store() as store:
                made = preparing.record_made(store, o.made, o.bottle, who=self.app.who)[0]
        except Exception as exc:
            self.app.call_from_thread(self.query_one("#prep-error", ErrorLine).show,
                                      "not recorded: " + describe(exc))
            return
        self.app.call_from_thread(self._recorded, made)

    def _recorded(self, made) -> None:
        self.last_recorded = {"entry_id": made.entry_id, "new_bottle_id": made.new_bottle_id}
        self.notify(f"Recorded: journal entry #{made.entry_id}, new bottle "
                    f"{made.new_bottle_id}.", timeout=5)
        self.app.refresh_data()
        self.live.changed()  # the source bottle has less in it now
        self._offer_label(made.new_bottle_id)

    def _offer_label(self, bottle_id: int) -> None:
        """The new bottle's label, printed as it is recorded (Esc skips it)."""
        from carboy.tui.app.screens.print_pdf import PrintDialog, bottle_labels

        def done(path: str | None) -> None:
            if path:
                self.notify(f"Label of bottle {bottle_id} written to {path}", timeout=6)

        self.app.push_screen(PrintDialog(f"Print the label of the new bottle {bottle_id}",
                                         f"bottle-{bottle_id}-label.pdf",
                                         bottle_labels([bottle_id], self.app.today)), done)


def compute(form: dict[str, str], generation: int, app) -> PrepOutcome:
    """Read the form and work out the recipe (the same code as ``carboy prep``)."""
    from carboy.store import preparations as preparing
    from carboy.store.compounds import catalog_for

    fields = PrepareFields(source=form["source"], target=form["target"],
                           volume=form["volume"], location=form["location"])
    try:
        with app.open_store() as store, store.reading():
            reading = preparing.evaluate(store, fields, catalog_for(store), today=app.today,
                                         prepared_by=app.who)
    except Exception as exc:  # noqa: BLE001 - shown in place, never as a traceback
        return PrepOutcome(generation, errors={"": describe(exc)})
    errors = {k: v for k, v in reading.errors.items() if k not in reading.missing}
    made = reading.value
    if made is None:
        return PrepOutcome(generation, errors=errors, echoes=reading.echoes)
    return PrepOutcome(generation, recipe=made.recipes[0], label=made.labels[0],
                       bottle=reading.bottle, new_bottle=made.bottles[0],
                       echoes=reading.echoes, made=made)


def _error_line(errors: dict[str, str], stale: bool) -> str:
    """The line under the fields: the form's own problem, else the first field's in full
    (beside a field there is room for its name only), and that the recipe shown is the
    last good one."""
    message = errors.get("") or next(iter(errors.values()), "")
    if message and stale:
        message += " (the recipe shown is STALE: from the last good inputs)"
    return message
