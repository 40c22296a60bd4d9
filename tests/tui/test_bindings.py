"""Keys: every binding has an id and a description, ids are unique, Help lists them all."""

from __future__ import annotations

import importlib
import pkgutil

from rich.console import Console

import carboy.tui
from carboy.tui.app.screens.help import HelpScreen, all_bindings, own_bindings


def declared_bindings():
    """Every binding declared by a class anywhere in carboy.tui (found by walking it)."""
    found = []
    for info in pkgutil.walk_packages(carboy.tui.__path__, "carboy.tui."):
        module = importlib.import_module(info.name)
        for obj in vars(module).values():
            if isinstance(obj, type) and obj.__module__ == info.name:
                for binding in own_bindings(obj):
                    found.append((obj, binding))
    return found


def test_the_walk_finds_the_screens():
    owners = {cls.__name__ for cls, _ in declared_bindings()}
    assert {"CarboyApp", "StockScreen", "WasteScreen", "JournalScreen", "HelpScreen",
            "ConfirmScreen", "NeutralizeScreen"} <= owners


def test_every_binding_has_an_id_and_a_description():
    missing = [(cls.__name__, b.key) for cls, b in declared_bindings()
               if not b.id or not b.description]
    assert missing == []


def test_binding_ids_are_unique():
    ids = [b.id for _, b in declared_bindings()]
    assert len(ids) == len(set(ids))


def test_help_sections_cover_every_declared_binding():
    in_help = {b.id for _, b in all_bindings()}
    declared = {b.id for _, b in declared_bindings()}
    assert declared - in_help == set()


async def test_help_screen_shows_every_key(make):
    app = make()
    async with app.run_test(size=(120, 40)) as pilot:
        await pilot.press("f1")
        await pilot.pause()
        assert isinstance(app.screen, HelpScreen)
        console = Console(width=120, record=True, color_system=None)
        for section in app.screen.query(".help-section"):
            console.print(section.content)
        text = console.export_text()
        for _, binding in declared_bindings():
            assert binding.id in text, binding.id
            assert binding.description in text, binding.id
        assert "safe to pour away" in str(app.screen.query_one("#help-safety").render())


async def test_footer_shows_the_screen_keys_and_hides_what_does_not_apply(make, wait_for):
    from textual.widgets._footer import FooterKey

    app = make()
    async with app.run_test(size=(160, 24)) as pilot:
        await wait_for(pilot, lambda: app.screen.loads)
        await pilot.pause()
        shown = {key.description for key in app.screen.query(FooterKey)}
        assert {"Open bottle", "Search", "Quit", "Help"} <= shown
        assert "Next page" not in shown and "Previous page" not in shown  # one page only
        assert "Stock" not in shown  # already here
