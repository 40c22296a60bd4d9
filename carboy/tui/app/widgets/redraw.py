"""Redraw only what changed.

:meth:`Static.update <textual.widgets.Static.update>` always repaints its widget and,
unless told that its size cannot change, lays the whole screen out again.  A new plan
touches a dozen texts on the Neutralize screen, most of them unchanged (a new target
pH changes the dose, not the sample's echo nor the cautions), so each is updated only
when its content differs.
"""

from __future__ import annotations

from textual.visual import VisualType
from textual.widgets import Static


def update(widget: Static, content: VisualType, *, layout: bool = True) -> bool:
    """Show ``content`` in ``widget`` unless it shows it already; ``layout=False`` for a
    widget whose size the content cannot change (one line, fixed width).  True when the
    widget was updated."""
    if widget.content == content and type(widget.content) is type(content):
        return False
    widget.update(content, layout=layout)
    return True
