"""The one registry of screens drives the bindings, the modes, the mode bar, the command
palette and Help: they agree, and every destination fits the bar at 80 columns."""

from __future__ import annotations

from textual.screen import Screen

from carboy.tui.app import registry
from carboy.tui.app.app import CarboyApp
from carboy.tui.app.commands import CarboyCommands
from carboy.tui.app.screens.help import sections
from carboy.tui.app.widgets.mode_bar import ModeBar, ModeTab

MODES = [d.mode for d in registry.DESTINATIONS]


def test_every_destination_names_a_real_screen():
    for d in registry.DESTINATIONS:
        assert issubclass(d.screen_class(), Screen), d.mode
    assert len(set(MODES)) == len(MODES)
    assert len({d.key for d in registry.DESTINATIONS}) == len(MODES)


def test_the_app_has_a_mode_and_a_key_for_every_destination():
    assert list(CarboyApp.MODES) == MODES
    go = {b.action: b.key for b in CarboyApp.BINDINGS if b.action.startswith("go(")
          and b.id == f"app.go.{b.action[4:-2]}"}
    assert go == {f"go('{d.mode}')": d.key for d in registry.DESTINATIONS}


def test_help_has_a_section_for_every_destination():
    titles = [s.title for s in sections()]
    assert all(d.label in titles for d in registry.DESTINATIONS)


async def test_palette_and_mode_bar_list_every_destination(make, wait_for):
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        provider = CarboyCommands(app.screen)
        names = [name for name, _, _ in provider.commands()]
        assert all(f"Go to {d.label}" in names for d in registry.DESTINATIONS)
        bar = app.screen.query_one(ModeBar)
        tabs = list(bar.query(ModeTab))
        assert [t.mode for t in tabs] == MODES
        assert sum(t.region.width + 1 for t in tabs) <= 80
        assert all(t.region.width > 0 for t in tabs)


async def test_the_mode_bar_takes_twice_as_many_screens_at_80_columns(make, monkeypatch):
    extra = tuple(registry.Destination(f"more{n}", f"Another {n}", f"An{n}", f"f1{n}",
                                       "carboy.tui.app.screens.help:HelpScreen", "", "")
                  for n in range(len(MODES)))
    monkeypatch.setattr(registry, "DESTINATIONS", registry.DESTINATIONS + extra)
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        await pilot.pause()
        bar = app.screen.query_one(ModeBar)
        assert bar.fit(80) == "key"
        tabs = list(bar.query(ModeTab))
        assert len(tabs) == 2 * len(MODES)
        assert sum(len(str(t.content)) + 1 for t in tabs) <= 80
        current = next(t for t in tabs if t.current)
        assert "Stock" in str(current.content)  # where you are stays in words


async def test_the_palette_finds_compounds_by_any_name_bottles_and_containers(make, wait_for):
    app = make()
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.pause()
        provider = CarboyCommands(app.screen)
        await provider.startup()

        async def titles(query: str) -> list[str]:
            return [str(hit.text) for hit in [h async for h in provider.search(query)]]

        assert any("Compound H2SO4" in t for t in await titles("sulphuric"))
        assert any("Compound NaOH" in t for t in await titles("caustic soda"))
        assert any(t.startswith("Bottle #2 ") for t in await titles("#2"))
        assert any("MA-01" in t for t in await titles("MA-01"))
