"""Help: what each screen is for and every key it has, read from the bindings themselves.

The key tables are generated from each screen's ``BINDINGS`` (and those of the
widgets it owns), so a key added in code shows up here without anyone editing a list.
Each key's id is shown: that is the name to use when remapping it.
"""

from __future__ import annotations

import importlib
from dataclasses import dataclass

from rich.console import Group
from rich.table import Table
from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import Screen
from textual.widgets import Footer, Static

from carboy.tui.app import registry
from carboy.tui.app.widgets.mode_bar import ModeBar
from carboy.tui.app.widgets.safety_note import DISPOSAL_NOTE


@dataclass(frozen=True)
class Section:
    title: str
    purpose: str
    sources: tuple[type, ...]


CHILDREN: dict[str, tuple[tuple[str, str], ...]] = {
    "stock": (("Bottle", "bottle:BottleScreen"), ("Strength check", "check:CheckScreen")),
    "waste": (("Log a waste addition", "waste_add:AddWasteScreen"),
              ("An addition the rules question", "waste_accept:AcceptAdditionScreen"),
              ("New waste container", "waste_new:NewContainerScreen"),
              ("Change a container's stream", "waste_stream:ChangeStreamScreen")),
    "journal": (("Journal entry", "entry:EntryScreen"),
                ("Correct a journal entry", "correct_entry:CorrectionDialog")),
    "rules": (("Change a rule or the storeroom's name", "rule_edit:ValueDialog"),),
}
"""Screens and dialogs opened from a main screen: (title, ``module:Class`` under screens)."""


def _load(path: str) -> type:
    module, _, name = path.partition(":")
    return getattr(importlib.import_module(f"carboy.tui.app.screens.{module}"), name)


def _purpose(cls: type, fallback: str) -> str:
    return getattr(cls, "HELP", None) or (cls.__doc__ or fallback).strip().splitlines()[0]


def sections() -> list[Section]:
    """Every screen and dialog of the app, with the classes whose bindings it uses: the
    main screens in the registry's order, each followed by what it opens."""
    from carboy.tui.app.app import CarboyApp
    from carboy.tui.app.screens.confirm import ConfirmScreen
    from carboy.tui.app.screens.print_pdf import PrintDialog

    found = [Section("Everywhere", "Move between the screens, reload, quit. The command "
                     "palette (ctrl+p) has the same and more: search the stock, open a waste "
                     "container, plan a neutralization.", (CarboyApp,))]
    for d in registry.DESTINATIONS:
        cls = d.screen_class()
        module = cls.__module__
        helpers = tuple(c for c in classes_with_bindings(
            (module, *SCREEN_MODULES.get(d.mode, ()))) if c is not cls)
        found.append(Section(d.label, _purpose(cls, d.help), (cls, *helpers)))
        for title, path in CHILDREN.get(d.mode, ()):
            child = _load(path)
            found.append(Section(title, _purpose(child, title), (child,)))
    found.append(Section("Confirmation", "Asked before anything that cannot be undone; the "
                         "safe answer has the focus.", (ConfirmScreen,)))
    found.append(Section("Print to PDF", _purpose(PrintDialog, "Print"), (PrintDialog,)))
    return found


SCREEN_MODULES = {
    "neutralize": ("carboy.tui.app.screens.neutralize_record", "carboy.tui.app.widgets.ph_curve",
                   "carboy.tui.app.widgets.plan_view"),
}
"""Further modules whose key-declaring classes belong to a main screen's section."""


def classes_with_bindings(module_names: tuple[str, ...]) -> list[type]:
    """Classes defined in these modules that declare their own ``BINDINGS``."""
    found = []
    for name in module_names:
        try:
            module = importlib.import_module(name)
        except ModuleNotFoundError:
            continue
        for obj in vars(module).values():
            if (isinstance(obj, type) and obj.__module__ == name
                    and obj.__dict__.get("BINDINGS")):
                found.append(obj)
    return found


def own_bindings(cls: type) -> list[Binding]:
    """The bindings a class declares itself (not the ones it inherits)."""
    found = []
    for item in cls.__dict__.get("BINDINGS", []):
        if isinstance(item, Binding):
            found.append(item)
        else:  # a tuple (key, action[, description])
            found.extend(Binding.make_bindings([item]))
    return found


def all_bindings() -> list[tuple[str, Binding]]:
    """(section title, binding) for every binding the app declares."""
    return [(s.title, b) for s in sections() for src in s.sources for b in own_bindings(src)]


class HelpScreen(Screen):
    """Every key of every screen, and what each screen is for."""

    HELP = "This page: every key, what each screen is for, and the safety note."

    BINDINGS = [
        Binding("escape", "back", "Back", id="help.back"),
    ]

    def compose(self) -> ComposeResult:
        yield ModeBar("help")
        with VerticalScroll(id="help-scroll"):
            yield Static(Text(DISPOSAL_NOTE, style="bold"), id="help-safety",
                         classes="safety-note")
            for section in sections():
                yield Static(self._section(section), classes="help-section")
        yield Footer()

    def on_mount(self) -> None:
        self.query_one("#help-scroll").focus()

    def _keys(self, binding: Binding) -> str:
        keys = [k.strip() for k in binding.key.split(",") if k.strip()]
        return " / ".join(self.app.get_key_display(Binding(k, binding.action)) for k in keys)

    def _section(self, section: Section) -> Group:
        table = Table(box=None, show_header=True, header_style="bold", pad_edge=False,
                      expand=True)
        table.add_column("Key", no_wrap=True, min_width=10)
        table.add_column("Does", ratio=1)
        table.add_column("Id (for remapping)", no_wrap=True, style="dim")
        for src in section.sources:
            for binding in own_bindings(src):
                table.add_row(self._keys(binding), binding.description or binding.action,
                              binding.id or "—")
        return Group(Text(section.title, style="bold underline"), Text(section.purpose),
                     table, Text(""))

    def action_back(self) -> None:
        self.app.action_back()
