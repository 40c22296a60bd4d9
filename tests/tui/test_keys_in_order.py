"""Keys typed together keep their order in every text field of the app.

Textual inserts a printable key as soon as a field receives it, but runs the field's own
bindings (backspace, the arrows, home, end) only after the key has bubbled up to the app;
keys that arrive in one read (fast typing, SSH) were reordered: "Backspace 5" on "6"
left "6" (the 5 typed, then deleted).  ``steady_input.KeysInOrder`` runs those bindings
on arrival; every text field of the app is one of its classes."""

from __future__ import annotations

import ast
from pathlib import Path

import pytest
from textual import events
from textual.app import App

from carboy.tui.app.widgets.steady_input import InPlaceInput, OrderedTextArea, SteadyInput

APP_SOURCES = Path(__file__).resolve().parents[2] / "carboy" / "tui" / "app"


class OneField(App):
    def __init__(self, make) -> None:
        super().__init__()
        self.make = make
        self.field = None

    def compose(self):
        self.field = self.make()
        yield self.field


def arrive_together(app: App, *keys: tuple[str, str | None]) -> None:
    """Keys queued at once, as a terminal delivers them from one read."""
    for key, char in keys:
        app.post_message(events.Key(key, char))


@pytest.mark.parametrize("cls", [InPlaceInput, SteadyInput])
async def test_editing_keys_keep_their_place_among_the_characters(cls):
    app = OneField(lambda: cls("6"))
    async with app.run_test() as pilot:
        field = app.field
        field.focus()
        await pilot.pause()
        field.cursor_position = 1
        arrive_together(app, ("backspace", "\x7f"), ("5", "5"), ("left", None),
                        ("backspace", "\x7f"), ("4", "4"), ("end", None), ("0", "0"))
        await pilot.pause(0.2)
        assert field.value == "450"


async def test_the_replicates_area_keeps_the_order_too():
    app = OneField(lambda: OrderedTextArea("0.51"))
    async with app.run_test() as pilot:
        area = app.field
        area.focus()
        await pilot.pause()
        area.move_cursor((0, 4))
        arrive_together(app, ("backspace", "\x7f"), ("2", "2"), ("home", None), ("1", "1"))
        await pilot.pause(0.2)
        assert area.text == "10.52"


def test_every_text_field_of_the_app_is_one_that_keeps_the_order():
    bare = []
    for path in sorted(APP_SOURCES.rglob("*.py")):
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if (isinstance(node, ast.Call) and isinstance(node.func, ast.Name)
                    and node.func.id in ("Input", "TextArea")):
                bare.append(f"{path.name}:{node.lineno} {node.func.id}(")
    assert bare == []
