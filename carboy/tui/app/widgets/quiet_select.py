"""A Select whose options and value can be set from code without posting ``Changed``
(so a screen reacts only to what the user chose)."""

from __future__ import annotations

from collections.abc import Sequence

from textual.widgets import Select


class QuietSelect(Select):
    """:class:`Select` with quiet setters; ``known`` holds the current option values."""

    def __init__(self, *args, **kwargs) -> None:
        super().__init__(*args, **kwargs)
        self.known: set = {v for _, v in (args[0] if args else kwargs.get("options", ()))}

    @property
    def current(self):
        """The value chosen, or None."""
        return None if self.value is Select.NULL else self.value

    def set_options_quietly(self, options: Sequence[tuple[str, object]], value=None) -> None:
        self.known = {v for _, v in options}
        with self.prevent(Select.Changed):
            self.set_options(options)
            if value is not None and value in self.known:
                self.value = value

    def select_quietly(self, value) -> None:
        if value in self.known and self.value != value:
            with self.prevent(Select.Changed):
                self.value = value

    def chosen_by_user(self) -> bool:
        """True while the user is working in this Select (values set in code also post
        ``Changed``; only the user's own choice should count)."""
        focused = self.screen.focused
        return focused is not None and self in focused.ancestors_with_self
