"""Print to a PDF file: the app asks where, renders in a worker, and says where it went.

Over SSH the PDF is written on the server, so the dialog names the full path; the
default is a file in the directory carboy was started from.  Printing never changes the
database.
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Static

from carboy.tui.app.widgets.steady_input import InPlaceInput
from carboy.tui.edge import describe

Documents = Callable[[object], list]
"""Given an open store, the documents to print (built inside the worker)."""


class PrintDialog(ModalScreen[str | None]):
    """Ask for the PDF path, write the documents there; dismisses with the path written."""

    BINDINGS = [Binding("escape", "cancel", "Cancel", id="print.cancel")]

    DEFAULT_CSS = """
    PrintDialog { align: center middle; }
    PrintDialog > #print-box { width: 76; max-width: 100%; height: auto; padding: 0 1;
        border: heavy $foreground; background: $surface; }
    PrintDialog #print-path { margin-top: 1; }
    PrintDialog #print-said { height: auto; margin-top: 1; }
    PrintDialog #print-buttons { height: auto; margin-top: 1; align-horizontal: right; }
    PrintDialog #print-buttons > Button { margin-left: 2; }
    """

    def __init__(self, title: str, default_name: str, documents: Documents, *,
                 label_size: str = "70x37mm") -> None:
        super().__init__()
        self.title_text = title
        self.default_path = str(Path.cwd() / default_name)
        self.documents = documents
        self.label_size = label_size
        self.busy = False

    def compose(self) -> ComposeResult:
        with Vertical(id="print-box"):
            yield Static(self.title_text, classes="dialog-title", markup=False)
            yield Static("PDF file (written on this computer; nothing in the database "
                         "changes):", markup=False)
            yield InPlaceInput(self.default_path, id="print-path", compact=True)
            yield Static("", id="print-said", markup=False)
            with Horizontal(id="print-buttons"):
                yield Button("Write PDF (enter)", id="print-ok", compact=True)
                yield Button("Cancel (esc)", id="print-cancel", compact=True)

    def on_mount(self) -> None:
        self.query_one("#print-path", Input).focus()

    @on(Input.Submitted)
    @on(Button.Pressed, "#print-ok")
    def _write(self) -> None:
        path = self.query_one("#print-path", Input).value.strip()
        if self.busy:
            return
        if not path:
            self.query_one("#print-said", Static).update("✗ give a file name")
            return
        self.busy = True
        self.query_one("#print-said", Static).update("writing …")
        self._write_pdf(path)

    @on(Button.Pressed, "#print-cancel")
    def action_cancel(self) -> None:
        self.dismiss(None)

    @work(thread=True, exclusive=True, exit_on_error=False, group="print")
    def _write_pdf(self, path: str) -> None:
        from carboy.tui.paper.render import write_pdf

        try:
            with self.app.open_store() as store, store.reading():
                docs = self.documents(store)
            written = write_pdf(docs, path, label_size=self.label_size)
        except Exception as exc:  # noqa: BLE001 - shown in place, never as a traceback
            self.app.call_from_thread(self._failed, describe(exc))
            return
        notices = [n for d in docs for n in getattr(d, "notices", ())]
        self.app.call_from_thread(self._done, str(written), notices)

    def _failed(self, message: str) -> None:
        self.busy = False
        self.query_one("#print-said", Static).update(f"✗ not written: {message}")

    def _done(self, path: str, notices: list[str]) -> None:
        for notice in notices:
            self.notify(notice, severity="warning", timeout=8)
        self.dismiss(path)


def bottle_labels(bottle_ids: list[int], today) -> Documents:
    """The documents of the labels of ``bottle_ids``."""
    from carboy.store.documents import bottle_labels as build

    return lambda store: build(store, bottle_ids, today=today)
