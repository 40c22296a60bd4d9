"""A neutralization plan as text panels: the doses, the staged additions, the cautions.

The formatting functions are plain (a plan in, text out) so they can be tested and
reused; the widgets only hold them.  Severity is always spelled out with a symbol
(``‼ DANGER``, ``! WARNING``, ``· NOTE``), never shown by colour alone.
"""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical, VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import DataTable, Static

from carboy.model import numbers
from carboy.model.speciation_models import describe_model
from carboy.tui.app.widgets import redraw
from carboy.tui.wording import heat_portions, plan_heat_text

SEVERITY_MARKS = {"danger": "‼ DANGER", "warning": "! WARNING", "notice": "· NOTE"}
SEVERITY_STYLES = {"danger": "bold reverse", "warning": "bold", "notice": ""}

STANDING_NOTE = (
    "Local disposal rules and your safety office decide the acceptance window and "
    "whether anything may go to the drain; carboy only advises.")
"""Shown under the cautions at all times, with or without a plan."""

NOT_FOR_DRAIN = (
    "‼ NOT FOR DRAIN DISPOSAL: this waste goes to licensed hazardous-waste disposal "
    "through the safety office, neutralized or not. The doses are for information only.")

NOT_FOR_DRAIN_LINE = "‼ NOT FOR DRAIN DISPOSAL: licensed disposal through the safety office"
"""The drain verdict in one line (the full text is in the cautions)."""

NO_PLAN_YET = "No plan yet: give a sample (a container, or components and a volume) and a reagent."


# -- numbers as people read them --------------------------------------------------------

fmt_volume_l = numbers.volume
fmt_mass_g = numbers.mass


def fmt_mol(mol: float | None) -> str:
    if mol is None:
        return "—"
    if mol != 0 and abs(mol) < 0.1:
        return f"{mol * 1000:.3g} mmol"
    return f"{mol:.3g} mol"


def amount_text(reagent, mol: float | None, volume_l: float | None, mass_g: float | None) -> str:
    """What to measure out: a volume for a solution (with its mass), a mass for a solid."""
    if mol is None:
        return "not reachable with this reagent"
    if reagent.is_solid:
        return f"{fmt_mass_g(mass_g)} ({fmt_mol(mol)})"
    return f"{fmt_volume_l(volume_l)} ({fmt_mol(mol)}, {fmt_mass_g(mass_g)})"


def dose_text(plan, dose) -> str:
    if not dose.reachable:
        return "not reachable with this reagent"
    return (f"{amount_text(plan.reagent, dose.reagent_mol, dose.reagent_volume_l, dose.reagent_mass_g)}"
            f" → pH {dose.pH:.2f}")


# -- the plan panel ---------------------------------------------------------------------

