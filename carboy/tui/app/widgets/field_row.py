"""A labelled input with a line under it that echoes what was understood, or what is wrong."""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Horizontal, Vertical
from textual.widgets import Input, Label, Static

from carboy.tui.app.widgets.steady_input import InPlaceInput


class FieldRow(Vertical):
    """``Volume  [250 mL      ]`` over ``→ 0.25 L`` (or ``✗ volume '2 q': unknown unit``).

    An error never touches the input: what the user typed stays for them to fix.
    """

    DEFAULT_CLASSES = "field-row"

    def __init__(self, label: str, *, field_id: str, placeholder: str = "", value: str = "",
                 hint: str = "") -> None:
        super().__init__(id=f"row-{field_id}")
        self.label = label
        self.field_id = field_id
        self.placeholder = placeholder
        self.initial = value
        self.hint = hint

    def compose(self) -> ComposeResult:
        with Horizontal(classes="field-line"):
            yield Label(f"{self.label} ›", classes="field-label")
            yield InPlaceInput(value=self.initial, placeholder=self.placeholder, id=self.field_id,
                        compact=True)
        yield Static(Text(self.hint, style="dim"), classes="field-echo",
                     id=f"echo-{self.field_id}")

    @property
    def input(self) -> Input:
        return self.query_one(Input)

    @property
    def echo_text(self) -> str:
        content = self.query_one(".field-echo", Static).content
        return content.plain if hasattr(content, "plain") else str(content)

    def show_echo(self, text: str) -> None:
        self.remove_class("-invalid")
        self.query_one(".field-echo", Static).update(Text(text or self.hint,
                                                          style="" if text else "dim"))

    def show_error(self, text: str) -> None:
        self.add_class("-invalid")
        self.query_one(".field-echo", Static).update(Text(f"✗ {text}", style="bold red"))
