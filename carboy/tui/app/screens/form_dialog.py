"""The wiring every form dialog shares: Enter in a field or the submit button submits,
the cancel button (or escape, by the dialog's binding) cancels with ``None``.

A dialog marks its buttons with the classes ``dialog-submit`` and ``dialog-cancel`` and
defines ``action_submit``.
"""

from __future__ import annotations

from textual import on
from textual.screen import ModalScreen
from textual.widgets import Button, Input


class FormDialog(ModalScreen):
    """A modal form; see the module docstring."""

    @on(Input.Submitted)
    def _enter(self) -> None:
        self.action_submit()

    @on(Button.Pressed, ".dialog-submit")
    def _submit_pressed(self) -> None:
        self.action_submit()

    @on(Button.Pressed, ".dialog-cancel")
    def _cancel_pressed(self) -> None:
        self.action_cancel()

    def action_submit(self) -> None:  # pragma: no cover - every dialog defines its own
        raise NotImplementedError

    def action_cancel(self) -> None:
        self.dismiss(None)