def plan_text(plan) -> Text:
    """The plan's figures, most used first: dose to target, window, every proton, heat…"""
    t = Text()

    def line(head: str, body: str = "", style: str = "") -> None:
        t.append(f"{head:<13}", style="bold")
        t.append(body + "\n", style=style)

    if not plan.drain_plan:
        t.append(NOT_FOR_DRAIN + "\n", style="bold reverse")
    r = plan.reagent
    s = plan.sample
    direction = "base" if plan.direction == "base" else "acid"
    line("Reagent", f"{r.describe()} ({direction})")
    line("Sample", f"{fmt_volume_l(s.volume_l)} at {s.temperature_c:g} °C, pH "
         f"{plan.initial_pH:.2f} ({describe_model(plan.activity, plan.activity_model)})")
    tgt = plan.to_target
    line(f"To pH {tgt.target_pH:g}", dose_text(plan, tgt), style="bold")
    if tgt.reachable:
        t.append(f"{'':13}final volume {fmt_volume_l(tgt.final_volume_l)}\n")
    lo, hi = plan.window_doses
    line(f"Window {plan.window[0]:g}–{plan.window[1]:g}", f"low edge  {dose_text(plan, lo)}")
    t.append(f"{'':13}high edge {dose_text(plan, hi)}\n")
    t.append(f"{'':13}local rules set the real window\n", style="italic")
    need = "OH⁻" if plan.direction == "base" else "H⁺"
    line("Every proton", f"{fmt_mol(abs(plan.proton_equivalents_mol))} {need}: "
         f"{dose_text(plan, plan.full)}")
    for name, mol in plan.breakdown.items():
        if mol:
            t.append(f"{'':13}  {name}: {fmt_mol(mol)}\n")
    if plan.reagent_reach is not None and plan.reagent_reach.limited:
        cannot = ", ".join(f"{k} {fmt_mol(v)}" for k, v in plan.reagent_reach.cannot.items())
        t.append(f"{'':13}not counted ({r.key} cannot take them): {cannot}\n")
    if plan.bound_protons_at_target:
        held = ", ".join(f"{k} {v:.2f}" for k, v in plan.bound_protons_at_target.items())
        line("Left acidic", f"at pH {tgt.target_pH:g} these still hold acid hydrogens (per "
                            f"formula unit; expected for weak acids): {held}")
    line("Heat", plan_heat_text(plan))
    if plan.gas_l > 0 or plan.vented_pH is not None:
        line("CO2 gas", f"{fmt_volume_l(plan.gas_l)} at {plan.gas_conditions}")
        if plan.vented_pH is not None:
            t.append(f"{'':13}after venting pH {plan.vented_pH:.2f} (air pCO2 "
                     f"{plan.vent_pco2_atm:.2g} atm assumed)\n")
    else:
        line("Gas", "none expected")
    for s in plan.salt_limits:
        if s.exceeded:
            line("Salt limit", f"{s.salt} about {s.molality:.3g} mol/kg, "
                 f"{s.saturated_molality:.3g} dissolve at {s.temperature_c:g} °C")
    expected = [p for p in plan.precipitates if p.expected]
    if expected:
        line("Solids", "; ".join(f"{p.solid} (SI {p.saturation_index:+.2f})" for p in expected)
             + ": a sludge to collect, not to drain")
    else:
        line("Solids", "none expected to precipitate")
    for head, body in plan.metal_lines():
        line(head[:1].upper() + head[1:], body)
    line("Sensitivity", f"{plan.sensitivity_pH_per_percent:.2g} pH per 1 % of the dose")
    if plan.equivalence_points:
        t.append("Equivalence points\n", style="bold")
        for i, e in enumerate(plan.equivalence_points, start=1):
            amount = amount_text(r, e.reagent_mol, r.volume_l(e.reagent_mol), r.mass_g(e.reagent_mol))
            t.append(f"  E{i} {amount}, pH {e.pH:.2f}: {e.label}\n")
    for w in plan.warnings:
        t.append(f"? {w}\n", style="italic")
    return t


def disposal_text(disposal) -> Text:
    """The plan under the storeroom's disposal rules (the steps, in order)."""
    t = Text("\nUnder the storeroom's disposal rules\n", style="bold underline")
    if not disposal.may_treat:
        t.append("‼ NOT TO BE TREATED HERE: route licensed disposal\n", style="bold reverse")
    for step, text in disposal.steps:
        t.append(f"{step.capitalize():<13}", style="bold")
        t.append(text + "\n")
    for w in disposal.warnings:
        t.append(f"! {w}\n", style="bold")
    if disposal.profile.all_placeholders:
        t.append("(carboy's placeholders: set your institution's rules on the Rules screen)\n",
                 style="italic")
    return t


