"""Text marks that carry meaning without colour: strength checks, container states, fill bars.

Every mark is a symbol *and* a word, so it reads the same in 16 colours, in
monochrome (``NO_COLOR``) and on a screen reader; the colour is only a second cue.
"""

from __future__ import annotations

from rich.text import Text

from carboy.store.statuses import BottleStatus, ContainerStatus

STRENGTH_MARKS: dict[str, tuple[str, str]] = {
    # strength status -> (mark, style)
    "current": ("✓ current", "green"),
    "overdue": ("◷ overdue", "yellow"),
    "expired": ("✗ expired", "bold red"),
    "off-label": ("≠ off-label", "magenta"),
}

CONTAINER_MARKS: dict[str, tuple[str, str]] = {
    # the status's own words, after a symbol
    s.value: (f"{glyph} {s.words}", style) for s, glyph, style in (
        (ContainerStatus.COLLECTING, "+", "green"),
        (ContainerStatus.PLANNED, "…", "cyan"),
        (ContainerStatus.NEUTRALIZED, "=", "blue"),
        (ContainerStatus.DISPOSED, "∅", "dim"),
        (ContainerStatus.LICENSED_DISPOSAL, "⚑", "bold yellow"),
    )
}

BOTTLE_MARKS: dict[str, tuple[str, str]] = {
    BottleStatus.IN_USE.value: (BottleStatus.IN_USE.words, ""),
    BottleStatus.EMPTY.value: (f"○ {BottleStatus.EMPTY.words}", "dim"),
    BottleStatus.DISPOSED.value: ("∅ gone", "dim"),
}

FILL_CELLS = 10


def _mark(table: dict[str, tuple[str, str]], key: str) -> Text:
    text, style = table.get(key, (key, ""))
    return Text(text, style=style)


def strength_mark(status: str) -> Text:
    """``✓ current`` / ``◷ overdue`` / ``✗ expired`` / ``≠ off-label``."""
    return _mark(STRENGTH_MARKS, status)


def container_mark(status: str) -> Text:
    return _mark(CONTAINER_MARKS, status)


def bottle_mark(status: str) -> Text:
    return _mark(BOTTLE_MARKS, status)


def fill_fraction(volume_l: float, capacity_l: float) -> float:
    if capacity_l <= 0:
        return 0.0
    return max(volume_l / capacity_l, 0.0)


def fill_bar(volume_l: float, capacity_l: float, cells: int = FILL_CELLS) -> Text:
    """``███████░░░  68 %``: the bar and the number; style warns as the container fills."""
    frac = fill_fraction(volume_l, capacity_l)
    full = min(cells, round(min(frac, 1.0) * cells))
    style = "red" if frac >= 0.9 else "yellow" if frac >= 0.75 else ""
    bar = Text("█" * full, style=style)
    bar.append("░" * (cells - full), style="dim")
    bar.append(f" {round(frac * 100):3d} %")
    return bar


def litres(value: float) -> str:
    """A volume for people: ``0.25 L`` reads better as ``250 mL``."""
    if value == 0:
        return "0 L"
    if abs(value) < 1:
        return f"{value * 1000:.4g} mL"
    return f"{value:.4g} L"
