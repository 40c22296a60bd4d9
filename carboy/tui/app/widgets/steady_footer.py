"""The key footer, rebuilt only when the keys it shows change.

Textual's :class:`~textual.widgets.Footer` composes itself again (every key a new widget,
each one styled) whenever the screen's bindings may have changed: on each focus move
and on each ``refresh_bindings``, which the live forms call as their results come and
go.  At start-up that is several rebuilds before the first page is drawn, and on the
Neutralize screen one or two per keystroke.  :class:`SteadyFooter` compares what it
would show with what it shows: the same keys are left alone, keys that only became
enabled or disabled are restyled in place, and only a different set of keys is rebuilt.
"""

from __future__ import annotations

from collections.abc import Iterator

from textual.app import ComposeResult
from textual.screen import Screen
from textual.widget import Widget
from textual.widgets import Footer
from textual.widgets._footer import FooterKey

Shown = tuple[tuple[tuple, bool], ...]
"""Each key the footer shows: what it is (key, action, words, group, tooltip), and
whether it is enabled."""


def shown(screen: Screen) -> Shown:
    """What a footer on ``screen`` shows now, in order (the command palette key too)."""
    found = [((b.key, b.action, b.description, b.group, tooltip), enabled)
             for (_node, b, enabled, tooltip) in screen.active_bindings.values() if b.show]
    palette = screen.active_bindings.get(screen.app.COMMAND_PALETTE_BINDING)
    if palette is not None:
        _node, b, enabled, tooltip = palette
        found.append(((b.key, b.action, b.description, None, tooltip), enabled))
    return tuple(found)


class SteadyFooter(Footer):
    """A :class:`~textual.widgets.Footer` that rebuilds only when its keys change."""

    def __init__(self, *children: Widget, **kwargs) -> None:
        super().__init__(*children, **kwargs)
        self._shown: Shown | None = None
        """What the footer shows, or will once the rebuild asked for has run (None: not
        composed with keys yet)."""
        self._rebuilding = False

    def compose(self) -> ComposeResult:
        self._rebuilding = False
        if self._bindings_ready:
            self._shown = shown(self.screen)
        yield from super().compose()

    def bindings_changed(self, screen: Screen) -> None:
        if self._shown is None or not (self.is_attached and screen is self.screen
                                       and screen.app.app_focus):
            super().bindings_changed(screen)
            return
        now = shown(screen)
        if self._rebuilding:  # the rebuild asked for reads the keys as they are then
            return
        if [what for what, _on in now] != [what for what, _on in self._shown]:
            self._rebuilding = True
            super().bindings_changed(screen)
            return
        if now != self._shown:  # the same keys, some enabled or disabled
            enabled = {(what[0], what[1]): on for what, on in now}
            for key in self._keys():
                on = enabled.get((key.key, key.action))
                if on is not None and on == key._disabled:
                    key._disabled = not on
                    key.set_class(not on, "-disabled")
            self._shown = now

    def _keys(self) -> Iterator[FooterKey]:
        return iter(self.query(FooterKey))
