"""One journal entry opened whole: who, when, what about, and its full JSON snapshot."""

from __future__ import annotations

import json

from rich.json import JSON
from rich.table import Table
from rich.text import Text
from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import Screen
from textual.widgets import Footer, Static
from textual.worker import get_current_worker

from carboy.model import numbers
from carboy.store import journal
from carboy.tui.app.widgets.error_line import ErrorLine
from carboy.tui.app.widgets.mode_bar import ModeBar
from carboy.tui.app.widgets.safety_note import DISPOSAL_NOTE
from carboy.tui.edge import describe


def entry_header(entry: journal.Entry, corrected_by: tuple = ()) -> Table:
    grid = Table.grid(padding=(0, 1), expand=True)
    grid.add_column(style="bold", no_wrap=True)
    grid.add_column(ratio=1)
    about = []
    if entry.container_label:
        about.append(f"waste container {entry.container_label}")
    if entry.bottle_id is not None:
        about.append(f"bottle {entry.bottle_id}")
    grid.add_row("Kind", Text(entry.kind))
    grid.add_row("When", Text(f"{journal.local_time(entry.recorded_at)} (local time; "
                              f"stored as {entry.recorded_at} UTC)"))
    grid.add_row("Who", Text(f"{entry.recorded_by} from {entry.origin}"))
    grid.add_row("About", Text(", ".join(about) or "—"))
    if entry.corrects_id is not None:
        grid.add_row("Corrects", Text(f"entry {entry.corrects_id}"))
    for later in corrected_by:
        grid.add_row("Corrected by", Text(f"entry {later.id}: {later.summary}", style="bold"))
    grid.add_row("Summary", Text(entry.summary or "—"))
    return grid


SKIP_KEYS = {"curve", "curve_pH", "points", "speciation"}
"""Long series the readable page only counts (the raw snapshot has them whole)."""
MAX_DEPTH = 3


def _words(key: str) -> str:
    return str(key).replace("_", " ")


def _value(value) -> str:
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, float):
        return numbers.figures(value, 4)
    if value is None or value == "":
        return "—"
    return str(value)


def _lines(data, depth: int, out: Text) -> None:
    pad = "  " * depth
    for key, value in data.items():
        if key in SKIP_KEYS and isinstance(value, (list, dict)):
            out.append(f"{pad}{_words(key)}: ", style="bold")
            out.append(f"{len(value)} values (in the raw snapshot, r)\n", style="dim")
        elif isinstance(value, dict) and depth < MAX_DEPTH:
            out.append(f"{pad}{_words(key)}\n", style="bold underline" if depth == 0 else "bold")
            _lines(value, depth + 1, out)
        elif isinstance(value, list) and value and all(isinstance(v, dict) for v in value) \
                and depth < MAX_DEPTH:
            out.append(f"{pad}{_words(key)} ({len(value)})\n", style="bold")
            for n, item in enumerate(value, 1):
                out.append(f"{pad}  {n}.\n")
                _lines(item, depth + 2, out)
        elif isinstance(value, (list, tuple)):
            items = [_value(v) for v in value[:12]]   # sentences end with their own stop
            shown = (" " if all(i.endswith(".") for i in items) else ", ").join(items)
            more = f" … ({len(value)} in all)" if len(value) > 12 else ""
            out.append(f"{pad}{_words(key)}: ", style="bold")
            out.append(f"{shown}{more}\n")
        else:
            out.append(f"{pad}{_words(key)}: ", style="bold")
            out.append(f"{_value(value)}\n")


def readable(snapshot: dict) -> Text:
    """An entry's snapshot as a page people read: sections and ``name: value`` lines,
    numbers to four figures, long series counted (the raw JSON is one key away)."""
    out = Text()
    if not snapshot:
        out.append("nothing further was recorded with this entry\n", style="dim")
        return out
    _lines(snapshot, 0, out)
    return out


class EntryScreen(Screen):
    """Read-only: journal entries are never changed (a correction is a new entry)."""

    HELP = ("One journal entry with its full inputs and results, exactly as recorded then. "
            "Arrow keys or Page Up/Down scroll the snapshot.")

    BINDINGS = [
        Binding("escape", "back", "Back", id="entry.back"),
        Binding("r", "toggle_raw", "Raw snapshot", id="entry.raw",
                tooltip="Switch between the readable page and the snapshot as stored (JSON)"),
    ]

    def __init__(self, entry_id: int) -> None:
        super().__init__()
        self.entry_id = entry_id
        self.entry: journal.Entry | None = None
        self.loads = 0
        self.raw = False

    def compose(self) -> ComposeResult:
        yield ModeBar(self.app.current_mode)
        yield Static(f"Journal entry {self.entry_id}", id="entry-title", classes="screen-title",
                     markup=False)
        yield Static("", id="entry-header")
        yield Static("", id="entry-note", classes="safety-note", markup=False)
        yield ErrorLine(id="entry-error")
        yield Static("Inputs and results (r: the raw snapshot)", id="entry-section",
                     classes="section-title")
        with VerticalScroll(id="entry-scroll"):
            yield Static("", id="entry-json")
        yield Footer()

    def on_mount(self) -> None:
        self.query_one("#entry-note").display = False
        self.query_one("#entry-scroll").focus()
        self.load()
        self.watch(self.app, "data_version", lambda _v: self.load(), init=False)

    @work(thread=True, exclusive=True, exit_on_error=False, group="entry")
    def load(self) -> None:
        worker = get_current_worker()
        try:
            with self.app.open_store() as store:
                entry = journal.get(store, self.entry_id)
                later = tuple(journal.corrections_of(store, entry.id))
        except Exception as exc:
            if not worker.is_cancelled:
                self.app.call_from_thread(self._show_error, describe(exc))
            return
        if not worker.is_cancelled:
            self.app.call_from_thread(self._show, entry, later)

    def _show_error(self, message: str) -> None:
        self.query_one("#entry-error", ErrorLine).show(message)
        self.loads += 1

    def _show(self, entry: journal.Entry, later: tuple = ()) -> None:
        self.entry = entry
        self.query_one("#entry-title", Static).update(f"Journal entry {entry.id} · {entry.kind}")
        self.query_one("#entry-header", Static).update(entry_header(entry, later))
        if entry.kind in ("neutralization", "disposal"):
            note = self.query_one("#entry-note", Static)
            note.update(DISPOSAL_NOTE)
            note.display = True
        self._show_snapshot()
        self.loads += 1

    def _show_snapshot(self) -> None:
        if self.entry is None:
            return
        if self.raw:
            text = json.dumps(self.entry.snapshot, indent=2, ensure_ascii=False, sort_keys=True)
            self.query_one("#entry-json", Static).update(JSON(text, indent=2))
            title = "The snapshot as stored, JSON (r: the readable page)"
        else:
            self.query_one("#entry-json", Static).update(readable(self.entry.snapshot))
            title = "Inputs and results (r: the raw snapshot)"
        self.query_one("#entry-section", Static).update(title)

    def action_toggle_raw(self) -> None:
        self.raw = not self.raw
        self._show_snapshot()

    def action_back(self) -> None:
        self.dismiss()