def stage_rows(plan) -> list[tuple[str, str, str, str]]:
    """(stage, add, total so far, pH after) for the staged-addition table."""
    r = plan.reagent
    rows = []
    for s in plan.stages:
        add = amount_text(r, s.add_mol, s.add_volume_l, s.add_mass_g).split(" (")[0]
        total = amount_text(r, s.cumulative_mol, r.volume_l(s.cumulative_mol),
                            r.mass_g(s.cumulative_mol)).split(" (")[0]
        rows.append((str(s.index), add, total, f"{s.pH_after:.2f}"))
    got = heat_portions(plan)
    if got is not None and rows:   # the heat's limit beside the table that would break it
        each, k, temp_c = got
        rows.append(("‼", f"≤ {each}", f"{k} portions", "cool")   # as narrow as the rows
                    if k is not None else ("‼", "dilute,", "cool first", ""))
    return rows


NO_CAUTIONS_YET = ("No plan yet: cautions appear with the plan. Treat every acid or base "
                   "waste as corrosive: goggles, gloves, fume hood.")


def cautions_text(cautions, *, stale: bool = False, empty: str | None = None) -> Text:
    """Every caution, severity first as text and symbol."""
    t = Text()
    if stale:
        t.append("(from the last good plan: inputs have changed)\n", style="italic")
    if not cautions:
        t.append(f"· NOTE  {empty or NO_CAUTIONS_YET}\n")
    for c in cautions:
        t.append(f"{SEVERITY_MARKS.get(c.severity, '· NOTE')} ", style=SEVERITY_STYLES.get(
            c.severity, ""))
        t.append(f"{c.text} [{c.code}]\n")
    return t


# -- widgets ----------------------------------------------------------------------------

class PlanSummary(VerticalScroll):
    """The plan's figures; greyed and marked when stale."""

    DEFAULT_CSS = """
    PlanSummary { height: 1fr; padding: 0 1; }
    PlanSummary.-stale > Static { text-style: dim; }
    """

    def compose(self) -> ComposeResult:
        yield Static(NO_PLAN_YET, id="plan-text")

    def show_plan(self, plan, disposal=None) -> None:
        """The plan, and under it the plan under the storeroom's disposal rules."""
        text = plan_text(plan) if plan else Text(NO_PLAN_YET)
        if plan and disposal is not None:
            text.append_text(disposal_text(disposal))
        redraw.update(self.query_one("#plan-text", Static), text)

    @property
    def text(self) -> str:
        content = self.query_one("#plan-text", Static).content
        return content.plain if isinstance(content, Text) else str(content)


class StagesTable(DataTable):
    """Staged additions: most of the dose first, then smaller portions."""

    DEFAULT_CSS = """
    StagesTable { height: 1fr; }
    StagesTable.-stale { text-style: dim; }
    """

    def on_mount(self) -> None:
        self.cursor_type = "row"
        self.zebra_stripes = False
        self.add_column("stage", key="stage")
        self.add_column("add", key="add")
        self.add_column("total so far", key="total")
        self.add_column("pH after", key="ph")

    shown_rows: list[tuple[str, str, str, str]] = []

    def show_plan(self, plan) -> None:
        rows = stage_rows(plan) if plan is not None else []
        if rows == self.shown_rows:
            return  # the same stages: nothing to redraw
        self.shown_rows = rows
        self.clear()
        for row in rows:
            self.add_row(*row)


SEVERITY_RANK = {"danger": 0, "warning": 1, "notice": 2}


def by_severity(cautions) -> list:
    """The cautions, most serious first (the order within a severity kept)."""
    return sorted(cautions, key=lambda c: SEVERITY_RANK.get(c.severity, 3))


def headline(cautions, *, stale: bool = False, empty: str | None = None,
             key: str = "ctrl+g") -> Text:
    """One line: the most serious caution, and how many more there are and how to see them."""
    t = Text(no_wrap=True, overflow="ellipsis")
    ranked = by_severity(cautions)
    if stale:
        t.append("(last good plan) ", style="italic")
    if not ranked:
        t.append(f"· NOTE  {empty or NO_CAUTIONS_YET}")
        return t
    first, rest = ranked[0], len(ranked) - 1
    if rest:
        t.append(f"[{rest} more: {key}] ", style="bold")
    t.append(f"{SEVERITY_MARKS.get(first.severity, '· NOTE')} ",
             style=SEVERITY_STYLES.get(first.severity, ""))
    t.append(first.text)
    return t


