"""Every screen is readable under NO_COLOR and in the terminal's own 16 colours: no text is
drawn in the colour of its own background.

The check reads what the app would send to the terminal: each line of the screen with the
app's own output filters applied (native ANSI colours, and under NO_COLOR the filter that
drops colour), then looks at every piece of visible text.
"""

from __future__ import annotations

import pytest

from carboy.tui.app import registry


def unreadable(app) -> list[tuple[int, str]]:
    """(line, text) of every visible run drawn in its own background colour."""
    found = []
    background = app.screen.styles.background
    for y, strip in enumerate(app.screen._compositor.render_strips()):
        segments = list(strip)
        for f in app._filters:
            segments = f.apply(segments, background)
        for seg in segments:
            style = seg.style
            if not seg.text.strip() or style is None or style.color is None:
                continue
            if style.bgcolor is None or style.color.is_default:
                continue
            if style.color == style.bgcolor and not style.reverse:
                found.append((y, seg.text))
    return found


@pytest.mark.parametrize("no_color", [True, False], ids=["NO_COLOR", "16 colours"])
async def test_every_screen_is_readable(make, loaded, monkeypatch, no_color):
    """One app per colour mode visits every screen by its key (so each key is also seen
    to lead to its screen from the one before)."""
    if no_color:
        monkeypatch.setenv("NO_COLOR", "1")
    app = make()
    async with app.run_test(size=(80, 24)) as pilot:
        await loaded(pilot)
        assert app.no_color is no_color
        for d in registry.DESTINATIONS:
            await pilot.press(d.key)
            await loaded(pilot)
            assert app.current_mode == d.mode
            assert unreadable(app) == [], d.mode
