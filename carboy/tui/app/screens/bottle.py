"""One stock bottle: every field, its strength check, and its journal history."""

from __future__ import annotations

from rich.table import Table
from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.screen import Screen
from textual.widgets import DataTable, Footer, Static
from textual.worker import get_current_worker

from carboy.store import journal, stock
from carboy.store.statuses import BottleStatus
from carboy.tui.app.screens.journal import EntryTable
from carboy.tui.app.widgets.error_line import ErrorLine
from carboy.tui.app.widgets.marks import bottle_mark, strength_mark
from carboy.tui.app.widgets.mode_bar import ModeBar
from carboy.tui.edge import describe
from carboy.tui.wording import amount, strength

HISTORY_LIMIT = 200


def bottle_fields(bottle: stock.Bottle) -> Table:
    """Two columns of label: value pairs."""
    grid = Table.grid(padding=(0, 1), expand=True)
    for _ in range(2):
        grid.add_column(style="bold", no_wrap=True)
        grid.add_column(ratio=1)
    measured = "never measured"
    if bottle.current_strength is not None:
        measured = strength(bottle.current_strength, bottle.strength_unit)
        if bottle.measured_at:
            measured += f" on {bottle.measured_at[:10]}"
    if bottle.restandardize_days:
        every = f"every {bottle.restandardize_days} days (this bottle)"
    elif bottle.recheck_days:
        every = f"every {bottle.recheck_days} days (rule for {bottle.compound_key})"
    else:
        every = "not scheduled"
    pairs = [
        ("Compound", Text(f"{bottle.compound_key} ({bottle.compound_name})")),
        ("Strength check", strength_mark(bottle.strength_status)),
        ("Label", Text(strength(bottle.label_strength, bottle.strength_unit))),
        ("Measured", Text(measured)),
        ("Method", Text(bottle.measured_how or "—")),
        ("Re-standardize", Text(every)),
        ("Left", Text(f"{amount(bottle.amount_left, bottle.amount_unit)} of "
                      f"{amount(bottle.container_size, bottle.amount_unit)}")),
        ("Bottle", bottle_mark(bottle.status)),
        ("Location", Text(bottle.location or "—")),
        ("Lot", Text(bottle.lot or "—")),
        ("Received", Text(bottle.received_on or "—")),
        ("Opened", Text(bottle.opened_on or "—")),
        ("Expires", Text(bottle.expires_on or "—")),
        ("Added by", Text(f"{bottle.added_by} on {bottle.added_at[:10]}")),
    ]
    for i in range(0, len(pairs), 2):
        left, right = pairs[i], pairs[i + 1] if i + 1 < len(pairs) else ("", Text(""))
        grid.add_row(left[0], left[1], right[0], right[1])
    if bottle.notes:
        grid.add_row("Notes", Text(bottle.notes), "", "")
    return grid


class BottleScreen(Screen):
    """Opened from the Stock list; Escape goes back to the same place in the list."""

    HELP = ("One stock bottle: its fields, the strength check and every journal entry about "
            "it. Enter on a history row opens that entry.")

    BINDINGS = [
        Binding("escape", "back", "Back to stock", id="bottle.back"),
        Binding("s", "standardize", "Standardize", id="bottle.standardize",
                tooltip="Standardize this bottle (a solution labelled in M)"),
        Binding("m", "make_from", "Prepare from it", id="bottle.prepare",
                tooltip="A recipe that draws from this bottle"),
        Binding("p", "print_label", "Print label", id="bottle.print_label",
                tooltip="Its label (GHS pictograms, hazard statements, QR code) as a PDF"),
    ]

    def __init__(self, bottle_id: int) -> None:
        super().__init__()
        self.bottle_id = bottle_id
        self.bottle: stock.Bottle | None = None
        self.loads = 0

    def compose(self) -> ComposeResult:
        yield ModeBar("stock")
        yield Static(f"Bottle {self.bottle_id}", id="bottle-title", classes="screen-title",
                     markup=False)
        yield Static("", id="bottle-fields")
        yield ErrorLine(id="bottle-error")
        yield Static("History (newest first)", classes="section-title")
        yield EntryTable(id="bottle-history", cursor_type="row", zebra_stripes=True)
        yield Footer()

    def on_mount(self) -> None:
        table = self.query_one("#bottle-history", DataTable)
        table.add_column("#", key="id")
        table.add_column("When", key="when")
        table.add_column("Kind", key="kind")
        table.add_column("Who", key="who")
        table.add_column("Summary", key="summary")
        table.focus()
        self.load()
        # a write anywhere (a preparation drawing from it, a standardization) shows here
        self.watch(self.app, "data_version", lambda _v: self.load(), init=False)

    @work(thread=True, exclusive=True, exit_on_error=False, group="bottle")
    def load(self) -> None:
        worker = get_current_worker()
        try:
            with self.app.open_store() as store, store.reading():
                bottle = stock.get(store, self.bottle_id, today=self.app.today)
                history = journal.entries(store, bottle_id=self.bottle_id, limit=HISTORY_LIMIT)
        except Exception as exc:
            if not worker.is_cancelled:
                self.app.call_from_thread(self._show_error, describe(exc))
            return
        if not worker.is_cancelled:
            self.app.call_from_thread(self._show, bottle, history)

    def _show_error(self, message: str) -> None:
        self.query_one("#bottle-error", ErrorLine).show(message)
        self.loads += 1

    def _show(self, bottle: stock.Bottle, history: list[journal.Entry]) -> None:
        self.bottle = bottle
        self.query_one("#bottle-title", Static).update(
            f"Bottle {bottle.id} · {bottle.compound_key} "
            f"{strength(bottle.label_strength, bottle.strength_unit)}")
        self.query_one("#bottle-fields", Static).update(bottle_fields(bottle))
        table = self.query_one("#bottle-history", DataTable)
        self.refresh_bindings()
        table.clear()
        for entry in history:
            table.add_row(str(entry.id), journal.local_time(entry.recorded_at), entry.kind,
                          entry.recorded_by, entry.summary, key=str(entry.id))
        self.loads += 1

    @on(DataTable.RowSelected, "#bottle-history")
    def _open_entry(self, event: DataTable.RowSelected) -> None:
        from carboy.tui.app.screens.entry import EntryScreen

        self.app.push_screen(EntryScreen(int(event.row_key.value)))

    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        if action == "standardize":
            return self.bottle is not None and self.bottle.strength_unit == "M" \
                and BottleStatus(self.bottle.status).is_usable
        if action == "make_from":
            return self.bottle is not None and BottleStatus(self.bottle.status).is_usable
        return True

    def action_standardize(self) -> None:
        if self.bottle is not None:
            self.app.standardize_bottle(self.bottle.id)

    def action_print_label(self) -> None:
        from carboy.tui.app.screens.print_pdf import PrintDialog, bottle_labels

        def done(path: str | None) -> None:
            if path:
                self.notify(f"Label written to {path}", timeout=6)

        self.app.push_screen(PrintDialog(f"Print the label of bottle {self.bottle_id}",
                                         f"bottle-{self.bottle_id}-label.pdf",
                                         bottle_labels([self.bottle_id], self.app.today)),
                             done)

    def action_make_from(self) -> None:
        if self.bottle is not None:
            self.app.prepare_from(f"#{self.bottle.id}")

    def action_back(self) -> None:
        self.dismiss()
