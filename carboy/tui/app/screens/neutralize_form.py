"""The Neutralize screen's form: its fields laid out, read back as the form's text, and each
field's echo or error shown beside it (the screen wires it; the form object in
:mod:`carboy.model.forms.neutralize` reads it)."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.containers import Horizontal, VerticalScroll
from textual.widgets import Input, Label, Select, Static

from carboy.model.forms.neutralize import ACTIVITY_CHOICES, DEFAULTS, NeutralizeFields
from carboy.tui.app.screens.neutralize_parts import TYPED, TYPED_TITLE
from carboy.tui.app.widgets import redraw
from carboy.tui.app.widgets.quiet_select import QuietSelect
from carboy.tui.app.widgets.steady_input import InPlaceInput

ACTIVITY_WORDS = {"auto": "auto (Davies, Pitzer above 0.5 mol/kg)",
                  "pitzer": "Pitzer (concentrated)", "davies": "Davies, with ion pairs",
                  "ideal": "ideal (activities 1)"}
"""The activity choice in words: its state is the text shown, never a colour."""


class NeutralizeForm(VerticalScroll):
    """Sample, reagent, target, window, temperature and activity, each with its echo line."""

    DEFAULT_CSS = """
    NeutralizeForm { width: 38; height: 1fr; border-right: vkey $foreground 30%;
        scrollbar-size-vertical: 1; }
    NeutralizeForm > .nz-row { height: 1; margin-top: 0; }
    NeutralizeForm > .nz-row > Label { width: 10; text-style: bold; }
    NeutralizeForm > .nz-row > Input, NeutralizeForm > .nz-row > Select { width: 1fr; }
    NeutralizeForm > .nz-row > .nz-dash { width: 3; content-align: center middle; }
    NeutralizeForm > .nz-echo { height: auto; padding-left: 2; color: $text-muted; }
    NeutralizeForm > .nz-echo.-error { color: $text-error; text-style: bold; }
    NeutralizeForm Input.-invalid { text-style: underline; }
    """

    def compose(self) -> ComposeResult:
        with Horizontal(classes="nz-row"):
            yield Label("Sample")
            yield QuietSelect([(TYPED_TITLE, TYPED)], value=TYPED, allow_blank=False,
                              compact=True, id="sample-source")
        yield Static("typed in below", id="sample-info", classes="nz-echo",
                     markup=False)
        with Horizontal(classes="nz-row", id="row-components"):
            yield Label("Contents")
            yield InPlaceInput(placeholder="e.g. H2SO4=0.05M NaH2PO4=10mM", id="components",
                        compact=True)
        yield Static("", id="echo-components", classes="nz-echo", markup=False)
        with Horizontal(classes="nz-row", id="row-volume"):
            yield Label("Volume")
            yield InPlaceInput(placeholder="e.g. 250 mL (needed)", id="volume", compact=True)
        yield Static("", id="echo-volume", classes="nz-echo", markup=False)
        with Horizontal(classes="nz-row"):
            yield Label("Stock")
            yield QuietSelect([], prompt="reagent bottle…", compact=True,
                              id="reagent-bottle")
        with Horizontal(classes="nz-row"):
            yield Label("Reagent")
            yield InPlaceInput(placeholder="e.g. NaOH=1M, NaHCO3 (needed)", id="reagent",
                        compact=True)
        yield Static("", id="echo-reagent", classes="nz-echo", markup=False)
        with Horizontal(classes="nz-row"):
            yield Label("Target pH")
            yield InPlaceInput(DEFAULTS["target"], id="target", compact=True)
        yield Static("", id="echo-target", classes="nz-echo", markup=False)
        with Horizontal(classes="nz-row"):
            yield Label("Window")
            yield InPlaceInput(DEFAULTS["window_low"], id="window_low", compact=True)
            yield Static("–", classes="nz-dash")
            yield InPlaceInput(DEFAULTS["window_high"], id="window_high", compact=True)
        yield Static("local rules set the real window", id="echo-window",
                     classes="nz-echo", markup=False)
        with Horizontal(classes="nz-row"):
            yield Label("Temp.")
            yield InPlaceInput(DEFAULTS["temperature"], id="temperature", compact=True)
        yield Static("", id="echo-temperature", classes="nz-echo", markup=False)
        with Horizontal(classes="nz-row"):
            yield Label("Activity")
            yield Select([(ACTIVITY_WORDS[a], a) for a in ACTIVITY_CHOICES], value="auto",
                         allow_blank=False, compact=True, id="activity")
        yield Static("", id="echo-plan", classes="nz-echo", markup=False)

    def fields(self) -> NeutralizeFields:
        """The form's text as typed."""
        def text(wid: str) -> str:
            return self.query_one(f"#{wid}", Input).value

        activity = self.query_one("#activity", Select).value
        return NeutralizeFields(
            components=text("components"), volume=text("volume"),
            temperature=text("temperature"), reagent=text("reagent"), target=text("target"),
            window_low=text("window_low"), window_high=text("window_high"),
            activity=activity if isinstance(activity, str) else "auto")

    def fill(self, values) -> None:
        """Put recorded text into the fields it names (``reagent``, ``target``,
        ``window_low``, ``window_high``, ``temperature``, ``activity``); others stay."""
        for wid, value in values.items():
            if wid == "activity":
                self.query_one("#activity", Select).value = value
            elif wid in ("reagent", "target", "window_low", "window_high", "temperature"):
                self.query_one(f"#{wid}", Input).value = value

    def show_field(self, name: str, error: str | None, echo: str, *, typed: bool) -> None:
        """The echo (or error) under field ``name``; a wrong value is also marked on its
        input.  The typed sample's lines stay hidden while a container is the sample."""
        widget = self.query_one(f"#echo-{name}", Static)
        if name == "window" and not error:
            echo = echo or "local rules set the real window"
        if name in ("components", "volume") and not typed:
            widget.display = False
            return
        redraw.update(widget, f"✗ {error}" if error else echo)
        widget.set_class(bool(error), "-error")
        widget.display = bool(error or echo)
        ids = ("window_low", "window_high") if name == "window" else (name,)
        for wid in ids:
            self.query_one(f"#{wid}", Input).set_class(bool(error), "-invalid")

    def typed_sample(self, enabled: bool) -> None:
        """Typed components and volume apply only without a container (hidden, not lost)."""
        for wid in ("components", "volume"):
            self.query_one(f"#{wid}", Input).disabled = not enabled
            self.query_one(f"#row-{wid}").display = enabled
            self.query_one(f"#echo-{wid}").display = enabled
