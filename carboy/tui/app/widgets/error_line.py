"""A line that names what went wrong, in place; it takes no room while all is well."""

from __future__ import annotations

from textual.widgets import Static


class ErrorLine(Static):
    DEFAULT_CLASSES = "error-line"

    def __init__(self, **kwargs) -> None:
        super().__init__("", markup=False, **kwargs)
        self.message = ""

    def on_mount(self) -> None:
        self.display = bool(self.message)

    def show(self, message: str) -> None:
        """Show ``✗ message`` (an empty message hides the line)."""
        if message == self.message:
            return  # no needless relayout (it would take the focus from a field)
        self.message = message
        self.update(f"✗ {message}" if message else "")
        self.display = bool(message)
