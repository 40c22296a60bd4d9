"""Journal: every preparation, standardization, neutralization, disposal and note.

Newest first, a page at a time, filtered by kind and by a since-date; Enter
opens an entry with its full inputs and results; ``c`` corrects the highlighted entry
(a new entry that points at it: nothing is edited).
"""

from __future__ import annotations

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal
from textual.screen import Screen
from textual.widgets import DataTable, Footer, Input, Label, Select, Static
from textual.worker import get_current_worker

from carboy.store import journal
from carboy.tui.app.widgets.error_line import ErrorLine
from carboy.tui.app.widgets.mode_bar import ModeBar
from carboy.tui.app.widgets.steady_input import SteadyInput
from carboy.tui.edge import describe

PAGE_ROWS = 50
ALL_KINDS = "*"


class EntryTable(DataTable):
    BINDINGS = [
        Binding("enter", "select_cursor", "Open entry", id="journal.open"),
    ]


def about(entry: journal.Entry) -> str:
    if entry.container_label:
        return entry.container_label
    if entry.bottle_id is not None:
        return f"bottle {entry.bottle_id}"
    return ""


class JournalScreen(Screen):
    """The append-only record; nothing here can be changed, only read."""

    HELP = ("The journal: the append-only record of what was done, by whom and when. "
            "Filter by kind and by a since-date (YYYY-MM-DD, Enter to apply); Enter on an "
            "entry opens its full inputs and results.")

    BINDINGS = [
        Binding("k", "focus_kind", "Kind filter", id="journal.kind"),
        # priority: handled as the key arrives, so a date typed right after it lands in
        # the box (not typing in a field: check_action lets the key through)
        Binding("s", "focus_since", "Since date", id="journal.since", priority=True),
        Binding("n", "page('older')", "Older", id="journal.older"),
        Binding("p", "page('newer')", "Newer", id="journal.newer"),
        Binding("escape", "clear_filters", "Clear filters", id="journal.clear"),
        Binding("c", "correct", "Correct", id="journal.correct",
                tooltip="Correct the highlighted entry: a new entry with the reason and the "
                        "corrected values"),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.kind: str | None = None
        self.since: str | None = None
        self._starts: list[int | None] = [None]  # before_id of each page shown so far
        self.has_older = False
        self.oldest_id: int | None = None
        self.shown: dict[str, journal.Entry] = {}
        self.loads = 0

    def compose(self) -> ComposeResult:
        yield ModeBar("journal")
        with Horizontal(id="journal-filters", classes="toolbar"):
            yield Label("Kind ", classes="field-label")
            yield Select([("all kinds", ALL_KINDS)] + [(k, k) for k in journal.KINDS],
                         value=ALL_KINDS, allow_blank=False, id="journal-kind", compact=True)
            yield Label("  Since ", classes="field-label")
            yield SteadyInput(placeholder="e.g. 2025-03-01", id="journal-since", compact=True,
                        max_length=25)
        yield ErrorLine(id="journal-error")
        yield EntryTable(id="journal-table", cursor_type="row", zebra_stripes=True)
        yield Static("", id="journal-position", classes="statusbar", markup=False)
        yield Footer()

    def on_mount(self) -> None:
        table = self.query_one(EntryTable)
        for key, label in (("id", "#"), ("when", "When"), ("who", "Who"), ("kind", "Kind"),
                           ("about", "About"), ("summary", "Summary")):
            table.add_column(label, key=key)
        table.focus()
        self.watch(self.app, "data_version", lambda _v: self.load(reset=True), init=False)
        self.load(reset=True)

    # -- loading ---------------------------------------------------------------------------
    def load(self, *, reset: bool = False) -> None:
        if reset:
            self._starts = [None]
        self._fetch(self.kind, self.since, self._starts[-1])

    @work(thread=True, exclusive=True, exit_on_error=False, group="journal")
    def _fetch(self, kind: str | None, since: str | None, before_id: int | None) -> None:
        worker = get_current_worker()
        try:
            with self.app.open_store() as store:
                found = journal.entries(store, kind=kind, since=since, before_id=before_id,
                                        limit=PAGE_ROWS + 1)
        except Exception as exc:
            if not worker.is_cancelled:
                self.app.call_from_thread(self._show_error, describe(exc))
            return
        if not worker.is_cancelled:
            self.app.call_from_thread(self._show, found)

    def _show_error(self, message: str) -> None:
        self.query_one("#journal-error", ErrorLine).show(message)
        self.loads += 1

    def _show(self, found: list[journal.Entry]) -> None:
        self.query_one("#journal-error", ErrorLine).show("")
        self.has_older = len(found) > PAGE_ROWS
        found = found[:PAGE_ROWS]
        table = self.query_one(EntryTable)
        table.clear()
        self.shown = {str(e.id): e for e in found}
        for e in found:
            table.add_row(str(e.id), journal.local_time(e.recorded_at), e.recorded_by, e.kind,
                          about(e), e.summary, key=str(e.id))
        self.oldest_id = found[-1].id if found else None
        page = len(self._starts)
        first = (page - 1) * PAGE_ROWS + 1
        filters = []
        if self.kind:
            filters.append(f"kind {self.kind}")
        if self.since:
            filters.append(f"since {self.since}")
        where = (" · " + ", ".join(filters)) if filters else ""
        if found:
            text = (f"entries {first}–{first + len(found) - 1}, newest first{where}"
                    + (" · more older (n)" if self.has_older else ""))
        else:
            text = f"no entries{where}"
        self.query_one("#journal-position", Static).update(text)
        self.loads += 1
        self.refresh_bindings()

    # -- filters -----------------------------------------------------------------------------
    @on(Select.Changed, "#journal-kind")
    def _kind_changed(self, event: Select.Changed) -> None:
        value = event.value
        self.kind = None if value in (ALL_KINDS, Select.NULL) else str(value)
        self.load(reset=True)

    @on(Input.Changed, "#journal-since")
    def _since_typed(self, event: Input.Changed) -> None:
        text = event.value.strip()
        if not text:
            self._apply_since("")
        elif len(text) == 10 and text[4] == "-" and text[7] == "-":
            self._apply_since(text)

    @on(Input.Submitted, "#journal-since")
    def _since_submitted(self, event: Input.Submitted) -> None:
        self._apply_since(event.value.strip())
        self.query_one(EntryTable).focus()

    def _apply_since(self, text: str) -> None:
        new = text or None
        if new == self.since:
            return
        self.since = new
        self.load(reset=True)

    # -- actions -------------------------------------------------------------------------------
    @on(DataTable.RowSelected, "#journal-table")
    def _open(self, event: DataTable.RowSelected) -> None:
        from carboy.tui.app.screens.entry import EntryScreen

        self.app.push_screen(EntryScreen(int(event.row_key.value)))

    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        typing = isinstance(self.focused, (Input, Select))
        if action in ("focus_kind", "focus_since", "page") and typing:
            return False
        if action == "page":
            if parameters and parameters[0] == "older":
                return self.has_older
            return len(self._starts) > 1
        if action == "correct":
            return not typing and self.highlighted is not None
        if action == "clear_filters":
            return bool(self.kind or self.since
                        or self.query_one("#journal-since", Input).value)
        return True

    @property
    def highlighted(self) -> journal.Entry | None:
        """The entry under the cursor."""
        table = self.query_one(EntryTable)
        if not table.row_count:
            return None
        try:
            key = table.coordinate_to_cell_key(table.cursor_coordinate).row_key.value
        except Exception:  # noqa: BLE001 - the cursor is between a clear and a refill
            return None
        return self.shown.get(key)

    def action_correct(self) -> None:
        from carboy.tui.app.screens.correct_entry import CorrectionDialog

        entry = self.highlighted
        if entry is None:
            return

        def done(new_id: int | None) -> None:
            if new_id:
                self.notify(f"Entry {entry.id} corrected by entry {new_id}.", timeout=4)
                self.app.refresh_data()

        self.app.push_screen(CorrectionDialog(entry), done)

    def action_focus_kind(self) -> None:
        self.query_one("#journal-kind", Select).focus()

    def action_focus_since(self) -> None:
        self.set_focus(self.query_one("#journal-since", Input))

    def action_page(self, direction: str) -> None:
        if direction == "older" and self.has_older and self.oldest_id is not None:
            self._starts.append(self.oldest_id)
        elif direction == "newer" and len(self._starts) > 1:
            self._starts.pop()
        else:
            return
        self.load()

    def action_clear_filters(self) -> None:
        self.query_one("#journal-since", Input).value = ""
        self.query_one("#journal-kind", Select).value = ALL_KINDS
        self.kind = None
        self.since = None
        self.load(reset=True)
        self.query_one(EntryTable).focus()