class CautionsPanel(Vertical):
    """The cautions, never below the fold: the most serious in one line with the count of
    the rest (one key opens them all, :class:`CautionsScreen`), the drain verdict, and the
    standing disposal note."""

    DEFAULT_CSS = """
    CautionsPanel {
        height: auto;
        max-height: 5;
        border-top: heavy $foreground 50%;
    }
    CautionsPanel > #drain-banner {
        display: none;
        text-style: bold reverse;
        height: 1;
    }
    CautionsPanel.-no-drain > #drain-banner { display: block; }
    CautionsPanel > #cautions-headline { height: 1; }
    CautionsPanel > #standing-note { height: auto; text-style: bold; }
    """

    can_focus = False

    def __init__(self, *, note: str = STANDING_NOTE, empty: str | None = None,
                 **kwargs) -> None:
        super().__init__(**kwargs)
        self.note = note
        self.empty = empty
        self.cautions: tuple = ()
        self.stale = False

    def compose(self) -> ComposeResult:
        yield Static(NOT_FOR_DRAIN_LINE, id="drain-banner", markup=False)
        yield Static(headline((), empty=self.empty), id="cautions-headline")
        yield Static("· " + self.note, id="standing-note", markup=False)

    def on_mount(self) -> None:
        self.border_title = "Cautions"

    def show_cautions(self, cautions, *, drain_plan: bool = True, stale: bool = False) -> None:
        self.cautions = tuple(cautions)
        self.stale = stale
        self.set_class(not drain_plan, "-no-drain")
        redraw.update(self.query_one("#cautions-headline", Static),
                      headline(self.cautions, stale=stale, empty=self.empty), layout=False)

    @property
    def text(self) -> str:
        """Everything the panel stands for: the drain verdict, every caution, the note."""
        parts = [NOT_FOR_DRAIN] if self.has_class("-no-drain") else []
        parts.append(cautions_text(self.cautions, stale=self.stale, empty=self.empty).plain)
        parts.append("· " + self.note)
        return "\n".join(parts)

    def full_screen(self) -> CautionsScreen:
        return CautionsScreen(self.cautions, drain_plan=not self.has_class("-no-drain"),
                              stale=self.stale, note=self.note, empty=self.empty)


class CautionsScreen(ModalScreen[None]):
    """Every caution, most serious first, with the drain verdict and the standing note."""

    BINDINGS = [Binding("escape,ctrl+g", "close", "Close", id="cautions.close")]

    DEFAULT_CSS = """
    CautionsScreen { align: center middle; }
    CautionsScreen > #all-cautions { width: 90%; max-width: 100; height: auto;
        max-height: 90%; border: heavy $foreground; background: $surface; padding: 0 1; }
    """

    def __init__(self, cautions, *, drain_plan: bool, stale: bool, note: str,
                 empty: str | None) -> None:
        super().__init__()
        self.cautions, self.drain_plan, self.stale = tuple(cautions), drain_plan, stale
        self.note, self.empty = note, empty

    def compose(self) -> ComposeResult:
        with VerticalScroll(id="all-cautions"):
            if not self.drain_plan:
                yield Static(Text(NOT_FOR_DRAIN, style="bold reverse"))
            yield Static(cautions_text(by_severity(self.cautions), stale=self.stale,
                                       empty=self.empty))
            yield Static(Text("· " + self.note, style="bold"))
            yield Static(Text("esc closes", style="dim"))

    def on_mount(self) -> None:
        self.query_one("#all-cautions").border_title = \
            f"All cautions ({len(self.cautions)})"
        self.query_one("#all-cautions").focus()

    def action_close(self) -> None:
        self.dismiss(None)
