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
"""

from __future__ import annotations

from textual.geometry import Size
from textual.widgets import Input


class InPlaceInput(Input):
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
