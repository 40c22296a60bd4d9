"""Rules: the storeroom's disposal rules, and the yearly treatment log they shape.

Two tabs.  *Disposal rules*: the storeroom's name printed on paper, every rule of the profile with its value and where it comes
from (carboy's placeholder, with its source, or the storeroom's own), and the never-treat
list; ``e`` changes the highlighted rule, ``r`` returns it to carboy's placeholder (both
journaled).  *Treatment log*: every treatment of a year, with totals per stream and per
month, the same report as ``carboy report treatments``; ``y`` picks the year, ``g``
groups it by person or by stream, ``p`` prints it.
"""

from __future__ import annotations

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.screen import Screen
from textual.widgets import DataTable, Footer, Input, Label, Static, TabbedContent, TabPane
from textual.worker import get_current_worker

from carboy.errors import CarboyError
from carboy.model import disposal_profile as dp
from carboy.tui.app.screens.confirm import ConfirmScreen
from carboy.tui.app.widgets.error_line import ErrorLine
from carboy.tui.app.widgets.mode_bar import ModeBar
from carboy.tui.app.widgets.steady_input import InPlaceInput
from carboy.tui.edge import describe
from carboy.tui.wording import count, volume

GROUPS = (None, "person", "stream")
GROUP_WORDS = {None: "in the order recorded", "person": "by person", "stream": "by stream"}


STOREROOM_NAME = "storeroom.name"
"""The row of the storeroom's name (as the store's rule name)."""


def rule_rows(profile: dp.DisposalProfile,
              storeroom: str = "") -> list[tuple[str, str, str, Text]]:
    """(key, rule, value, origin): the storeroom's name, each rule, each never-treat item."""
    rows = [(STOREROOM_NAME, "storeroom name on paper", storeroom or "(not set)",
             Text(dp.STOREROOM if storeroom else "not set",
                  style="bold" if storeroom else "dim"))]
    for r in dp.RULES:
        origin = profile.origin.get(r.name, dp.PLACEHOLDER)
        mark = Text(origin, style="dim" if origin == dp.PLACEHOLDER else "bold")
        if r.kind == "items":
            rows.append((r.name, r.words, f"{len(profile.never_treat)} items", mark))
            rows += [(f"{r.name}:{i.item}", f"  {i.item}", i.why, Text(""))
                     for i in profile.never_treat]
        else:
            rows.append((r.name, r.words, dp.describe(r.name, profile.value(r.name)), mark))
    return rows


def source_text(key: str, profile: dp.DisposalProfile) -> str:
    """Where the highlighted rule comes from: the placeholder's source, or the storeroom."""
    name, _, item = key.partition(":")
    if name == STOREROOM_NAME:
        return ("printed on bottle labels, disposal records and the treatment report; "
                "e changes it, r removes it (journaled)")
    why = next((f"{i.item}: {i.why}. " for i in profile.never_treat if i.item == item), "")
    if profile.origin.get(name, dp.PLACEHOLDER) == dp.STOREROOM:
        return (f"{why}set by the storeroom (carboy rules, or e here); "
                "the journal keeps each change")
    status, source = dp.shipped_sources().get(f"never_treat {item}" if item else name,
                                              ("", ""))
    if not source:
        return f"{why}carboy's placeholder"
    return f"{why}carboy's placeholder [{status}]: {' '.join(source.split())}"


def report_lines(report) -> Text:
    """The treatment log as the tab shows it (the command line's text, condensed)."""
    from carboy.store.treatment_report import MONTHS, cells

    whole = report.totals()
    t = Text(f"{count(whole.count, 'treatment')} in {report.year} · "
             f"{volume(whole.waste_l)} treated · {whole.out_of_window} outside the window\n",
             style="bold")
    for key, rows in report.groups():
        if key:
            t.append(f"\n{key}\n", style="bold underline")
        for row in rows:
            date, entry, who, box, _s, treated, waste, reagent, ph, route = cells(row)
            t.append(f"{date} #{entry} {who} {box} {waste} · {reagent} · pH {ph} · {route}\n")
            t.append(f"    treated: {treated}\n", style="dim")
    t.append("\nTotals per stream\n", style="bold")
    for k, v in report.by(lambda r: r.stream).items():
        t.append(f"  {k:<16} {v.count:>3}  {volume(v.waste_l):>8}  {v.reagent_text()}\n")
    t.append("Totals per month\n", style="bold")
    for m, v in report.by(lambda r: r.month).items():
        t.append(f"  {MONTHS[m - 1]:<16} {v.count:>3}  {volume(v.waste_l):>8}  "
                 f"{v.reagent_text()}\n")
    return t


