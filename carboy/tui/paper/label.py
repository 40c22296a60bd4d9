"""Bottle labels: 70 × 37 mm, one to a page or 24 to an A4 sheet (3 across, 8 down).

The layout of one label (points; the origin at its top left)::

    +--------------------------------------------+---------+
    | Name · formula           (details region)  |   QR    |
    | Strength …; measured … on …                |         |
    | Prepared/Received …                        |  bottle |
    | Expires …; re-check by …                   |   17    |
    +-------------+------------------------------+---------+
    | <> <> <>    | DANGER       (hazard region)           |
    | codes       | H314 …  H290 …  Check the supplier's SDS |
    +-------------+----------------------------------------+
    | storeroom name                          (footer)      |
    +--------------------------------------------------------+

Each text region is fitted on its own (:mod:`carboy.tui.paper.fit`): the largest type
between its bounds at which the wrapped text fits.  If the hazard statements, one to a
line, do not fit even at the smallest type, they are run on in one paragraph; if that
does not fit either, the label prints their codes only and sends the reader to the
safety data sheet.  Nothing is drawn outside its region.  :func:`layout_label`
computes everything :func:`draw_label` draws, so tests can measure it.
"""

from __future__ import annotations

from dataclasses import dataclass

from carboy.model.documents import (
    Document,
    Fields,
    HazardText,
    Paragraph,
    PictogramRow,
    QrCode,
    Title,
)
from carboy.tui.paper.canvas import A4_PT, MM, Canvas, measure
from carboy.tui.paper.fit import LEADING, Fit, Run, fit
from carboy.tui.paper.pictograms import draw_pictogram
from carboy.tui.paper.qr import draw_qr

LABEL_MM = (70.0, 37.0)
LABEL_PT = (LABEL_MM[0] * MM, LABEL_MM[1] * MM)
SHEET_GRID = (3, 8)
"""Labels across and down an A4 sheet (3 × 70 mm = 210 mm; 8 × 37 mm = 296 mm)."""
SHEET_TOP = (297.0 - SHEET_GRID[1] * LABEL_MM[1]) / 2 * MM
MARGIN = 2.0 * MM
GAP = 1.2 * MM
QR_SIDE = 14.0 * MM
TOP_HEIGHT = 16.5 * MM
PICTOGRAM_MAX = 11.0 * MM
PICTOGRAM_SHARE = 0.55
"""The pictogram row takes at most this share of the label's inner width."""
CODE_SIZE = 4.2
DETAILS_SIZES = (7.5, 4.0)
HAZARD_SIZES = (7.0, 4.0)
CAPTION_SIZES = (6.0, 4.0)
FOOTER_SIZES = (5.5, 4.0)
CODES_ONLY = "full hazard statements: see the safety data sheet"


@dataclass(frozen=True)
class Box:
    """A rectangle in points, (x, y) its top left corner."""

    x: float
    y: float
    w: float
    h: float


@dataclass(frozen=True)
class Region:
    """Fitted text in a box; ``centred`` lines are centred across the box."""

    name: str
    box: Box
    fit: Fit
    centred: bool = False


@dataclass(frozen=True)
class LabelLayout:
    """Everything one label draws, in points from the label's top left corner."""

    size: tuple[float, float]
    regions: tuple[Region, ...]
    pictograms: tuple[tuple[str, Box], ...]
    qr: tuple[str, Box] | None
    hazard_style: str = "lines"
    """Which of :data:`HAZARD_STYLES` the hazard statements are set in."""

    @property
    def complete(self) -> bool:
        """True when every text region holds all of its text."""
        return all(r.fit.complete for r in self.regions)

    def region(self, name: str) -> Region | None:
        return next((r for r in self.regions if r.name == name), None)


def _first(document: Document, kind: type):
    found = document.blocks_of(kind)
    return found[0] if found else None


def _details_runs(document: Document) -> list[Run]:
    runs = []
    title = _first(document, Title)
    if title is not None:
        text = f"{title.text} · {title.subtitle}" if title.subtitle else title.text
        runs.append(Run(text, bold=True, scale=1.25))
    for block in document.blocks_of(Fields):
        runs += [Run(f"{key} {value}".strip()) for key, value in block.items]
    return runs


HAZARD_STYLES = ("lines", "run-on", "codes")
"""How the hazard statements are set, tried in this order: one line each, run on in one
paragraph, or (when neither fits) their codes only with a pointer to the SDS."""


def _hazard_runs(document: Document, style: str) -> list[Run]:
    runs = []
    hazard = _first(document, HazardText)
    if hazard is not None and hazard.signal_word:
        runs.append(Run(hazard.signal_word.upper(), bold=True, scale=1.3))
    if hazard is not None and hazard.statements:
        if style == "codes":
            codes = " ".join(code for code, _ in hazard.statements)
            runs.append(Run(f"{codes} ({CODES_ONLY})", bold=True))
        elif style == "run-on":
            runs.append(Run("  ".join(f"{code} {text}" for code, text in hazard.statements)))
        else:
            runs += [Run(f"{code} {text}") for code, text in hazard.statements]
    runs += [Run(p.text, scale=0.9, space_before=0.3) for p in document.blocks_of(Paragraph)]
    return runs


