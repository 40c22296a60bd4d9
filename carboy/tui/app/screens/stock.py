"""Stock: the bottles on the shelves, a page at a time, searched as you type.

The list is read from SQL a page at a time (keyset pagination on the bottle id),
never loaded whole, so 100,000 bottles scroll as easily as 40.  Moving the cursor
past the last row of a page brings the next page; past the first, the previous.
"""

from __future__ import annotations

import math
import threading
from concurrent.futures import Future

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal
from textual.message import Message
from textual.screen import Screen
from textual.timer import Timer
from textual.widgets import DataTable, Input, Label, Static
from textual.worker import get_current_worker

from carboy.store import bottles  # not store.stock: the first screen needs no recipes
from carboy.tui.app.widgets import redraw
from carboy.tui.app.widgets.error_line import ErrorLine
from carboy.tui.app.widgets.marks import STRENGTH_MARKS, bottle_mark, strength_mark
from carboy.tui.app.widgets.mode_bar import ModeBar
from carboy.tui.app.widgets.steady_footer import SteadyFooter
from carboy.tui.app.widgets.steady_input import SteadyInput
from carboy.tui.edge import describe
from carboy.tui.wording import amount, short_strength, tally

PAGE_ROWS = 50
SEARCH_DELAY_S = 0.15
FIRST_PAGE_WAIT_S = 0.25
"""How long the first frame waits for the first page read while the screen was built
(then it is drawn without, and the page follows as every other)."""
"""Pause after the last keystroke before the search runs (typing stays smooth)."""

# key, header, width (the location takes what is left)
COLUMNS = (("id", "#", 5), ("compound", "Compound", 8), ("label", "Label", 8), ("now", "Measured", 9),
           ("check", "Strength", 11), ("left", "Left", 8), ("status", "Bottle", 7),
           ("location", "Location", 0))
MIN_LOCATION_WIDTH = 8


def bottle_row(bottle: bottles.Bottle) -> tuple:
    return (
        Text(str(bottle.id), justify="right"),
        bottle.compound_key,
        short_strength(bottle.label_strength, bottle.strength_unit),
        short_strength(bottle.current_strength, bottle.strength_unit),
        strength_mark(bottle.strength_status),
        amount(bottle.amount_left, bottle.amount_unit),
        bottle_mark(bottle.status),
        bottle.location,
    )


def legend() -> Text:
    text = Text()
    for n, (mark, style) in enumerate(STRENGTH_MARKS.values()):
        if n:
            text.append("  ")
        text.append(mark, style=style)
    return text


class SearchInput(SteadyInput):
    """The stock search box; ↓ or Enter moves to the list."""

    BINDINGS = [
        Binding("enter", "to_list", "Search now", id="stock.search.now"),
        Binding("down", "to_list", "To the list", id="stock.search.to_list"),
    ]

    def action_to_list(self) -> None:
        self.screen.flush_search()
        self.screen.query_one(StockTable).focus()


class StockTable(DataTable):
    """The page of bottles; reaching either end of the page asks for the neighbouring one."""

    BINDINGS = [
        Binding("enter", "select_cursor", "Open bottle", id="stock.open"),
    ]

    class EdgeReached(Message):
        """The cursor tried to leave the page (``direction`` is ``next`` or ``prev``)."""

        def __init__(self, direction: str) -> None:
            super().__init__()
            self.direction = direction

    def action_cursor_down(self) -> None:
        if self.row_count and self.cursor_row >= self.row_count - 1:
            self.post_message(self.EdgeReached("next"))
            return
        super().action_cursor_down()

    def action_cursor_up(self) -> None:
        if self.cursor_row <= 0:
            self.post_message(self.EdgeReached("prev"))
            return
        super().action_cursor_up()