class RulesScreen(Screen):
    """The disposal rules and the treatment log; changes go through dialogs, journaled."""

    HELP = ("The storeroom's disposal rules (window, batches, vessel, dilution and ice, flush, "
            "temperature, fill levels, what is never treated here) and the yearly log of "
            "treatments with totals per stream and month. carboy's values are placeholders "
            "until the storeroom sets its own.")

    BINDINGS = [
        Binding("e", "edit", "Change rule", id="rules.edit"),
        Binding("r", "reset", "Placeholder", id="rules.reset",
                tooltip="Return the highlighted rule to carboy's placeholder (journaled)"),
        Binding("t", "next_tab", "Rules/log", id="rules.tab",
                tooltip="Switch between the disposal rules and the treatment log"),
        Binding("y", "year", "Year", id="rules.year"),
        Binding("g", "group", "Group", id="rules.group",
                tooltip="List the treatments in order, by person or by stream"),
        Binding("p", "print_report", "Print log", id="rules.print"),
    ]

    DEFAULT_CSS = """
    RulesScreen #rules-tabs { height: 1fr; }
    RulesScreen #rules-table { height: 1fr; }
    RulesScreen #rules-source { height: auto; max-height: 5; padding: 0 1; }
    RulesScreen #log-bar { height: 1; }
    RulesScreen #log-bar > Input { width: 10; }
    RulesScreen #log-scroll { height: 1fr; }
    """

    def __init__(self) -> None:
        super().__init__()
        self.profile: dp.DisposalProfile | None = None
        self.storeroom = ""
        self.catalog = None
        self.report = None
        self.group: str | None = None
        self.loads = 0

    def compose(self) -> ComposeResult:
        yield ModeBar("rules")
        yield ErrorLine(id="rules-error")
        with TabbedContent(id="rules-tabs", initial="tab-rules"):
            with TabPane("Disposal rules", id="tab-rules"):
                yield DataTable(id="rules-table", cursor_type="row", zebra_stripes=True)
                yield Static("", id="rules-source", markup=False)
            with TabPane("Treatment log", id="tab-log"):
                with Horizontal(id="log-bar"):
                    yield Label("Year ")
                    yield InPlaceInput(str(self.app.today.year), id="log-year", compact=True,
                                max_length=4)
                    yield Static("", id="log-group", markup=False)
                with VerticalScroll(id="log-scroll"):
                    yield Static("", id="log-text")
        yield Footer()

    def on_mount(self) -> None:
        table = self.query_one("#rules-table", DataTable)
        table.add_column("Rule", key="rule")
        table.add_column("From", key="from")   # before the value: a long value is cut last
        table.add_column("Value", key="value")
        table.focus()
        self.watch(self.app, "data_version", lambda _v: self.load(), init=False)
        self.load()

    # -- loading -------------------------------------------------------------------------
    def load(self) -> None:
        self._fetch(self.query_one("#log-year", Input).value, self.group)

    @work(thread=True, exclusive=True, exit_on_error=False, group="rules")
    def _fetch(self, year: str, group: str | None) -> None:
        from carboy.store import disposal, rules, treatment_report
        from carboy.store.compounds import catalog_for

        worker = get_current_worker()
        problem = ""
        try:
            with self.app.open_store() as store, store.reading():
                profile, catalog = disposal.load(store), catalog_for(store)
                storeroom = rules.load(store).storeroom_name
                try:
                    report = treatment_report.treatments(store, year, group_by=group)
                except CarboyError as exc:  # a year that cannot be read: the rules still show
                    report, problem = None, describe(exc)
        except Exception as exc:  # noqa: BLE001 - shown in place
            if not worker.is_cancelled:
                self.app.call_from_thread(self._show_error, describe(exc))
            return
        if not worker.is_cancelled:
            self.app.call_from_thread(self._show, profile, catalog, report, problem, storeroom)

    def _show_error(self, message: str) -> None:
        self.query_one("#rules-error", ErrorLine).show(message)
        self.loads += 1

    def _show(self, profile, catalog, report, problem: str = "", storeroom: str = "") -> None:
        self.query_one("#rules-error", ErrorLine).show(problem)
        self.profile, self.catalog, self.report = profile, catalog, report
        self.storeroom = storeroom
        table = self.query_one("#rules-table", DataTable)
        row = table.cursor_row
        table.clear()
        for key, words, value, origin in rule_rows(profile, storeroom):
            table.add_row(words, origin, value, key=key)
        table.move_cursor(row=min(row, table.row_count - 1))
        self._show_source()
        if report is not None:
            self.query_one("#log-text", Static).update(report_lines(report))
        self.query_one("#log-group", Static).update(f"  listed {GROUP_WORDS[self.group]} "
                                                    "(g) · print (p)")
        self.loads += 1
        self.refresh_bindings()

    @on(TabbedContent.TabActivated)
    def _tab_changed(self) -> None:
        self.refresh_bindings()   # e and r act on a rule only where the rules are shown

    @property
    def rule_key(self) -> str | None:
        table = self.query_one("#rules-table", DataTable)
        if not table.row_count:
            return None
        try:
            return table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value
        except Exception:  # noqa: BLE001 - the cursor is between a clear and a refill
            return None

    @on(DataTable.RowHighlighted, "#rules-table")
    def _show_source(self) -> None:
        key = self.rule_key
        if key is not None and self.profile is not None:
            self.query_one("#rules-source", Static).update(source_text(key, self.profile))

    @on(Input.Submitted, "#log-year")
    def _year_given(self) -> None:
        self.load()

    # -- actions ---------------------------------------------------------------------------
    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        if isinstance(self.focused, Input) and action in ("edit", "reset", "year", "group",
                                                          "print_report", "next_tab"):
            return False
        if action in ("edit", "reset"):
            if self.profile is None or self.rule_key is None:
                return False
            if self.query_one("#rules-tabs", TabbedContent).active != "tab-rules":
                return False   # the rule they act on is not on screen (the log tab is)
            name = self.rule_key.partition(":")[0]
            if name == STOREROOM_NAME:
                return action == "edit" or bool(self.storeroom)
            return action == "edit" or self.profile.origin.get(name) == dp.STOREROOM
        return True

    def action_edit(self) -> None:
        from carboy.tui.app.screens.rule_edit import RuleDialog, StoreroomNameDialog

        name = (self.rule_key or "").partition(":")[0]
        if not name or self.profile is None:
            return

        def done(entry: int | None) -> None:
            if entry:
                self.notify(f"Rule changed (journal entry {entry}).", timeout=4)
                self.app.refresh_data()

        dialog = (StoreroomNameDialog(self.storeroom) if name == STOREROOM_NAME
                  else RuleDialog(name, self.profile, self.catalog))
        self.app.push_screen(dialog, done)

    def action_reset(self) -> None:
        name = (self.rule_key or "").partition(":")[0]
        if not name:
            return

        def answered(yes: bool | None) -> None:
            if yes:
                self._reset(name)

        if name == STOREROOM_NAME:
            question = ConfirmScreen(f"Remove the storeroom's name ({self.storeroom})?",
                                     "Labels and records print no storeroom name until one "
                                     "is set again; the journal keeps the change.",
                                     yes_label="Remove it")
        else:
            question = ConfirmScreen(f"Back to carboy's placeholder: {dp.rule(name).words}?",
                                     "The storeroom's own value is replaced by carboy's "
                                     "placeholder; the journal keeps the change.",
                                     yes_label="Reset it")
        self.app.push_screen(question, answered)

    @work(thread=True, exclusive=True, exit_on_error=False, group="rules-reset")
    def _reset(self, name: str) -> None:
        from carboy.store import disposal, rules

        try:
            with self.app.open_store() as store:
                if name == STOREROOM_NAME:
                    rules.set_storeroom_name(store, "", who=self.app.who)
                else:
                    disposal.reset(store, [name], who=self.app.who)
        except Exception as exc:  # noqa: BLE001 - shown in place
            self.app.call_from_thread(self._show_error, describe(exc))
            return
        self.app.call_from_thread(self.app.refresh_data)

    def action_next_tab(self) -> None:
        tabs = self.query_one("#rules-tabs", TabbedContent)
        tabs.active = "tab-log" if tabs.active == "tab-rules" else "tab-rules"

    def action_year(self) -> None:
        self.query_one("#rules-tabs", TabbedContent).active = "tab-log"
        self.query_one("#log-year", Input).focus()

    def action_group(self) -> None:
        self.group = GROUPS[(GROUPS.index(self.group) + 1) % len(GROUPS)]
        self.query_one("#rules-tabs", TabbedContent).active = "tab-log"
        self.load()

    def action_print_report(self) -> None:
        from carboy.store.treatment_report import report_document
        from carboy.tui.app.screens.print_pdf import PrintDialog

        report = self.report
        if report is None:
            return

        def done(path: str | None) -> None:
            if path:
                self.notify(f"Treatment log written to {path}", timeout=6)

        self.app.push_screen(PrintDialog(f"Print the treatment log {report.year}",
                                         f"treatments-{report.year}.pdf",
                                         lambda store: [report_document(store, report)]), done)
