"""The carboy terminal app: stock, waste, neutralize, prepare, standardize, journal and
help, keyboard first.

:func:`make_app` builds it from plain arguments; the ``carboy`` command, the Pilot
tests and the snapshot tests all go through it.  Each main screen is a Textual
*mode* with its own screen stack, so a bottle opened on the Stock screen is still
open when you come back from the Waste screen.

Database work never runs on the event loop: screens start thread workers that
open their own connection with :meth:`CarboyApp.open_store`.
"""

from __future__ import annotations

import gc
from datetime import date
from pathlib import Path

from textual import events
from textual.app import App
from textual.binding import Binding
from textual.reactive import Reactive, reactive
from textual.screen import ModalScreen
from textual.widget import AwaitMount

from carboy.store import db as store_db
from carboy.store.demo_cache import throwaway
from carboy.tui.app import registry
from carboy.tui.app.commands import CarboyCommands
from carboy.tui.app.database_watch import DatabaseWatch
from carboy.tui.app.screens.too_small import TooSmallScreen

MIN_WIDTH = 80
MIN_HEIGHT = 24


class CarboyApp(DatabaseWatch, App):
    """The storeroom app; see :func:`make_app` (and :class:`DatabaseWatch` for how it
    opens its database)."""

    CSS_PATH = "app.tcss"
    TITLE = "carboy"
    SUB_TITLE = "storeroom acids, bases and their waste"
    COMMANDS = App.COMMANDS | {CarboyCommands}
    MODES = registry.modes()
    DEFAULT_MODE = registry.DEFAULT_MODE
    BINDINGS = [
        # Screens change only by function keys (which work everywhere, even while typing),
        # the command palette and the mode bar: never by a key a form could take.
        *registry.bindings(),
        Binding("ctrl+q", "quit", "Quit", id="app.quit", priority=True,
                tooltip="Leave carboy"),
        Binding("f6", "reload", "Reload", id="app.reload",
                tooltip="Read the database again (other staff may have changed it)"),
        # Tab moves the focus as the key arrives, so what is typed right after it lands in
        # the next field, however fast (not in the field that had the focus)
        Binding("tab", "focus_next", "Next field", id="app.focus_next", show=False,
                priority=True),
        Binding("shift+tab", "focus_previous", "Previous field", id="app.focus_previous",
                show=False, priority=True),
    ]

    theme: Reactive[str] = Reactive("ansi-dark")
    """The terminal's own palette (16 colours, NO_COLOR), from the first frame: set on
    mount instead, it would parse and apply every style sheet a second time."""

    data_version: reactive[int] = reactive(0, init=False)
    """Bumped by :meth:`refresh_data`; screens that show data watch it and reload (not at
    start: the first screen's watcher would load its first page a second time)."""

    def __init__(self, db_path: Path, *, demo: bool = False, today: date | None = None,
                 who: str | None = None) -> None:
        super().__init__(ansi_color=True)  # the terminal's own palette (16 colours, NO_COLOR)
        self.db_path = Path(db_path)
        self.demo = demo
        self._today = today
        self.who = who or store_db.current_user()
        self._previous_mode = self.DEFAULT_MODE
        self._visited = {self.DEFAULT_MODE}
        self.watch_database()

    # -- the contract the screens rely on -------------------------------------------
    @property
    def today(self) -> date:
        """The day strengths and expiry are judged against (fixed in tests)."""
        return self._today or date.today()

    def plan_container(self, label: str) -> None:
        """Open the Neutralize screen on a waste container."""
        mounted = self.switch_mode("neutralize")
        screen = self.screen_stack[0]

        async def load() -> None:
            await mounted
            self._close_dialogs()
            screen.load_container(label)

        self.call_later(load)

    def prepare_from(self, source_text: str) -> None:
        """Open the Prepare screen with its source set (e.g. ``'#23'`` for a bottle)."""
        self._open_with("prepare", "use_source", source_text)

    def standardize_bottle(self, bottle_id: int) -> None:
        """Open the Standardize screen on a stock bottle."""
        self._open_with("standardize", "use_bottle", bottle_id)

    def _open_with(self, mode: str, method: str, value) -> None:
        if mode != self.current_mode:
            self._previous_mode = self.current_mode
        mounted = self.switch_mode(mode)
        screen = self.screen_stack[0]

        async def load() -> None:
            await mounted
            self._close_dialogs()
            getattr(screen, method)(value)

        self.call_later(load)

    def refresh_data(self) -> None:
        """Something was written: every screen showing data reloads it."""
        self.data_version += 1

    # -- helpers for the widgets ----------------------------------------------------
    def mode_keys(self) -> dict[str, str]:
        """The key that leads to each mode, as the footer shows it."""
        return {d.mode: self.get_key_display(Binding(d.key, f"go('{d.mode}')"))
                for d in registry.DESTINATIONS}

    def place_text(self) -> str:
        where = "demo storeroom (throwaway)" if self.demo else self.db_path.name
        return f"{self.who} · {where}"

    # -- lifecycle ------------------------------------------------------------------
    def on_mount(self) -> None:
        self._guard_size()
        self._freeze_after_refresh()

    def switch_mode(self, mode: str) -> AwaitMount:
        """Show ``mode``'s screen (the first time, see :meth:`_freeze_after_refresh`)."""
        if mode not in self._visited:
            self._visited.add(mode)
            self._freeze_after_refresh()
        return super().switch_mode(mode)

    def _freeze_after_refresh(self) -> None:
        """Once a screen is first drawn, everything alive then (the modules, the screens
        and their widgets: they last as long as the app) is moved out of the garbage
        collector's reach (:func:`gc.freeze`); else every full collection walks it all
        again, a pause of 50–90 ms in the middle of typing.  The first time, collection
        resumes then (``carboy`` holds it off while the app starts: about 45 ms of the
        first frame; the few thousand objects of garbage from that time stay).  Not under
        a test's headless driver: many apps in one process would each keep the garbage of
        the last."""
        if not self.is_headless:
            self.call_after_refresh(_settle_heap)

    def on_resize(self, event: events.Resize) -> None:
        self._guard_size(event.size.width, event.size.height)

    def _guard_size(self, width: int | None = None, height: int | None = None) -> None:
        width = self.size.width if width is None else width
        height = self.size.height if height is None else height
        small = width < MIN_WIDTH or height < MIN_HEIGHT
        showing = isinstance(self.screen, TooSmallScreen)
        if small and not showing:
            self.push_screen(TooSmallScreen())
        elif not small and showing:
            self.pop_screen()
        elif showing:
            self.screen.show_size(width, height)

    # -- actions --------------------------------------------------------------------
    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        if action in ("go", "reload", "command_palette") and isinstance(
                self.screen, TooSmallScreen):
            return False
        if action == "go" and parameters and parameters[0] == self.current_mode:
            return False
        if action == "command_palette" and self.dialog_open():   # it leads to other screens
            return False
        return True

    def action_go(self, mode: str) -> None:
        if self.dialog_open():   # a dialog belongs to the screen under it: close it first
            self.notify("Close the dialog first (Esc), then go to another screen.",
                        timeout=3)
            return
        if mode != self.current_mode:
            self._previous_mode = self.current_mode
        self.switch_mode(mode)

    def dialog_open(self) -> bool:
        """A dialog (a modal screen) is on top of the current screen."""
        return isinstance(self.screen, ModalScreen)

    def _close_dialogs(self) -> None:
        """Close the dialogs left on the current mode's screen (they hold its old state),
        before another container or bottle is loaded into it."""
        while len(self.screen_stack) > 1 and self.dialog_open():
            self.pop_screen()

    def action_back(self) -> None:
        """Back to the screen before this one (from Help)."""
        back = self._previous_mode
        self.action_go(back if back != self.current_mode else self.DEFAULT_MODE)

    def action_reload(self) -> None:
        self.refresh_data()
        self.notify("Reloaded from the database.", timeout=2)


def _settle_heap() -> None:
    gc.freeze()
    gc.enable()


def make_app(db_path: str | Path, *, demo: bool = False, today: date | None = None,
             who: str | None = None) -> CarboyApp:
    """The app on the database at ``db_path`` (which must exist: open it once first).

    ``today`` fixes the day strength checks use (tests, snapshots); ``who`` the user
    named in records (default: the OS user).
    """
    return CarboyApp(Path(db_path), demo=demo, today=today, who=who)


def run(*, db: str | None = None, demo: bool = False) -> int:
    """Run the app until it quits: on the database ``db`` (``--db``, else ``$CARBOY_DB``,
    else the user data directory) or, with ``demo``, on a throwaway demo storeroom (a
    copy of the day's kept in the user cache: :mod:`carboy.store.demo_cache`)."""
    if demo:
        with throwaway() as path:
            make_app(path, demo=True).run()
        return 0
    path = store_db.default_path(db)
    # a missing or damaged file stops here, unwritten (the launcher asked before creating)
    store_db.open_database(path, check=True, create=False).close()
    make_app(path).run()
    return 0
