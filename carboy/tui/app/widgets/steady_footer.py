"""The key footer, rebuilt only when a key it has never shown appears.

Textual's :class:`~textual.widgets.Footer` composes itself again (every key a new widget,
each one styled) whenever the screen's bindings may have changed: on each focus move
and on each ``refresh_bindings``, which the screens call as a result comes or the
cursor moves to a row with other actions.  At start-up that is several rebuilds before
the first page is drawn; on the Neutralize screen one or two per keystroke; on the
Waste list one per container (each status offers other actions).

:class:`SteadyFooter` keeps every key it has shown on this screen as a widget: a key
that is no longer offered is hidden, one offered again is shown, one enabled or
disabled is restyled in place.  It rebuilds only when a key it has never shown
appears, or the keys come in another order; then the keys it keeps are the new ones
merged with the old, in order.  What it shows is what a ``Footer`` would.
"""

from __future__ import annotations

from collections.abc import Iterator

from textual.app import ComposeResult
from textual.binding import Binding
from textual.screen import Screen
from textual.widget import Widget
from textual.widgets import Footer
from textual.widgets._footer import FooterKey

What = tuple[str, str, str, str]
"""One key as the footer shows it: key, action, words, tooltip."""
Offered = list[tuple[What, Binding, bool]]
"""The keys offered now, in order: what each is, its binding, whether it is enabled."""


def offered(screen: Screen) -> Offered:
    """The keys a footer on ``screen`` shows now, in order (one per action, as
    :class:`~textual.widgets.Footer` shows them; the command palette key last)."""
    found: Offered = []
    actions: set[str] = set()
    for _node, binding, enabled, tooltip in screen.active_bindings.values():
        if binding.show and binding.action not in actions:
            actions.add(binding.action)
            found.append(((binding.key, binding.action, binding.description, tooltip or ""),
                          binding, enabled))
    palette = screen.active_bindings.get(screen.app.COMMAND_PALETTE_BINDING)
    if palette is not None and screen.app.ENABLE_COMMAND_PALETTE:
        _node, binding, enabled, _tooltip = palette
        found.append(((binding.key, binding.action, binding.description, "\0palette"),
                      binding, enabled))
    return found


def merged(kept: list[What], now: list[What]) -> list[What] | None:
    """``kept`` with the keys of ``now`` it lacks put in order; None when the two orders
    disagree (then only ``now`` is kept)."""
    out: list[What] = []
    i = 0
    for what in now:
        if what in kept[i:]:
            j = kept.index(what, i)
            out.extend(kept[i:j + 1])
            i = j + 1
        elif what in kept:
            return None
        else:
            out.append(what)
    return out + kept[i:]


class SteadyFooter(Footer):
    """A :class:`~textual.widgets.Footer` that hides and shows its keys instead of
    composing them again (see the module notes)."""

    def __init__(self, *children: Widget, **kwargs) -> None:
        super().__init__(*children, **kwargs)
        self._kept: list[What] = []
        """Every key composed, in order (shown or hidden)."""
        self._bindings: dict[What, Binding] = {}
        self._rebuilding = False

    def compose(self) -> ComposeResult:
        self._rebuilding = False
        if not self._bindings_ready:
            return
        now = offered(self.screen)
        if any(binding.group is not None for _what, binding, _on in now):
            self._kept = []  # grouped keys: drawn by the Footer itself, every time
            yield from super().compose()
            return
        self._bindings.update({what: binding for what, binding, _on in now})
        order = [what for what, _b, _on in now]
        self._kept = merged(self._kept, order) or order
        enabled = {what: on for what, _b, on in now}
        for what in self._kept:
            yield self._key(what, enabled.get(what))

    def _key(self, what: What, enabled: bool | None) -> FooterKey:
        binding = self._bindings[what]
        display = self.app.get_key_display(binding)
        if what[3] == "\0palette":
            key = FooterKey(binding.key, display, binding.description, binding.action,
                            classes="-command-palette", disabled=not enabled,
                            tooltip=binding.tooltip or binding.description)
        else:
            key = FooterKey(binding.key, display, binding.description, binding.action,
                            disabled=not enabled, tooltip=what[3]
                            ).data_bind(compact=Footer.compact)
        key.display = enabled is not None
        key.what = what  # type: ignore[attr-defined]
        return key

    def bindings_changed(self, screen: Screen) -> None:
        if not self._kept or not (self.is_attached and screen is self.screen
                                  and screen.app.app_focus):
            super().bindings_changed(screen)
            return
        if self._rebuilding:  # the rebuild asked for reads the keys as they are then
            return
        now = offered(screen)
        order = [what for what, _b, _on in now]
        if merged(self._kept, order) != self._kept or \
                any(binding.group is not None for _what, binding, _on in now):
            self._rebuilding = True
            super().bindings_changed(screen)
            return
        enabled = {what: on for what, _b, on in now}
        for key in self._keys():
            on = enabled.get(key.what)  # type: ignore[attr-defined]
            key.display = on is not None
            if on is not None and on == key._disabled:
                key._disabled = not on
                key.set_class(not on, "-disabled")

    def _keys(self) -> Iterator[FooterKey]:
        return iter(self.query_children(FooterKey))
