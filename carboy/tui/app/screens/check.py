"""The strength check: every bottle in use whose strength can no longer be trusted.

Opened from the Stock screen.  One row per flagged bottle, most serious first
(expired, off-label, overdue or never standardized, expiring soon), with the reason
spelled out for the highlighted row.  Enter opens the bottle; ``s`` standardizes it.
"""

from __future__ import annotations

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.screen import Screen
from textual.widgets import DataTable, Footer, Static
from textual.worker import get_current_worker

from carboy.store import stock
from carboy.tui.app.widgets.error_line import ErrorLine
from carboy.tui.app.widgets.marks import strength_mark
from carboy.tui.app.widgets.mode_bar import ModeBar
from carboy.tui.edge import describe
from carboy.tui.wording import count, short_strength

FLAG_WORDS = {"expired": "expired", "off-label": "off-label", "overdue": "overdue",
              "never-standardized": "never std.", "expires-soon": "expires soon"}

COLUMNS = (("id", "#", 3), ("compound", "Compound", 8), ("label", "Label", 7),
           ("now", "Measured", 8), ("dev", "Dev %", 5), ("last", "Last std.", 10),
           ("flags", "Flags", 12))


def check_cells(row: stock.CheckRow) -> tuple:
    b = row.bottle
    return (
        str(b.id), b.compound_key, short_strength(b.label_strength, b.strength_unit),
        short_strength(b.current_strength, b.strength_unit),
        "—" if row.deviation_percent is None else f"{row.deviation_percent:+.1f}",
        (b.measured_at or "—")[:10],
        Text(", ".join(FLAG_WORDS.get(f, f) for f in row.flags) or "ok"),
    )


class CheckScreen(Screen):
    HELP = ("The strength check: bottles in use that are expired, off their label, overdue "
            "for standardization (NaOH and KOH take up CO2, so their interval is short), never "
            "standardized, or expiring within 30 days. Intervals: `carboy rules`.")

    BINDINGS = [
        Binding("escape", "back", "Back to stock", id="check.back"),
        Binding("s", "standardize", "Standardize", id="check.standardize",
                tooltip="Open the Standardize screen on the highlighted bottle"),
        Binding("p", "print_list", "Print list", id="check.print",
                tooltip="This due list as an A4 PDF, with totals and page numbers"),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.rows: list[stock.CheckRow] = []
        self.loads = 0

    def compose(self) -> ComposeResult:
        yield ModeBar("stock")
        yield Static("Strength check · bottles in use that need attention", id="check-title",
                     classes="screen-title", markup=False)
        yield ErrorLine(id="check-error")
        yield DataTable(id="check-table", cursor_type="row", zebra_stripes=True)
        yield Static("", id="check-reason", classes="check-reason", markup=False)
        yield Static("", id="check-count", classes="statusbar", markup=False)
        yield Footer()

    def on_mount(self) -> None:
        table = self.query_one("#check-table", DataTable)
        for key, label, width in COLUMNS:
            table.add_column(label, key=key, width=width)
        table.focus()
        self.watch(self.app, "data_version", lambda _v: self.load(), init=False)
        self.load()

    @work(thread=True, exclusive=True, exit_on_error=False, group="check")
    def load(self) -> None:
        worker = get_current_worker()
        try:
            with self.app.open_store() as store, store.reading():
                rows = stock.check(store, today=self.app.today)
        except Exception as exc:
            if not worker.is_cancelled:
                self.app.call_from_thread(self._show_error, describe(exc))
            return
        if not worker.is_cancelled:
            self.app.call_from_thread(self._show, rows)

    def _show_error(self, message: str) -> None:
        self.query_one("#check-error", ErrorLine).show(message)
        self.loads += 1

    def _show(self, rows: list[stock.CheckRow]) -> None:
        self.rows = rows
        table = self.query_one("#check-table", DataTable)
        table.clear()
        for row in rows:
            table.add_row(*check_cells(row), key=str(row.bottle.id))
        counts: dict[str, int] = {}
        for row in rows:
            for f in row.flags:
                counts[f] = counts.get(f, 0) + 1
        summary = " · ".join(f"{n} {FLAG_WORDS[f]}" for f, n in counts.items())
        self.query_one("#check-count", Static).update(
            f"{count(len(rows), 'bottle')} {'needs' if len(rows) == 1 else 'need'} attention" + (f" · {summary}" if summary else "")
            if rows else "Every bottle in use is on label, within its interval and unexpired.")
        self.query_one("#check-error", ErrorLine).show("")
        self._show_reason(0)
        self.loads += 1
        self.refresh_bindings()

    def _show_reason(self, index: int) -> None:
        text = Text()
        if 0 <= index < len(self.rows):
            row = self.rows[index]
            text.append(f"bottle {row.bottle.id} · {row.bottle.compound_name} · "
                        f"{row.bottle.location or 'no location'}  ")
            text.append_text(strength_mark(row.bottle.strength_status))
            if row.due_on and "overdue" not in row.flags:
                text.append(f"\n• next standardization due {row.due_on}")
            for reason in row.reasons:
                text.append("\n• " + reason)
        self.query_one("#check-reason", Static).update(text)

    @on(DataTable.RowHighlighted, "#check-table")
    def _highlighted(self, event: DataTable.RowHighlighted) -> None:
        self._show_reason(event.cursor_row)

    @on(DataTable.RowSelected, "#check-table")
    def _open(self, event: DataTable.RowSelected) -> None:
        from carboy.tui.app.screens.bottle import BottleScreen

        self.app.push_screen(BottleScreen(int(event.row_key.value)))

    def _current(self) -> stock.CheckRow | None:
        table = self.query_one("#check-table", DataTable)
        if not self.rows or not 0 <= table.cursor_row < len(self.rows):
            return None
        return self.rows[table.cursor_row]

    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        if action == "standardize":
            row = self._current()
            return row is not None and row.bottle.strength_unit == "M"
        return True

    def action_standardize(self) -> None:
        row = self._current()
        if row is not None:
            self.app.standardize_bottle(row.bottle.id)

    def action_print_list(self) -> None:
        from carboy.store.documents import due_list
        from carboy.tui.app.screens.print_pdf import PrintDialog

        today = self.app.today

        def done(path: str | None) -> None:
            if path:
                self.notify(f"Due list written to {path}", timeout=6)

        self.app.push_screen(PrintDialog("Print the strength check (due list)",
                                         f"due-list-{today.isoformat()}.pdf",
                                         lambda store: [due_list(store, today=today)]), done)

    def action_back(self) -> None:
        self.dismiss()
