"""An Input that keeps the focus through a transient relayout.

Textual blurs a focused widget when a relayout briefly reports it hidden; on the
Stock screen that happened as each search result arrived, moving the focus to the
list mid-word (the next Enter then opened a bottle).  A field that is still shown
keeps its focus; moving the focus on purpose (Tab, a click, a key) is unaffected,
as those set the focus elsewhere instead of blurring.
"""

from __future__ import annotations

from textual.widgets import Input


class SteadyInput(Input):
    def blur(self):
        if self.is_attached and self.display and self.screen.is_current:
            return self
        return super().blur()
