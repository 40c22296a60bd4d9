"""carboy's own commands in the command palette (ctrl+p)."""

from __future__ import annotations

import asyncio
from collections.abc import Awaitable, Callable
from functools import partial

from textual.command import DiscoveryHit, Hit, Hits, Provider

from carboy.store.statuses import ContainerStatus
from carboy.tui.app import registry

Command = tuple[str, Callable[[], Awaitable[None] | None], str]


class CarboyCommands(Provider):
    """Go to a screen, search the stock, open or plan a waste container, filter the journal."""

    async def startup(self) -> None:
        self.containers: list[tuple[str, str]] = []
        app = self.app

        def read() -> list[tuple[str, str]]:
            from carboy.store import waste

            with app.open_store() as store:
                return [(c.label, c.status) for c in waste.containers(store)]

        try:
            self.containers = await asyncio.to_thread(read)
        except Exception:  # the palette still works without the per-container commands
            self.containers = []

    async def _base(self, mode: str):
        await self.app.switch_mode(mode)
        return self.app.screen_stack[0]

    async def _go(self, mode: str) -> None:
        await self._base(mode)

    async def _search_stock(self) -> None:
        screen = await self._base("stock")
        while len(self.app.screen_stack) > 1:
            self.app.pop_screen()
        screen.action_focus_search()

    async def _waste_action(self, action: str, label: str | None = None) -> None:
        screen = await self._base("waste")
        if label is not None:
            screen.selected = label
            screen.load(select=label)
            await asyncio.sleep(0)
        getattr(screen, action)()

    async def _journal_kind(self, kind: str) -> None:
        from textual.widgets import Select

        screen = await self._base("journal")
        screen.query_one("#journal-kind", Select).value = kind

    def commands(self) -> list[Command]:
        found: list[Command] = [(f"Go to {d.label}", partial(self._go, d.mode), d.palette)
                                for d in registry.DESTINATIONS]
        found += [
            ("Search stock…", self._search_stock, "type a compound, name, location or lot"),
            ("New waste container…", partial(self._waste_action, "action_new_container"),
             "open a new, empty container"),
            ("Journal: neutralizations only", partial(self._journal_kind, "neutralization"),
             "filter the journal by kind"),
            ("Journal: disposals only", partial(self._journal_kind, "disposal"),
             "filter the journal by kind"),
            ("Reload from the database", self.app.refresh_data,
             "other staff may have changed it"),
        ]
        for label, status in getattr(self, "containers", []):
            status = ContainerStatus(status)
            if status.takes_additions:
                found.append((f"Log addition to {label}…",
                              partial(self._waste_action, "action_add", label),
                              f"waste container {label} ({status.words})"))
            if status.can_be_planned:
                found.append((f"Plan neutralization of {label}",
                              partial(self.app.plan_container, label),
                              f"waste container {label} ({status.words})"))
        return found

    async def discover(self) -> Hits:
        for name, callback, help_text in self.commands():
            yield DiscoveryHit(name, callback, help=help_text)

    async def search(self, query: str) -> Hits:
        matcher = self.matcher(query)
        for name, callback, help_text in self.commands():
            score = matcher.match(name)
            if score > 0:
                yield Hit(score, matcher.highlight(name), callback, help=help_text)
