"""The PDF canvas: fpdf2 in points, with carboy's embedded fonts and its own metrics.

Everything is measured in points (1/72 in).  The type is DejaVu Sans Condensed
(regular and bold, version 2.37, shipped in ``fonts/`` with its licence): it covers
µ, °, ·, ±, −, ≤, ≥, arrows, sub- and superscript digits and every other character
carboy prints, and needs no font installed on the system.  fpdf2 embeds only the
glyphs a document uses.
"""

from __future__ import annotations

import functools
import threading
from importlib import resources

from fpdf import FPDF

MM = 72.0 / 25.4
"""Points per millimetre."""
A4_PT = (210.0 * MM, 297.0 * MM)
FONT = "carboy-sans"
FONT_FILES = {"": "DejaVuSansCondensed.ttf", "B": "DejaVuSansCondensed-Bold.ttf"}
BLACK = (0, 0, 0)
GREY = (110, 110, 110)
LIGHT = (232, 232, 232)
GHS_RED = (230, 0, 18)
PRODUCER = "carboy"
_MEASURING = threading.Lock()


def font_path(style: str = "") -> str:
    """The path of the packaged font file for ``style`` ("" regular, "B" bold)."""
    return str(resources.files("carboy.tui.paper").joinpath("fonts").joinpath(FONT_FILES[style]))


class Canvas(FPDF):
    """An fpdf2 document in points with carboy's fonts loaded; no automatic page breaks.

    ``page_size`` is (width, height) in points.  Subclasses draw page furniture by
    overriding fpdf2's ``header``/``footer``.
    """

    def __init__(self, page_size: tuple[float, float]) -> None:
        super().__init__(unit="pt", format=page_size)
        for style in FONT_FILES:
            self.add_font(FONT, style, font_path(style))
        self.set_auto_page_break(False)
        self.set_margin(0)
        self.set_producer(PRODUCER)
        self.set_creator(PRODUCER)

    def use(self, size: float, bold: bool = False, color: tuple[int, int, int] = BLACK) -> None:
        """Select the type for what is drawn next."""
        self.set_font(FONT, "B" if bold else "", size)
        self.set_text_color(*color)

    def put(self, x: float, baseline: float, text: str, size: float, bold: bool = False,
            color: tuple[int, int, int] = BLACK) -> None:
        """Draw ``text`` with its left end at ``x`` on ``baseline`` (points)."""
        if text:
            self.use(size, bold, color)
            self.text(x, baseline, text)


@functools.lru_cache(maxsize=1)
def _metrics_canvas() -> Canvas:
    return Canvas((100.0, 100.0))


@functools.lru_cache(maxsize=16384)
def _unit_width(text: str, bold: bool) -> float:
    """Width of ``text`` at 1 pt (the metrics scale linearly with the size)."""
    with _MEASURING:
        canvas = _metrics_canvas()
        canvas.set_font(FONT, "B" if bold else "", 100)
        return canvas.get_string_width(text) / 100.0


def measure(text: str, size: float, bold: bool = False) -> float:
    """The width of ``text`` in points at ``size``, by the embedded font's metrics."""
    return _unit_width(text, bold) * size
