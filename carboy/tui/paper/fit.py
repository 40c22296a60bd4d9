"""Fitting text into a box: wrap at word boundaries, shrink the type until it fits.

Pure layout with a width function handed in (the renderer's own font metrics), so the
same code decides what is drawn and what the tests measure.  A box is filled at the
largest size between ``max_size`` and ``min_size`` (in steps of :data:`SIZE_STEP`) at
which the wrapped text fits its height; a word wider than the box is broken between
characters rather than allowed to stick out.  If even the smallest size does not fit,
the text is cut after the last whole line that fits, that line ends in "…", and the
result says it is incomplete: nothing is ever drawn outside its box.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

Measure = Callable[[str, float, bool], float]
"""``measure(text, size_pt, bold)``: the width of ``text`` in points."""

LEADING = 1.17
"""Line height as a multiple of the type size."""
SIZE_STEP = 0.25
ELLIPSIS = "…"


@dataclass(frozen=True)
class Run:
    """A paragraph to fit: its text, weight and size relative to the box's body size."""

    text: str
    bold: bool = False
    scale: float = 1.0
    space_before: float = 0.0
    """Extra space above it, as a fraction of its line height."""


@dataclass(frozen=True)
class Line:
    """One fitted line: its text, type size (pt), weight, width and baseline offset (pt)."""

    text: str
    size: float
    bold: bool
    width: float
    baseline: float


@dataclass(frozen=True)
class Fit:
    """What :func:`fit` made: the lines, the body size chosen and the height used."""

    lines: tuple[Line, ...]
    size: float
    height: float
    complete: bool


def _break_word(word: str, width: float, size: float, bold: bool,
                measure: Measure) -> list[str]:
    pieces = []
    while word and measure(word, size, bold) > width:
        cut = 1
        while cut < len(word) and measure(word[:cut + 1], size, bold) <= width:
            cut += 1
        pieces.append(word[:cut])
        word = word[cut:]
    return pieces + ([word] if word else [])


def wrap(text: str, width: float, size: float, bold: bool, measure: Measure) -> list[str]:
    """``text`` in lines no wider than ``width`` at ``size`` (never an empty list)."""
    lines: list[str] = []
    current = ""
    for word in text.split():
        candidate = f"{current} {word}" if current else word
        if measure(candidate, size, bold) <= width:
            current = candidate
            continue
        if current:
            lines.append(current)
        pieces = _break_word(word, width, size, bold, measure)
        lines += pieces[:-1]
        current = pieces[-1] if pieces else ""
    if current:
        lines.append(current)
    return lines or [""]


def _lay_out(runs: Sequence[Run], width: float, size: float,
             measure: Measure) -> tuple[list[Line], float]:
    lines: list[Line] = []
    y = 0.0
    for run in runs:
        run_size = size * run.scale
        step = run_size * LEADING
        y += step * run.space_before if lines else 0.0
        for text in wrap(run.text, width, run_size, run.bold, measure):
            # the baseline sits about 0.8 of the type size below the top of the line
            lines.append(Line(text, run_size, run.bold, measure(text, run_size, run.bold),
                              y + 0.8 * run_size * LEADING))
            y += step
    return lines, y


def _cut(lines: list[Line], height: float, width: float, measure: Measure) -> list[Line]:
    kept = [ln for ln in lines if ln.baseline + 0.2 * ln.size * LEADING <= height]
    if not kept:
        return []
    last = kept[-1]
    text = last.text
    while text and measure(text + ELLIPSIS, last.size, last.bold) > width:
        text = text[:-1]
    text = text.rstrip() + ELLIPSIS
    kept[-1] = Line(text, last.size, last.bold, measure(text, last.size, last.bold),
                    last.baseline)
    return kept


def fit(runs: Sequence[Run], width: float, height: float, *, max_size: float,
        min_size: float, measure: Measure) -> Fit:
    """Lay ``runs`` out in a ``width`` × ``height`` box (points) at the largest size that fits.

    ``max_size`` and ``min_size`` are the body size bounds (pt); each run is drawn at
    body size × its ``scale``.
    """
    size = max_size
    while True:
        lines, used = _lay_out(runs, width, size, measure)
        if used <= height + 1e-6 or size <= min_size:
            break
        size = max(min_size, size - SIZE_STEP)
    if used <= height + 1e-6:
        return Fit(tuple(lines), size, used, True)
    kept = _cut(lines, height, width, measure)
    return Fit(tuple(kept), size, min(used, height), False)
