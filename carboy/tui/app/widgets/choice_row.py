"""A labelled choice (a compact Select) with a line under it that says what the choice
means, or what is wrong: a :class:`~carboy.tui.app.widgets.field_row.FieldRow` with a
Select where the input would be."""

from __future__ import annotations

from collections.abc import Callable, Sequence

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.containers import Horizontal
from textual.widgets import Label, Select, Static

from carboy.tui.app.widgets.field_row import FieldRow


class ChoiceRow(FieldRow):
    """``Stream ›  [acid waste ▼]`` over its echo line; with ``describe``, the line says
    what the option chosen means."""

    def __init__(self, label: str, *, field_id: str, options: Sequence[tuple[str, object]],
                 prompt: str, value: object = None, hint: str = "",
                 describe: Callable[[object], str] | None = None) -> None:
        super().__init__(label, field_id=field_id, hint=hint)
        self.options = list(options)
        self.prompt = prompt
        self.chosen = value
        self.describe = describe

    def compose(self) -> ComposeResult:
        with Horizontal(classes="field-line"):
            yield Label(f"{self.label} ›", classes="field-label")
            yield Select(self.options, prompt=self.prompt, id=self.field_id, compact=True,
                         value=Select.NULL if self.chosen is None else self.chosen)
        yield Static(Text(self.hint, style="dim"), classes="field-echo",
                     id=f"echo-{self.field_id}")

    @on(Select.Changed)
    def _chosen(self, event: Select.Changed) -> None:
        if self.describe is not None:
            self.show_echo(self.describe(None if event.value is Select.NULL else event.value))

    @property
    def value(self):
        """The option chosen, or None."""
        chosen = self.query_one(Select).value
        return None if chosen is Select.NULL else chosen
