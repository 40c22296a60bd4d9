"""Redraw only what changed.

:meth:`Static.update <textual.widgets.Static.update>` always repaints its widget and,
unless told that its size cannot change, lays the whole screen out again.  A new plan
touches a dozen texts on the Neutralize screen, most of them unchanged (a new target
pH changes the dose, not the sample's echo nor the cautions), so each is updated only
when its content differs, and the screen is laid out again only when the widget's size
would change (a text of another number of lines in a widget whose height follows it).
"""

from __future__ import annotations

from textual.visual import VisualType, visualize
from textual.widgets import Static


def update(widget: Static, content: VisualType, *, layout: bool = True) -> bool:
    """Show ``content`` in ``widget`` unless it shows it already; ``layout=False`` for a
    widget whose size the content cannot change (one line, fixed width).  True when the
    widget was updated."""
    if widget.content == content and type(widget.content) is type(content):
        return False
    widget.update(content, layout=layout and _resizes(widget, content))
    return True


def _resizes(widget: Static, content: VisualType) -> bool:
    """Whether showing ``content`` may change ``widget``'s size (True when unsure)."""
    styles = widget.styles
    size = widget.content_size
    if not widget.is_mounted or not widget.display or \
            (styles.width is not None and styles.width.is_auto):
        return True  # not mounted, hidden, or its width follows its content
    if size.width <= 0:
        return False  # not on screen (in a view not shown): laid out when it is shown
    if styles.height is not None and not styles.height.is_auto:
        return False  # a fixed or shared height: the content cannot change it
    lines = visualize(widget, content, markup=widget._render_markup).get_height(
        styles, size.width)
    return lines != size.height