class StockScreen(Screen):
    """What is on the shelves: strength checks at a glance, a bottle opened with Enter."""

    HELP = ("The stock bottles, a page at a time. Type to search compound, name, location "
            "or lot; Enter opens a bottle with its details and history. The Strength column "
            "says whether the label strength can still be trusted; c lists every bottle "
            "that needs attention.")
    AUTO_FOCUS = "#stock-table"  # the list has the focus from the first frame

    BINDINGS = [
        Binding("slash", "focus_search", "Search", id="stock.search", priority=True),
        Binding("n", "page('next')", "Next page", id="stock.next_page"),
        Binding("p", "page('prev')", "Previous page", id="stock.prev_page"),
        Binding("escape", "clear_search", "Clear search", id="stock.clear_search"),
        Binding("c", "strength_check", "Check", id="stock.check",
                tooltip="Bottles that are expired, off-label, overdue or never standardized"),
    ]

    def __init__(self) -> None:
        super().__init__()
        self.search_text = ""
        self.page_index = 0
        self.total = bottles.Count(0)
        self.next_after: int | None = None
        self.first_id: int | None = None
        self._anchor: tuple[str, int | None] = ("after", None)
        self._timer: Timer | None = None
        self.loading = False
        self.bottles: list[bottles.Bottle] = []
        self._location_width = 0
        self.loads = 0
        """Completed loads (tests wait on it)."""
        self._first_page = self._read_first_page()

    def compose(self) -> ComposeResult:
        yield ModeBar("stock")
        with Horizontal(id="stock-searchbar", classes="toolbar"):
            yield Label("Search ", classes="field-label")
            yield SearchInput(placeholder="e.g. HCl, sulphuric, cabinet, #23",
                              id="stock-search", compact=True)
        yield ErrorLine(id="stock-error")
        yield StockTable(id="stock-table", cursor_type="row", zebra_stripes=True)
        yield Static("", id="stock-selected", classes="statusbar", markup=False)
        with Horizontal(id="stock-statusbar", classes="statusbar"):
            yield Static("", id="stock-position", markup=False)
            yield Static(legend(), id="stock-legend")
        yield SteadyFooter()

    def on_mount(self) -> None:
        table = self.query_one(StockTable)
        for key, label, width in COLUMNS:
            table.add_column(label, key=key, width=width or MIN_LOCATION_WIDTH)
        table.focus()
        self.watch(self.app, "data_version", self._data_changed, init=False)
        first = self._first_page_read()
        if first is None:
            self.load("first")
        else:  # the first frame shows it: no second layout of the whole screen
            self._show_page(*first, ("after", None), "first")

    def _read_first_page(self) -> Future | None:
        """Start reading the first page in a thread of its own (its own store), while the
        screen is composed and styled."""
        try:
            app = self.app
        except Exception:  # noqa: BLE001 - made outside a running app: read on mount
            return None
        found: Future = Future()

        def read() -> None:
            try:
                with app.open_store() as store, store.reading():
                    found.set_result(bottles.listing(store, None, limit=PAGE_ROWS,
                                                     today=app.today))
            except BaseException as exc:  # noqa: BLE001 - on mount the worker reads again
                found.set_exception(exc)

        threading.Thread(target=read, name="stock-first-page", daemon=True).start()
        return found

    def _first_page_read(self) -> tuple | None:
        """The first page read ahead, if it came in time (a failure is read again by the
        worker, which shows it)."""
        ahead, self._first_page = self._first_page, None
        try:
            return None if ahead is None else ahead.result(timeout=FIRST_PAGE_WAIT_S)
        except Exception:  # noqa: BLE001 - not in time (FutureTimeout), or failed
            return None

    def _data_changed(self, _version: int) -> None:
        self.load("same")

    # -- loading -----------------------------------------------------------------
    def load(self, request: str) -> None:
        """``first`` (new search), ``next``, ``prev`` or ``same`` (reload this page)."""
        if request == "first":
            anchor: tuple[str, int | None] = ("after", None)
        elif request == "next":
            if self.next_after is None:
                return
            anchor = ("after", self.next_after)
        elif request == "prev":
            if self.page_index == 0 or self.first_id is None:
                return
            anchor = ("before", self.first_id)
        else:
            anchor = self._anchor
        self.loading = True
        self._fetch(self.search_text, anchor, request)

    @work(thread=True, exclusive=True, exit_on_error=False, group="stock-page")
    def _fetch(self, search: str, anchor: tuple[str, int | None], request: str) -> None:
        worker = get_current_worker()
        kind, ref = anchor
        try:
            with self.app.open_store() as store, store.reading():
                if ref is None and request in ("first", "same"):
                    page, total = bottles.listing(store, search or None, limit=PAGE_ROWS,
                                                today=self.app.today)
                else:
                    page = bottles.page(store, search or None,
                                      after_id=ref if kind == "after" else None,
                                      before_id=ref if kind == "before" else None,
                                      limit=PAGE_ROWS, today=self.app.today)
                    total = bottles.count_upto(store, search or None) \
                        if request in ("first", "same") else None
        except Exception as exc:  # shown in place, never a traceback
            if not worker.is_cancelled:
                self.app.call_from_thread(self._show_error, describe(exc))
            return
        if not worker.is_cancelled:
            self.app.call_from_thread(self._show_page, page, total, anchor, request)

    def _show_error(self, message: str) -> None:
        self.loading = False
        self.query_one("#stock-error", ErrorLine).show(message)
        self.loads += 1

    def _show_page(self, page: bottles.Page, total: bottles.Count | None, anchor,
                   request: str) -> None:
        self.loading = False
        self.loads += 1
        self.query_one("#stock-error", ErrorLine).show("")
        if total is not None:
            self.total = total
        if not page.bottles and request in ("next", "prev"):
            return
        table = self.query_one(StockTable)
        old_row = table.cursor_row
        table.clear()
        self.bottles = page.bottles
        self._fill(table)
        self._anchor = anchor
        self.next_after = page.next_after
        self.first_id = page.bottles[0].id if page.bottles else None
        if request == "first":
            self.page_index = 0
        elif request == "next":
            self.page_index += 1
        elif request == "prev":
            self.page_index = max(self.page_index - 1, 0)
        if page.prev_before is None and anchor[0] == "before":
            self.page_index = 0
        if page.bottles:
            row = {"first": 0, "next": 0, "prev": len(page.bottles) - 1}.get(
                request, min(old_row, len(page.bottles) - 1))
            table.move_cursor(row=row, scroll=True)
        self._show_position(len(page.bottles))
        self.refresh_bindings()

    def on_resize(self) -> None:
        self.call_after_refresh(self._fit_columns)

    def _fit_columns(self) -> None:
        """Fixed widths, and the location takes the rest, so the page never scrolls sideways."""
        table = self.query_one(StockTable)
        if table.size.width == 0:
            return
        pad = 2 * table.cell_padding
        used = sum(width + pad for _k, _h, width in COLUMNS[:-1])
        location = max(MIN_LOCATION_WIDTH, table.scrollable_content_region.width - used - pad)
        if location == self._location_width:
            return
        self._location_width = location
        cursor = table.cursor_row
        table.clear(columns=True)
        for key, label, width in COLUMNS:
            table.add_column(label, key=key, width=width or location)
        self._fill(table)
        if table.row_count:
            table.move_cursor(row=min(cursor, table.row_count - 1))

    def _fill(self, table: StockTable) -> None:
        for bottle in self.bottles:
            table.add_row(*bottle_row(bottle), key=str(bottle.id))

    def _show_position(self, shown: int) -> None:
        pages = tally(bottles.Count(max(1, math.ceil(self.total.n / PAGE_ROWS)),
                                  self.total.exact))
        if shown == 0:
            text = ("no bottle matches “" + self.search_text + "”") if self.search_text \
                else "no bottles yet"
        else:
            first = self.page_index * PAGE_ROWS + 1
            text = (f"rows {first}–{first + shown - 1} of {tally(self.total)} · "
                    f"page {self.page_index + 1} of {pages}")
            if self.search_text:
                text += f" · matching “{self.search_text}”"
        self.query_one("#stock-position", Static).update(text)

    # -- events ----------------------------------------------------------------------
    @on(Input.Changed, "#stock-search")
    def _search_changed(self, event: Input.Changed) -> None:
        if self._timer is not None:
            self._timer.stop()
        self._timer = self.set_timer(SEARCH_DELAY_S, lambda: self._run_search(event.value))

    def _run_search(self, text: str) -> None:
        self.search_text = text.strip()
        self.load("first")

    def flush_search(self) -> None:
        """Run a pending search at once (Enter in the search box)."""
        if self._timer is not None:
            self._timer.stop()
        value = self.query_one("#stock-search", Input).value
        if value.strip() != self.search_text:
            self._run_search(value)

    @on(StockTable.EdgeReached)
    def _edge(self, event: StockTable.EdgeReached) -> None:
        if not self.loading:
            self.load(event.direction)

    @on(DataTable.RowHighlighted, "#stock-table")
    def _highlighted(self, event: DataTable.RowHighlighted) -> None:
        line = ""
        for bottle in self.bottles:
            if str(bottle.id) == event.row_key.value:
                line = (f"▸ bottle {bottle.id} · {bottle.compound_name} · "
                        f"{bottle.location or 'no location'} · lot {bottle.lot or '—'}")
                break
        redraw.update(self.query_one("#stock-selected", Static), line)

    @on(DataTable.RowSelected, "#stock-table")
    def _open(self, event: DataTable.RowSelected) -> None:
        from carboy.tui.app.screens.bottle import BottleScreen

        self.app.push_screen(BottleScreen(int(event.row_key.value)))

    # -- actions ---------------------------------------------------------------------
    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        typing = isinstance(self.focused, Input)
        if action == "page":
            if typing:
                return False
            if parameters and parameters[0] == "next":
                return self.next_after is not None
            return self.page_index > 0
        if action == "clear_search":
            return bool(self.search_text or self.query_one("#stock-search", Input).value)
        if action in ("focus_search", "strength_check"):
            return not typing
        return True

    def action_strength_check(self) -> None:
        from carboy.tui.app.screens.check import CheckScreen

        self.app.push_screen(CheckScreen())

    def action_focus_search(self) -> None:
        # at once, not after a refresh: keys typed right after "/" land in the box
        self.set_focus(self.query_one("#stock-search", Input))

    def action_page(self, direction: str) -> None:
        self.load(direction)

    def action_clear_search(self) -> None:
        box = self.query_one("#stock-search", Input)
        box.value = ""
        if self._timer is not None:
            self._timer.stop()
        self._run_search("")
        self.query_one(StockTable).focus()
