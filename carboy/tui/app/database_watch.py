"""What the app does about its database file: open it only as it was, say when the
protections fail, and never show a traceback.

:class:`DatabaseWatch` is mixed into the app.  :meth:`~DatabaseWatch.open_store` opens
the file the app started on and nothing else: when the file was removed or replaced
under the running app (another inode), the open fails with
:class:`~carboy.store.files.DatabaseReplaced` (or the file is missing), every later
open fails the same way, so nothing more is written, and a notice that stays on screen
says so.  When the open check finds a guard trigger or the chain's tail wrong, the
same kind of notice says to run ``carboy journal verify``.

An unexpected exception ends the app with one line (the traceback goes to the error
log in the user's state directory, see :mod:`carboy.tui.edge`).
"""

from __future__ import annotations

from pathlib import Path

from rich.text import Text

from carboy.store import db as store_db
from carboy.store import files
from carboy.tui.edge import report

NOTICE_SECONDS = 24 * 3600.0
"""How long a database notice stays (until dismissed with a click, in practice)."""


class DatabaseWatch:
    """Mixin for the app: ``db_path`` must be set before :meth:`watch_database`."""

    db_path: Path

    def watch_database(self) -> None:
        """Remember which file ``db_path`` is now (call once, at start)."""
        self.db_identity = files.identity(self.db_path)
        self.database_notices: set[str] = set()

    def open_store(self) -> store_db.Store:
        """A new connection to the file the app started on; call it in the worker thread
        that will use it."""
        try:
            store = store_db.open_database(self.db_path, check=False, create=False,
                                           expect=self.db_identity)
        except (files.DatabaseReplaced, files.DatabaseMissing) as err:
            self._database_notice(f"{err}")
            raise
        if store.trust_problems:
            self._database_notice(f"{self.db_path.name}: {store.trust_problems[0].text()}; "
                                  "run `carboy journal verify` (see docs/shared-server.md)")
        return store

    def _database_notice(self, text: str) -> None:
        if text in self.database_notices:
            return
        self.database_notices.add(text)

        def show() -> None:
            self.notify(text, title="Database check failed", severity="error",  # type: ignore[attr-defined]
                        timeout=NOTICE_SECONDS, markup=False)

        try:
            self.call_from_thread(show)  # type: ignore[attr-defined]
        except RuntimeError:  # already on the app's thread
            show()

    def _fatal_error(self) -> None:
        """An unhandled exception: one line on exit, the traceback to the error log."""
        error = getattr(self, "_exception", None)
        line = report(error, "app") if error is not None else "unexpected error"
        self.bell()  # type: ignore[attr-defined]
        self._exit_renderables.append(Text(f"carboy: {line}"))  # type: ignore[attr-defined]
        self._close_messages_no_wait()  # type: ignore[attr-defined]
