"""carboy's own commands in the command palette (ctrl+p)."""

from __future__ import annotations

import asyncio
from collections.abc import Awaitable, Callable
from functools import partial

from textual.command import DiscoveryHit, Hit, Hits, Provider

from carboy.store.statuses import ContainerStatus
from carboy.tui.app import registry

Command = tuple[str, Callable[[], Awaitable[None] | None], str]


BOTTLES_SHOWN = 8
"""Bottles the palette offers for what is typed (found by the stock search)."""


class CarboyCommands(Provider):
    """Go to a screen, search the stock, open or plan a waste container, filter the journal;
    and find a compound (by any of its names), a bottle (by id, name, lot or place) or a
    container by typing."""

    async def startup(self) -> None:
        self.containers: list[tuple[str, str]] = []
        self.compounds: list[tuple[str, str]] = []
        app = self.app

        def read():
            from carboy.store import waste
            from carboy.store.compounds import catalog_for

            with app.open_store() as store:
                containers = [(c.label, c.status) for c in waste.containers(store)]
                catalog = catalog_for(store)
            compounds = [(c.key, " ".join((c.name, *c.aliases)))
                         for c in catalog.compounds.values()]
            return containers, compounds

        try:
            self.containers, self.compounds = await asyncio.to_thread(read)
        except Exception:  # the palette still works without the per-container commands
            self.containers, self.compounds = [], []

    def _bottles(self, query: str) -> list[tuple[int, str]]:
        """Bottles the stock search finds for ``query`` (id, one line), in a worker thread."""
        from carboy.store import stock

        with self.app.open_store() as store:
            found = stock.page(store, query, limit=BOTTLES_SHOWN, today=self.app.today)
        return [(b.id, f"{b.compound_key} {b.strength_text} · {b.location or 'no place'}"
                       f"{' · lot ' + b.lot if b.lot else ''}") for b in found.bottles]

    async def _open_bottle(self, bottle_id: int) -> None:
        from carboy.tui.app.screens.bottle import BottleScreen

        await self._base("stock")
        self.app.push_screen(BottleScreen(bottle_id))

    async def _stock_of(self, key: str) -> None:
        screen = await self._base("stock")
        while len(self.app.screen_stack) > 1:
            self.app.pop_screen()
        box = screen.query_one("#stock-search")
        box.value = key
        screen.action_focus_search()

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
        for key, names in getattr(self, "compounds", []):
            score = max(matcher.match(key), matcher.match(names))
            if score > 0:
                title = f"Compound {key}: its bottles"
                yield Hit(score * 0.9, matcher.highlight(title), partial(self._stock_of, key),
                          help=names[:80])
        if query.strip():
            try:
                bottles = await asyncio.to_thread(self._bottles, query)
            except Exception:  # noqa: BLE001 - an odd query finds no bottles
                bottles = []
            for bottle_id, line in bottles:
                title = f"Bottle #{bottle_id} {line}"
                yield Hit(0.8, title, partial(self._open_bottle, bottle_id),
                          help="open the bottle")
