"""Typing and results redraw without laying the whole screen out again when nothing
can move: a field of fixed width as its text grows, a text of the same number of lines,
a text in a view not shown; a text of another height still lays the screen out."""

from __future__ import annotations

from textual.app import App, ComposeResult
from textual.containers import Vertical
from textual.widgets import Static

from carboy.tui.app.widgets import redraw
from carboy.tui.app.widgets.steady_input import InPlaceInput


class Probe(App):
    CSS = """
    #field { width: 12; }
    #hidden-box { display: none; }
    #fixed { height: 2; }
    """

    def compose(self) -> ComposeResult:
        yield InPlaceInput(id="field", compact=True)
        yield Static("one line", id="text", markup=False)
        yield Static("fixed", id="fixed", markup=False)
        with Vertical(id="hidden-box"):
            yield Static("not shown", id="hidden", markup=False)


def layouts(app) -> list[int]:
    """Count the screen's layout passes from now on."""
    seen = [0]
    screen = app.screen
    original = screen._refresh_layout

    def counted(*args, **kwargs):
        seen[0] += 1
        return original(*args, **kwargs)

    screen._refresh_layout = counted
    return seen


async def test_typing_in_a_fixed_width_field_repaints_it_only_and_still_scrolls():
    app = Probe()
    async with app.run_test(size=(40, 10)) as pilot:
        field = app.query_one("#field", InPlaceInput)
        field.focus()
        await pilot.pause()
        seen = layouts(app)
        await pilot.press(*"0123456789abcdefghij")
        await pilot.pause()
        assert field.value == "0123456789abcdefghij"
        assert seen[0] == 0
        assert field.scroll_offset.x > 0  # the cursor, past the width, is in view
        assert field.virtual_size.width == len(field.value) + 1


async def test_a_text_is_laid_out_again_only_when_its_height_changes():
    app = Probe()
    async with app.run_test(size=(40, 10)) as pilot:
        await pilot.pause()
        text, fixed, hidden = (app.query_one(f"#{w}", Static) for w in ("text", "fixed",
                                                                         "hidden"))
        seen = layouts(app)
        assert redraw.update(text, "another line") is True
        assert redraw.update(text, "another line") is False  # shown already
        assert redraw.update(fixed, "a\nb\nc") is True  # its height is set: no layout
        assert redraw.update(hidden, "still\nnot\nshown") is True
        await pilot.pause()
        assert seen[0] == 0
        redraw.update(text, "now\ntwo lines")
        await pilot.pause()
        assert seen[0] >= 1 and text.size.height == 2