def _pictogram_boxes(codes: tuple[str, ...], top: float,
                     height: float) -> tuple[list[tuple[str, Box]], list[Region], float]:
    if not codes:
        return [], [], 0.0
    n = len(codes)
    code_height = CODE_SIZE * LEADING
    inner = LABEL_PT[0] - 2 * MARGIN
    side = min(PICTOGRAM_MAX, height - code_height,
               (inner * PICTOGRAM_SHARE - (n - 1) * GAP / 2) / n)
    boxes, captions = [], []
    for k, code in enumerate(codes):
        x = MARGIN + k * (side + GAP / 2)
        boxes.append((code, Box(x, top, side, side)))
        box = Box(x, top + side, side, code_height)
        captions.append(Region(f"code {code}", box, fit([Run(code)], box.w, box.h,
                                                         max_size=CODE_SIZE, min_size=3.0,
                                                         measure=measure), centred=True))
    return boxes, captions, n * side + (n - 1) * GAP / 2


def _fit(name: str, runs: list[Run], box: Box, sizes: tuple[float, float],
         centred: bool = False) -> Region:
    return Region(name, box, fit(runs, box.w, box.h, max_size=sizes[0], min_size=sizes[1],
                                 measure=measure), centred)


def layout_label(document: Document) -> LabelLayout:
    """The layout of one 70 × 37 mm label for a label document."""
    width, height = LABEL_PT
    qr_block = _first(document, QrCode)
    regions: list[Region] = []
    qr = None
    details_w = width - 2 * MARGIN
    if qr_block is not None:
        qr_box = Box(width - MARGIN - QR_SIDE, MARGIN, QR_SIDE, QR_SIDE)
        qr = (qr_block.payload, qr_box)
        details_w -= QR_SIDE + GAP
        caption = Box(qr_box.x, MARGIN + QR_SIDE, QR_SIDE, TOP_HEIGHT - QR_SIDE)
        regions.append(_fit("qr caption", [Run(qr_block.caption, bold=True)], caption,
                            CAPTION_SIZES, centred=True))
    regions.append(_fit("details", _details_runs(document),
                        Box(MARGIN, MARGIN, details_w, TOP_HEIGHT), DETAILS_SIZES))
    bottom = height - MARGIN
    if document.header:
        footer_h = FOOTER_SIZES[0] * LEADING
        bottom -= footer_h + GAP / 2
        regions.append(_fit("footer", [Run(document.header)],
                            Box(MARGIN, height - MARGIN - footer_h, width - 2 * MARGIN,
                                footer_h), FOOTER_SIZES))
    top = MARGIN + TOP_HEIGHT + GAP
    row = _first(document, PictogramRow)
    boxes, captions, used = _pictogram_boxes(row.codes if row else (), top, bottom - top)
    regions += captions
    left = MARGIN + (used + GAP if used else 0.0)
    hazard_box = Box(left, top, width - MARGIN - left, bottom - top)
    for style in HAZARD_STYLES:
        hazard = _fit("hazards", _hazard_runs(document, style), hazard_box, HAZARD_SIZES)
        if hazard.fit.complete:
            break
    regions.append(hazard)
    return LabelLayout((width, height), tuple(regions), tuple(boxes), qr, style)


def draw_label(canvas: Canvas, layout: LabelLayout, x: float = 0.0, y: float = 0.0) -> None:
    """Draw a laid-out label with its top left corner at (x, y) on the current page."""
    for code, box in layout.pictograms:
        draw_pictogram(canvas, code, x + box.x, y + box.y, box.w)
    if layout.qr is not None:
        payload, box = layout.qr
        draw_qr(canvas, payload, x + box.x, y + box.y, box.w)
    for region in layout.regions:
        box = region.box
        for line in region.fit.lines:
            dx = (box.w - line.width) / 2 if region.centred else 0.0
            canvas.put(x + box.x + dx, y + box.y + line.baseline, line.text, line.size,
                       line.bold)


def label_canvas(layouts: list[LabelLayout], sheet: bool) -> Canvas:
    """A PDF of labels: one 70 × 37 mm page each, or 24 to an A4 sheet."""
    if not sheet:
        canvas = Canvas(LABEL_PT)
        for layout in layouts:
            canvas.add_page()
            draw_label(canvas, layout)
        return canvas
    canvas = Canvas(A4_PT)
    across, down = SHEET_GRID
    for k, layout in enumerate(layouts):
        slot = k % (across * down)
        if slot == 0:
            canvas.add_page()
        draw_label(canvas, layout, (slot % across) * LABEL_PT[0],
                   SHEET_TOP + (slot // across) * LABEL_PT[1])
    return canvas
