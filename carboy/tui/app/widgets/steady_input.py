"""Inputs that keep the screen still while people type.

:class:`InPlaceInput`: Textual's Input lays the whole screen out again on every
keystroke (the text's length is its scrollable width, and that width is a layout
property), although a field of fixed width never changes size as its text grows: on
the Neutralize screen that was a full layout of some hundred widgets per key, before
the plan was even computed.  This one keeps the scrollable width up to date (the
cursor still scrolls a long text into view) and only repaints itself.

:class:`SteadyInput` also keeps the focus through a transient relayout.  Textual blurs
a focused widget when a relayout briefly reports it hidden; on the Stock screen that
happened as each search result arrived, moving the focus to the list mid-word (the next
Enter then opened a bottle).  A field that is still shown keeps its focus; moving the
focus on purpose (Tab, a click, a key) is unaffected, as those set the focus elsewhere
instead of blurring.

:class:`KeysInOrder` (in both, and in :class:`OrderedTextArea`) keeps keystrokes in the
order they were typed.  Textual inserts a printable key as soon as the field receives it,
but runs the field's own key bindings (backspace, delete, the arrows, home, end) only
once the key has bubbled up to the app, through every ancestor's queue.  When keys
arrive together (typed quickly, over SSH, or sent by a terminal in one read), the next
character overtakes the backspace before it: "Backspace 5" on "6" left "6", with the 5
typed and then deleted.  Here the field runs its own bindings the moment it receives
the key, so they keep their place among the characters.
"""

from __future__ import annotations

from textual import events
from textual.geometry import Size
from textual.widgets import Input, TextArea


class KeysInOrder:
    """Run the widget's own (non-priority) key bindings as it receives the key, in order
    with the characters typed around it (see the module docstring)."""

    async def _on_key(self, event: events.Key) -> None:
        for binding in self._bindings.key_to_bindings.get(event.key, ()):
            if not binding.priority and await self.app.run_action(binding.action, self):
                event.stop()
                event.prevent_default()
                return
        await super()._on_key(event)


class OrderedTextArea(KeysInOrder, TextArea):
    """A text area whose editing keys keep their place among the characters typed."""


class InPlaceInput(KeysInOrder, Input):
    def _watch_value(self, value: str) -> None:
        if not self.styles.auto_dimensions:  # a fixed size: the text cannot change it
            # set quietly first, so that Input's own setting of it is no change
            self.set_reactive(Input.virtual_size, Size(self.content_width, 1))
        super()._watch_value(value)


class SteadyInput(InPlaceInput):
    def blur(self):
        if self.is_attached and self.display and self.screen.is_current:
            return self
        return super().blur()
